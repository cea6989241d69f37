package data

import (
	"bytes"
	"context"
	"crypto/sha256"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"
	"unicode/utf8"
)

// All CSV text in these tests is invented for the tests.

// base returns the options most cases use: d.csv, comma, point, group g, outcome x,
// "" and "NA" missing.
func base() Options {
	return Options{Name: "d.csv", Delimiter: ',', Decimal: '.', GroupColumn: "g",
		OutcomeColumns: []string{"x"}, MissingTokens: []string{"", "NA"}}
}

func loadString(s string, opt Options) (*Table, error) {
	return loadReader(context.Background(), strings.NewReader(s), opt)
}

// sameFloat reports whether a and b are the same float64, telling -0 from 0 and
// counting two NaNs as equal.
func sameFloat(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Float64bits(a) == math.Float64bits(b)
}

func TestLoadErrors(t *testing.T) {
	tests := []struct {
		name string
		in   string
		opt  func(*Options)
		want string
	}{
		// Header.
		{"missing column", "a,b,c\n1,2,3\n", nil,
			`d.csv:1: no column "g" in the header (columns: a, b, c)`},
		{"missing outcome column", "g,y\na,1\n", nil,
			`d.csv:1: no column "x" in the header (columns: g, y)`},
		{"header after blank lines", "\n\r\n\na,b\n", nil,
			`d.csv:4: no column "g" in the header (columns: a, b)`},
		{"duplicate group column", "g,x,g\na,1,b\n", nil,
			`d.csv:1: column "g" appears more than once in the header (columns 1 and 3)`},
		{"duplicate outcome column", "x,g,x\n1,a,2\n", nil,
			`d.csv:1: column "x" appears more than once in the header (columns 1 and 3)`},
		{"header matched exactly: space", " g,x\na,1\n", nil,
			`d.csv:1: no column "g" in the header (columns:  g, x)`},
		{"header matched exactly: case", "G,x\na,1\n", nil,
			`d.csv:1: no column "g" in the header (columns: G, x)`},
		{"BOM only removed at the start", "x,\xef\xbb\xbfg\n1,a\n", nil,
			"d.csv:1: no column \"g\" in the header (columns: x, \ufeffg)"},
		// Field counts.
		{"too many fields", "g,x,y\na,1,2,3\n", nil, `d.csv:2: record has 4 fields, header has 3`},
		{"too few fields", "g,x,y\na,1,2\nb,1\n", nil, `d.csv:3: record has 2 fields, header has 3`},
		{"field count of a multi-line record names its first line", "g,x\n\"a\nb\",1,2\n", nil,
			`d.csv:2: record has 3 fields, header has 2`},
		// Line numbers count blank lines.
		{"line after blank lines", "g,x\n\n\r\na,zz\n", nil,
			`d.csv:4:3: column "x": cannot read "zz" as a number`},
		{"line of a field after a multi-line field", "g,x\n\"a\n\nb\",zz\n", nil,
			`d.csv:4:4: column "x": cannot read "zz" as a number`},
		{"column of a quoted field is its quote", "g,x\na,\"1x\"\n", nil,
			`d.csv:2:3: column "x": cannot read "1x" as a number`},
		// Missing values.
		{"fail on missing outcome", "g,x\na,NA\n", func(o *Options) { o.FailOnMissing = true },
			`d.csv:2:3: column "x": missing value "NA"`},
		{"fail on missing empty outcome", "g,x\na,1\nb,\n", func(o *Options) { o.FailOnMissing = true },
			`d.csv:3:3: column "x": missing value ""`},
		{"fail on missing group", "g,x\n NA ,1\n", func(o *Options) { o.FailOnMissing = true },
			`d.csv:2:1: column "g": missing value "NA"`},
		{"tokens match exactly", "g,x\na,na\n", nil, `d.csv:2:3: column "x": cannot read "na" as a number`},
		{"no tokens: empty is not a number", "g,x\na,\n", func(o *Options) { o.MissingTokens = nil },
			`d.csv:2:3: column "x": cannot read "" as a number`},
		// Numbers.
		{"trailing junk", "g,x\na,12.5x\n", nil, `d.csv:2:3: column "x": cannot read "12.5x" as a number`},
		{"message shows the cell as written", "g,x\na, 1 2 \n", nil,
			`d.csv:2:3: column "x": cannot read " 1 2 " as a number`},
		{"overflow", "g,x\na,1e400\n", nil, `d.csv:2:3: column "x": value "1e400" is out of range`},
		{"negative overflow", "g,x\na,-1e400\n", nil, `d.csv:2:3: column "x": value "-1e400" is out of range`},
		{"underflow of a non-zero value", "g,x\na,1e-400\n", nil,
			`d.csv:2:3: column "x": value "1e-400" is out of range`},
		{"point with decimal comma", "g;x\na;1.5\n", func(o *Options) { o.Delimiter, o.Decimal = ';', ',' },
			`d.csv:2:3: column "x": cannot read "1.5" as a number`},
		{"thousands separator with decimal comma", "g;x\na;1.000,5\n",
			func(o *Options) { o.Delimiter, o.Decimal = ';', ',' },
			`d.csv:2:3: column "x": cannot read "1.000,5" as a number`},
		{"thousands separator with decimal point", "g,x\na,\"1,000.5\"\n", nil,
			`d.csv:2:3: column "x": cannot read "1,000.5" as a number`},
		{"long cell is cut in the message", "g,x\na," + strings.Repeat("9", 70) + "z\n", nil,
			`d.csv:2:3: column "x": cannot read "` + strings.Repeat("9", 64) + `"... (71 bytes) as a number`},
		// Quoting.
		{"bare quote", "g,x\na\"b,1\n", nil,
			`d.csv:2:2: column "g": quote inside an unquoted field (quote the whole field and write each inner quote twice)`},
		{"text after closing quote", "g,x\n\"a\"b,1\n", nil,
			`d.csv:2:4: column "g": text after the closing quote of a quoted field (write a quote inside a quoted field twice)`},
		{"unterminated quote", "g,x\na,1\nb,\"2\n\n", nil,
			`d.csv:3: column "x": quoted field opened at column 3 is not closed before the end of the file`},
		{"unterminated quote without final newline", "g,x\n\"a", nil,
			`d.csv:2: column "g": quoted field opened at column 1 is not closed before the end of the file`},
		{"quoting error in the header", "g,\"x\"\"\n", nil,
			`d.csv:1: quoted field opened at column 3 is not closed before the end of the file`},
		{"quoting error beyond the header's fields", "g,x\na,1,b\"\n", nil,
			`d.csv:2:6: quote inside an unquoted field (quote the whole field and write each inner quote twice)`},
		// Empty input.
		{"empty file", "", nil, `d.csv: empty file`},
		{"only blank lines", "\n\r\n\n", nil, `d.csv: empty file`},
		{"only a BOM", "\xef\xbb\xbf", nil, `d.csv: empty file`},
		{"header only", "g,x\n", nil, `d.csv: no data rows`},
		{"header and blank lines", "g,x\n\n\n", nil, `d.csv: no data rows`},
		// Labels.
		{"invalid UTF-8 label", "g,x\na,1\n\xffb,2\n", nil,
			`d.csv:3:1: column "g": group label "\xffb" is not valid UTF-8`},
		{"no name", "g,x\na,zz\n", func(o *Options) { o.Name = "" },
			`2:3: column "x": cannot read "zz" as a number`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			opt := base()
			if tt.opt != nil {
				tt.opt(&opt)
			}
			tab, err := loadString(tt.in, opt)
			if err == nil {
				t.Fatalf("no error; got table %+v", tab)
			}
			if got := err.Error(); got != tt.want {
				t.Errorf("error\n got %q\nwant %q", got, tt.want)
			}
			var e *Error
			if !errors.As(err, &e) {
				t.Errorf("error %T is not an *Error", err)
			}
		})
	}
}

