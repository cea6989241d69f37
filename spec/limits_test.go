package spec

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"rankplan/internal/infile/infiletest"
)

// TestLimitErrors checks the position and wording of the errors for plans over a limit
// or with bytes that are not YAML text.
func TestLimitErrors(t *testing.T) {
	lines := strings.Split(goodPlan, "\n")
	line3 := func(repl string) string { // goodPlan with line 3 replaced
		l := append([]string(nil), lines...)
		l[2] = repl
		return strings.Join(l, "\n")
	}
	deep := func(open, close string, n int) string {
		return goodPlan + "extra: " + strings.Repeat(open, n) + strings.Repeat(close, n) + "\n"
	}
	for _, tc := range []struct {
		name, src, want string
	}{
		// The defect this limit answers: 10,000 levels under an unknown key took
		// 930 MB and 5.5 s to convert.
		{"deep flow lists", deep("[", "]", 10000),
			"plan.yaml:15:23: extra" + strings.Repeat("[0]", 15) + ": " + depthMsg},
		{"deep flow mappings", deep("{a: ", "}", 40),
			"plan.yaml:15:68: extra" + strings.Repeat(".a", 15) + ": " + depthMsg},
		{"deep block lists", goodPlan + "extra:\n" + strings.Repeat("- ", 30) + "x\n",
			"plan.yaml:16:31: extra" + strings.Repeat("[0]", 15) + ": " + depthMsg},
		{"deep beyond yaml.v3's own limit", deep("[", "]", 10001), "plan.yaml:15:1: (syntax): " + depthMsg},
		{"NUL on line 3", line3("title: A\x00plan"),
			"plan.yaml:3:9: (syntax): the control character U+0000 is not allowed in a plan (YAML admits tab, line ends and printable characters only)"},
		{"escape on line 3", line3("title: A\x1bplan"),
			"plan.yaml:3:9: (syntax): the control character U+001B is not allowed in a plan (YAML admits tab, line ends and printable characters only)"},
		{"invalid UTF-8 on line 3, columns in characters", line3("title: Ünïcödé \xff"),
			"plan.yaml:3:16: (syntax): byte 0xFF is not valid UTF-8; a plan is UTF-8 text"},
		{"Latin-1 text", line3("title: caf\xe9"),
			"plan.yaml:3:11: (syntax): byte 0xE9 is not valid UTF-8; a plan is UTF-8 text"},
		{"CR line ends", strings.ReplaceAll(line3("title: \x00"), "\n", "\r"),
			"plan.yaml:3:8: (syntax): the control character U+0000 is not allowed in a plan (YAML admits tab, line ends and printable characters only)"},
		{"UTF-16", "\xff\xfer\x00a\x00",
			"plan.yaml:1:1: (syntax): the file starts with a UTF-16 byte order mark; save the plan as UTF-8 text"},
		// 183 bytes in 14 lines, then lines of 100 bytes: byte 262144 (from 0) is byte 61
		// of line 15 + (262144-183)/100 = 2634.
		{"too large", goodPlan + strings.Repeat("# "+strings.Repeat("x", 97)+"\n", 3000),
			"plan.yaml:2634:62: (top level): the plan file has 300183 bytes, more than the limit of 262144 bytes (256 KiB) for a plan; the limit is passed here"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			start := time.Now()
			_, err := Parse("plan.yaml", []byte(tc.src))
			if err == nil || err.Error() != tc.want {
				t.Errorf("error\n%v\nwant\n%s", err, tc.want)
			}
			if d := time.Since(start); d > 2*time.Second {
				t.Errorf("took %v", d) // it took 5.5 s before the depth limit
			}
		})
	}
}

// TestLimitsAdmit checks that what the limits admit still parses: a plan of exactly
// MaxPlanBytes, a value nested MaxPlanDepth levels deep (refused as an unknown key, not
// for its depth), a UTF-8 byte order mark, and text in any script.
func TestLimitsAdmit(t *testing.T) {
	pad := MaxPlanBytes - len(goodPlan) - 1
	exact := goodPlan + "#" + strings.Repeat("x", pad-1) + "\n"
	if len(exact) != MaxPlanBytes {
		t.Fatalf("test plan has %d bytes", len(exact))
	}
	for _, src := range []string{exact, "\xef\xbb\xbf" + goodPlan, edit(t, "title: A plan", "title: Größe, 大小, \U0001F4CF, tab\tinside")} {
		if _, err := Parse("plan.yaml", []byte(src)); err != nil {
			t.Errorf("%.40q...: %v", src, err)
		}
	}
	// Top mapping (1), extra's 15 lists (2-16): at the limit.
	src := goodPlan + "extra: " + strings.Repeat("[", 15) + strings.Repeat("]", 15) + "\n"
	_, err := Parse("plan.yaml", []byte(src))
	if err == nil || !strings.Contains(err.Error(), "extra: unknown key") {
		t.Errorf("at the depth limit: %v", err)
	}
}

// TestReadFile checks that only regular files are read as plans, without blocking on a
// named pipe, and that a refusal names the file and says what it is.
func TestReadFile(t *testing.T) {
	dir := infiletest.Kinds(t, ".yaml", []byte(goodPlan), 1<<40)
	at := func(name string) string { return filepath.Join(dir, name) }
	if err := os.Symlink("pipe.yaml", at("pipelink.yaml")); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ name, want string }{
		{"ok.yaml", ""},
		{"link.yaml", ""},
		{"pipe.yaml", at("pipe.yaml") + ": cannot open the plan file: it is a named pipe (FIFO), not a regular file"},
		{"zero.yaml", at("zero.yaml") + ": cannot open the plan file: it is a symbolic link to /dev/zero, which is a character device, not a regular file"},
		{"pipelink.yaml", at("pipelink.yaml") + ": cannot open the plan file: it is a symbolic link to " + at("pipe.yaml") + ", which is a named pipe (FIFO), not a regular file"},
		{"dir.yaml", at("dir.yaml") + ": cannot open the plan file: it is a directory, not a regular file"},
		// Only the first MaxPlanBytes+1 bytes are read (zeros: one line).
		{"big.yaml", at("big.yaml") + ":1:262145: (top level): the plan file has 1099511627776 bytes, more than the limit of 262144 bytes (256 KiB) for a plan; the limit is passed here"},
		{"none.yaml", at("none.yaml") + ": cannot open the plan file: no such file or directory"},
		{"urandom.yaml", at("urandom.yaml") + ": cannot open the plan file: it is a symbolic link to /dev/urandom, which is a character device, not a regular file"},
		{"loop.yaml", at("loop.yaml") + ": cannot open the plan file: too many levels of symbolic links"},
		{"outside.yaml", ""}, // a link the user names is followed, wherever it points
	} {
		err := infiletest.Within(t, tc.name, func() error {
			_, err := Load(at(tc.name))
			return err
		})
		if tc.want == "" && err != nil || tc.want != "" && (err == nil || err.Error() != tc.want) {
			t.Errorf("%s: error\n%v\nwant\n%s", tc.name, err, tc.want)
		}
		if _, ok := AsList(err); err != nil && !ok {
			t.Errorf("%s: %T is not a plan error", tc.name, err)
		}
	}
}
