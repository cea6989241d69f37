package data

import (
	"context"
	"io"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"rankplan/internal/infile/infiletest"
)

// repeatReader yields text over and over, without end: a stand-in for a device such as
// /dev/zero, or for a file far larger than any limit.
type repeatReader struct {
	text string
	at   int
}

func (r *repeatReader) Read(b []byte) (int, error) {
	n := 0
	for n < len(b) {
		c := copy(b[n:], r.text[r.at:])
		n += c
		r.at = (r.at + c) % len(r.text)
	}
	return n, nil
}

// TestLimits checks the position and wording of each limit's error, with the limits
// lowered through Options.Limits, and that an input without end (repeatReader) stops at
// the first limit it passes.
func TestLimits(t *testing.T) {
	for _, tc := range []struct {
		name string
		in   io.Reader
		lim  Limits
		want string
	}{
		{"rows", strings.NewReader("g,x\na,1\n\nb,2\na,3\nb,4\n"), Limits{Rows: 3},
			"d.csv:6: more than 3 data rows, the limit for a data file"},
		{"rows without end", io.MultiReader(strings.NewReader("g,x\n"), &repeatReader{text: "a,1\nb,2\n"}), Limits{Rows: 100000},
			"d.csv:100002: more than 100000 data rows, the limit for a data file"},
		{"cell, plain", strings.NewReader("g,x\na,1\nb,123456789\n"), Limits{CellBytes: 8},
			`d.csv:3:3: column "x": cell of 9 bytes, more than the limit of 8 bytes (8 bytes) for one cell`},
		{"cell, quoted, counted unescaped", strings.NewReader("g,x\n\"a\"\"b\",1\n\"ab\"\"\"\"cd\",2\n"), Limits{CellBytes: 5},
			`d.csv:3:1: column "g": cell of 6 bytes, more than the limit of 5 bytes (5 bytes) for one cell`},
		{"cell across lines", strings.NewReader("g,x\n\"a\nb\nc\",1\n"), Limits{CellBytes: 4},
			`d.csv:2:1: column "g": cell of 5 bytes, more than the limit of 4 bytes (4 bytes) for one cell`},
		{"cell in the header", strings.NewReader("g,xxxxxxxxx\na,1\n"), Limits{CellBytes: 8},
			"d.csv:1:3: cell of 9 bytes, more than the limit of 8 bytes (8 bytes) for one cell"},
		{"record", strings.NewReader("g,x\na,1,,,,,,,,,,,,,,,,,\nb,2\n"), Limits{RecordBytes: 16},
			"d.csv:2: record longer than 16 bytes (16 bytes), the limit for one record of a data file"},
		{"record, line end counted", strings.NewReader("g,x\nab,1234567890\r\n"), Limits{RecordBytes: 14},
			"d.csv:2: record longer than 14 bytes (14 bytes), the limit for one record of a data file"},
		{"record at the limit", strings.NewReader("g,x\nab,123456789\r\nb,1\n"), Limits{RecordBytes: 14, Rows: 1},
			"d.csv:3: more than 1 data rows, the limit for a data file"},
		// Lines 2, 3, 4 of the record take 5, 2 and 2 bytes: 9 > 8 on line 4.
		{"record of several lines", strings.NewReader("g,x\na,\"1\n2\n3\n4\n5\n6\n"), Limits{RecordBytes: 8},
			"d.csv:4: record longer than 8 bytes (8 bytes), the limit for one record of a data file (the record starts on line 2; is a quote left open?)"},
		// A line with no end, longer than the read buffer: the error comes once the limit
		// is passed, holding about the limit and a buffer in memory.
		{"line without end", &repeatReader{text: "x"}, Limits{RecordBytes: 1 << 20},
			"d.csv:1: record longer than 1048576 bytes (1 MiB), the limit for one record of a data file"},
		// Line 2 takes 6 bytes, then 2 a line: 6 + 2·524286 > 2^20 on line 524288.
		{"open quote without end", io.MultiReader(strings.NewReader("g,x\na,\"1"), &repeatReader{text: "2\n"}), Limits{},
			"d.csv:524288: record longer than 1048576 bytes (1 MiB), the limit for one record of a data file (the record starts on line 2; is a quote left open?)"},
		{"group labels", strings.NewReader("g,x\na,1\nb,2\na,3\nc,4\n"), Limits{Labels: 2},
			`d.csv:5:1: column "g": more than 2 distinct labels, the limit for a group or subset column (this cell holds label 3)`},
		{"missing group is no label", strings.NewReader("g,x\na,1\nNA,2\n,3\nb,4\n"), Limits{Labels: 2}, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			opt := base()
			opt.Limits = tc.lim
			start := time.Now()
			_, err := loadReader(context.Background(), tc.in, opt)
			switch {
			case tc.want == "" && err != nil:
				t.Errorf("error %v", err)
			case tc.want != "" && (err == nil || err.Error() != tc.want):
				t.Errorf("error\n%v\nwant\n%s", err, tc.want)
			}
			if _, ok := err.(*Error); err != nil && !ok {
				t.Errorf("%T is not a *data.Error", err)
			}
			if d := time.Since(start); d > 5*time.Second {
				t.Errorf("took %v", d)
			}
		})
	}
}

