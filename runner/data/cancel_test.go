package data

import (
	"bytes"
	"context"
	"errors"
	"slices"
	"strconv"
	"testing"
)

// cancelAfter passes reads of r through and cancels the context once more than n bytes
// have been read.
type cancelAfter struct {
	r      *bytes.Reader
	n      int64
	read   int64
	cancel context.CancelFunc
}

func (c *cancelAfter) Read(b []byte) (int, error) {
	k, err := c.r.Read(b)
	c.read += int64(k)
	if c.read > c.n {
		c.cancel()
	}
	return k, err
}

// TestLoadCancel checks that loadReader stops with the context: cancelled before the call it
// reads nothing; cancelled after the first megabyte of a 200,000-row file (invented
// rows) it returns context.Canceled having read at most one more buffer; with a live
// context it loads the same table as with context.Background.
func TestLoadCancel(t *testing.T) {
	var in bytes.Buffer
	in.WriteString("g,x\n")
	for i := range 200_000 {
		in.WriteString("grp" + strconv.Itoa(i%7) + "," + strconv.Itoa(i*7919%100_003) + "\n")
	}
	const mib = 1 << 20
	for _, tc := range []struct {
		name     string
		after    int64 // cancel once more than this many bytes are read; -1: before the call
		wantErr  bool
		maxBytes int64 // the most bytes read
	}{
		{"before", -1, true, 0},
		{"during", mib, true, mib + 2*bufSize},
		{"live", int64(in.Len()), false, int64(in.Len())},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			src := &cancelAfter{r: bytes.NewReader(in.Bytes()), n: max(tc.after, 0), cancel: cancel}
			if tc.after < 0 {
				cancel()
			}
			tab, err := loadReader(ctx, src, base())
			if tc.wantErr != (err != nil) || err != nil && !errors.Is(err, context.Canceled) {
				t.Fatalf("error %v, want context.Canceled: %v", err, tc.wantErr)
			}
			if src.read > tc.maxBytes {
				t.Errorf("%d bytes read, want at most %d", src.read, tc.maxBytes)
			}
			if err != nil {
				return
			}
			want, err := loadReader(context.Background(), bytes.NewReader(in.Bytes()), base())
			if err != nil {
				t.Fatal(err)
			}
			if tab.Rows != want.Rows || tab.SHA256 != want.SHA256 || !slices.EqualFunc(tab.Outcome[0], want.Outcome[0], sameFloat) {
				t.Errorf("with a live context: %d rows, SHA-256 %x; with context.Background: %d rows, %x", tab.Rows, tab.SHA256, want.Rows, want.SHA256)
			}
		})
	}
}
