package main

import (
	"errors"
	"strings"
	"testing"
)

// TestPrintError: every line of an error carries the "rankplan: " prefix, except a blank
// line, which stays blank.
func TestPrintError(t *testing.T) {
	for _, tc := range []struct{ err, want string }{
		{"one line", "rankplan: one line\n"},
		{"first\nsecond", "rankplan: first\nrankplan: second\n"},
		{"head\n\n\tdetail\n", "rankplan: head\n\nrankplan: \tdetail\n"},
		{"a\n  \nb", "rankplan: a\n\nrankplan: b\n"},
	} {
		var b strings.Builder
		printError(&b, errors.New(tc.err))
		if got := b.String(); got != tc.want {
			t.Errorf("printError(%q) = %q, want %q", tc.err, got, tc.want)
		}
	}
}
