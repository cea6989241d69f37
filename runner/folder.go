package runner

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"rankplan/runner/audit"
)

// OutputFolder writes a new folder with the guarantees of a run folder, for outputs other
// than a run's (the selftest's validation record): everything goes into DIR.incomplete-XXXX
// beside DIR; each audit record is canonical, hash-chained and synced before the next step;
// each file goes through a synced temporary file and a hard link and is recorded with its
// SHA-256; the head file is written last, and the folder is renamed to DIR with
// renameat2(RENAME_NOREPLACE), so DIR appears only complete and never replaces anything.
type OutputFolder struct {
	out, tmp string
	log      *audit.Log
}

// CreateOutputFolder checks that out does not exist, creates its working folder and starts
// its audit log with actor and the clock now (time.Now when nil).
func CreateOutputFolder(out string, actor audit.Actor, now func() time.Time) (*OutputFolder, error) {
	if err := CheckNewFile(out); err != nil {
		return nil, err
	}
	tmp, err := makeTemp(out)
	if err != nil {
		return nil, err
	}
	log, err := audit.Create(filepath.Join(tmp, AuditFile), actor, now)
	if err != nil {
		return nil, fmt.Errorf("create audit log: %w", err)
	}
	return &OutputFolder{out: out, tmp: tmp, log: log}, nil
}

// Append writes the next audit record.
func (f *OutputFolder) Append(event string, data any) error {
	if _, err := f.log.Append(event, data); err != nil {
		return fmt.Errorf("write audit log: %w", err)
	}
	return nil
}

// WriteFile writes the file name into the folder and records it in an output.written
// record holding its size and SHA-256, with the members of extra added.
func (f *OutputFolder) WriteFile(name string, b []byte, extra map[string]any) error {
	if err := writeFileAtomic(filepath.Join(f.tmp, name), b); err != nil {
		return err
	}
	d := map[string]any{"file": name, "bytes": len(b), "sha256": audit.Digest(b)}
	for k, v := range extra {
		d[k] = v
	}
	return f.Append("output.written", d)
}

// Head returns the audit head and record number so far.
func (f *OutputFolder) Head() (string, int64) { return f.log.Head(), f.log.Seq() }

// Finish appends the closing record (event with data), closes the log, writes the head file
// and moves the folder into place. It returns the final head and its record number. When
// another process has created the folder's final name meanwhile, it writes nothing and
// returns an [InputError] wrapping [ErrOutExists] (see reserveOut), for the caller to
// [OutputFolder.Abandon] the folder.
func (f *OutputFolder) Finish(event string, data any) (head string, seq int64, err error) {
	release, err := reserveOut(context.Background(), f.out)
	if err != nil {
		return "", 0, err
	}
	defer release()
	if err := f.Append(event, data); err != nil {
		return "", 0, err
	}
	head, seq = f.log.Head(), f.log.Seq()
	if err := f.log.Close(); err != nil {
		return "", 0, fmt.Errorf("close audit log: %w", err)
	}
	if err := writeFileAtomic(filepath.Join(f.tmp, HeadFile), []byte(head+"\n")); err != nil {
		return "", 0, err
	}
	if err := renameNoReplace(f.tmp, f.out); err != nil {
		return "", 0, fmt.Errorf("move the finished folder into place (it stays in %s): %w", f.tmp, err)
	}
	syncDir(filepath.Dir(f.out))
	return head, seq, nil
}

// Abandon records why the folder was not finished (event, e.g. selftest.failed, with the
// error) and closes the log; the working folder stays, named .incomplete, as with a run that
// fails.
func (f *OutputFolder) Abandon(event string, cause error) {
	f.log.Append(event, map[string]any{"error": cause.Error()})
	f.log.Close()
}

// Executable returns the SHA-256 and size of the running executable ("" and 0 when it
// cannot be read).
func Executable() (digest string, size int64) {
	path, err := os.Executable()
	if err != nil {
		return "", 0
	}
	digest, size, _ = audit.DigestFile(path)
	return digest, size
}
