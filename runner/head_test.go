package runner

import (
	"context"
	"errors"
	"strings"
	"testing"
)

// TestParseHead: a head is accepted with or without the "sha256:" prefix and in either
// case, and returned as audit.Digest writes it; anything else is an error.
func TestParseHead(t *testing.T) {
	hex := strings.Repeat("0123456789abcdef", 4)
	want := "sha256:" + hex
	for _, c := range []struct {
		in, want, err string
	}{
		{want, want, ""},
		{hex, want, ""},
		{strings.ToUpper(hex), want, ""},
		{"sha256:" + strings.ToUpper(hex), want, ""},
		{"", "", "found 0 characters"},
		{"sha256:", "", "found 0 characters"},
		{hex[:63], "", "found 63 characters"},
		{hex + "0", "", "found 65 characters"},
		{"sha256:" + hex[:63] + "g", "", "found 'g'"},
		{hex[:63] + " ", "", "found ' '"},
		{"sha512:" + hex, "", "found 71 characters"},
		{"SHA256:" + hex, "", "found 71 characters"},
		{"sha256:sha256:" + hex, "", "found 71 characters"},
		{strings.Repeat("é", 32), "", "found 'é'"}, // 64 bytes, not 64 digits
		{"sha256:" + strings.Repeat("é", 3), "", "found 3 characters"},
	} {
		got, err := ParseHead(c.in)
		switch {
		case c.err == "" && (err != nil || got != c.want):
			t.Errorf("ParseHead(%q) = %q, %v; want %q", c.in, got, err, c.want)
		case c.err != "" && (err == nil || !strings.Contains(err.Error(), c.err)):
			t.Errorf("ParseHead(%q) = %q, %v; want an error containing %q", c.in, got, err, c.err)
		}
	}
}

// TestVerifyHeadForms: verify accepts the run's head in every form ParseHead does, and
// refuses a malformed one as unusable input, not as a failed check.
func TestVerifyHeadForms(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	bare := strings.TrimPrefix(rec.Head, "sha256:")
	for _, head := range []string{rec.Head, bare, strings.ToUpper(bare)} {
		r := verify(t, rec.Dir, VerifyOptions{Head: head})
		if r.Outcome != Verified || !hasCheck(r, "truncation", Pass) {
			t.Errorf("head %q: outcome %s: %+v", head, r.Outcome, r.Checks)
		}
	}
	other := "sha256:" + strings.Repeat("0", 64)
	if r := verify(t, rec.Dir, VerifyOptions{Head: other}); r.Outcome != ClassIntegrity {
		t.Errorf("another head: outcome %s, want %s", r.Outcome, ClassIntegrity)
	}
	_, err := Verify(context.Background(), rec.Dir, VerifyOptions{Head: bare[:40]})
	var ie *InputError
	if !errors.As(err, &ie) {
		t.Errorf("a head of 40 digits: error %v, want an InputError", err)
	}
}

func hasCheck(r *VerifyReport, name string, verdict Verdict) bool {
	for _, c := range r.Checks {
		if c.Name == name && c.Verdict == verdict {
			return true
		}
	}
	return false
}
