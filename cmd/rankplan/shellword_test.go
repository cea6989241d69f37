package main

import "testing"

// TestShellWord: the file names init suggests in its next command survive a POSIX shell
// as one word (quoting rules of POSIX sh, common practice).
func TestShellWord(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"plan.yaml", "plan.yaml"},
		{"plans/2026-12_v2.yaml", "plans/2026-12_v2.yaml"},
		{"my plan.yaml", "'my plan.yaml'"},
		{"it's.yaml", `'it'\''s.yaml'`},
		{"$HOME.yaml", "'$HOME.yaml'"},
		{"a*b", "'a*b'"},
		{"", "''"},
	} {
		if got := shellWord(tc.in); got != tc.want {
			t.Errorf("shellWord(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}
