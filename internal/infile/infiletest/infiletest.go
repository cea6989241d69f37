// Package infiletest makes the kinds of files that input readers must accept or refuse,
// for the tests of the packages that read plans and data files.
package infiletest

import (
	"errors"
	"io/fs"
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
	dir := t.TempDir()
	at := func(name string) string { return filepath.Join(dir, name+ext) }
	if err := os.WriteFile(at("ok"), content, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink("ok"+ext, at("link")); err != nil {
		t.Fatal(err)
	}
	for _, kind := range []string{"pipe", "zero", "dir", "big", "urandom", "loop", "outside"} {
		Make(t, at(kind), kind, content, bigSize)
	}
	return dir
}

// Make replaces whatever is at path (nothing, a file, an empty folder) with a file of
// the given kind, the kinds of [Kinds] but ok and link, and also
//
//	socket  a Unix domain socket (made with mknod, no process listens on it)
//
// For "outside" the link points to a new file holding content in another temporary
// folder, and for "big" the sparse file has bigSize bytes.
func Make(t testing.TB, path, kind string, content []byte, bigSize int64) {
	t.Helper()
	if err := os.Remove(path); err != nil && !errors.Is(err, fs.ErrNotExist) {
		t.Fatal(err)
	}
	var err error
	switch kind {
	case "pipe":
		err = syscall.Mkfifo(path, 0o644)
	case "zero":
		err = os.Symlink("/dev/zero", path)
	case "urandom":
		err = os.Symlink("/dev/urandom", path)
	case "loop":
		err = os.Symlink(filepath.Base(path), path)
	case "outside":
		other := filepath.Join(t.TempDir(), filepath.Base(path))
		if err = os.WriteFile(other, content, 0o644); err == nil {
			err = os.Symlink(other, path)
		}
	case "dir":
		err = os.Mkdir(path, 0o755)
	case "big":
		if err = os.WriteFile(path, nil, 0o644); err == nil {
			err = os.Truncate(path, bigSize)
		}
	case "socket":
		err = syscall.Mknod(path, syscall.S_IFSOCK|0o644, 0)
	default:
		t.Fatalf("infiletest.Make: unknown kind %q", kind)
	}
	if err != nil {
		t.Fatal(err)
	}
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