// TestNumbersRejected checks the syntax rule: only plain decimal notation, whatever
// strconv.ParseFloat would accept.
func TestNumbersRejected(t *testing.T) {
	for _, cell := range []string{
		"inf", "+Inf", "-inf", "Infinity", "nan", "NaN", "0x1p3", "0X10", "1_000", "1__0",
		"1.", ".", "-.", "+", "-", "e5", ".e5", "1e", "1e+", "1e-", "1e5.5", "--1", "+-1",
		"1,5", "1 000", "١", "１", "1.5.5", "0b101", "0o17", "1d3", "1f", "\t1", "1\r",
	} {
		t.Run(cell, func(t *testing.T) {
			in := "g,x\na,\"" + cell + "\"\n"
			_, err := loadString(in, base())
			want := `d.csv:2:3: column "x": cannot read ` + strconv.Quote(cell) + ` as a number`
			if err == nil || err.Error() != want {
				t.Errorf("got %v, want %s", err, want)
			}
			if !errors.Is(err, strconv.ErrSyntax) {
				t.Errorf("error does not wrap strconv.ErrSyntax: %v", err)
			}
		})
	}
}

// TestNumbersAccepted checks accepted cells. Each wanted value is a Go constant, which
// the compiler rounds to the nearest float64 (Go specification, "Constant expressions";
// IEEE 754 round to nearest even): common practice as an oracle for short decimals.
func TestNumbersAccepted(t *testing.T) {
	tests := []struct {
		cell string
		dec  byte
		want float64
	}{
		{"1.5", '.', 1.5},
		{"  1.5  ", '.', 1.5},
		{".5", '.', 0.5},
		{"+.5", '.', 0.5},
		{"-.5e1", '.', -5},
		{"007", '.', 7},
		{"-2E3", '.', -2000},
		{"+1e-2", '.', 0.01},
		{"1e+2", '.', 100},
		{"0.1", '.', 0.1},
		{"123456789", '.', 123456789},
		{"1,5", ',', 1.5},
		{",25", ',', 0.25},
		{"-3,5e-1", ',', -0.35},
		{"0e999999999999999999999", '.', 0},
		{"1.7976931348623157e308", '.', math.MaxFloat64},
		{"4.9406564584124654e-324", '.', 5e-324},
	}
	for _, tt := range tests {
		t.Run(tt.cell, func(t *testing.T) {
			opt := base()
			opt.Decimal = tt.dec
			if tt.dec == ',' {
				opt.Delimiter = ';'
			}
			in := "g" + string(opt.Delimiter) + "x\na" + string(opt.Delimiter) + tt.cell + "\n"
			tab, err := loadString(in, opt)
			if err != nil {
				t.Fatal(err)
			}
			if got := tab.Outcome[0][0]; !sameFloat(got, tt.want) {
				t.Errorf("got %v, want %v", got, tt.want)
			}
		})
	}
}

