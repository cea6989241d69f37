package runner

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"

	"rankplan/internal/infile"
	"rankplan/runner/audit"
	"rankplan/runner/results"
	"rankplan/schemas"
)

// ErrOutExists is returned when the output folder of a run already exists: rankplan never
// writes into, and so never overwrites, an existing folder.
var ErrOutExists = errors.New("the output folder already exists; rankplan never overwrites earlier results, so name a new folder")

// EncodeResults returns the bytes of results.json: indented JSON without HTML escaping,
// ending in a newline. It checks the value against the results schema first, so that a
// file that does not match its published schema is never written.
func EncodeResults(res *results.Results) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(res); err != nil {
		return nil, fmt.Errorf("encode results: %w", err)
	}
	if err := ValidateResults(buf.Bytes()); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// ValidateResults checks results.json bytes against the embedded results schema.
func ValidateResults(b []byte) error {
	schema, _, err := schemas.Results()
	if err != nil {
		return err
	}
	return schemas.Check(schema, schemas.ResultsID, "results", b)
}

// WriteRun creates the folder dir (its parent must exist; dir itself must not) and writes
// results.json into it. Each file is written to a temporary name, synced and renamed, so
// a file in the folder is either complete or absent.
func WriteRun(dir string, res *results.Results) error {
	b, err := EncodeResults(res)
	if err != nil {
		return err
	}
	if err := os.Mkdir(dir, 0o755); err != nil {
		if errors.Is(err, fs.ErrExist) {
			return &InputError{Err: fmt.Errorf("%s: %w", dir, ErrOutExists)}
		}
		return fmt.Errorf("create output folder: %w", err)
	}
	return writeFileAtomic(filepath.Join(dir, "results.json"), b)
}

// writeFileAtomic writes b to path through a temporary file in the same folder, synced
// before it is linked into place. It refuses more than [MaxOutputBytes], the most that
// verify reads of a file. The hard link fails when path exists, so an existing
// file is never replaced, not even by a race.
func writeFileAtomic(path string, b []byte) error {
	if len(b) > MaxOutputBytes {
		return fmt.Errorf("write %s: %d bytes, more than the limit of %d bytes (%s) for an output file, which verify would refuse to read",
			path, len(b), MaxOutputBytes, infile.Bytes(MaxOutputBytes))
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
	if d, err := os.Open(filepath.Dir(path)); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// CheckNewFile fails when path exists, before any work is done for a file that could not
// be written anyway.
func CheckNewFile(path string) error {
	if _, err := os.Lstat(path); err == nil {
		return &InputError{Err: fmt.Errorf("%s already exists; rankplan never overwrites earlier output, so name a new one", path)}
	}
	return nil
}

// WriteNewFile writes b to path, which must not exist, atomically.
func WriteNewFile(path string, b []byte) error {
	if err := CheckNewFile(path); err != nil {
		return err
	}
	return writeFileAtomic(path, b)
}
