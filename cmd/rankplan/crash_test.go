package main

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"rankplan/runner"
)

// TestCrash kills `rankplan run` with SIGKILL at random moments, until 20 runs died before
// finishing, and requires that every kill leaves either DIR verified completely (the run
// finished) or no DIR and a DIR.incomplete-XXXX that `rankplan verify` reports as
// incomplete, exit code 5: a stopped run is never taken for tampering.
func TestCrash(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary")
	}
	t.Parallel()
	work, bin := t.TempDir(), rankplanBinary(t)
	// A plan with enough resampling that a run takes a noticeable time (invented data).
	var data strings.Builder
	data.WriteString("g,y\n")
	for i := 0; i < 400; i++ {
		data.WriteString([]string{"A", "B", "C", "D"}[i%4] + "," + strings.Repeat("1", 1+i%3) + "\n")
	}
	os.WriteFile(filepath.Join(work, "data.csv"), []byte(data.String()), 0o644)
	plan := "rankplan: 1\nid: crash\ntitle: Crash test (invented data)\ndata: {file: data.csv, group: g, outcome: y}\n" +
		"alpha: 0.05\nseed: 9\nanalyses:\n  - id: a\n    test: kruskal-wallis\n    pvalue: {method: permutation, resamples: 40000}\n    effect_size: {interval: bootstrap, resamples: 400}\n"
	planPath := filepath.Join(work, "plan.yaml")
	os.WriteFile(planPath, []byte(plan), 0o644)

	// Time one whole run, then kill the others at uniform random moments within that time.
	start := time.Now()
	if out, err := exec.Command(bin, "run", planPath, "--out", filepath.Join(work, "timed"), "--workers", "1").CombinedOutput(); err != nil {
		t.Fatalf("timed run: %v\n%s", err, out)
	}
	whole := time.Since(start)
	rng := rand.New(rand.NewPCG(7, 7))
	finished, killed := 0, 0
	// Go on until 20 runs were killed before finishing (at most 80 tries).
	for i := 0; killed < 20 && i < 80; i++ {
		out := filepath.Join(work, fmt.Sprintf("run%02d", i))
		cmd := exec.Command(bin, "run", planPath, "--out", out, "--workers", "1")
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration(rng.Int64N(int64(whole))))
		cmd.Process.Signal(syscall.SIGKILL)
		err := cmd.Wait()
		if _, statErr := os.Stat(out); statErr == nil {
			finished++
			rep, verr := runner.Verify(context.Background(), out, runner.VerifyOptions{})
			if verr != nil || rep.Outcome != runner.Verified {
				t.Errorf("kill %d: %s exists but does not verify: %v %+v", i, out, verr, rep)
			}
			continue
		}
		killed++
		if err == nil {
			t.Errorf("kill %d: the run exited 0 but left no %s", i, out)
		}
		tmps, _ := filepath.Glob(out + ".incomplete-*")
		for _, tmp := range tmps {
			if code := verifyExitCode(t, bin, tmp); code != exitIncomplete {
				rep, verr := runner.Verify(context.Background(), tmp, runner.VerifyOptions{})
				t.Errorf("kill %d: verify %s exits %d, want %d (incomplete): %v %+v", i, tmp, code, exitIncomplete, verr, rep)
			}
		}
	}
	t.Logf("%d runs killed before finishing, %d finished", killed, finished)
	if killed < 20 {
		t.Errorf("only %d runs were killed before they finished (a whole run takes %v): the test checks too little", killed, whole)
	}
}

// verifyExitCode runs `bin verify dir --quiet` and returns its exit code.
func verifyExitCode(t *testing.T, bin, dir string) int {
	t.Helper()
	err := exec.Command(bin, "verify", dir, "--quiet").Run()
	var ee *exec.ExitError
	switch {
	case err == nil:
		return 0
	case errors.As(err, &ee):
		return ee.ExitCode()
	}
	t.Fatalf("verify %s: %v", dir, err)
	return -1
}
