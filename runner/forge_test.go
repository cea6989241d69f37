package runner

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"rankplan/internal/audittest"
)

// pValueLine matches the value of the first p-value in results.json as EncodeResults
// writes it (indented, one member per line).
var pValueLine = regexp.MustCompile(`"p_value": \{[^}]*?"value": ([0-9.e+-]+)`)

// TestForgedResults: a p-value edited in results.json, with that file's SHA-256 updated in
// its output.written record, the log re-chained and audit.head rewritten (the recorded
// results_digest left alone) passes every hash check of the record; verify must still
// fail it as an integrity failure naming results.json, because the digest of the file's
// canonical form is not the recorded results digest. Also with the forged head given as
// the head kept elsewhere, which a forger who controls the folder's copy may also hold.
func TestForgedResults(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	dir := copyDir(t, rec.Dir)
	res := string(must(os.ReadFile(filepath.Join(dir, ResultsFile))))
	m := pValueLine.FindStringSubmatch(res)
	if m == nil {
		t.Fatalf("no p-value in results.json:\n%s", res)
	}
	old := m[0]
	forged := strings.TrimSuffix(old, m[1]) + "0.0001"
	if forged == old {
		t.Fatal("the forged p-value equals the recorded one")
	}
	if err := audittest.ForgeFile(filepath.Join(dir, AuditFile), filepath.Join(dir, HeadFile),
		filepath.Join(dir, ResultsFile), ResultsFile, old, forged); err != nil {
		t.Fatal(err)
	}
	head := strings.TrimSpace(string(must(os.ReadFile(filepath.Join(dir, HeadFile)))))
	for _, opt := range []VerifyOptions{{}, {Head: head}} {
		r := verify(t, dir, opt)
		if r.Outcome != ClassIntegrity {
			t.Errorf("head %q: outcome %s, want %s: %+v", opt.Head, r.Outcome, ClassIntegrity, r.Checks)
		}
		named := false
		for _, c := range r.Checks {
			if c.Verdict == Fail && c.File == ResultsFile && strings.Contains(c.Detail, "results digest") {
				named = true
			}
			if c.Verdict == Fail && c.Name != "results" {
				t.Errorf("head %q: only the results digest check may fail, not %+v", opt.Head, c)
			}
		}
		if !named {
			t.Errorf("head %q: no failed check names the results digest of %s: %+v", opt.Head, ResultsFile, r.Checks)
		}
	}
	// The forgery repairs every hash: the same forgery that leaves the p-value as it was,
	// with the derived files made to agree, verifies (the helpers themselves break nothing).
	same := copyDir(t, rec.Dir)
	if err := audittest.ForgeFile(filepath.Join(same, AuditFile), filepath.Join(same, HeadFile),
		filepath.Join(same, ResultsFile), ResultsFile, old, old+" "); err != nil {
		t.Fatal(err)
	}
	// provenance.intoto.json names results.json by its bytes' SHA-256: the space shows there.
	r := verify(t, same, VerifyOptions{})
	if r.Outcome != ClassIntegrity || !hasCheck(r, "contract", Fail) {
		t.Errorf("results.json with a space added and the log re-chained: outcome %s, want the provenance to differ: %+v", r.Outcome, r.Checks)
	}
	rederive(t, same)
	if r := verify(t, same, VerifyOptions{}); r.Outcome != Verified {
		t.Errorf("results.json with a space added and the log re-chained: outcome %s, want %s: %+v", r.Outcome, Verified, r.Checks)
	}
}
