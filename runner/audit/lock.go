package audit

import (
	"encoding/json"
	"errors"
	"fmt"
)

// LockFormat names the layout of lock files.
const LockFormat = "rankplan-lock/1"

// Lock fixes a plan before the data exist (preregistration): the canonical plan itself,
// so that later deviations can be listed key by key, its digest, the digest of the plan
// file's bytes, the time and who made it.
type Lock struct {
	Format     string          `json:"format"`      // LockFormat
	PlanID     string          `json:"plan_id"`     // the plan's id
	PlanSHA256 string          `json:"plan_sha256"` // Digest(Plan)
	RawSHA256  string          `json:"raw_sha256"`  // Digest(raw plan file bytes)
	Plan       json.RawMessage `json:"plan"`        // the canonical plan (RFC 8785)
	LockedAt   string          `json:"locked_at"`   // FormatTime
	Tool       string          `json:"tool"`        // "rankplan <version>"
	Actor      Actor           `json:"actor"`
}

// EncodeLock returns the bytes of the lock file for l: indented JSON ([Indented]), after
// checking that l is whole (format, the plan's digest, raw_sha256, locked_at). The caller
// writes them to a new file that never replaces one (runner.LockPlan, through
// folder.WriteNew).
func EncodeLock(l Lock) ([]byte, error) {
	if err := l.check(); err != nil {
		return nil, err
	}
	b, err := Indented(l)
	if err != nil {
		return nil, fmt.Errorf("encode lock: %w", err)
	}
	return b, nil
}

// MaxLockBytes is the largest lock file read: 1 MiB, four times the largest plan.
const MaxLockBytes = 1 << 20

// ParseLock reads and checks the bytes of a lock file: one JSON object of known format
// with no unknown fields and nothing after it, whose plan has the recorded canonical
// digest. The error says what is wrong, without a file name.
func ParseLock(b []byte) (Lock, error) {
	var l Lock
	if err := decodeOne(b, &l, "lock"); err != nil {
		return Lock{}, err
	}
	// The file holds the plan indented; its canonical form is what the digest covers.
	c, err := Canonical(l.Plan)
	if err != nil {
		return Lock{}, fmt.Errorf("the plan is not JSON: %w", err)
	}
	l.Plan = c
	if err := l.check(); err != nil {
		return Lock{}, err
	}
	return l, nil
}

func (l Lock) check() error {
	if l.Format != LockFormat {
		return fmt.Errorf("lock format %q, want %q", l.Format, LockFormat)
	}
	c, err := Canonical(l.Plan)
	if err != nil {
		return fmt.Errorf("lock: the plan is not JSON: %w", err)
	}
	if Digest(c) != l.PlanSHA256 {
		return fmt.Errorf("lock: the plan hashes to %s, but the lock records %s: the lock was altered", Digest(c), l.PlanSHA256)
	}
	if !isDigest(l.RawSHA256) {
		return errors.New("lock: raw_sha256 is not a digest")
	}
	if _, ok := parseTime(l.LockedAt); !ok {
		return fmt.Errorf("lock: locked_at %q is not a fixed-width UTC time", l.LockedAt)
	}
	return nil
}
