package audit

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"io/fs"
	"os"
	"path/filepath"
)

// FileMode is the mode every output file is created with, before the process umask is
// applied: the audit log's, so that another user who may read the folder can verify it.
const FileMode fs.FileMode = 0o644

// CreateTemp creates a new file, open for writing, beside path under a hidden temporary
// name ("." + base + ".tmp-" + random hex) with mode FileMode filtered by the umask.
// os.CreateTemp would give 0600, which leaves the folder's files unreadable to others while
// its audit log is readable.
func CreateTemp(path string) (*os.File, error) {
	dir, base := filepath.Split(path)
	for range 100 {
		var b [8]byte
		rand.Read(b[:])
		name := filepath.Join(dir, "."+base+".tmp-"+hex.EncodeToString(b[:]))
		f, err := os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, FileMode)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		return f, err
	}
	return nil, &fs.PathError{Op: "createtemp", Path: path, Err: fs.ErrExist}
}