func TestNegativeZero(t *testing.T) {
	tab, err := loadString("g,x\na,-0\nb,-0.0e5\nc,0\n", base())
	if err != nil {
		t.Fatal(err)
	}
	for i, neg := range []bool{true, true, false} {
		v := tab.Outcome[0][i]
		if v != 0 || math.Signbit(v) != neg {
			t.Errorf("row %d: got %v (sign bit %v), want zero with sign bit %v", i, v, math.Signbit(v), neg)
		}
	}
}

func TestMissing(t *testing.T) {
	in := "g,x,y\na,1,NA\nNA,2,3\n  ,  ,4\nb, NA ,\nNA2,5,6\n"
	opt := base()
	opt.OutcomeColumns = []string{"x", "y"}
	tab, err := loadString(in, opt)
	if err != nil {
		t.Fatal(err)
	}
	nan := math.NaN()
	wantGroup := []int32{0, -1, -1, 1, 2}
	wantX := []float64{1, 2, nan, nan, 5}
	wantY := []float64{nan, 3, 4, nan, 6}
	if !slices.Equal(tab.Group, wantGroup) {
		t.Errorf("Group = %v, want %v", tab.Group, wantGroup)
	}
	if !slices.Equal(tab.Groups, []string{"a", "b", "NA2"}) {
		t.Errorf("Groups = %q", tab.Groups)
	}
	if !slices.EqualFunc(tab.Outcome[0], wantX, sameFloat) || !slices.EqualFunc(tab.Outcome[1], wantY, sameFloat) {
		t.Errorf("Outcome = %v, want %v %v", tab.Outcome, wantX, wantY)
	}
	if tab.Rows != 5 {
		t.Errorf("Rows = %d, want 5", tab.Rows)
	}
}

