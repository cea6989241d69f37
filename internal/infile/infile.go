// Package infile opens the files rankplan reads as input (plans, data files, plan locks,
// signing keys) so that a wrong kind of file is refused at once instead of being read:
// only a regular file, after following symbolic links, of at most a given size, is
// opened. A named pipe (FIFO), a device such as /dev/zero, a socket or a directory is
// refused from its metadata, before it is opened, so that reading never blocks on a pipe
// and never runs without end on a device. [OpenNoFollow] and [ReadFileNoFollow] are for
// files inside a folder the program wrote (a run folder), where a symbolic link is
// refused instead of followed.
package infile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"syscall"
	"unicode"
	"unicode/utf8"
)

// Error says why a file cannot be read as input. Its text is the reason alone, e.g.
// "it is a named pipe (FIFO), not a regular file"; callers put the file's name and role
// (the plan, the data file of data.file) in front of it.
type Error struct {
	Reason string
	Err    error // the underlying cause (e.g. fs.ErrNotExist), or nil
}

func (e *Error) Error() string { return e.Reason }

// Unwrap returns the underlying cause, or nil.
func (e *Error) Unwrap() error { return e.Err }

// Open opens the file at path for reading when, after following symbolic links, it is
// a regular file of at most limit bytes, and returns it with its size. The kind of file
// is checked before it is opened (os.Stat), and again on the open file (a file swapped
// for another kind in between is refused too); the file is opened with O_NONBLOCK, so
// that even then opening a named pipe cannot wait for a writer. Every refusal is an
// [*Error].
func Open(path string, limit int64) (*os.File, int64, error) {
	return open(path, limit, os.Stat, 0, check)
}

// open opens path when the kind and size that stat reports pass ok, with the extra
// open flag, and checks the open file again.
func open(path string, limit int64, stat func(string) (fs.FileInfo, error), flag int,
	ok func(string, fs.FileInfo, int64) error) (*os.File, int64, error) {
	fi, err := stat(path)
	if err != nil {
		return nil, 0, osError(err)
	}
	if err := ok(path, fi, limit); err != nil {
		return nil, 0, err
	}
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK|flag, 0)
	if flag&syscall.O_NOFOLLOW != 0 && errors.Is(err, syscall.ELOOP) {
		return nil, 0, &Error{Reason: "it is a symbolic link, not a regular file", Err: err}
	}
	if err != nil {
		return nil, 0, osError(err)
	}
	fi, err = f.Stat()
	if err == nil {
		err = ok(path, fi, limit)
	}
	if err != nil {
		f.Close()
		return nil, 0, err
	}
	return f, fi.Size(), nil
}

// ReadFile reads the whole file at path under the rules of [Open]. A file that grows
// past limit while it is read is refused as well.
func ReadFile(path string, limit int64) ([]byte, error) {
	return readWith(Open, path, limit)
}

// OpenNoFollow opens the file at path for reading when it is itself a regular file of at
// most limit bytes, and returns it with its size. Unlike [Open] it never follows a
// symbolic link in the last element of path: a link is refused, whatever it points to
// (a regular file, a device, a pipe, itself). It is meant for files inside a folder that
// the program wrote, where a link is never legitimate: the kind is checked from the
// name's own metadata (os.Lstat), the file is opened with O_NOFOLLOW and O_NONBLOCK (a
// link or pipe swapped in between is refused, never waited on), and the kind and size
// are checked again on the open file. Every refusal is an [*Error].
func OpenNoFollow(path string, limit int64) (*os.File, int64, error) {
	return open(path, limit, os.Lstat, syscall.O_NOFOLLOW, checkNoFollow)
}

// ReadFileNoFollow reads the whole file at path under the rules of [OpenNoFollow]. A file
// that grows past limit while it is read is refused as well.
func ReadFileNoFollow(path string, limit int64) ([]byte, error) {
	return readWith(OpenNoFollow, path, limit)
}

