package runner

import (
	"bytes"
	"io"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"syscall"
	"testing"
	"time"

	"rankplan/runner/audit"
)

// TestOutputModes: under umask 022 every file of a fresh run folder, the signature and the
// lock included, has the audit log's mode 0644 and the folder 0755, so another user who may
// read the folder can verify it.
func TestOutputModes(t *testing.T) {
	old := syscall.Umask(0o022)
	defer syscall.Umask(old)
	dir := t.TempDir()
	key := filepath.Join(dir, "key")
	if _, err := audit.GenerateKey(key, key+".pub"); err != nil {
		t.Fatal(err)
	}
	planPath, rec := newRun(t, RunOptions{SignKey: key, Signer: "A. Analyst", Meaning: "approval"})
	lock := filepath.Join(dir, "plan.lock")
	if _, err := LockPlan(planPath, lock, audit.Actor{}, time.Unix(0, 0)); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		path string
		want fs.FileMode
	}{
		{rec.Dir, fs.ModeDir | 0o755},
		{lock, 0o644},
	}
	entries, err := os.ReadDir(rec.Dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		cases = append(cases, struct {
			path string
			want fs.FileMode
		}{filepath.Join(rec.Dir, e.Name()), 0o644})
	}
	if len(entries) < 5 {
		t.Fatalf("only %d entries in the run folder", len(entries))
	}
	for _, c := range cases {
		fi, err := os.Stat(c.path)
		if err != nil {
			t.Fatal(err)
		}
		if fi.Mode() != c.want {
			t.Errorf("%s: mode %v, want %v", c.path, fi.Mode(), c.want)
		}
	}
}

// TestVerifyAsOtherUser: a run folder written under umask 022 verifies for another user
// (nobody) who may only read it. The test binary is copied where that user can run it and
// reruns itself there through runuser; it needs root and runuser, and says so otherwise.
func TestVerifyAsOtherUser(t *testing.T) {
	if os.Geteuid() != 0 {
		t.Skip("needs root to run verify as the user nobody")
	}
	runuser, err := exec.LookPath("runuser")
	if err != nil {
		t.Skip("needs runuser to run verify as the user nobody")
	}
	old := syscall.Umask(0o022)
	defer syscall.Umask(old)
	planPath, rec := newRun(t, RunOptions{})
	shared := t.TempDir()
	bin := filepath.Join(shared, "runner.test")
	copyExecutable(t, os.Args[0], bin)
	// t.TempDir folders and their parents are 0700: open them (not their contents) to others.
	for _, d := range []string{shared, filepath.Dir(planPath), filepath.Dir(rec.Dir)} {
		for _, p := range []string{d, filepath.Dir(d)} {
			if err := os.Chmod(p, 0o755); err != nil {
				t.Fatal(err)
			}
		}
	}
	cmd := exec.Command(runuser, "-u", "nobody", "--", "env", "RANKPLAN_VERIFY_DIR="+rec.Dir, "RANKPLAN_VERIFY_HEAD="+rec.Head,
		bin, "-test.run=^TestVerifyAsOtherUserSide$", "-test.count=1", "-test.v")
	cmd.Dir = shared
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("verify as nobody: %v\n%s", err, out)
	}
	if !bytes.Contains(out, []byte("--- PASS: TestVerifyAsOtherUserSide")) {
		t.Fatalf("verify as nobody did not run:\n%s", out)
	}
}

// TestVerifyAsOtherUserSide is the other user's side of TestVerifyAsOtherUser.
func TestVerifyAsOtherUserSide(t *testing.T) {
	dir := os.Getenv("RANKPLAN_VERIFY_DIR")
	if dir == "" {
		t.Skip("runs only inside TestVerifyAsOtherUser")
	}
	r := verify(t, dir, VerifyOptions{Head: os.Getenv("RANKPLAN_VERIFY_HEAD")})
	if r.Outcome != Verified {
		t.Fatalf("outcome %s: %+v", r.Outcome, r.Checks)
	}
}

func copyExecutable(t *testing.T, from, to string) {
	t.Helper()
	src, err := os.Open(from)
	if err != nil {
		t.Fatal(err)
	}
	defer src.Close()
	dst, err := os.OpenFile(to, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o755)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := io.Copy(dst, src); err != nil {
		t.Fatal(err)
	}
	if err := dst.Close(); err != nil {
		t.Fatal(err)
	}
}
