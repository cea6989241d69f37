package audit

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// planRaw is an invented plan, formatted loosely on purpose.
const planRaw = `{ "id": "demo-1", "alpha": 0.05,
  "analyses": [ {"name": "a1", "pvalue": {"method": "exact"}} ] }`

func testLock(t testing.TB) Lock {
	t.Helper()
	canon, err := Canonical(json.RawMessage(planRaw))
	if err != nil {
		t.Fatal(err)
	}
	return Lock{
		Format:     LockFormat,
		PlanID:     "demo-1",
		PlanSHA256: Digest(canon),
		RawSHA256:  Digest([]byte(planRaw)),
		Plan:       json.RawMessage(planRaw), // the lock file holds it as written; ReadLock returns the canonical form
		LockedAt:   FormatTime(signTime),
		Tool:       "rankplan 0.0.0-test",
		Actor:      testActor,
	}
}

// writeLock writes the lock file for l to path, as runner.LockPlan does but without its
// refusal of an existing path (folder.WriteNew, tested there).
func writeLock(path string, l Lock) error {
	b, err := EncodeLock(l)
	if err != nil {
		return err
	}
	return os.WriteFile(path, b, FileMode)
}

func TestLockRoundTripFile(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "plan.lock")
	l := testLock(t)
	before := append([]byte(nil), l.Plan...)
	if err := writeLock(p, l); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(l.Plan, before) {
		t.Error("EncodeLock changed the caller's Plan bytes")
	}
	got, err := readLock(p)
	if err != nil {
		t.Fatal(err)
	}
	want, _ := Canonical(json.RawMessage(planRaw))
	if !bytes.Equal(got.Plan, want) || got.PlanSHA256 != l.PlanSHA256 || got.RawSHA256 != l.RawSHA256 ||
		got.PlanID != "demo-1" || got.LockedAt != l.LockedAt || got.Tool != l.Tool || got.Actor.User != "tester" {
		t.Errorf("read back %+v", got)
	}
}

// TestEncodeLockRefuses: a lock that is not whole is never encoded.
func TestEncodeLockRefuses(t *testing.T) {
	bad := []func(*Lock){
		func(l *Lock) { l.Format = "rankplan-lock/2" },
		func(l *Lock) { l.PlanSHA256 = Digest([]byte("x")) },
		func(l *Lock) { l.RawSHA256 = "abc" },
		func(l *Lock) { l.LockedAt = "2026-12-01T20:12:32Z" },
		func(l *Lock) { l.Plan = json.RawMessage(`{"id":"demo-2"}`) },
		func(l *Lock) { l.Plan = nil },
	}
	for i, f := range bad {
		l := testLock(t)
		f(&l)
		if b, err := EncodeLock(l); err == nil {
			t.Errorf("bad lock %d encoded: %s", i, b)
		}
	}
}

// TestLockTamper edits a written lock file; every edit must be refused.
func TestLockTamper(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "plan.lock")
	if err := writeLock(p, testLock(t)); err != nil {
		t.Fatal(err)
	}
	good, _ := os.ReadFile(p)
	tests := []struct{ name, old, new string }{
		{"plan value", `0.05`, `0.1`},
		{"plan method", `"exact"`, `"asymptotic"`},
		{"plan added key", `"id"`, `"x": 1, "id"`},
		{"plan digest", testLock(t).PlanSHA256[10:20], "0123456789"},
		{"raw digest", testLock(t).RawSHA256, "sha256:abc"},
		{"unknown field", `"format"`, `"extra": 1, "format"`},
		{"format", LockFormat, "rankplan-lock/9"},
		{"time", testLock(t).LockedAt, "2026-12-01"},
		{"not json", `"format"`, `"format`},
	}
	for _, tc := range tests {
		b := strings.Replace(string(good), tc.old, tc.new, 1)
		if b == string(good) {
			t.Fatalf("%s: edit did not apply", tc.name)
		}
		q := filepath.Join(dir, tc.name)
		os.WriteFile(q, []byte(b), 0o644)
		if _, err := readLock(q); err == nil {
			t.Errorf("%s: tampered lock accepted", tc.name)
		}
	}
	// Re-formatting the plan without changing its meaning is not tampering.
	b := strings.Replace(string(good), `0.05`, `5e-2`, 1)
	q := filepath.Join(dir, "reformatted")
	os.WriteFile(q, []byte(b), 0o644)
	if _, err := readLock(q); err != nil {
		t.Errorf("same plan, other number spelling: %v", err)
	}
	if _, err := readLock(filepath.Join(dir, "missing")); err == nil {
		t.Error("missing lock: no error")
	}
}

// readLock reads a lock file the tests wrote and checks it with ParseLock; the command
// reads lock files through runner (size limits, no pipes).
func readLock(path string) (Lock, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return Lock{}, err
	}
	return ParseLock(b)
}