// TestMissingTokenLooksLikeNumber checks that a token is matched before the number
// syntax, so a numeric sentinel such as -99 reads as missing.
func TestMissingTokenLooksLikeNumber(t *testing.T) {
	opt := base()
	opt.MissingTokens = []string{"-99"}
	tab, err := loadString("g,x\na,-99\na,-99.0\n", opt)
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(tab.Outcome[0][0]) || tab.Outcome[0][1] != -99 {
		t.Errorf("Outcome = %v, want [NaN -99]", tab.Outcome[0])
	}
}

func TestGroupsAndLines(t *testing.T) {
	in := "g,x\nb,1\n\na,2\n\"b\",3\n\"a\nz\",4\n b,5\nb ,6\n"
	tab, err := loadString(in, base())
	if err != nil {
		t.Fatal(err)
	}
	// Labels are kept as written: " b" and "b " are labels of their own.
	wantGroups := []string{"b", "a", "a\nz", " b", "b "}
	if !slices.Equal(tab.Groups, wantGroups) {
		t.Errorf("Groups = %q, want %q", tab.Groups, wantGroups)
	}
	if want := []int32{0, 1, 0, 2, 3, 4}; !slices.Equal(tab.Group, want) {
		t.Errorf("Group = %v, want %v", tab.Group, want)
	}
	if want := []int32{2, 4, 5, 6, 8, 9}; !slices.Equal(tab.Line, want) {
		t.Errorf("Line = %v, want %v", tab.Line, want)
	}
	if tab.Rows != 6 || len(tab.Outcome[0]) != 6 {
		t.Errorf("Rows = %d, len = %d, want 6", tab.Rows, len(tab.Outcome[0]))
	}
}

// TestHighPrecisionCells checks the count of cells with more than 15 significant
// digits, the threshold below which distinct decimals keep distinct float64 values
// (DBL_DIG = 15, ISO/IEC 9899:2011 5.2.4.2.2). The two 18-digit integers below are
// the same float64, as Python 3.11 float() also gives (testdata/reference.json, tab.csv).
func TestHighPrecisionCells(t *testing.T) {
	tests := []struct {
		cell string
		dec  byte
		sig  int
	}{
		{"0", '.', 0},
		{"0.000", '.', 0},
		{"-0.0e10", '.', 0},
		{"1", '.', 1},
		{"1.50", '.', 2},
		{"1200", '.', 2},
		{"0.0015", '.', 2},
		{"000123.4", '.', 4},
		{"123456789012345", '.', 15},
		{"1234567890123456", '.', 16},
		{"0.000123456789012345", '.', 15},
		{"0.0001234567890123456", '.', 16},
		{"1.000000000000000", '.', 1},
		{"1000000000000000.1", '.', 17},
		{"-1.23456789012345e-300", '.', 15},
		{"0,30000000000000001", ',', 17},
		{".30000000000000001", '.', 17},
	}
	for _, tt := range tests {
		t.Run(tt.cell, func(t *testing.T) {
			sig, ok := scanDecimal([]byte(tt.cell), tt.dec)
			if !ok || sig != tt.sig {
				t.Errorf("scanDecimal = %d, %v; want %d, true", sig, ok, tt.sig)
			}
		})
	}
	in := "g,x\na,123456789012345678\na,123456789012345679\na,0.3\na,0.30000000000000001\na,1.5\n"
	tab, err := loadString(in, base())
	if err != nil {
		t.Fatal(err)
	}
	if tab.HighPrecisionCells != 3 {
		t.Errorf("HighPrecisionCells = %d, want 3", tab.HighPrecisionCells)
	}
	if x := tab.Outcome[0]; x[0] != x[1] || x[2] != x[3] {
		t.Errorf("expected merged values, got %v", x)
	}
}