// readWith opens path with open and reads it to its end, refusing more than limit bytes.
func readWith(open func(string, int64) (*os.File, int64, error), path string, limit int64) ([]byte, error) {
	f, _, err := open(path, limit)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return readAll(f, limit)
}

// readAll reads f to its end, refusing more than limit bytes.
func readAll(f *os.File, limit int64) ([]byte, error) {
	b, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, osError(err)
	}
	if int64(len(b)) > limit {
		return nil, GrewError(limit)
	}
	return b, nil
}

// GrewError is the refusal of a file that passed limit bytes while it was read, though
// its size was within the limit when it was opened.
func GrewError(limit int64) *Error {
	return &Error{Reason: "it grew past the limit of " + strconv.FormatInt(limit, 10) + " bytes (" + Bytes(limit) + ") while it was read"}
}

// checkNoFollow refuses anything but a regular file of at most limit bytes, naming a
// symbolic link's target as it is written in the link (it is not followed).
func checkNoFollow(path string, fi fs.FileInfo, limit int64) error {
	if fi.Mode()&fs.ModeSymlink != 0 {
		if target, err := os.Readlink(path); err == nil {
			return &Error{Reason: "it is a symbolic link (to " + Printable(target) + "), not a regular file"}
		}
		return &Error{Reason: "it is a symbolic link, not a regular file"}
	}
	return check(path, fi, limit)
}

// check refuses anything but a regular file of at most limit bytes.
func check(path string, fi fs.FileInfo, limit int64) error {
	if !fi.Mode().IsRegular() {
		what := Kind(fi.Mode())
		if li, err := os.Lstat(path); err == nil && li.Mode()&fs.ModeSymlink != 0 {
			target, err := filepath.EvalSymlinks(path)
			if err != nil {
				target, _ = os.Readlink(path)
			}
			return &Error{Reason: fmt.Sprintf("it is a symbolic link to %s, which is %s, not a regular file", target, what)}
		}
		return &Error{Reason: fmt.Sprintf("it is %s, not a regular file", what)}
	}
	if fi.Size() > limit {
		return &Error{Reason: "it has " + strconv.FormatInt(fi.Size(), 10) + " bytes, more than the limit of " +
			strconv.FormatInt(limit, 10) + " bytes (" + Bytes(limit) + ")"}
	}
	return nil
}

// Kind names the kind of file a mode describes, with its article: "a directory",
// "a named pipe (FIFO)", "a character device", and so on.
func Kind(m fs.FileMode) string {
	switch {
	case m.IsRegular():
		return "a regular file"
	case m.IsDir():
		return "a directory"
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a block device"
	case m&fs.ModeSymlink != 0:
		return "a symbolic link"
	}
	return "a special file"
}

// Bytes writes a limit in binary units when it is a whole number of them: 262144 is
// "256 KiB", 4294967296 is "4 GiB"; any other number is written in bytes.
func Bytes(n int64) string {
	for _, u := range []struct {
		shift uint
		name  string
	}{{30, "GiB"}, {20, "MiB"}, {10, "KiB"}} {
		if n >= 1<<u.shift && n%(1<<u.shift) == 0 {
			return strconv.FormatInt(n>>u.shift, 10) + " " + u.name
		}
	}
	return strconv.FormatInt(n, 10) + " bytes"
}

// osError turns an error of package os into an [*Error] whose reason is the cause
// alone ("no such file or directory"), without the operation and path that
// *fs.PathError adds.
func osError(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return &Error{Reason: pe.Err.Error(), Err: err}
	}
	return &Error{Reason: err.Error(), Err: err}
}

// Printable returns s as it is when it is UTF-8 of printable characters only, and
// quoted with Go escapes otherwise, so that a file name or link target written by anyone
// cannot break a line of a report.
func Printable(s string) string {
	if !utf8.ValidString(s) {
		return strconv.Quote(s)
	}
	for _, r := range s {
		if !unicode.IsPrint(r) {
			return strconv.Quote(s)
		}
	}
	return s
}
