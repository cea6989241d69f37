package runner

import (
	"time"

	"rankplan/runner/audit"
	"rankplan/spec"
)

// LockPlan writes a lock for the plan at planPath to out: the canonical plan, its hash,
// the raw file's hash and the time, meant to be published with a preregistration before
// any data exist. It needs no data file. The lock is never written over an existing file.
func LockPlan(planPath, out string, actor audit.Actor, now time.Time) (audit.Lock, error) {
	if err := CheckNewFile(out); err != nil {
		return audit.Lock{}, err
	}
	raw, err := spec.ReadFile(planPath)
	if err != nil {
		return audit.Lock{}, &InputError{Err: err}
	}
	p, err := spec.Parse(planPath, raw)
	if err != nil {
		return audit.Lock{}, &InputError{Err: err}
	}
	canon, err := PlanCanonical(p)
	if err != nil {
		return audit.Lock{}, err
	}
	l := audit.Lock{
		Format:     audit.LockFormat,
		PlanID:     p.ID,
		PlanSHA256: audit.Digest(canon),
		RawSHA256:  audit.Digest(raw),
		Plan:       canon,
		LockedAt:   audit.FormatTime(now),
		Tool:       "rankplan " + Version,
		Actor:      actor,
	}
	b, err := audit.EncodeLock(l)
	if err != nil {
		return audit.Lock{}, err
	}
	if err := writeFileAtomic(out, b); err != nil {
		return audit.Lock{}, err
	}
	return l, nil
}