func TestOptionErrors(t *testing.T) {
	tests := []struct {
		name string
		opt  func(*Options)
		want string
	}{
		{"zero delimiter", func(o *Options) { o.Delimiter = 0 }, `data options: delimiter '\x00' is not one of ',', ';' or '\t'`},
		{"pipe delimiter", func(o *Options) { o.Delimiter = '|' }, `data options: delimiter '|' is not one of ',', ';' or '\t'`},
		{"zero decimal", func(o *Options) { o.Decimal = 0 }, `data options: decimal separator '\x00' is not '.' or ','`},
		{"decimal comma with comma", func(o *Options) { o.Decimal = ',' },
			`data options: decimal separator ',' needs a delimiter other than ','`},
		{"no group", func(o *Options) { o.GroupColumn = "" }, `data options: no group column`},
		{"no outcome", func(o *Options) { o.OutcomeColumns = nil }, `data options: no outcome column`},
		{"empty outcome name", func(o *Options) { o.OutcomeColumns = []string{"x", ""} },
			`data options: outcome column 2 has an empty name`},
		{"group is outcome", func(o *Options) { o.OutcomeColumns = []string{"g"} },
			`data options: column "g" is both the group column and an outcome column`},
		{"outcome twice", func(o *Options) { o.OutcomeColumns = []string{"x", "y", "x"} },
			`data options: outcome column "x" is listed twice`},
		{"spaced token", func(o *Options) { o.MissingTokens = []string{"NA", " NA"} },
			`data options: missing-value token " NA" starts or ends with a space, so no trimmed cell can match it`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			opt := base()
			tt.opt(&opt)
			_, err := loadString("g,x\na,1\n", opt)
			if err == nil || err.Error() != tt.want {
				t.Errorf("got %v\nwant %s", err, tt.want)
			}
		})
	}
}

func TestErrorFormat(t *testing.T) {
	cause := errors.New("cause")
	tests := []struct {
		e    Error
		want string
	}{
		{Error{File: "f.csv", Line: 3, Column: 7, Field: "minutes", Msg: "m"}, `f.csv:3:7: column "minutes": m`},
		{Error{File: "f.csv", Line: 3, Msg: "m"}, `f.csv:3: m`},
		{Error{File: "f.csv", Msg: "m"}, `f.csv: m`},
		{Error{File: "f.csv", Column: 4, Msg: "m"}, `f.csv: m`},
		{Error{Line: 3, Column: 7, Msg: "m"}, `3:7: m`},
		{Error{Msg: "m"}, `m`},
		{Error{File: "f.csv", Line: 2, Field: "a\"b", Msg: "m", Err: cause}, `f.csv:2: column "a\"b": m`},
	}
	for _, tt := range tests {
		if got := tt.e.Error(); got != tt.want {
			t.Errorf("got %q, want %q", got, tt.want)
		}
	}
	e := &Error{Msg: "m", Err: cause}
	if !errors.Is(e, cause) {
		t.Error("Unwrap does not return the cause")
	}
	_, err := loadString("g,x\na,1e999\n", base())
	if !errors.Is(err, strconv.ErrRange) {
		t.Errorf("range error does not wrap strconv.ErrRange: %v", err)
	}
}

func TestFormats(t *testing.T) {
	tests := []struct {
		name string
		in   string
		opt  func(*Options)
	}{
		{"LF", "g,x\na,1\nb,2\n", nil},
		{"CRLF", "g,x\r\na,1\r\nb,2\r\n", nil},
		{"no final line end", "g,x\na,1\nb,2", nil},
		{"final CR", "g,x\na,1\nb,2\r", nil},
		{"BOM", "\xef\xbb\xbfg,x\na,1\nb,2\n", nil},
		{"BOM quoted header", "\xef\xbb\xbf\"g\",\"x\"\r\na,1\r\nb,2\r\n", nil},
		{"semicolon", "g;x\na;1\nb;2\n", func(o *Options) { o.Delimiter = ';' }},
		{"semicolon decimal comma", "g;x\na;1,0\nb;2\n", func(o *Options) { o.Delimiter, o.Decimal = ';', ',' }},
		{"tab decimal comma", "g\tx\n\"a\"\t1,0\nb\t\"2\"\n", func(o *Options) { o.Delimiter, o.Decimal = '\t', ',' }},
		{"extra columns and quotes", "id,\"g\",note,x\n1,a,\"x,\"\"y\"\"\n\",1\n2,b,,2\n", nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			opt := base()
			if tt.opt != nil {
				tt.opt(&opt)
			}
			tab, err := loadString(tt.in, opt)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(tab.Groups, []string{"a", "b"}) || !slices.Equal(tab.Group, []int32{0, 1}) ||
				!slices.Equal(tab.Outcome[0], []float64{1, 2}) || tab.Rows != 2 {
				t.Errorf("got %+v", tab)
			}
			if sum := sha256.Sum256([]byte(tt.in)); tab.SHA256 != sum || tab.Size != int64(len(tt.in)) {
				t.Errorf("SHA256/Size = %x/%d, want %x/%d", tab.SHA256, tab.Size, sum, len(tt.in))
			}
		})
	}
}

