package stats

import (
	"bufio"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// referencePath is the reference table written by testdata/reference/kruskal_scipy.py
// (scipy 1.10.1, numpy 1.24.2, mpmath 1.2.1 on Debian; the versions are recorded in
// the file and checked by TestReferenceFileVersions).
const referencePath = "../testdata/reference/kruskal_scipy.json"

type refKruskal struct {
	Name         string      `json:"name"`
	Source       string      `json:"source"`
	DF           int         `json:"df"`
	H            float64     `json:"h"`
	P            float64     `json:"p"`
	Log10PMpmath float64     `json:"log10p_mpmath"`
	Sizes        []int       `json:"sizes"`
	Groups       [][]float64 `json:"groups"`
	Data         *struct {
		NISTFile  string `json:"nist_file"`
		SmLsScale int    `json:"smls_scale"`
	} `json:"data"`
}

type refTail struct {
	X      float64 `json:"x"`
	DF     int     `json:"df"`
	P      float64 `json:"p"`
	Log10P float64 `json:"log10p"`
}

type refQuartiles struct {
	Name   string    `json:"name"`
	X      []float64 `json:"x"`
	Q1     float64   `json:"q1"`
	Median float64   `json:"median"`
	Q3     float64   `json:"q3"`
}

type refFile struct {
	Generator string            `json:"generator"`
	Versions  map[string]string `json:"versions"`
	Kruskal   []refKruskal      `json:"kruskal"`
	ChisqTail []refTail         `json:"chisq_tail"`
	Quartiles []refQuartiles    `json:"quartiles"`
}

func loadReference(t testing.TB) *refFile {
	t.Helper()
	b, err := os.ReadFile(referencePath)
	if err != nil {
		t.Fatalf("read reference values: %v", err)
	}
	var ref refFile
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatalf("decode %s: %v", referencePath, err)
	}
	return &ref
}

// groupsOf returns the groups of a reference data set: listed inline, read from a
// NIST file copy, or rebuilt from the SmLs structure.
func (k refKruskal) groupsOf(t testing.TB) [][]float64 {
	t.Helper()
	switch {
	case k.Groups != nil:
		return k.Groups
	case k.Data != nil && k.Data.NISTFile != "":
		g, err := parseNISTAnova(filepath.Join("..", filepath.FromSlash(k.Data.NISTFile)))
		if err != nil {
			t.Fatal(err)
		}
		return g
	case k.Data != nil && k.Data.SmLsScale > 0:
		return smlsDesign(k.Data.SmLsScale)
	}
	t.Fatalf("reference set %q has no data", k.Name)
	return nil
}

var nistDataLines = regexp.MustCompile(`^\s*Data\s+\(lines\s+(\d+)\s+to\s+(\d+)\)\s*$`)

// parseNISTAnova reads a NIST StRD one-way ANOVA file into groups ordered by treatment
// number. The header names the data line range ("Data (lines 61 to 249)"); each data
// line is a treatment number and a response. kruskal_scipy.py parses the same way.
func parseNISTAnova(path string) ([][]float64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var lines []string
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		lines = append(lines, sc.Text())
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	first, last := 0, 0
	for _, l := range lines {
		if m := nistDataLines.FindStringSubmatch(l); m != nil {
			first, _ = strconv.Atoi(m[1])
			last, _ = strconv.Atoi(m[2])
			break
		}
	}
	if first < 1 || last < first || last > len(lines) {
		return nil, fmt.Errorf("%s: no usable 'Data (lines A to B)' header", path)
	}
	byTreatment := map[int][]float64{}
	for _, l := range lines[first-1 : last] {
		fs := strings.Fields(l)
		if len(fs) != 2 {
			return nil, fmt.Errorf("%s: bad data line %q", path, l)
		}
		tr, err1 := strconv.Atoi(fs[0])
		v, err2 := strconv.ParseFloat(fs[1], 64)
		if err1 != nil || err2 != nil {
			return nil, fmt.Errorf("%s: bad data line %q", path, l)
		}
		byTreatment[tr] = append(byTreatment[tr], v)
	}
	keys := make([]int, 0, len(byTreatment))
	for k := range byTreatment {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	groups := make([][]float64, len(keys))
	for i, k := range keys {
		groups[i] = byTreatment[k]
	}
	return groups, nil
}

// smlsDesign rebuilds the NIST SmLs01/02/03 design with scale 10/100/1000: 9 treatments
// of 2*scale+1 values. Structure from docs/methods.md §8.1 ("SmLs structure", counted from
// the NIST files); kruskal_scipy.py checks it against the SmLs01 file copy (and against
// SmLs01-03 with --nist-dir).
func smlsDesign(scale int) [][]float64 {
	groups := make([][]float64, 9)
	for t := 1; t <= 9; t++ {
		one, lo, hi := 1.5, 1.4, 1.6
		switch {
		case t == 1:
			one, lo, hi = 1.4, 1.3, 1.5
		case t%2 == 0:
			one, lo, hi = 1.3, 1.2, 1.4
		}
		g := []float64{one}
		for range scale {
			g = append(g, lo)
		}
		for range scale {
			g = append(g, hi)
		}
		groups[t-1] = g
	}
	return groups
}

// flatten turns groups into the (group, values) columns Rank takes, in group order.
func flatten(groups [][]float64) ([]int32, []float64) {
	var g []int32
	var v []float64
	for i, xs := range groups {
		for _, x := range xs {
			g = append(g, int32(i))
			v = append(v, x)
		}
	}
	return g, v
}

// mustRank ranks groups and fails the test on error.
func mustRank(t testing.TB, groups [][]float64) *Ranking {
	t.Helper()
	g, v := flatten(groups)
	r, err := Rank(g, v, len(groups))
	if err != nil {
		t.Fatalf("Rank: %v", err)
	}
	return r
}

// relClose reports whether got is within a relative tol of want (exact when want is 0).
func relClose(got, want, tol float64) bool {
	if want == 0 {
		return got == 0
	}
	return math.Abs(got-want) <= tol*math.Abs(want)
}

// naiveRank2 is an O(N^2) oracle: the doubled midrank of each observation is
// 2·#{smaller} + #{equal} + 1, straight from the definition of midranks.
func naiveRank2(values []float64) []int64 {
	out := make([]int64, len(values))
	for i, x := range values {
		var less, equal int64
		for _, y := range values {
			switch {
			case y < x:
				less++
			case y == x:
				equal++
			}
		}
		out[i] = 2*less + equal + 1
	}
	return out
}
