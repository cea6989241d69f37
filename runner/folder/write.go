package folder

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"time"

	"golang.org/x/sys/unix"

	"rankplan/runner/audit"
)

// ErrExists is returned when the destination of a folder already exists: rankplan never
// writes into, and so never overwrites, an existing folder.
var ErrExists = errors.New("the output folder already exists; rankplan never overwrites earlier results, so name a new folder")

// IncompleteName matches the working folder of a run that was never moved into place:
// DIR.incomplete- and eight lowercase hex digits.
var IncompleteName = regexp.MustCompile(`\.incomplete-[0-9a-f]{8}$`)

// Writer writes a folder of a [Kind]. Everything goes into DIR.incomplete-XXXX beside
// DIR; each audit record is canonical and hash-chained; each file goes through a synced
// temporary file and a hard link and is recorded with its SHA-256; the head file is
// written last, and the folder is renamed to DIR with renameat2(RENAME_NOREPLACE), so DIR
// appears only complete and never replaces anything. A folder that is not finished stays
// under its working name, its log closed by the kind's Failed record.
//
// What is synced, and why (a kill leaves everything written so far, since the kernel
// keeps it; only a power loss or a crash of the kernel can lose what was not synced):
//
//   - each file, and the folder after its name was linked, before its output.written
//     record is written: a record that reached the disk never names a file that did not;
//   - the log after the last record of the kind's opening sequence (exclusions.applied,
//     cases.bound): the inputs a run bound are on disk before its long computation;
//   - the log after the closing record, before the head file names its last record;
//   - the head file and the seal, then the folder once, before the rename makes the
//     folder final: a folder under its final name is complete on disk;
//   - the folder that holds DIR after the rename.
//
// Other records (analysis.finished, output.written) are written without a sync of their
// own: a power loss before the next of these points can only cut the log short after an
// earlier record, and a log cut short in a folder still under its working name is an
// incomplete run to verify, as a killed run is.
type Writer struct {
	kind     *Kind
	out, tmp string
	log      *audit.Log
	lock     *os.File // the working folder, held under an exclusive flock until the end
	closed   bool
}

// Create creates the working folder of out (which the caller has checked not to exist)
// and starts its audit log with actor and the clock now (time.Now when nil).
func Create(out string, kind *Kind, actor audit.Actor, now func() time.Time) (*Writer, error) {
	var b [4]byte
	rand.Read(b[:])
	tmp := filepath.Clean(out) + ".incomplete-" + hex.EncodeToString(b[:])
	if err := os.Mkdir(tmp, 0o755); err != nil {
		return nil, fmt.Errorf("create the working folder: %w", err)
	}
	// The lock tells verify that the folder is still being written (see [Busy]); the
	// kernel drops it when the process ends, however it ends.
	lock, err := os.Open(tmp)
	if err != nil {
		return nil, fmt.Errorf("open the working folder: %w", err)
	}
	if err := unix.Flock(int(lock.Fd()), unix.LOCK_EX|unix.LOCK_NB); err != nil {
		lock.Close()
		return nil, fmt.Errorf("lock the working folder: %w", err)
	}
	log, err := audit.Create(filepath.Join(tmp, AuditFile), actor, now)
	if err != nil {
		lock.Close()
		return nil, err
	}
	return &Writer{kind: kind, out: out, tmp: tmp, log: log, lock: lock}, nil
}

// Busy reports whether a running writer still holds the folder at dir (its working
// folder, DIR.incomplete-XXXX): an exclusive flock(2) taken by [Create] and held until
// the folder is finished or abandoned.
func Busy(dir string) bool {
	d, err := os.Open(dir)
	if err != nil {
		return false
	}
	defer d.Close()
	if err := unix.Flock(int(d.Fd()), unix.LOCK_SH|unix.LOCK_NB); err != nil {
		return errors.Is(err, unix.EWOULDBLOCK)
	}
	unix.Flock(int(d.Fd()), unix.LOCK_UN)
	return false
}

// WorkDir returns the working folder, DIR.incomplete-XXXX.
func (w *Writer) WorkDir() string { return w.tmp }

// Record appends the next audit record. The record that ends the kind's opening
// sequence is synced at once (see [Writer]).
func (w *Writer) Record(r Record) error {
	rec, err := w.log.Append(r.Event(), r)
	if err != nil {
		return fmt.Errorf("write audit log: %w", err)
	}
	if n := len(w.kind.Sequence); rec.Seq == int64(n) && rec.Event == w.kind.Sequence[n-1] {
		if err := w.log.Sync(); err != nil {
			return fmt.Errorf("write audit log: %w", err)
		}
	}
	return nil
}

// WriteFile writes the file name into the folder and records it with an output.written
// record: rec with its File, Bytes and SHA256 filled in.
func (w *Writer) WriteFile(name string, b []byte, rec OutputWritten) error {
	if err := WriteNew(filepath.Join(w.tmp, name), b); err != nil {
		return err
	}
	rec.File, rec.Bytes, rec.SHA256 = name, len(b), audit.Digest(b)
	return w.Record(rec)
}

// Head returns the audit head and record number so far.
func (w *Writer) Head() (string, int64) { return w.log.Head(), w.log.Seq() }

// Seal makes the file that seals a finished log (the signature over its head), or
// returns "" to write none.
type Seal func(head string, seq int64) (name string, b []byte, err error)

