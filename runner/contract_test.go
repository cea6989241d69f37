package runner

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"rankplan/internal/audittest"
	"rankplan/runner/audit"
	"rankplan/runner/folder"
	"rankplan/schemas"
)

// TestRunFolderContract: a run folder, written with every optional record member in use (a
// lock with a deviation, a signature), reads back through package folder with every record
// valid under the audit-record schema, decoding into its typed record without unknown
// members, in the order the contract prescribes; and Execute leaves its input unchanged.
func TestRunFolderContract(t *testing.T) {
	p := methodPlan(t, "{method: permutation, resamples: 500}", "{interval: bootstrap, resamples: 100}", tiedToy)
	tmp := t.TempDir()
	lock := filepath.Join(tmp, "plan.lock.json")
	if _, err := LockPlan(p.File, lock, audit.Actor{User: "t"}, time.Now()); err != nil {
		t.Fatal(err)
	}
	src := must(os.ReadFile(p.File))
	os.WriteFile(p.File, bytes.Replace(src, []byte("alpha: 0.05"), []byte("alpha: 0.01"), 1), 0o644)
	key := filepath.Join(tmp, "key")
	if _, err := audit.GenerateKey(key, key+".pub"); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(tmp, "run")
	seen := false
	if _, err := Run(context.Background(), p.File, RunOptions{Out: out, LockPath: lock, SignKey: key, Signer: "A. Tester",
		Deviations: []string{"a stricter alpha"}, DataSeen: &seen, Now: clock(), Getenv: noEnv}); err != nil {
		t.Fatal(err)
	}
	f, err := folder.Read(out)
	if err != nil || len(f.Problems) > 0 {
		t.Fatalf("folder.Read: %v %v", err, f.Problems)
	}
	if f.Kind != folder.Run || !f.Finished() || f.Marked {
		t.Fatalf("kind %s finished %v marked %v", f.Kind.Name, f.Finished(), f.Marked)
	}
	if msg := f.Kind.CheckOrder(f.Events()); msg != "" {
		t.Error(msg)
	}
	for _, r := range f.Chain.Records {
		if _, err := audittest.Typed(r); err != nil {
			t.Error(err)
		}
	}
	var plan folder.PlanBound
	if !f.First(folder.EventPlanBound, &plan) || plan.Lock.Status != folder.LockDeviates || plan.Lock.LockSHA256 == "" ||
		len(plan.Deviations) != 1 || plan.Deviations[0].Changed[0] != "alpha" {
		t.Errorf("plan.bound %+v", plan)
	}
	files := map[string]bool{}
	for _, o := range f.Outputs() {
		files[o.File] = true
	}
	entries, _ := os.ReadDir(out)
	for _, e := range entries {
		if !files[e.Name()] && !f.Kind.Files(e.Name()) {
			t.Errorf("%s is in the folder but not in its contract", e.Name())
		}
	}

	// Execute does not change its input: two executions of one Prepared give the same
	// results, and the second sees the same Prepared as the first.
	pl := p
	prep, err := Prepare(context.Background(), pl)
	if err != nil {
		t.Fatal(err)
	}
	before := must(audit.Indented(prep))
	if _, err := Execute(context.Background(), prep, Options{}); err != nil {
		t.Fatal(err)
	}
	if after := must(audit.Indented(prep)); string(after) != string(before) {
		t.Error("Execute changed its Prepared input")
	}
}

// TestVerifyContractBreaks: logs re-chained consistently (every hash repaired, the head
// rewritten) but no longer of the folder contract: verify fails them as integrity failures
// that say what is wrong, before it reads anything the log names.
func TestVerifyContractBreaks(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	edit := func(event string, change func(*audit.Record)) func([]audit.Record) []audit.Record {
		return func(recs []audit.Record) []audit.Record {
			for i := range recs {
				if recs[i].Event == event {
					change(&recs[i])
				}
			}
			return recs
		}
	}
	tests := []struct {
		name string
		edit func([]audit.Record) []audit.Record
		want string
	}{
		{"a member added to run.finished",
			edit(folder.EventRunFinished, func(r *audit.Record) { r.Data = []byte(`{"analyses":1,"exit_code":0,"status":"ok","verified":true}`) }),
			"does not match " + schemas.AuditRecordID},
		{"an event renamed",
			edit(folder.EventRunFinished, func(r *audit.Record) { r.Event = "run.approved" }),
			"does not match " + schemas.AuditRecordID},
		{"data bound before the plan",
			func(recs []audit.Record) []audit.Record { recs[1], recs[2] = recs[2], recs[1]; return recs },
			"record 2 is data.bound, where plan.bound belongs"},
		{"an output recorded after run.finished",
			func(recs []audit.Record) []audit.Record {
				n := len(recs)
				recs[n-2], recs[n-1] = recs[n-1], recs[n-2]
				return recs
			},
			"(run.finished) is not the last record"},
		{"the data path pointed at a device",
			edit(folder.EventDataBound, func(r *audit.Record) {
				r.Data = bytes.Replace(r.Data, []byte(`"absolute_path":"`), []byte(`"absolute_path":"/dev/zero","x":"`), 1)
			}),
			"does not match " + schemas.AuditRecordID},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			dir := copyDir(t, rec.Dir)
			if _, err := audittest.Rechain(filepath.Join(dir, AuditFile), filepath.Join(dir, HeadFile), tc.edit); err != nil {
				t.Fatal(err)
			}
			r := verify(t, dir, VerifyOptions{})
			if r.Outcome != ClassIntegrity {
				t.Fatalf("outcome %s, want %s: %+v", r.Outcome, ClassIntegrity, r.Checks)
			}
			found := false
			for _, c := range r.Checks {
				found = found || c.Verdict == Fail && strings.Contains(c.Detail, tc.want)
				if c.Name == "data file" || c.Name == "plan file" {
					t.Errorf("a log that broke its contract had its named inputs read: %+v", c)
				}
			}
			if !found {
				t.Errorf("no failed check says %q: %+v", tc.want, r.Checks)
			}
		})
	}
}
