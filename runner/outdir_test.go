//go:build unix

package runner

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
)

// TestMissingParents: which folders above --out a run would create, and the paths it
// refuses to create through.
func TestMissingParents(t *testing.T) {
	dir := t.TempDir()
	t.Chdir(dir)
	if err := os.WriteFile("file", nil, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Mkdir("have", 0o755); err != nil {
		t.Fatal(err)
	}
	for _, l := range [][2]string{{"loop", "loop"}, {"dangling", "gone"}, {"tohave", "have"}} {
		if err := os.Symlink(l[1], l[0]); err != nil {
			t.Fatal(err)
		}
	}
	for _, c := range []struct {
		out     string
		want    []string
		wantErr string
	}{
		{"out", nil, ""},
		{"have/out", nil, ""},
		{"tohave/out", nil, ""},
		{"a/out", []string{"a"}, ""},
		{"a/b/c/out", []string{"a", "a/b", "a/b/c"}, ""},
		{"have/a/out", []string{"have/a"}, ""},
		{"./a//b/out", []string{"a", "a/b"}, ""},
		{filepath.Join(dir, "x", "out"), []string{filepath.Join(dir, "x")}, ""},
		{"file/out", nil, "file is not a folder"},
		{"file/a/b/out", nil, "file is not a folder"},
		{"loop/out", nil, "cannot use the folder loop: too many levels"},
		{"dangling/out", nil, "dangling is a symbolic link whose target does not exist"},
	} {
		got, err := missingParents(c.out)
		if c.wantErr != "" {
			if err == nil || !strings.Contains(err.Error(), c.wantErr) {
				t.Errorf("%s: error %v, want one containing %q", c.out, err, c.wantErr)
			}
			continue
		}
		if err != nil || !slices.Equal(got, c.want) {
			t.Errorf("%s: %q, %v; want %q", c.out, got, err, c.want)
		}
	}
}

// TestCreateParents: the folders are made outermost first with mode 0755 under the umask,
// and one that exists by then is used and not reported as created.
func TestCreateParents(t *testing.T) {
	t.Chdir(t.TempDir())
	old := syscall.Umask(0o027)
	defer syscall.Umask(old)
	if err := os.Mkdir("a", 0o700); err != nil {
		t.Fatal(err)
	}
	got, err := createParents([]string{"a", "a/b", "a/b/c"})
	if err != nil || !slices.Equal(got, []string{"a/b", "a/b/c"}) {
		t.Fatalf("created %q, %v", got, err)
	}
	for _, d := range got {
		fi, err := os.Stat(d)
		if err != nil {
			t.Fatal(err)
		}
		if m := fi.Mode().Perm(); m != 0o750 {
			t.Errorf("%s: mode %o, want 750 (0755 under umask 027)", d, m)
		}
	}
	if err := os.WriteFile("f", nil, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := createParents([]string{"f"}); err == nil || !strings.Contains(err.Error(), "create the folder f") {
		t.Errorf("a file in the way: %v", err)
	}
}
