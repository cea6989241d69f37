package audit

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"

	"github.com/gowebpki/jcs"
)

// RecordSchema is the schema URI every audit record carries.
const RecordSchema = "https://rankplan.invalid/schema/audit-record-v1.json"

// GenesisPrev is the prev digest of the first record of a log.
const GenesisPrev = "sha256:0000000000000000000000000000000000000000000000000000000000000000"

// digestPrefix starts every digest this package writes.
const digestPrefix = "sha256:"

// Canonical returns the RFC 8785 (JCS) bytes of v.
//
//	Canonical(v) = JCS(json.Marshal(v) with HTML escaping off)
//
// JCS (RFC 8785 §3.2) removes whitespace, sorts object members by the UTF-16
// code units of their names, writes numbers as ECMAScript's Number-to-String
// does (−0 as 0) and escapes strings minimally. Integers above 2^53 lose
// precision (they become IEEE-754 doubles), so callers write 64-bit values as
// strings. NaN, ±Inf, invalid UTF-8 surrogates and duplicate member names
// (in a json.RawMessage) are errors.
func Canonical(v any) ([]byte, error) {
	b, err := encodeJSON(v, "")
	if err != nil {
		return nil, fmt.Errorf("canonical json: %w", err)
	}
	out, err := jcs.Transform(bytes.TrimRight(b, "\n"))
	if err != nil {
		return nil, fmt.Errorf("canonical json: %w", err)
	}
	return out, nil
}

// Indented returns v as JSON for people and for the files of a run: members on their own
// lines indented by two spaces, no HTML escaping (<, > and & stay as written) and a final
// newline. Every such output goes through it: results.json, validation.json, locks,
// signatures, `check --json` and `verify --json`.
func Indented(v any) ([]byte, error) { return encodeJSON(v, "  ") }

// encodeJSON is json.Marshal without HTML escaping, indented by indent ("" for none),
// with a final newline.
func encodeJSON(v any, indent string) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", indent)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// Digest returns the content digest of b.
//
//	Digest(b) = "sha256:" + lowercase hex(SHA-256(b))    (FIPS 180-4)
func Digest(b []byte) string {
	sum := sha256.Sum256(b)
	return digestPrefix + hex.EncodeToString(sum[:])
}

// DigestFile streams the file at path through SHA-256 and returns its
// digest (as Digest writes it) and its size in bytes.
func DigestFile(path string) (digest string, size int64, err error) {
	f, err := os.Open(path)
	if err != nil {
		return "", 0, fmt.Errorf("digest file: %w", err)
	}
	defer f.Close()
	digest, size, err = DigestReader(f)
	if err != nil {
		return "", 0, fmt.Errorf("digest file %s: %w", path, err)
	}
	return digest, size, nil
}

// DigestReader streams r to its end through SHA-256 and returns the digest (as Digest
// writes it) and the number of bytes read. To bound the work, give it an
// io.LimitReader.
func DigestReader(r io.Reader) (digest string, size int64, err error) {
	h := sha256.New()
	size, err = io.Copy(h, r)
	if err != nil {
		return "", 0, err
	}
	return digestPrefix + hex.EncodeToString(h.Sum(nil)), size, nil
}

// isDigest reports whether s is "sha256:" followed by 64 lowercase hex digits.
func isDigest(s string) bool {
	if len(s) != len(digestPrefix)+64 || s[:len(digestPrefix)] != digestPrefix {
		return false
	}
	for i := len(digestPrefix); i < len(s); i++ {
		c := s[i]
		if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f') {
			return false
		}
	}
	return true
}