// TestReaders checks that results do not depend on how the reader splits its bytes,
// including lines longer than the read buffer (with a cell limit raised above them).
func TestReaders(t *testing.T) {
	long := strings.Repeat("é", bufSize) // a label longer than the read buffer
	in := "g,x\n" + long + ",1\n\"q\n" + long + "\",2\n" + long + ",3\nb," + strings.Repeat("0", 3*bufSize) + "1\n"
	base := func() Options {
		o := base()
		o.Limits.CellBytes = 4 * bufSize
		return o
	}
	want, err := loadString(in, base())
	if err != nil {
		t.Fatal(err)
	}
	if len(want.Groups) != 3 || want.Groups[0] != long || want.Groups[1] != "q\n"+long ||
		!slices.Equal(want.Group, []int32{0, 1, 0, 2}) || !slices.Equal(want.Outcome[0], []float64{1, 2, 3, 1}) {
		t.Fatalf("wrong table: groups %d, %v %v", len(want.Groups), want.Group, want.Outcome)
	}
	for name, r := range map[string]func() *Table{
		"one byte": func() *Table {
			tab, err := loadReader(context.Background(), iotest.OneByteReader(strings.NewReader(in)), base())
			if err != nil {
				t.Fatal(err)
			}
			return tab
		},
		"half": func() *Table {
			tab, err := loadReader(context.Background(), iotest.HalfReader(strings.NewReader(in)), base())
			if err != nil {
				t.Fatal(err)
			}
			return tab
		},
		"data with EOF": func() *Table {
			tab, err := loadReader(context.Background(), iotest.DataErrReader(strings.NewReader(in)), base())
			if err != nil {
				t.Fatal(err)
			}
			return tab
		},
	} {
		got := r()
		if !slices.Equal(got.Groups, want.Groups) || !slices.Equal(got.Group, want.Group) ||
			!slices.Equal(got.Outcome[0], want.Outcome[0]) || got.SHA256 != want.SHA256 || got.Size != want.Size {
			t.Errorf("%s: results differ", name)
		}
	}
	if want.SHA256 != sha256.Sum256([]byte(in)) || want.Size != int64(len(in)) {
		t.Error("SHA256 or Size wrong")
	}
}

func TestReadError(t *testing.T) {
	boom := errors.New("disk on fire")
	for name, prefix := range map[string]string{
		"at start":  "",
		"mid-file":  "g,x\na,1\n",
		"mid-field": "g,x\na,\"1",
	} {
		t.Run(name, func(t *testing.T) {
			_, err := loadReader(context.Background(), &failAfter{data: []byte(prefix), err: boom}, base())
			if !errors.Is(err, boom) {
				t.Errorf("got %v, want an error wrapping %v", err, boom)
			}
		})
	}
}

// failAfter returns its data, then err.
type failAfter struct {
	data []byte
	err  error
}

func (f *failAfter) Read(b []byte) (int, error) {
	if len(f.data) == 0 {
		return 0, f.err
	}
	n := copy(b, f.data)
	f.data = f.data[n:]
	return n, nil
}