// TestLabelColumnLimit checks the label limit on a subset column.
func TestLabelColumnLimit(t *testing.T) {
	opt := base()
	opt.LabelColumns = []string{"site"}
	opt.Limits.Labels = 2
	_, err := loadReader(context.Background(), strings.NewReader("g,site,x\na,s1,1\na,s2,2\nb,s1,3\nb,s3,4\n"), opt)
	want := `d.csv:5:3: column "site": more than 2 distinct labels, the limit for a group or subset column (this cell holds label 3)`
	if err == nil || err.Error() != want {
		t.Errorf("error\n%v\nwant\n%s", err, want)
	}
}

// TestDefaultLimits pins the package's limits, which the README documents, and that a
// zero Limits means them.
func TestDefaultLimits(t *testing.T) {
	if got, want := (Limits{}).resolve(), (Limits{Rows: 20_000_000, CellBytes: 16384, RecordBytes: 1 << 20, Labels: 10_000}); got != want {
		t.Errorf("defaults %+v, want %+v", got, want)
	}
	if MaxFileBytes != 1<<32 {
		t.Errorf("MaxFileBytes = %d", MaxFileBytes)
	}
}

// TestLoadFileKinds checks that LoadFile reads regular files only, refusing the others
// at once without opening them for reading, and names what they are.
func TestLoadFileKinds(t *testing.T) {
	dir := infiletest.Kinds(t, ".csv", []byte("g,x\na,1\n"), MaxFileBytes+1)
	for _, tc := range []struct{ name, want string }{
		{"ok.csv", ""},
		{"link.csv", ""},
		{"pipe.csv", "pipe.csv: cannot open the data file: it is a named pipe (FIFO), not a regular file"},
		{"zero.csv", "zero.csv: cannot open the data file: it is a symbolic link to /dev/zero, which is a character device, not a regular file"},
		{"dir.csv", "dir.csv: cannot open the data file: it is a directory, not a regular file"},
		{"big.csv", "big.csv: cannot open the data file: it has 4294967297 bytes, more than the limit of 4294967296 bytes (4 GiB)"},
		{"urandom.csv", "urandom.csv: cannot open the data file: it is a symbolic link to /dev/urandom, which is a character device, not a regular file"},
		{"loop.csv", "loop.csv: cannot open the data file: too many levels of symbolic links"},
		{"outside.csv", ""}, // a link the user names is followed, wherever it points
	} {
		opt := base()
		opt.Name = tc.name
		err := infiletest.Within(t, tc.name, func() error {
			_, err := LoadFile(context.Background(), filepath.Join(dir, tc.name), opt)
			return err
		})
		if tc.want == "" && err != nil || tc.want != "" && (err == nil || err.Error() != tc.want) {
			t.Errorf("%s: error\n%v\nwant\n%s", tc.name, err, tc.want)
		}
	}
}
