package folder

import (
	"errors"
	"os"
	"path/filepath"
	"testing"

	"rankplan/runner/audit"
)

// TestWriteNew: WriteNew writes the bytes under the audit log's mode and leaves no
// temporary file; it never replaces what exists at the path (a file, a link or a folder),
// and leaves that untouched.
func TestWriteNew(t *testing.T) {
	for _, tc := range []struct {
		name     string
		existing func(t *testing.T, path string) // nil: the path is free
	}{
		{"free path", nil},
		{"existing file", func(t *testing.T, path string) {
			if err := os.WriteFile(path, []byte("keep"), 0o600); err != nil {
				t.Fatal(err)
			}
		}},
		{"dangling link", func(t *testing.T, path string) {
			if err := os.Symlink("nowhere", path); err != nil {
				t.Fatal(err)
			}
		}},
		{"folder", func(t *testing.T, path string) {
			if err := os.Mkdir(path, 0o755); err != nil {
				t.Fatal(err)
			}
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			path := filepath.Join(dir, "plan.lock")
			if tc.existing != nil {
				tc.existing(t, path)
			}
			before, _ := os.Lstat(path)
			err := WriteNew(path, []byte("new\n"))
			if tc.existing == nil {
				if err != nil {
					t.Fatal(err)
				}
				b, err := os.ReadFile(path)
				if err != nil || string(b) != "new\n" {
					t.Fatalf("read back %q, %v", b, err)
				}
				fi, _ := os.Lstat(path)
				if fi.Mode().Perm()&^audit.FileMode != 0 { // the umask may only take bits away
					t.Errorf("mode %v, want at most %v", fi.Mode().Perm(), audit.FileMode)
				}
			} else {
				if !errors.Is(err, os.ErrExist) {
					t.Fatalf("error %v, want one that says the path exists", err)
				}
				after, _ := os.Lstat(path)
				if !os.SameFile(before, after) || before.Mode() != after.Mode() || before.Size() != after.Size() {
					t.Error("the existing entry was changed")
				}
			}
			entries, _ := os.ReadDir(dir)
			if len(entries) != 1 {
				t.Errorf("%d entries in the folder, want 1: a temporary file was left", len(entries))
			}
		})
	}
}
