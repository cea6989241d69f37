// Package infiletest makes the kinds of files that input readers must accept or refuse,
// for the tests of the packages that read plans and data files.
package infiletest

import (
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

// Kinds makes, in a new temporary folder that it returns, one file of each kind, each
// named after its kind with the extension ext:
//
//	ok      a regular file holding content
//	link    a symbolic link to ok
//	pipe    a named pipe (FIFO)
//	zero    a symbolic link to /dev/zero
//	dir     a directory
//	big     a sparse regular file of bigSize bytes (it takes no disk space)
func Kinds(t testing.TB, ext string, content []byte, bigSize int64) string {
	t.Helper()
	dir := t.TempDir()
	at := func(name string) string { return filepath.Join(dir, name+ext) }
	steps := []func() error{
		func() error { return os.WriteFile(at("ok"), content, 0o644) },
		func() error { return os.Symlink("ok"+ext, at("link")) },
		func() error { return syscall.Mkfifo(at("pipe"), 0o644) },
		func() error { return os.Symlink("/dev/zero", at("zero")) },
		func() error { return os.Mkdir(at("dir"), 0o755) },
		func() error { return os.WriteFile(at("big"), nil, 0o644) },
		func() error { return os.Truncate(at("big"), bigSize) },
	}
	for _, step := range steps {
		if err := step(); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

// Within runs f and returns its error, failing the test at once if f has not returned
// after five seconds: a reader that waits on a named pipe never returns.
func Within(t testing.TB, what string, f func() error) error {
	t.Helper()
	done := make(chan error, 1)
	go func() { done <- f() }()
	select {
	case err := <-done:
		return err
	case <-time.After(5 * time.Second):
		t.Fatalf("%s: blocked", what)
		return nil
	}
}
