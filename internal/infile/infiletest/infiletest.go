// Package infiletest makes the kinds of files that input readers must accept or refuse,
// for the tests of the packages that read plans and data files.
package infiletest

import (
	"os"
	"path/filepath"
	"runtime"
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
//	urandom a symbolic link to /dev/urandom
//	loop    a symbolic link to itself
//	outside a symbolic link to a regular file holding content in another folder
func Kinds(t testing.TB, ext string, content []byte, bigSize int64) string {
	t.Helper()
	dir, other := t.TempDir(), t.TempDir()
	at := func(name string) string { return filepath.Join(dir, name+ext) }
	steps := []func() error{
		func() error { return os.WriteFile(at("ok"), content, 0o644) },
		func() error { return os.Symlink("ok"+ext, at("link")) },
		func() error { return syscall.Mkfifo(at("pipe"), 0o644) },
		func() error { return os.Symlink("/dev/zero", at("zero")) },
		func() error { return os.Mkdir(at("dir"), 0o755) },
		func() error { return os.WriteFile(at("big"), nil, 0o644) },
		func() error { return os.Truncate(at("big"), bigSize) },
		func() error { return os.Symlink("/dev/urandom", at("urandom")) },
		func() error { return os.Symlink("loop"+ext, at("loop")) },
		func() error { return os.WriteFile(filepath.Join(other, "ok"+ext), content, 0o644) },
		func() error { return os.Symlink(filepath.Join(other, "ok"+ext), at("outside")) },
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
	return Bounded(t, what, 5*time.Second, 0, f)
}

// Bounded runs f and returns its error, failing the test at once if f has not returned
// after d (a reader that waits on a named pipe never returns), and, when maxAlloc > 0,
// if the process allocated more than maxAlloc bytes while f ran (a reader of /dev/zero
// allocates gigabytes in a second). The allocation is the growth of the process's
// runtime.MemStats.TotalAlloc, so the bound is meant to be generous: it tells a bounded
// reader from an unbounded one, not one buffer size from another.
func Bounded(t testing.TB, what string, d time.Duration, maxAlloc uint64, f func() error) error {
	t.Helper()
	var before runtime.MemStats
	runtime.ReadMemStats(&before)
	done := make(chan error, 1)
	go func() { done <- f() }()
	select {
	case err := <-done:
		if maxAlloc > 0 {
			var after runtime.MemStats
			runtime.ReadMemStats(&after)
			if grew := after.TotalAlloc - before.TotalAlloc; grew > maxAlloc {
				t.Errorf("%s: %d bytes allocated, more than %d", what, grew, maxAlloc)
			}
		}
		return err
	case <-time.After(d):
		t.Fatalf("%s: not done after %v", what, d)
		return nil
	}
}
