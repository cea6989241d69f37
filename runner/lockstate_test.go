package runner

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"rankplan/runner/audit"
	"rankplan/runner/folder"
)

// TestCheckLockState: verify's lock check states the recorded lock status and fails when
// lock.json and plan.bound disagree, as a forger who re-chained the log would leave them.
func TestCheckLockState(t *testing.T) {
	locked := []byte(`{"alpha":0.05}`)
	lockedSHA := audit.Digest(locked)
	ran := audit.Digest([]byte(`{"alpha":0.01}`))
	lockBytes, err := audit.EncodeLock(audit.Lock{Format: audit.LockFormat, PlanID: "p", PlanSHA256: lockedSHA,
		RawSHA256: audit.Digest([]byte("raw")), Plan: locked, LockedAt: "2026-01-02T03:04:05.000000000Z", Tool: "rankplan test"})
	if err != nil {
		t.Fatal(err)
	}
	state := func(status string) folder.LockState {
		return folder.LockState{Status: status, Path: "plan.lock.json", LockSHA256: audit.Digest(lockBytes),
			LockedAt: "2026-01-02T03:04:05.000000000Z", LockedPlanSHA256: lockedSHA}
	}
	reason := []folder.Deviation{{Changed: []string{"alpha"}, Reason: "the sponsor asked", DataSeen: false}}
	for _, tc := range []struct {
		name    string
		lock    folder.LockState
		canon   string
		devs    []folder.Deviation
		file    []byte // lock.json; nil: none in the folder
		verdict Verdict
		detail  string
	}{
		{"not locked", folder.LockState{Status: folder.LockNone}, ran, nil, nil, Pass, "no lock: the plan was not locked before this run"},
		{"matches", state(folder.LockMatches), lockedSHA, nil, lockBytes, Pass, "locked: the plan matches its lock " + audit.Digest(lockBytes)},
		{"matches, but another plan ran", state(folder.LockMatches), ran, nil, lockBytes, Fail, "plan.bound says the plan matches its lock"},
		{"deviates with reasons", state(folder.LockDeviates), ran, reason, lockBytes, Warn, `changed: alpha; reasons recorded: "the sponsor asked" (data seen: false)`},
		{"deviates, but the locked plan ran", state(folder.LockDeviates), lockedSHA, reason, lockBytes, Fail, "plan.bound records deviations, but lock.json locks the plan that ran"},
		{"deviates without a reason", state(folder.LockDeviates), ran, nil, lockBytes, Fail, "records no reason"},
		{"another locked plan recorded", func() folder.LockState { s := state(folder.LockMatches); s.LockedPlanSHA256 = ran; return s }(), ran, nil, lockBytes, Fail, "but plan.bound records the locked plan as " + ran},
		{"unknown state", state("maybe"), ran, nil, lockBytes, Fail, `the lock state "maybe"`},
		{"no lock.json", state(folder.LockMatches), lockedSHA, nil, nil, Fail, "cannot read lock.json"},
		{"lock.json not a lock", state(folder.LockMatches), lockedSHA, nil, []byte(`{"format":"x"}`), Fail, "lock.json is not a plan lock"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			if tc.file != nil {
				if err := os.WriteFile(filepath.Join(dir, LockCopyFile), tc.file, 0o644); err != nil {
					t.Fatal(err)
				}
			}
			var r VerifyReport
			checkLockState(&r, dir, folder.PlanBound{CanonicalSHA256: tc.canon, Lock: tc.lock, Deviations: tc.devs})
			if len(r.Checks) != 1 {
				t.Fatalf("%d checks, want 1: %+v", len(r.Checks), r.Checks)
			}
			c := r.Checks[0]
			if c.Name != "lock" || c.Verdict != tc.verdict || !strings.Contains(c.Detail, tc.detail) {
				t.Errorf("got %s %s %q, want lock %s containing %q", c.Name, c.Verdict, c.Detail, tc.verdict, tc.detail)
			}
			if tc.verdict == Fail && c.Class != ClassIntegrity {
				t.Errorf("class %q, want %q", c.Class, ClassIntegrity)
			}
		})
	}
}
