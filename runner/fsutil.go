package runner

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"runtime/debug"

	"golang.org/x/sys/unix"
)

// renameNoReplace renames the folder from to to, failing if to exists (renameat2 with
// RENAME_NOREPLACE, Linux 3.15 and later), so that a finished run never replaces anything.
// Where the kernel or file system lacks the flag, it falls back to checking and renaming,
// which leaves a small window only against a concurrent writer of the same name.
func renameNoReplace(from, to string) error {
	err := unix.Renameat2(unix.AT_FDCWD, from, unix.AT_FDCWD, to, unix.RENAME_NOREPLACE)
	if errors.Is(err, unix.ENOSYS) || errors.Is(err, unix.EINVAL) {
		if _, err := os.Lstat(to); err == nil {
			return fmt.Errorf("%s: %w", to, ErrOutExists)
		}
		return os.Rename(from, to)
	}
	if errors.Is(err, unix.EEXIST) {
		return fmt.Errorf("%s: %w", to, ErrOutExists)
	}
	if err != nil {
		return &os.LinkError{Op: "rename", Old: from, New: to, Err: err}
	}
	return nil
}

func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}

// jsonRaw lets already-encoded JSON pass through audit.Canonical unchanged in meaning.
func jsonRaw(b []byte) json.RawMessage { return json.RawMessage(bytes.TrimSpace(b)) }

// EncodeJSON writes v as indented JSON with a final newline and no HTML escaping.
func EncodeJSON(v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// buildSetting returns a build setting recorded in the binary (e.g. GOAMD64), or "".
func buildSetting(key string) string {
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			if s.Key == key {
				return s.Value
			}
		}
	}
	return ""
}
