package runner

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"rankplan/internal/audittest"
	"rankplan/runner/audit"
)

// TestStoppedRunIsIncomplete: a run stopped at any point (SIGKILL, Ctrl-C, a full disk)
// leaves its working folder with a log cut after some record and no audit.head. Verify
// must call every such folder incomplete, not tampered with: with the .incomplete mark
// for every cut (including no log and an empty log), and without the mark (a folder
// renamed by hand) for every cut that leaves at least the first record. Tampering with
// such a folder is still an integrity failure.
func TestStoppedRunIsIncomplete(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	lines := strings.SplitAfter(string(must(os.ReadFile(filepath.Join(rec.Dir, AuditFile)))), "\n")
	lines = lines[:len(lines)-1] // after the last "\n"
	stopped := func(name string, records int) string {
		dir := filepath.Join(t.TempDir(), name)
		if err := os.CopyFS(dir, os.DirFS(rec.Dir)); err != nil {
			t.Fatal(err)
		}
		os.Remove(filepath.Join(dir, HeadFile))
		if records < 0 {
			os.Remove(filepath.Join(dir, AuditFile))
		} else {
			os.WriteFile(filepath.Join(dir, AuditFile), []byte(strings.Join(lines[:records], "")), 0o644)
		}
		return dir
	}
	type tc struct {
		name    string
		records int // -1: no log at all
		want    Class
	}
	var cases []tc
	for k := -1; k <= len(lines); k++ {
		cases = append(cases, tc{"run.incomplete-0a1b2c3d", k, ClassIncomplete})
		if k >= 1 {
			want := ClassIncomplete
			if k == len(lines) {
				want = ClassIntegrity // finished, moved into place, and then its head file deleted
			}
			cases = append(cases, tc{"run", k, want})
		}
	}
	cases = append(cases, tc{"run", 0, ClassIntegrity}, tc{"run", -1, ClassIntegrity})
	for _, c := range cases {
		t.Run(fmt.Sprintf("%s/%d", c.name, c.records), func(t *testing.T) {
			dir := stopped(c.name, c.records)
			r := verify(t, dir, VerifyOptions{})
			if r.Outcome != c.want {
				t.Errorf("outcome %s, want %s: %+v", r.Outcome, c.want, r.Checks)
			}
		})
	}

	// A failed run (the log ends with run.failed, no head file) is incomplete too.
	failedDir := stopped("failed", 5)
	if _, err := audittest.Rechain(filepath.Join(failedDir, AuditFile), filepath.Join(failedDir, HeadFile), func(recs []audit.Record) []audit.Record {
		last := recs[len(recs)-1]
		last.Event, last.Data = "run.failed", []byte(`{"error":"no space left on device"}`)
		return append(recs, last)
	}); err != nil {
		t.Fatal(err)
	}
	os.Remove(filepath.Join(failedDir, HeadFile))
	if r := verify(t, failedDir, VerifyOptions{}); r.Outcome != ClassIncomplete {
		t.Errorf("a failed run: outcome %s, want %s: %+v", r.Outcome, ClassIncomplete, r.Checks)
	}

	// Tampering with a stopped folder is still integrity: an edited record, a broken link,
	// a head file that does not match the log.
	edited := stopped("run.incomplete-0a1b2c3d", 5)
	log := string(must(os.ReadFile(filepath.Join(edited, AuditFile))))
	os.WriteFile(filepath.Join(edited, AuditFile), []byte(strings.Replace(log, `"seq":3`, `"seq":4`, 1)), 0o644)
	if r := verify(t, edited, VerifyOptions{}); r.Outcome != ClassIntegrity {
		t.Errorf("an edited record in a stopped folder: outcome %s, want %s", r.Outcome, ClassIntegrity)
	}
	unlinked := stopped("run.incomplete-0a1b2c3d", 5)
	os.WriteFile(filepath.Join(unlinked, AuditFile), []byte(lines[0]+lines[2]+lines[3]), 0o644)
	if r := verify(t, unlinked, VerifyOptions{}); r.Outcome != ClassIntegrity {
		t.Errorf("a record removed from a stopped folder: outcome %s, want %s", r.Outcome, ClassIntegrity)
	}
	wrongHead := stopped("run.incomplete-0a1b2c3d", 5)
	os.WriteFile(filepath.Join(wrongHead, HeadFile), []byte(rec.Head+"\n"), 0o644)
	if r := verify(t, wrongHead, VerifyOptions{}); r.Outcome != ClassIntegrity {
		t.Errorf("a stopped folder with another run's head file: outcome %s, want %s", r.Outcome, ClassIntegrity)
	}
}