// Finish appends the closing record, writes the head file and the seal, if any, and moves
// the folder into place. It returns the final head and its record number. When DIR was
// taken meanwhile by another process, it writes nothing and returns an error wrapping
// [ErrExists], for the caller to [Writer.Abandon] the folder. Where flock(2) is lacking
// and the rename still fails, the head file and seal are removed again and the Failed
// record closes the log, so that the folder left behind is an incomplete one.
func (w *Writer) Finish(ctx context.Context, closing Record, seal Seal) (head string, seq int64, err error) {
	// Under the lock of DIR's parent, DIR must still be free before the closing record is
	// written: two writers racing for one name finish one after the other, and the second
	// records its failure instead of success.
	release, err := reserve(ctx, w.out)
	if err != nil {
		return "", 0, err
	}
	defer release()
	if err := w.Record(closing); err != nil {
		return "", 0, err
	}
	// The head file names the log's last record: the log is on disk before it is.
	if err := w.log.Sync(); err != nil {
		return "", 0, fmt.Errorf("write audit log: %w", err)
	}
	head, seq = w.log.Head(), w.log.Seq()
	headPath := filepath.Join(w.tmp, HeadFile)
	var written []string
	undo := func(cause error) (string, int64, error) {
		for _, p := range written {
			os.Remove(p)
		}
		w.Abandon(Failure{Error: cause.Error()})
		return "", 0, cause
	}
	// The head file and the seal are each synced; their names are made durable by one
	// sync of the folder below, before the rename.
	if err := writeNew(headPath, []byte(head+"\n"), false); err != nil {
		return undo(err)
	}
	written = append(written, headPath)
	if seal != nil {
		name, b, err := seal(head, seq)
		if err != nil {
			return undo(err)
		}
		if name != "" {
			p := filepath.Join(w.tmp, name)
			if err := writeNew(p, b, false); err != nil {
				return undo(err)
			}
			written = append(written, p)
		}
	}
	syncDir(w.tmp)
	if err := renameNoReplace(w.tmp, w.out); err != nil {
		return undo(fmt.Errorf("move the finished folder into place (it stays in %s): %w", w.tmp, err))
	}
	w.closed = true
	defer w.lock.Close()
	if err := w.log.Close(); err != nil {
		return "", 0, fmt.Errorf("close audit log: %w", err)
	}
	// The rename is durable once the folder that holds DIR is synced.
	syncDir(filepath.Dir(w.out))
	return head, seq, nil
}

// Abandon closes the log with the kind's Failed record (run.failed, selftest.failed);
// the working folder stays, named .incomplete. It does nothing after Finish or a first
// Abandon.
func (w *Writer) Abandon(f Failure) {
	if w.closed {
		return
	}
	w.closed = true
	w.log.Append(w.kind.Failed, f)
	w.log.Close()
	w.lock.Close()
}

// MaxFileBytes is the largest file a folder holds besides its log (1 GiB): WriteNew
// refuses a larger one, and verify reads no larger one.
const MaxFileBytes = 1 << 30

// WriteNew writes b to path through a temporary file in the same folder, synced before it
// is linked into place. The hard link fails when path exists, so an existing file is never
// replaced, not even by a race. It refuses more than MaxFileBytes. The file gets the mode of the audit log (audit.FileMode,
// filtered by the umask).
func WriteNew(path string, b []byte) error { return writeNew(path, b, true) }

// writeNew is [WriteNew]; with dirSync false the folder is not synced after the link, for a
// caller that syncs it once after several files.
func writeNew(path string, b []byte, dirSync bool) error {
	if len(b) > MaxFileBytes {
		return fmt.Errorf("write %s: %d bytes, more than the limit of %d bytes (1 GiB) for a file of a run folder, which verify would refuse to read", path, len(b), MaxFileBytes)
	}
	f, err := audit.CreateTemp(path)
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	tmp := f.Name()
	_, werr := f.Write(b)
	serr := f.Sync()
	cerr := f.Close()
	if err := errors.Join(werr, serr, cerr); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("write %s: %w", path, err)
	}
	err = os.Link(tmp, path)
	os.Remove(tmp)
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if dirSync {
		syncDir(filepath.Dir(path)) // the name is on disk before the caller records the file
	}
	return nil
}

// renameNoReplace renames the folder from to to, failing if to exists (renameat2 with
// RENAME_NOREPLACE, Linux 3.15 and later), so that a finished run never replaces anything.
// Where the kernel or file system lacks the flag, it falls back to checking and renaming,
// which leaves a small window only against a concurrent writer of the same name.
func renameNoReplace(from, to string) error {
	err := unix.Renameat2(unix.AT_FDCWD, from, unix.AT_FDCWD, to, unix.RENAME_NOREPLACE)
	if errors.Is(err, unix.ENOSYS) || errors.Is(err, unix.EINVAL) {
		if _, err := os.Lstat(to); err == nil {
			return fmt.Errorf("%s: %w", to, ErrExists)
		}
		return os.Rename(from, to)
	}
	if errors.Is(err, unix.EEXIST) {
		return fmt.Errorf("%s: %w", to, ErrExists)
	}
	if err != nil {
		return &os.LinkError{Op: "rename", Old: from, New: to, Err: err}
	}
	return nil
}

// syncDir makes the entries of dir durable (fsync(2) on the folder). It does its best and
// reports nothing: a folder that cannot be opened for reading (write-only) or a file
// system that cannot sync a folder still gets its files written.
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}
