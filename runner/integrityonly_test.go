package runner

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// TestVerifyIntegrityOnly: every check but the rerun, which is listed as skipped; tampering
// and changed inputs are still found; combined with Data it is an input error.
func TestVerifyIntegrityOnly(t *testing.T) {
	planPath, rec := newRun(t, RunOptions{})
	verdicts := func(r *VerifyReport) map[string]Verdict {
		m := map[string]Verdict{}
		for _, c := range r.Checks {
			if m[c.Name] != Fail {
				m[c.Name] = c.Verdict
			}
		}
		return m
	}
	r := verify(t, rec.Dir, VerifyOptions{IntegrityOnly: true, Head: rec.Head})
	v := verdicts(r)
	if r.Outcome != Verified || v["rerun"] != Skip {
		t.Fatalf("outcome %s, checks %+v", r.Outcome, r.Checks)
	}
	for _, name := range []string{"audit log", "complete", "sequence", "head file", "truncation", "outputs", "results", "tool", "plan file", "data file"} {
		if v[name] != Pass {
			t.Errorf("check %q: %q, want pass", name, v[name])
		}
	}
	if last := r.Checks[len(r.Checks)-1]; last.Name != "rerun" || last.Detail != "not rerun: --integrity-only" {
		t.Errorf("last check %+v", last)
	}

	_, err := Verify(context.Background(), rec.Dir, VerifyOptions{IntegrityOnly: true, Data: filepath.Join(filepath.Dir(planPath), "data.csv")})
	var ie *InputError
	if !errors.As(err, &ie) {
		t.Errorf("with Data: %v, want an InputError", err)
	}

	data := filepath.Join(filepath.Dir(planPath), "data.csv")
	if err := os.WriteFile(data, []byte(tiedToy+"C,6\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if r := verify(t, rec.Dir, VerifyOptions{IntegrityOnly: true}); r.Outcome != ClassDiffer || verdicts(r)["data file"] != Fail {
		t.Errorf("changed data: %s %+v", r.Outcome, r.Checks)
	}
	if err := os.WriteFile(filepath.Join(rec.Dir, "summary.md"), []byte("edited\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if r := verify(t, rec.Dir, VerifyOptions{IntegrityOnly: true}); r.Outcome != ClassIntegrity || verdicts(r)["rerun"] != Skip {
		t.Errorf("edited output: %s %+v", r.Outcome, r.Checks)
	}
}
