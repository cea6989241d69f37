package runner

import (
	"fmt"
	"os"

	"rankplan/runner/audit"
	"rankplan/runner/folder"
	"rankplan/runner/results"
	"rankplan/schemas"
)

// ErrOutExists is returned when the output folder of a run already exists: rankplan never
// writes into, and so never overwrites, an existing folder.
var ErrOutExists = folder.ErrExists

// EncodeResults returns the bytes of results.json: indented JSON without HTML escaping,
// ending in a newline ([audit.Indented]). It checks the value against the results schema first, so that a
// file that does not match its published schema is never written.
func EncodeResults(res *results.Results) ([]byte, error) {
	b, err := audit.Indented(res)
	if err != nil {
		return nil, fmt.Errorf("encode results: %w", err)
	}
	if err := ValidateResults(b); err != nil {
		return nil, err
	}
	return b, nil
}

// ValidateResults checks results.json bytes against the embedded results schema.
func ValidateResults(b []byte) error {
	schema, _, err := schemas.Results()
	if err != nil {
		return err
	}
	return schemas.Check(schema, schemas.ResultsID, "results", b)
}

// writeFileAtomic writes b to path, which must not exist, through a synced temporary
// file (folder.WriteNew).
func writeFileAtomic(path string, b []byte) error { return folder.WriteNew(path, b) }

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
