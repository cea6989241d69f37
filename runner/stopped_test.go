package runner

import (
	"fmt"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"rankplan/runner/audit"
	"rankplan/runner/folder"
)

// TestTornLastLine: a run stopped in the middle of writing a record leaves the last line of
// its log cut off. In a folder still carrying the .incomplete mark that is what a stopped
// run leaves (exit 5, incomplete); in a folder that was moved into place, which a run does
// only after its last record, it is tampering (integrity).
func TestTornLastLine(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	lines := strings.SplitAfter(string(must(os.ReadFile(filepath.Join(rec.Dir, AuditFile)))), "\n")
	for _, tc := range []struct {
		name string
		want Class
	}{{"run.incomplete-0123abcd", ClassIncomplete}, {"run", ClassIntegrity}} {
		for _, cut := range []int{1, 40, len(lines[5]) - 2} {
			dir := filepath.Join(t.TempDir(), tc.name)
			if err := os.CopyFS(dir, os.DirFS(rec.Dir)); err != nil {
				t.Fatal(err)
			}
			os.Remove(filepath.Join(dir, HeadFile))
			log := strings.Join(lines[:5], "") + lines[5][:cut]
			os.WriteFile(filepath.Join(dir, AuditFile), []byte(log), 0o644)
			r := verify(t, dir, VerifyOptions{})
			if r.Outcome != tc.want {
				t.Errorf("%s, line 6 cut after %d bytes: outcome %s, want %s: %+v", tc.name, cut, r.Outcome, tc.want, r.Checks)
			}
		}
	}
}

// TestFolderStillBeingWritten: verify of a working folder whose writer is still running
// says so (incomplete), and once the writer has given up, reports the failure it recorded.
func TestFolderStillBeingWritten(t *testing.T) {
	w, err := folder.Create(filepath.Join(t.TempDir(), "run"), folder.Run, audit.Actor{User: "u", Host: "h"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Record(folder.RunStarted{Tool: Tool().Record(Executable()), Out: "run", CPUs: 1}); err != nil {
		t.Fatal(err)
	}
	r := verify(t, w.WorkDir(), VerifyOptions{})
	if r.Outcome != ClassIncomplete || len(r.Checks) != 1 || !strings.Contains(r.Checks[0].Detail, "is still being written") {
		t.Errorf("a folder being written: %s %+v", r.Outcome, r.Checks)
	}
	w.Abandon(folder.Failure{Error: "stopped", Signal: "SIGTERM"})
	r = verify(t, w.WorkDir(), VerifyOptions{})
	found := false
	for _, c := range r.Checks {
		found = found || c.Name == "complete" && strings.Contains(c.Detail, "(stopped by SIGTERM): stopped")
	}
	if r.Outcome != ClassIncomplete || !found {
		t.Errorf("an abandoned folder: %s %+v", r.Outcome, r.Checks)
	}
}

// TestFullDiskLog: an audit log that runs out of space in the middle of a record (here
// the file size limit RLIMIT_FSIZE, which fails a write the way a full disk does, after a
// short write) is cut back to its last complete record: the log ends cleanly where the
// run stopped, never with a torn line. The writing happens in a child process, which alone
// carries the limit.
func TestFullDiskLog(t *testing.T) {
	if dir := os.Getenv("RANKPLAN_FULL_DISK_LOG"); dir != "" {
		signal.Ignore(syscall.SIGXFSZ)
		if err := syscall.Setrlimit(syscall.RLIMIT_FSIZE, &syscall.Rlimit{Cur: 3000, Max: 3000}); err != nil {
			t.Fatal(err)
		}
		log, err := audit.Create(filepath.Join(dir, AuditFile), audit.Actor{User: "u", Host: "h"}, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i := range 100 {
			if _, err := log.Append("run.note", map[string]any{"i": i, "text": strings.Repeat("x", 200)}); err != nil {
				fmt.Println("stopped:", err)
				return
			}
		}
		t.Fatal("the file size limit did not stop the log")
	}
	dir := t.TempDir()
	cmd := exec.Command(os.Args[0], "-test.run=^TestFullDiskLog$", "-test.count=1")
	cmd.Env = append(os.Environ(), "RANKPLAN_FULL_DISK_LOG="+dir)
	var out strings.Builder
	cmd.Stdout, cmd.Stderr = &out, &out
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	timer := time.AfterFunc(30*time.Second, func() { cmd.Process.Kill() })
	err := cmd.Wait()
	timer.Stop()
	if err != nil || !strings.Contains(out.String(), "stopped: ") {
		t.Fatalf("child: %v\n%s", err, out.String())
	}
	b, err := os.ReadFile(filepath.Join(dir, AuditFile))
	if err != nil {
		t.Fatal(err)
	}
	chain, problems, _, err := audit.ReadChain(filepath.Join(dir, AuditFile))
	if err != nil || len(problems) > 0 || chain.Torn != 0 {
		t.Fatalf("log of %d bytes: %v %v (torn line %d)", len(b), err, problems, chain.Torn)
	}
	if n := len(chain.Records); n < 2 || len(b) > 3000 {
		t.Errorf("%d records in %d bytes: the limit should stop the log after a few records", n, len(b))
	}
}
