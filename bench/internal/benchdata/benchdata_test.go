package benchdata

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"math"
	"strconv"
	"strings"
	"testing"
)

func csvText(t *testing.T, rows, groups int, seed uint64, shift float64) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteCSV(&buf, rows, groups, seed, shift); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// TestWriteCSVRecorded checks that the generator still makes the files whose figures are
// recorded in bench/side-by-side.json: the SHA-256 of two small files, recorded on
// linux/amd64 with Go 1.26 when the generator was written. A change of the generator
// changes every data file and needs new figures.
func TestWriteCSVRecorded(t *testing.T) {
	cases := []struct {
		rows, groups int
		seed         uint64
		shift        float64
		sha256       string
	}{
		{30, 3, 3, 0.3, "949aa46d5e61264c9d91021dab9b7118df214a2234b15dc4e8d987efb83ac4ad"},
		{1000, 4, 4, 0.05, "8afb7fa15a468ca84d9d734326195e344c24999f9dd92cdef1a3d8e6b71d8d53"},
	}
	for _, c := range cases {
		sum := sha256.Sum256(csvText(t, c.rows, c.groups, c.seed, c.shift))
		if got := hex.EncodeToString(sum[:]); got != c.sha256 {
			t.Errorf("rows %d, groups %d, seed %d, shift %v: SHA-256 %s, recorded %s",
				c.rows, c.groups, c.seed, c.shift, got, c.sha256)
		}
	}
}

// TestWriteCSVShape checks the file's form and its distribution on 40000 rows in 4 groups:
// header, labels G01..G04, values with exactly 3 decimals, ties, group sizes within 5
// binomial standard deviations of N/4, and the mean of log(value) in group g within 0.05
// of shift*g (the lognormal's log-scale location, common practice; its standard error is
// 1/sqrt(10^4) = 0.01, and rounding to 3 decimals moves it by far less).
func TestWriteCSVShape(t *testing.T) {
	const rows, k, shift = 40000, 4, 0.2
	text := string(csvText(t, rows, k, 7, shift))
	lines := strings.Split(strings.TrimSuffix(text, "\n"), "\n")
	if lines[0] != "group,value" || len(lines) != rows+1 {
		t.Fatalf("header %q, %d lines; want group,value and %d lines", lines[0], len(lines), rows+1)
	}
	count := make([]float64, k)
	logSum := make([]float64, k)
	seen := map[string]bool{}
	ties := 0
	for _, line := range lines[1:] {
		label, value, ok := strings.Cut(line, ",")
		g := -1
		for i := range k {
			if label == Label(i) {
				g = i
			}
		}
		dot := strings.IndexByte(value, '.')
		v, err := strconv.ParseFloat(value, 64)
		if !ok || g < 0 || err != nil || dot < 0 || len(value)-dot-1 != 3 || !(v >= 0) {
			t.Fatalf("line %q: want a label G01..G04 and a value >= 0 with 3 decimals", line)
		}
		if seen[value] {
			ties++
		}
		seen[value] = true
		count[g]++
		if v > 0 {
			logSum[g] += math.Log(v)
		}
	}
	if ties == 0 {
		t.Errorf("no tied values in %d rows", rows)
	}
	sd := math.Sqrt(rows * 0.25 * 0.75)
	for g := range k {
		if math.Abs(count[g]-rows/k) > 5*sd {
			t.Errorf("group %s: %v rows, want %v +- %.0f", Label(g), count[g], rows/k, 5*sd)
		}
		if mean := logSum[g] / count[g]; math.Abs(mean-shift*float64(g)) > 0.05 {
			t.Errorf("group %s: mean log value %.4f, want %.2f +- 0.05", Label(g), mean, shift*float64(g))
		}
	}
}

// TestGenerateSeeds checks that a seed fixes the data and another seed changes them.
func TestGenerateSeeds(t *testing.T) {
	a, b, c := csvText(t, 500, 10, 1, 0.01), csvText(t, 500, 10, 1, 0.01), csvText(t, 500, 10, 2, 0.01)
	if !bytes.Equal(a, b) {
		t.Error("the same seed gave different files")
	}
	if bytes.Equal(a, c) {
		t.Error("seeds 1 and 2 gave the same file")
	}
}

// TestGenerateRejects checks the arguments that are refused.
func TestGenerateRejects(t *testing.T) {
	cases := []struct {
		rows, groups int
		shift        float64
	}{
		{-1, 3, 0}, {10, 1, 0}, {10, 100, 0}, {10, 3, math.NaN()}, {10, 3, math.Inf(1)}, {10, 3, -11},
	}
	for _, c := range cases {
		var buf bytes.Buffer
		if err := WriteCSV(&buf, c.rows, c.groups, 1, c.shift); err == nil {
			t.Errorf("rows %d, groups %d, shift %v: no error", c.rows, c.groups, c.shift)
		}
	}
	if got := string(csvText(t, 0, 2, 1, 0)); got != "group,value\n" {
		t.Errorf("0 rows: %q, want the header alone", got)
	}
}
