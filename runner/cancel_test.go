package runner

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestAwait: await returns the step's result with a live context, and the context's error
// as soon as the context ends while the step is still running (the step here waits until
// the test lets it go, after await has returned).
func TestAwait(t *testing.T) {
	got, err := await(context.Background(), "step", func() (int, error) { return 7, nil })
	if got != 7 || err != nil {
		t.Errorf("background context: %d, %v; want 7, nil", got, err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	got, err = await(ctx, "step", func() (int, error) { return 8, nil })
	if got != 8 || err != nil {
		t.Errorf("live context: %d, %v; want 8, nil", got, err)
	}
	release := make(chan struct{})
	started := make(chan struct{})
	ended := make(chan struct{})
	go func() {
		<-started
		cancel()
	}()
	got, err = await(ctx, "step", func() (int, error) {
		close(started)
		<-release
		close(ended)
		return 9, nil
	})
	close(release)
	<-ended
	if got != 0 || !errors.Is(err, context.Canceled) || !strings.HasPrefix(err.Error(), "step: ") {
		t.Errorf("cancelled during the step: %d, %v; want 0 and the context's error", got, err)
	}
}

// TestRunCancelled: a run whose context is cancelled by a signal before it starts leaves
// nothing and returns context.Canceled; one cancelled during its Monte Carlo test (from its
// progress hook) leaves only its working folder, whose log ends with run.failed naming the
// signal, returns an UnfinishedError naming that folder, and verifies as incomplete.
func TestRunCancelled(t *testing.T) {
	p := methodPlan(t, "{method: permutation, resamples: 20000}", "{interval: none}", tiedToy)
	for _, tc := range []struct {
		name   string
		before bool
		signal syscall.Signal
	}{
		{"before", true, syscall.SIGINT},
		{"during", false, syscall.SIGTERM},
	} {
		t.Run(tc.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "run")
			ctx, cancel := context.WithCancelCause(context.Background())
			defer cancel(nil)
			stop := func() { cancel(&Interrupted{Signal: tc.signal}) }
			if tc.before {
				stop()
			}
			ctx = WithProgress(ctx, func(string, string, int64, int64) { stop() })
			_, err := Run(ctx, p.File, RunOptions{Out: out, Workers: 1, Now: clock(), Getenv: noEnv})
			if !errors.Is(err, context.Canceled) {
				t.Fatalf("error %v, want context.Canceled", err)
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("%s exists", out)
			}
			tmps, _ := filepath.Glob(out + ".incomplete-*")
			var ue *UnfinishedError
			if tc.before {
				if len(tmps) > 0 || errors.As(err, &ue) {
					t.Errorf("stopped before the start: folders %v, error %#v", tmps, err)
				}
				return
			}
			if len(tmps) != 1 || !errors.As(err, &ue) || ue.Dir != tmps[0] {
				t.Fatalf("folders %v, error %v: want one working folder, named by the error", tmps, err)
			}
			log, err := os.ReadFile(filepath.Join(ue.Dir, AuditFile))
			if err != nil {
				t.Fatal(err)
			}
			lines := strings.Split(strings.TrimSpace(string(log)), "\n")
			last := lines[len(lines)-1]
			name := (&Interrupted{Signal: tc.signal}).Name()
			if !strings.Contains(last, `"event":"run.failed"`) || !strings.Contains(last, `"signal":"`+name+`"`) || !strings.Contains(last, "context canceled") {
				t.Errorf("last record %s, want run.failed with the signal %s and the error", last, name)
			}
			if r := verify(t, ue.Dir, VerifyOptions{}); r.Outcome != ClassIncomplete {
				t.Errorf("verify: %s, want %s", r.Outcome, ClassIncomplete)
			}
		})
	}
}

// TestVerifyCancelled: verify with a context that has ended gives no verdict, only the
// context's error (wrapped), whether it stops at hashing the data or at the rerun.
func TestVerifyCancelled(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	r, err := Verify(ctx, rec.Dir, VerifyOptions{})
	if r != nil || !errors.Is(err, context.Canceled) {
		t.Errorf("report %+v, error %v; want no report and context.Canceled", r, err)
	}
}
