package infile

import (
	"errors"
	"io/fs"
	"net"
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"

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
	for _, tc := range []refusalCase{
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
		{"urandom", 10, "it is a symbolic link to /dev/urandom, which is a character device, not a regular file", false},
		{"loop", 10, "too many levels of symbolic links", false},
		{"outside", 10, "", false},
	} {
		err := infiletest.Within(t, tc.name, func() error {
			b, err := ReadFile(at(tc.name), tc.limit)
			if err == nil && string(b) != "0123456789" {
				t.Errorf("%s: read %q", tc.name, b)
			}
			return err
		})
		checkRefusal(t, tc.name, err, tc.want, tc.notExt)
	}
}

// refusalCase is a file to read with a limit, and the refusal expected ("" for none).
type refusalCase struct {
	name   string
	limit  int64
	want   string
	notExt bool // the error is fs.ErrNotExist
}

// checkRefusal requires err to be nil when want is empty, and otherwise an [*Error] with
// the text want that is fs.ErrNotExist exactly when notExist.
func checkRefusal(t *testing.T, name string, err error, want string, notExist bool) {
	t.Helper()
	var e *Error
	switch {
	case want == "" && err != nil:
		t.Errorf("%s: %v", name, err)
	case want != "" && (err == nil || err.Error() != want):
		t.Errorf("%s: error %v, want %s", name, err, want)
	case err != nil && !errors.As(err, &e):
		t.Errorf("%s: %T is not an *Error", name, err)
	case errors.Is(err, fs.ErrNotExist) != notExist:
		t.Errorf("%s: errors.Is(%v, fs.ErrNotExist) = %v", name, err, !notExist)
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

// TestOpenNoFollow checks that only a regular file that is not a symbolic link, within
// the limit, is opened; that nothing blocks or reads without end; and the reason given
// for each refusal. A link is refused whatever it points to, and its target is named as
// written in the link.
func TestOpenNoFollow(t *testing.T) {
	dir := infiletest.Kinds(t, "", []byte("0123456789"), 1<<40)
	at := func(name string) string { return filepath.Join(dir, name) }
	if err := os.Symlink("nowhere", at("dangling")); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink("line\nbreak", at("oddlink")); err != nil {
		t.Fatal(err)
	}
	if err := syscall.Mknod(at("sock"), syscall.S_IFSOCK|0o644, 0); err != nil {
		t.Fatal(err)
	}
	outside, err := os.Readlink(at("outside"))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []refusalCase{
		{"ok", 10, "", false},
		{"ok", 9, "it has 10 bytes, more than the limit of 9 bytes (9 bytes)", false},
		{"big", 1 << 20, "it has 1099511627776 bytes, more than the limit of 1048576 bytes (1 MiB)", false},
		{"link", 10, "it is a symbolic link (to ok), not a regular file", false},
		{"outside", 10, "it is a symbolic link (to " + outside + "), not a regular file", false},
		{"zero", 10, "it is a symbolic link (to /dev/zero), not a regular file", false},
		{"urandom", 10, "it is a symbolic link (to /dev/urandom), not a regular file", false},
		{"loop", 10, "it is a symbolic link (to loop), not a regular file", false},
		{"dangling", 10, "it is a symbolic link (to nowhere), not a regular file", false},
		{"oddlink", 10, `it is a symbolic link (to "line\nbreak"), not a regular file`, false},
		{"pipe", 10, "it is a named pipe (FIFO), not a regular file", false},
		{"dir", 10, "it is a directory, not a regular file", false},
		{"sock", 10, "it is a socket, not a regular file", false},
		{"none", 10, "no such file or directory", true},
	} {
		err := infiletest.Bounded(t, tc.name, 2*time.Second, 64<<20, func() error {
			b, err := ReadFileNoFollow(at(tc.name), tc.limit)
			if err == nil && string(b) != "0123456789" {
				t.Errorf("%s: read %q", tc.name, b)
			}
			return err
		})
		checkRefusal(t, tc.name, err, tc.want, tc.notExt)
	}
}

// TestReadFileGrows: a file that passes the limit after it was opened is refused.
func TestReadFileGrows(t *testing.T) {
	p := filepath.Join(t.TempDir(), "f")
	if err := os.WriteFile(p, []byte("0123456789"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, open := range []func(string, int64) (*os.File, int64, error){Open, OpenNoFollow} {
		f, _, err := open(p, 10)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte("0123456789a"), 0o644); err != nil {
			t.Fatal(err)
		}
		_, err = readAll(f, 10)
		f.Close()
		if err == nil || err.Error() != "it grew past the limit of 10 bytes (10 bytes) while it was read" {
			t.Errorf("error %v", err)
		}
		os.WriteFile(p, []byte("0123456789"), 0o644)
	}
}