// TestInputsUnchanged checks that loadReader changes neither the options' slices nor the
// input bytes, also when it rewrites decimal commas.
func TestInputsUnchanged(t *testing.T) {
	in := []byte("g;x;y\na;1,5;2\r\nb;\"3,25\";NA\n")
	inCopy := bytes.Clone(in)
	opt := base()
	opt.Delimiter, opt.Decimal = ';', ','
	opt.OutcomeColumns = []string{"y", "x"}
	opt.MissingTokens = []string{"NA", ""}
	cols, toks := slices.Clone(opt.OutcomeColumns), slices.Clone(opt.MissingTokens)
	tab, err := loadReader(context.Background(), bytes.NewReader(in), opt)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(in, inCopy) || !slices.Equal(opt.OutcomeColumns, cols) || !slices.Equal(opt.MissingTokens, toks) {
		t.Error("loadReader changed its inputs")
	}
	if !slices.EqualFunc(tab.Outcome[1], []float64{1.5, 3.25}, sameFloat) ||
		!slices.EqualFunc(tab.Outcome[0], []float64{2, math.NaN()}, sameFloat) {
		t.Errorf("Outcome = %v", tab.Outcome)
	}
}

func TestLoadFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "d.csv")
	in := "g,x\na,1\nb,zz\n"
	if err := os.WriteFile(path, []byte(in), 0o600); err != nil {
		t.Fatal(err)
	}
	opt := base()
	opt.Name = ""
	_, err := LoadFile(context.Background(), path, opt)
	if want := path + `:3:3: column "x": cannot read "zz" as a number`; err == nil || err.Error() != want {
		t.Errorf("got %v, want %s", err, want)
	}
	opt.Name = "shown.csv"
	_, err = LoadFile(context.Background(), path, opt)
	if want := `shown.csv:3:3: column "x": cannot read "zz" as a number`; err == nil || err.Error() != want {
		t.Errorf("got %v, want %s", err, want)
	}
	_, err = LoadFile(context.Background(), filepath.Join(dir, "absent.csv"), opt)
	if !errors.Is(err, os.ErrNotExist) {
		t.Errorf("got %v, want a not-exist error", err)
	}
}

func TestHeader(t *testing.T) {
	tests := []struct {
		in   string
		want []string
		err  string
	}{
		{"\xef\xbb\xbf\n\"a b\",\"c\"\"d\",\r\n1,2,3\n", []string{"a b", `c"d`, ""}, ""},
		{"only\n", []string{"only"}, ""},
		{"", nil, "h.csv: empty file"},
		{"\n\n", nil, "h.csv: empty file"},
		{"a,\"b\n", nil, "h.csv:1: quoted field opened at column 3 is not closed before the end of the file"},
	}
	for _, tt := range tests {
		got, err := Header(strings.NewReader(tt.in), Options{Name: "h.csv", Delimiter: ','})
		if tt.err != "" {
			if err == nil || err.Error() != tt.err {
				t.Errorf("%q: got %v, want %s", tt.in, err, tt.err)
			}
			continue
		}
		if err != nil || !slices.Equal(got, tt.want) {
			t.Errorf("%q: got %q, %v; want %q", tt.in, got, err, tt.want)
		}
	}
	if _, err := Header(strings.NewReader("a\n"), Options{}); err == nil {
		t.Error("Header accepted a zero delimiter")
	}
}

// FuzzLoad checks that loadReader never panics and that a table it returns is consistent:
// parallel columns of equal length, group indices in range, distinct valid UTF-8
// labels, increasing line numbers, and the digest of exactly the input bytes.
func FuzzLoad(f *testing.F) {
	for _, s := range []string{
		"g,x\na,1\n", "g,x\nNA,NA\n\"b\nc\",-0\n", "x,g\n1e400,a\n", "\xef\xbb\xbfg,x\r\na,1\r\n",
		"g,x,y\na,1\n", "g,x\n\xff,1\n", "g,x\na,\"1\n", "g,x\n", "",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, in []byte) {
		tab, err := loadReader(context.Background(), bytes.NewReader(in), base())
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %T is not an *Error: %v", err, err)
			}
			return
		}
		n := tab.Rows
		if n == 0 || len(tab.Group) != n || len(tab.Line) != n || len(tab.Outcome) != 1 || len(tab.Outcome[0]) != n {
			t.Fatalf("inconsistent lengths: rows %d, group %d, line %d", n, len(tab.Group), len(tab.Line))
		}
		seen := map[string]bool{}
		for _, g := range tab.Groups {
			if seen[g] || !utf8.ValidString(g) {
				t.Fatalf("label %q repeated or not UTF-8", g)
			}
			seen[g] = true
		}
		for i, g := range tab.Group {
			if g < -1 || int(g) >= len(tab.Groups) || (i > 0 && tab.Line[i] <= tab.Line[i-1]) {
				t.Fatalf("row %d: group %d, line %d", i, g, tab.Line[i])
			}
		}
		if tab.SHA256 != sha256.Sum256(in) || tab.Size != int64(len(in)) {
			t.Fatal("digest or size wrong")
		}
	})
}

