package infile

import (
	"errors"
	"io/fs"
	"net"
	"os"
	"path/filepath"
	"testing"

	"rankplan/internal/infile/infiletest"
)

// TestOpen checks that only regular files (after symbolic links) within the limit are
// opened, that nothing blocks, and the reason given for each refusal.
func TestOpen(t *testing.T) {
	dir := infiletest.Kinds(t, "", []byte("0123456789"), 11)
	at := func(name string) string { return filepath.Join(dir, name) }
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	must(os.Symlink("link", at("link2")))
	must(os.Symlink("pipe", at("pipelink")))
	must(os.Symlink("nowhere", at("dangling")))
	l, err := net.Listen("unix", at("sock"))
	must(err)
	defer l.Close()
	for _, tc := range []struct {
		name   string
		limit  int64
		want   string
		notExt bool // the error is fs.ErrNotExist
	}{
		{"ok", 10, "", false},
		{"link2", 10, "", false},
		{"ok", 9, "it has 10 bytes, more than the limit of 9 bytes (9 bytes)", false},
		{"big", 10, "it has 11 bytes, more than the limit of 10 bytes (10 bytes)", false},
		{"pipe", 10, "it is a named pipe (FIFO), not a regular file", false},
		{"pipelink", 10, "it is a symbolic link to " + at("pipe") + ", which is a named pipe (FIFO), not a regular file", false},
		{"zero", 10, "it is a symbolic link to /dev/zero, which is a character device, not a regular file", false},
		{"dir", 10, "it is a directory, not a regular file", false},
		{"sock", 10, "it is a socket, not a regular file", false},
		{"none", 10, "no such file or directory", true},
		{"dangling", 10, "no such file or directory", true},
	} {
		err := infiletest.Within(t, tc.name, func() error {
			b, err := ReadFile(at(tc.name), tc.limit)
			if err == nil && string(b) != "0123456789" {
				t.Errorf("%s: read %q", tc.name, b)
			}
			return err
		})
		var e *Error
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%s: %v", tc.name, err)
		case tc.want != "" && (err == nil || err.Error() != tc.want):
			t.Errorf("%s: error %v, want %s", tc.name, err, tc.want)
		case err != nil && !errors.As(err, &e):
			t.Errorf("%s: %T is not an *Error", tc.name, err)
		case errors.Is(err, fs.ErrNotExist) != tc.notExt:
			t.Errorf("%s: errors.Is(%v, fs.ErrNotExist) = %v", tc.name, err, !tc.notExt)
		}
	}
}

func TestBytes(t *testing.T) {
	for _, tc := range []struct {
		n    int64
		want string
	}{
		{0, "0 bytes"}, {1000, "1000 bytes"}, {1024, "1 KiB"}, {16 << 10, "16 KiB"}, {256 << 10, "256 KiB"},
		{1 << 20, "1 MiB"}, {1<<20 + 1, "1048577 bytes"}, {3 << 29, "1536 MiB"}, {4 << 30, "4 GiB"},
	} {
		if got := Bytes(tc.n); got != tc.want {
			t.Errorf("Bytes(%d) = %q, want %q", tc.n, got, tc.want)
		}
	}
}
