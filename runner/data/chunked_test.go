package data

import (
	"bytes"
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// sameLoad reports how the chunked load of in differs from the sequential one ("" when it
// does not): the same table, value for value (NaN equal to NaN, -0 apart from +0), or the
// same error, with the same text, position, field and cause.
func sameLoad(in []byte, opt Options, chunk, workers int) string {
	want, werr := loadIn(context.Background(), bytes.NewReader(in), opt, int64(len(in)), 0, 0)
	return sameAs(want, werr, in, opt, chunk, workers)
}

// sameAs is sameLoad with the sequential reader's table or error given.
func sameAs(want *Table, werr error, in []byte, opt Options, chunk, workers int) string {
	got, gerr := loadIn(context.Background(), bytes.NewReader(in), opt, int64(len(in)), chunk, workers)
	if (werr != nil) != (gerr != nil) {
		return "error " + errText(gerr) + ", sequential " + errText(werr)
	}
	if werr != nil {
		var we, ge *Error
		if errText(werr) != errText(gerr) || errors.As(werr, &we) != errors.As(gerr, &ge) ||
			we != nil && (we.Line != ge.Line || we.Column != ge.Column || we.Field != ge.Field || errText(we.Err) != errText(ge.Err)) {
			return "error " + errText(gerr) + ", sequential " + errText(werr)
		}
		return ""
	}
	bits := func(v []float64) []uint64 {
		b := make([]uint64, len(v))
		for i, x := range v {
			b[i] = math.Float64bits(x)
			if math.IsNaN(x) {
				b[i] = 1
			}
		}
		return b
	}
	switch {
	case got.Rows != want.Rows || got.SHA256 != want.SHA256 || got.Size != want.Size || got.HighPrecisionCells != want.HighPrecisionCells:
		return "rows, hash, size or precision count differ"
	case !slices.Equal(got.Groups, want.Groups) || !slices.Equal(got.Group, want.Group) || !slices.Equal(got.Line, want.Line):
		return "groups or lines differ"
	case len(got.Outcome) != len(want.Outcome):
		return "outcome columns differ"
	}
	for c := range want.Outcome {
		if !slices.Equal(bits(got.Outcome[c]), bits(want.Outcome[c])) {
			return "outcome " + strconv.Itoa(c) + " differs"
		}
	}
	if len(got.Labels) != len(want.Labels) {
		return "label columns differ"
	}
	for c := range want.Labels {
		if !slices.Equal(got.Labels[c].Values, want.Labels[c].Values) || !slices.Equal(got.Labels[c].Row, want.Labels[c].Row) {
			return "label column " + strconv.Itoa(c) + " differs"
		}
	}
	return ""
}

// chunkedOptions reads columns g (group), x and y (outcomes) and s (labels), with small
// limits on rows and labels so that both are reached inside chunks and across them.
func chunkedOptions(rows, labels int) Options {
	return Options{Name: "d.csv", Delimiter: ',', Decimal: '.', GroupColumn: "g",
		OutcomeColumns: []string{"x", "y"}, LabelColumns: []string{"s"}, MissingTokens: []string{"", "NA"},
		Limits: Limits{Rows: rows, Labels: labels, CellBytes: 40, RecordBytes: 120}}
}

// chunkedInputs returns small CSV texts that cover what a chunk boundary can meet: quoted
// fields with delimiters, doubled quotes and line ends (LF and CRLF) inside, CRLF line
// ends, blank lines, a BOM, a last line without a line end or ending in CR, and errors of
// every kind: a stray quote, text after a closing quote, a quote left open, a wrong
// number of fields, a bad number, a cell or record over its limit, a bad UTF-8 label.
func chunkedInputs() []string {
	return []string{
		"g,x,y,s\nA,1,2,p\nB,3,4,q\n",
		"\uFEFFg,x,y,s\r\nA,1,2,p\r\n\r\nB,3.5,-0,q\r\nA,NA,,p",
		"g,x,y,s\n\"A,1\",1,2,\"p\nq\"\n\"B\"\"x\",2,3,\"r\r\ns\"\n\n\nC,4,5,t\r",
		"g,x,y,s\nA,1,2,p\nB,3,4,q\nC,5,6,r\nD,7,8,s\nE,9,1,t\nA,1,2,p\n",
		"g,x,y,s\nA,1,2,p\nB,3,4,q\nC,5,6,r\nD,7,8,u\nE,9,1,v\nF,1,2,w\n",
		"g,x,y,s\nA,1,2,p\nB,3,4,q\nA,1,2,p\nA,1,2,p\nA,1,2,p\nB,1,2,q\nB,1,2,q\n",
		"g,x,y,s\nA,1,2,p\nB,3,4,q\nA,x\"y,2,p\nB,1,2,q\n",
		"g,x,y,s\nA,1,2,p\n\"B\"z,3,4,q\nA,1,2,p\n",
		"g,x,y,s\nA,1,2,p\nB,3,4,\"q\nA,1,2,p\nB,1,2,q\n",
		"g,x,y,s\nA,1,2,p\nB,3,4\nA,1,2,p\n",
		"g,x,y,s\nA,1,2,p\nB,3e999,4,q\nA,1e-999,2,p\nB,1.,2,q\n",
		"g,x,y,s\nA,1,2,p\nB,3,4,qqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqqq\nA,1,2,p\n",
		"g,x,y,s\nA,1,2,p\n\"" + strings.Repeat("B\n", 70) + "\",3,4,q\nA,1,2,p\n",
		"g,x,y,s\nA,1,2,p\n\xff\xfe,3,4,q\nA,1,2,p\n",
		"g,x,y,s\nA,1,2,p\nB,1.23456789012345678,4,q\n,1,2,p\nA,2,2,\n",
		"g,x,y,s\n",
		"g,x,y,s\n\n\n",
		"\n\ng,x,y,s\nA,1,2,p\n",
		"g,x,y\nA,1,2\n",
	}
}

// TestChunkedEqualsSequential: reading in chunks gives the sequential reader's table or
// error, on every input of chunkedInputs and on seeded random texts made of their
// pieces, with a chunk boundary at every byte (chunk sizes 1 to the input's length) and
// 1 to 3 workers (random texts: one number of workers per chunk size), under limits on rows and labels that are reached within a chunk and
// across chunks. 60 random texts; 1000 with RANKPLAN_EXHAUSTIVE=1.
func TestChunkedEqualsSequential(t *testing.T) {
	inputs := chunkedInputs()
	rng := rand.New(rand.NewPCG(5, 6))
	random := 60
	if os.Getenv("RANKPLAN_EXHAUSTIVE") == "1" {
		random = 1000
	}
	pieces := []string{"A", "B", "C", "\"A,\"", "\"B\"\"\"", "\"x\ny\"", "\"p\r\nq\"", "1", "-0", "2.5", "NA", "", "1e3", "x\"", "\xff", "p", "q", "r"}
	for range random {
		var b strings.Builder
		b.WriteString("g,x,y,s\n")
		for range 1 + rng.IntN(8) {
			for f := range 4 {
				if f > 0 {
					b.WriteByte(',')
				}
				b.WriteString(pieces[rng.IntN(len(pieces))])
			}
			b.WriteString([]string{"\n", "\r\n", "\n\n", ""}[rng.IntN(4)])
		}
		inputs = append(inputs, b.String())
	}
	fixed := len(inputs)
	for i, in := range inputs {
		limits := [][2]int{{0, 0}, {3, 0}, {0, 3}, {5, 4}}
		if i >= fixed {
			limits = [][2]int{{0, 0}, {4, 3}}
		}
		for _, lim := range limits {
			opt := chunkedOptions(lim[0], lim[1])
			want, werr := loadIn(context.Background(), strings.NewReader(in), opt, int64(len(in)), 0, 0)
			for chunk := 1; chunk <= len(in)+1; chunk++ {
				for workers := 1; workers <= 3; workers++ {
					if i >= fixed && workers != 1+chunk%3 {
						continue // random texts: one number of workers per chunk size
					}
					if d := sameAs(want, werr, []byte(in), opt, chunk, workers); d != "" {
						t.Fatalf("input %d %q, limits %v, chunk %d, %d workers: %s", i, in, lim, chunk, workers, d)
					}
				}
			}
		}
	}
}

// TestChunkedLarge: a generated file of 200,000 rows (about 5 MB, read in chunks by load
// itself) gives the sequential reader's table, as do files with a quoted field spanning
// lines at many places, and an error near the end names the same line.
func TestChunkedLarge(t *testing.T) {
	in := genCSV(200_000)
	if len(in) < parallelMinBytes {
		t.Fatalf("the input has %d bytes, fewer than parallelMinBytes", len(in))
	}
	opt := benchOptions()
	for _, chunk := range []int{chunkBytes, 4096, 1000} {
		if d := sameLoad(in, opt, chunk, 2); d != "" {
			t.Fatalf("chunk %d: %s", chunk, d)
		}
	}
	bad := slices.Clone(in)
	at := bytes.LastIndex(bad[:len(bad)-1000], []byte("\n")) + 1
	bad = slices.Insert(bad, at, []byte("7,\"low\ndose\"x,1.5\n")...)
	if d := sameLoad(bad, opt, 4096, 2); d != "" {
		t.Fatalf("an error near the end: %s", d)
	}
	tab, err := loadReader(context.Background(), bytes.NewReader(in), opt)
	want, werr := loadIn(context.Background(), bytes.NewReader(in), opt, int64(len(in)), 0, 0)
	if err != nil || werr != nil || !reflect.DeepEqual(tab.Groups, want.Groups) || tab.Rows != want.Rows {
		t.Fatalf("load: %v %v", err, werr)
	}
}

// TestLastRecordEnd checks the boundary search on hand cases.
func TestLastRecordEnd(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want int
	}{
		{"", 0},
		{"abc", 0},
		{"a\n", 2},
		{"a\nb\nc", 4},
		{"\"a\nb\"", 0},
		{"\"a\nb\"\nc", 6},
		{"x\n\"a\n", 2},
		{"\"a\"\"\n\"\"b\"\n", 10},
		{"a\r\n\"\"\n", 6},
	} {
		if got := lastRecordEnd([]byte(tc.in)); got != tc.want {
			t.Errorf("lastRecordEnd(%q) = %d, want %d", tc.in, got, tc.want)
		}
	}
}

// FuzzChunkedEqualsSequential compares the chunked and the sequential reader on fuzzed
// text after a fixed header, at a fuzzed chunk size and number of workers.
func FuzzChunkedEqualsSequential(f *testing.F) {
	for _, in := range chunkedInputs() {
		f.Add([]byte(in), uint8(3), uint8(2))
	}
	f.Fuzz(func(t *testing.T, in []byte, chunk, workers uint8) {
		if len(in) > 4096 {
			return
		}
		opt := chunkedOptions(4, 3)
		if d := sameLoad(in, opt, 1+int(chunk), 1+int(workers)%3); d != "" {
			t.Fatalf("chunk %d, %d workers: %s", 1+int(chunk), 1+int(workers)%3, d)
		}
	})
}
