package runner

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
)

// TestOutRace runs two runs of one plan for the same --out at once, several times. Each
// waits in its first Monte Carlo progress call until the other has reached that point too,
// which is after both passed the check that --out does not exist and created their working
// folders; then both race to finish. Exactly one must finish, as DIR, and verify; the other
// must fail before its closing record: its error wraps ErrOutExists and names its working
// folder, whose log holds no run.finished and ends with run.failed, so that verify reports
// it as incomplete. A log left behind never claims success.
func TestOutRace(t *testing.T) {
	p := methodPlan(t, "{method: permutation, resamples: 3000}", "{interval: none}", tiedToy)
	for round := range 4 {
		out := filepath.Join(t.TempDir(), "run")
		var arrived sync.WaitGroup
		arrived.Add(2)
		type outcome struct {
			rec *RunRecord
			err error
		}
		outcomes := make(chan outcome, 2)
		for range 2 {
			go func() {
				var once sync.Once
				ctx := WithProgress(context.Background(), func(string, string, int64, int64) {
					once.Do(func() { arrived.Done(); arrived.Wait() })
				})
				rec, err := Run(ctx, p.File, RunOptions{Out: out, Workers: 1, Now: clock(), Getenv: noEnv})
				outcomes <- outcome{rec, err}
			}()
		}
		a, b := <-outcomes, <-outcomes
		if (a.err == nil) == (b.err == nil) {
			t.Fatalf("round %d: errors %v and %v, want exactly one run to finish", round, a.err, b.err)
		}
		won, lost := a, b
		if a.err != nil {
			won, lost = b, a
		}
		if r := verify(t, won.rec.Dir, VerifyOptions{Head: won.rec.Head}); r.Outcome != Verified {
			t.Errorf("round %d: the run that finished does not verify: %+v", round, r.Checks)
		}
		var ue *UnfinishedError
		if !errors.Is(lost.err, ErrOutExists) || !errors.As(lost.err, &ue) {
			t.Fatalf("round %d: the other run's error %v, want ErrOutExists in an UnfinishedError", round, lost.err)
		}
		if !strings.HasPrefix(ue.Dir, out+".incomplete-") {
			t.Errorf("round %d: the unfinished folder %s is not %s.incomplete-XXXX", round, ue.Dir, out)
		}
		log, err := os.ReadFile(filepath.Join(ue.Dir, AuditFile))
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(strings.TrimSpace(string(log)), "\n")
		if strings.Contains(string(log), `"event":"run.finished"`) || !strings.Contains(lines[len(lines)-1], `"event":"run.failed"`) {
			t.Errorf("round %d: the unfinished folder's log claims success or does not end with run.failed:\n%s", round, log)
		}
		if r := verify(t, ue.Dir, VerifyOptions{}); r.Outcome != ClassIncomplete {
			t.Errorf("round %d: verify of the unfinished folder: %s, want %s", round, r.Outcome, ClassIncomplete)
		}
	}
}
