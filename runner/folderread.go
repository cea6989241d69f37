package runner

import (
	"errors"
	"io"
	"os"
	"path/filepath"

	"rankplan/internal/infile"
	"rankplan/runner/audit"
	"rankplan/runner/data"
	"rankplan/runner/folder"
)

// Limits of the files verify reads from a run folder, besides the audit log's
// ([audit.MaxLogBytes], [audit.MaxRecordBytes]) and the signature's
// ([audit.MaxSignatureBytes]). A file past its limit is refused from its size, before
// a byte is read, as an integrity failure naming the file.
const (
	// MaxHeadBytes is the largest head file read: 1 KiB; the head and its "\n" take 72
	// bytes.
	MaxHeadBytes = 1 << 10
	// MaxOutputBytes is the largest output file a run writes (writeFileAtomic refuses a
	// larger one) and verify hashes or reads (results.json is read whole): 1 GiB.
	MaxOutputBytes = folder.MaxFileBytes
)

// readFolderFile reads the file name of the run folder dir under the rules of
// [infile.ReadFileNoFollow]: a regular file, never a symbolic link, of at most limit
// bytes. A run folder is written by rankplan alone, which writes no links, so a link
// there is refused whatever it points to, and a named pipe or device is never waited
// on or read without end.
func readFolderFile(dir, name string, limit int64) ([]byte, error) {
	return infile.ReadFileNoFollow(filepath.Join(dir, name), limit)
}

// digestOutput returns the digest (audit.Digest's form) and size of the output file name
// of the run folder dir, opened under the rules of [readFolderFile] with the limit
// [MaxOutputBytes]. A file whose size is not wantSize, the size its record gives, is not
// read and its digest is "": its size alone shows that it is not the file written, and a
// large file is not hashed for nothing.
func digestOutput(dir, name string, wantSize int64) (string, int64, error) {
	f, size, err := infile.OpenNoFollow(filepath.Join(dir, name), MaxOutputBytes)
	if err != nil {
		return "", 0, err
	}
	defer f.Close()
	if size != wantSize {
		return "", size, nil
	}
	return digestLimited(f, MaxOutputBytes)
}

// digestInput returns the digest and size of an input file the audit log names (the
// plan or the data file at its recorded absolute path). The path is outside the run
// folder and was named by the user, so symbolic links are followed, but only a regular
// file of at most [data.MaxFileBytes] is read ([infile.Open]): a log may name any path,
// and a device or pipe there must give a clear error, not a hang.
func digestInput(path string) (string, int64, error) {
	f, _, err := infile.Open(path, data.MaxFileBytes)
	if err != nil {
		return "", 0, err
	}
	defer f.Close()
	return digestLimited(f, data.MaxFileBytes)
}

// digestLimited digests f to its end, refusing a file that grew past limit bytes after
// it was opened.
func digestLimited(f *os.File, limit int64) (string, int64, error) {
	digest, size, err := audit.DigestReader(io.LimitReader(f, limit+1))
	if err != nil {
		return "", 0, err
	}
	if size > limit {
		return "", 0, infile.GrewError(limit)
	}
	return digest, size, nil
}

// reasonOf returns why a file could not be read: the reason of an [*infile.Error] alone,
// without the operation and path wrapped around it, or the error's own text.
func reasonOf(err error) string {
	var e *infile.Error
	if errors.As(err, &e) {
		return e.Reason
	}
	return unwrapPathError(err).Error()
}