func TestLabelColumns(t *testing.T) {
	opt := base()
	opt.LabelColumns = []string{"site", "arm"}
	in := "site,g,x,arm\nnorth,a,1,A\nsouth,b,2,A\n,a,NA,B\nnorth,b,3,\n\" north\",a,4,A\n"
	tab, err := loadString(in, opt)
	if err != nil {
		t.Fatal(err)
	}
	if len(tab.Labels) != 2 {
		t.Fatalf("%d label columns, want 2", len(tab.Labels))
	}
	// Cells are kept as written: "" is a value of its own (missing tokens do not apply),
	// and " north" differs from "north".
	site, arm := tab.Labels[0], tab.Labels[1]
	if want := []string{"north", "south", "", " north"}; !slices.Equal(site.Values, want) {
		t.Errorf("site values %q, want %q", site.Values, want)
	}
	if want := []int32{0, 1, 2, 0, 3}; !slices.Equal(site.Row, want) {
		t.Errorf("site rows %v, want %v", site.Row, want)
	}
	if want := []string{"A", "B", ""}; !slices.Equal(arm.Values, want) {
		t.Errorf("arm values %q, want %q", arm.Values, want)
	}
	if want := []int32{0, 0, 1, 2, 0}; !slices.Equal(arm.Row, want) {
		t.Errorf("arm rows %v, want %v", arm.Row, want)
	}

	for _, tc := range []struct {
		cols []string
		want string
	}{
		{[]string{"g"}, `data options: column "g" is a label column and the group column or an outcome column`},
		{[]string{"x"}, `data options: column "x" is a label column and the group column or an outcome column`},
		{[]string{"site", "site"}, `data options: label column "site" is listed twice`},
		{[]string{""}, `data options: label column 1 has an empty name`},
		{[]string{"region"}, `d.csv:1: no column "region" in the header (columns: site, g, x, arm)`},
	} {
		opt.LabelColumns = tc.cols
		if _, err := loadString(in, opt); err == nil || err.Error() != tc.want {
			t.Errorf("%q: got %v\nwant %s", tc.cols, err, tc.want)
		}
	}
	opt.LabelColumns = []string{"site"}
	if _, err := loadString("site,g,x\n\xff,a,1\n", opt); err == nil || !strings.Contains(err.Error(), "is not valid UTF-8") {
		t.Errorf("invalid UTF-8 label: %v", err)
	}

	// No per-row allocation for label columns either: ten times the rows, same count.
	gen := func(n int) []byte {
		var b bytes.Buffer
		b.WriteString("site,g,x\n")
		for i := range n {
			fmt.Fprintf(&b, "s%d,g%d,%d\n", i%5, i%3, i)
		}
		return b.Bytes()
	}
	allocs := func(in []byte) float64 {
		return testing.AllocsPerRun(3, func() {
			if _, err := loadReader(context.Background(), bytes.NewReader(in), opt); err != nil {
				t.Fatal(err)
			}
		})
	}
	if a, b := allocs(gen(10_000)), allocs(gen(100_000)); b-a >= 200 {
		t.Errorf("allocations grow with rows: %.0f for 10^4 rows, %.0f for 10^5 rows", a, b)
	}
}

// loadReader loads CSV text from r as LoadFile loads a file, sizing the table from r's
// Len method when it has one (bytes.Reader, strings.Reader, bytes.Buffer).
func loadReader(ctx context.Context, r io.Reader, opt Options) (*Table, error) {
	size := int64(-1)
	if lr, ok := r.(interface{ Len() int }); ok {
		size = int64(lr.Len())
	}
	return load(ctx, r, opt, size)
}
