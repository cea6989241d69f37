package data

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"math/rand/v2"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

// genCSV returns an invented long-format file of n rows: an id, one of four group
// labels, and a minutes value with three decimals, from a fixed-seed generator.
func genCSV(n int) []byte {
	rng := rand.New(rand.NewPCG(1, 2))
	labels := []string{"control", "low dose", "high dose", "\"placebo, B\""}
	b := make([]byte, 0, n*26)
	b = append(b, "id,group,minutes\n"...)
	for i := range n {
		b = strconv.AppendInt(b, int64(i+1), 10)
		b = append(b, ',')
		b = append(b, labels[rng.IntN(len(labels))]...)
		b = append(b, ',')
		v := rng.IntN(100000)
		b = strconv.AppendInt(b, int64(v/1000), 10)
		b = append(b, '.')
		b = append(b, byte('0'+v/100%10), byte('0'+v/10%10), byte('0'+v%10))
		b = append(b, '\n')
	}
	return b
}

func benchOptions() Options {
	return Options{Name: "bench.csv", Delimiter: ',', Decimal: '.', GroupColumn: "group",
		OutcomeColumns: []string{"minutes"}, MissingTokens: []string{"", "NA"}}
}

// noLen hides the Len method of a reader, so loadReader cannot size its slices in advance.
type noLen struct{ r io.Reader }

func (n noLen) Read(b []byte) (int, error) { return n.r.Read(b) }

// TestAllocsDoNotGrowWithRows is a structural check of "no per-row allocation": ten
// times as many rows may add only the logarithmic number of slice growths, far fewer
// than one allocation per 100 extra rows. It covers a reader with a known size (the
// slices are sized once) and one without (they grow by append).
func TestAllocsDoNotGrowWithRows(t *testing.T) {
	if testing.Short() {
		t.Skip("builds 10^5 rows")
	}
	small, large := genCSV(10_000), genCSV(100_000)
	for _, sized := range []bool{true, false} {
		allocs := func(in []byte) float64 {
			return testing.AllocsPerRun(3, func() {
				var r io.Reader = bytes.NewReader(in)
				if !sized {
					r = noLen{r}
				}
				tab, err := loadReader(context.Background(), r, benchOptions())
				if err != nil || tab.Rows == 0 {
					t.Fatal(err)
				}
			})
		}
		a, b := allocs(small), allocs(large)
		t.Logf("known size %v: %.0f allocations for 10^4 rows, %.0f for 10^5 rows", sized, a, b)
		if b-a >= 200 {
			t.Errorf("known size %v: allocations grow with rows: %.0f for 10^4 rows, %.0f for 10^5 rows", sized, a, b)
		}
	}
}

// BenchmarkLoad measures loadReader on invented files of 10^6 and 10^7 rows, four groups,
// from a reader of known length (columns sized once) and of unknown length (columns
// grown by append).
func BenchmarkLoad(b *testing.B) {
	for _, n := range []int{1_000_000, 10_000_000} {
		in := genCSV(n)
		for _, sized := range []bool{true, false} {
			name := strconv.Itoa(n) + "/known-size"
			if !sized {
				name = strconv.Itoa(n) + "/unknown-size"
			}
			b.Run(name, func(b *testing.B) {
				b.SetBytes(int64(len(in)))
				b.ReportAllocs()
				for b.Loop() {
					var r io.Reader = bytes.NewReader(in)
					if !sized {
						r = noLen{r}
					}
					tab, err := loadReader(context.Background(), r, benchOptions())
					if err != nil || tab.Rows != n {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// TestPresizeSameResult checks that sizing the slices from the first rows changes no
// result, also when those rows are much longer or much shorter than the rest.
func TestPresizeSameResult(t *testing.T) {
	var longFirst, shortFirst bytes.Buffer
	longFirst.WriteString("group,minutes,note\n")
	shortFirst.WriteString("group,minutes,note\n")
	for i := range 3000 {
		long := strings.Repeat("n", 200)
		if i < 1500 {
			fmt.Fprintf(&longFirst, "a,%d,%s\n", i, long)
			fmt.Fprintf(&shortFirst, "b,%d,\n", i)
		} else {
			fmt.Fprintf(&longFirst, "b,%d,\n", i)
			fmt.Fprintf(&shortFirst, "a,%d,%s\n", i, long)
		}
	}
	for name, in := range map[string][]byte{"generated": genCSV(5000), "long first": longFirst.Bytes(), "short first": shortFirst.Bytes()} {
		sized, err := loadReader(context.Background(), bytes.NewReader(in), benchOptions())
		if err != nil {
			t.Fatal(err)
		}
		grown, err := loadReader(context.Background(), noLen{bytes.NewReader(in)}, benchOptions())
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(sized, grown) {
			t.Errorf("%s: sized and grown tables differ", name)
		}
		if limit := len(in)/3 + 1; cap(sized.Group) > limit {
			t.Errorf("%s: capacity %d above the bound %d", name, cap(sized.Group), limit)
		}
	}
}
