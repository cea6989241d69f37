package runner

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"rankplan/runner/audit"
	"rankplan/runner/report"
)

// clock is a fixed, advancing clock for tests.
func clock() func() time.Time {
	t := time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC)
	return func() time.Time { t = t.Add(1500 * time.Microsecond); return t }
}

func noEnv(string) string { return "" }

// newRun writes the tied toy plan (exact p) into a folder and runs it.
func newRun(t *testing.T, opt RunOptions) (planPath string, rec *RunRecord) {
	t.Helper()
	p := methodPlan(t, "{method: permutation, resamples: 3000}", "{interval: bootstrap, resamples: 200}", tiedToy)
	planPath = p.File
	if opt.Out == "" {
		opt.Out = filepath.Join(t.TempDir(), "run")
	}
	opt.Now, opt.Getenv = clock(), noEnv
	rec, err := Run(context.Background(), planPath, opt)
	if err != nil {
		t.Fatal(err)
	}
	return planPath, rec
}

func verify(t *testing.T, dir string, opt VerifyOptions) *VerifyReport {
	t.Helper()
	r, err := Verify(context.Background(), dir, opt)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func TestRunVerifies(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	r := verify(t, rec.Dir, VerifyOptions{Head: rec.Head})
	if r.Outcome != Verified {
		t.Fatalf("outcome %s: %+v", r.Outcome, r.Checks)
	}
	for _, c := range r.Checks {
		if c.Verdict == Fail {
			t.Errorf("failed check %+v", c)
		}
	}
	// Without --head the truncation check is skipped, never passed.
	r = verify(t, rec.Dir, VerifyOptions{})
	found := false
	for _, c := range r.Checks {
		if c.Name == "truncation" {
			found = c.Verdict == Skip
		}
	}
	if !found || r.Outcome != Verified {
		t.Errorf("truncation check without --head: %+v", r.Checks)
	}
	entries, _ := os.ReadDir(filepath.Dir(rec.Dir))
	if len(entries) != 1 {
		t.Errorf("leftovers beside the run folder: %v", entries)
	}
}

// TestDeterministicRuns: two runs of the same plan give identical results.json bytes and
// results digests, and verify passes on a copy of the folder moved elsewhere.
func TestDeterministicRuns(t *testing.T) {
	planPath, a := newRun(t, RunOptions{})
	b, err := Run(context.Background(), planPath, RunOptions{Out: filepath.Join(t.TempDir(), "again"), Workers: 1, Now: clock(), Getenv: noEnv})
	if err != nil {
		t.Fatal(err)
	}
	ra, _ := os.ReadFile(filepath.Join(a.Dir, ResultsFile))
	rb, _ := os.ReadFile(filepath.Join(b.Dir, ResultsFile))
	if !bytes.Equal(ra, rb) {
		t.Error("results.json differs between two runs")
	}
	da, _ := ResultsDigest(a.Results)
	db, _ := ResultsDigest(b.Results)
	if da != db {
		t.Errorf("digests %s %s", da, db)
	}
	moved := filepath.Join(t.TempDir(), "elsewhere", "run")
	os.MkdirAll(filepath.Dir(moved), 0o755)
	if err := os.Rename(a.Dir, moved); err != nil {
		t.Fatal(err)
	}
	if r := verify(t, moved, VerifyOptions{Head: a.Head}); r.Outcome != Verified {
		t.Errorf("moved copy: %s %+v", r.Outcome, r.Checks)
	}
}

// failsNaming requires verify to fail with an integrity or mismatch outcome and a failed
// check naming the file.
func failsNaming(t *testing.T, dir, file, what string, head string) {
	t.Helper()
	r := verify(t, dir, VerifyOptions{Head: head})
	if r.Outcome != ClassIntegrity && r.Outcome != ClassDiffer && r.Outcome != ClassIncomplete {
		t.Errorf("%s: outcome %s", what, r.Outcome)
		return
	}
	for _, c := range r.Checks {
		if c.Verdict == Fail && (c.File == file || strings.Contains(c.Detail, file)) {
			return
		}
	}
	t.Errorf("%s: no failed check names %s: %+v", what, file, r.Checks)
}

func copyDir(t *testing.T, src string) string {
	t.Helper()
	dst := filepath.Join(t.TempDir(), "copy")
	if err := os.CopyFS(dst, os.DirFS(src)); err != nil {
		t.Fatal(err)
	}
	return dst
}

// TestTamper: flipping one byte anywhere in any file of the run folder (sampled
// positions), deleting or swapping audit lines, or editing a number in results.json makes
// verify fail, naming the file. The untouched run verifies.
func TestTamper(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	rng := rand.New(rand.NewPCG(4, 2))
	files := []string{ResultsFile, AuditFile, HeadFile, PlanCopyFile, ProvenanceFile}
	for _, f := range files {
		orig, err := os.ReadFile(filepath.Join(rec.Dir, f))
		if err != nil {
			t.Fatal(err)
		}
		positions := []int{0, len(orig) - 1, len(orig) / 2}
		for range 25 {
			positions = append(positions, rng.IntN(len(orig)))
		}
		for _, pos := range positions {
			dir := copyDir(t, rec.Dir)
			b := bytes.Clone(orig)
			b[pos] ^= 1 << rng.IntN(8)
			os.WriteFile(filepath.Join(dir, f), b, 0o644)
			failsNaming(t, dir, f, fmt.Sprintf("%s byte %d flipped", f, pos), rec.Head)
		}
	}
	lines := strings.SplitAfter(string(must(os.ReadFile(filepath.Join(rec.Dir, AuditFile)))), "\n")
	lines = lines[:len(lines)-1] // after the last "\n"
	for i := range lines {
		dir := copyDir(t, rec.Dir)
		cut := strings.Join(append(append([]string(nil), lines[:i]...), lines[i+1:]...), "")
		os.WriteFile(filepath.Join(dir, AuditFile), []byte(cut), 0o644)
		failsNaming(t, dir, AuditFile, fmt.Sprintf("line %d deleted", i+1), rec.Head)
	}
	for i := 0; i+1 < len(lines); i++ {
		dir := copyDir(t, rec.Dir)
		sw := append([]string(nil), lines...)
		sw[i], sw[i+1] = sw[i+1], sw[i]
		os.WriteFile(filepath.Join(dir, AuditFile), []byte(strings.Join(sw, "")), 0o644)
		failsNaming(t, dir, AuditFile, fmt.Sprintf("lines %d and %d swapped", i+1, i+2), rec.Head)
	}
	// Deleting the last record and rewriting the head file to match is truncation: only
	// the head kept elsewhere shows it.
	dir := copyDir(t, rec.Dir)
	os.WriteFile(filepath.Join(dir, AuditFile), []byte(strings.Join(lines[:len(lines)-1], "")), 0o644)
	chain, _, _, _ := audit.ReadChain(filepath.Join(dir, AuditFile))
	os.WriteFile(filepath.Join(dir, HeadFile), []byte(chain.Head+"\n"), 0o644)
	if r := verify(t, dir, VerifyOptions{Head: rec.Head}); r.Outcome != ClassIntegrity {
		t.Errorf("truncation with a rewritten head file: %s", r.Outcome)
	}
	// Editing a number in results.json.
	dir = copyDir(t, rec.Dir)
	res := must(os.ReadFile(filepath.Join(dir, ResultsFile)))
	edited := bytes.Replace(res, []byte(`"rows": 12`), []byte(`"rows": 13`), 1)
	if bytes.Equal(edited, res) {
		t.Fatal("no number edited")
	}
	os.WriteFile(filepath.Join(dir, ResultsFile), edited, 0o644)
	failsNaming(t, dir, ResultsFile, "a number edited in results.json", rec.Head)
	if r := verify(t, rec.Dir, VerifyOptions{Head: rec.Head}); r.Outcome != Verified {
		t.Errorf("the untouched run: %s", r.Outcome)
	}
}

func must[T any](v T, err error) T {
	if err != nil {
		panic(err)
	}
	return v
}

// TestVerifyInputsChanged: a changed data file is an input difference (not integrity).
func TestVerifyInputsChanged(t *testing.T) {
	planPath, rec := newRun(t, RunOptions{})
	data := filepath.Join(filepath.Dir(planPath), "data.csv")
	os.WriteFile(data, []byte(tiedToy+"C,6\n"), 0o644)
	r := verify(t, rec.Dir, VerifyOptions{Head: rec.Head})
	if r.Outcome != ClassDiffer {
		t.Errorf("outcome %s", r.Outcome)
	}
}

// TestVerifyDrift: --data reruns on new data and says whether a conclusion changed.
func TestVerifyDrift(t *testing.T) {
	planPath, rec := newRun(t, RunOptions{})
	dir := filepath.Dir(planPath)
	same := filepath.Join(dir, "more.csv")
	os.WriteFile(same, []byte(tiedToy+"C,5\nA,1\n"), 0o644) // still a clear difference
	r := verify(t, rec.Dir, VerifyOptions{Data: same})
	if r.Outcome != Verified || len(r.ConclusionChanges) != 0 {
		t.Errorf("drift without a changed conclusion: %s %v", r.Outcome, r.ConclusionChanges)
	}
	flat := filepath.Join(dir, "flat.csv")
	os.WriteFile(flat, []byte("g,y\nA,1\nA,5\nB,2\nB,4\nC,3\nC,3.5\n"), 0o644)
	r = verify(t, rec.Dir, VerifyOptions{Data: flat})
	if r.Outcome != ClassConclusion || len(r.ConclusionChanges) != 1 {
		t.Errorf("drift with a changed conclusion: %s %v", r.Outcome, r.ConclusionChanges)
	}
}

func TestLockAndDeviation(t *testing.T) {
	p := methodPlan(t, "{method: exact}", "{interval: none}", tiedToy)
	lock := filepath.Join(t.TempDir(), "plan.lock.json")
	if _, err := LockPlan(p.File, lock, audit.Actor{User: "t"}, time.Now()); err != nil {
		t.Fatal(err)
	}
	if _, err := LockPlan(p.File, lock, audit.Actor{}, time.Now()); err == nil {
		t.Error("lock overwrote an existing lock")
	}
	out := filepath.Join(t.TempDir(), "run")
	rec, err := Run(context.Background(), p.File, RunOptions{Out: out, LockPath: lock, Now: clock(), Getenv: noEnv})
	if err != nil || rec.Deviations != nil {
		t.Fatalf("matching plan: %v %v", err, rec)
	}
	// Change alpha: refused without --deviation.
	src := must(os.ReadFile(p.File))
	os.WriteFile(p.File, bytes.Replace(src, []byte("alpha: 0.05"), []byte("alpha: 0.01"), 1), 0o644)
	_, err = Run(context.Background(), p.File, RunOptions{Out: filepath.Join(t.TempDir(), "r2"), LockPath: lock, Now: clock(), Getenv: noEnv})
	if err == nil || !strings.Contains(err.Error(), "differs from its lock") || !strings.Contains(err.Error(), "alpha") {
		t.Fatalf("changed plan without deviation: %v", err)
	}
	seen := false
	out3 := filepath.Join(t.TempDir(), "r3")
	rec, err = Run(context.Background(), p.File, RunOptions{Out: out3, LockPath: lock, Deviations: []string{"the sponsor asked for 1%"}, DataSeen: &seen, Now: clock(), Getenv: noEnv})
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Deviations) != 1 || rec.Deviations[0].Reason != "the sponsor asked for 1%" || len(rec.Deviations[0].Changed) == 0 {
		t.Errorf("deviations %+v", rec.Deviations)
	}
	chain, _, _, _ := audit.ReadChain(filepath.Join(out3, AuditFile))
	var plan struct {
		Lock       map[string]any `json:"lock"`
		Deviations []Deviation    `json:"deviations"`
	}
	json.Unmarshal(chain.Records[1].Data, &plan)
	if plan.Lock["status"] != "deviates" || len(plan.Deviations) != 1 || plan.Deviations[0].DataSeen {
		t.Errorf("plan.bound record: %+v", plan)
	}
	if r := verify(t, out3, VerifyOptions{}); r.Outcome != Verified {
		t.Errorf("deviating run does not verify: %s", r.Outcome)
	}
}

// signedRun makes a key pair in dir and a run signed with it by "A. Analyst".
func signedRun(t *testing.T, dir string) (key string, rec *RunRecord) {
	t.Helper()
	key = filepath.Join(dir, "key")
	if _, err := audit.GenerateKey(key, key+".pub"); err != nil {
		t.Fatal(err)
	}
	_, rec = newRun(t, RunOptions{SignKey: key, Signer: "A. Analyst", Meaning: "approval"})
	return key, rec
}

func TestSignature(t *testing.T) {
	dir := t.TempDir()
	key, rec := signedRun(t, dir)
	if r := verify(t, rec.Dir, VerifyOptions{PubKey: key + ".pub", Head: rec.Head}); r.Outcome != Verified {
		t.Fatalf("signed run: %s %+v", r.Outcome, r.Checks)
	}
	other := filepath.Join(dir, "other")
	audit.GenerateKey(other, other+".pub")
	if r := verify(t, rec.Dir, VerifyOptions{PubKey: other + ".pub"}); r.Outcome != ClassIntegrity {
		t.Errorf("wrong key: %s", r.Outcome)
	}
	sig := must(os.ReadFile(filepath.Join(rec.Dir, SignatureFile)))
	cp := copyDir(t, rec.Dir)
	// The run's own signature without a key: verified run, signature present but unverified.
	r := verify(t, rec.Dir, VerifyOptions{Head: rec.Head})
	if r.Outcome != Verified {
		t.Fatalf("own signature without --pubkey: %s %+v", r.Outcome, r.Checks)
	}
	if c := findCheck(r, "signature"); c.Verdict != Skip || !strings.HasPrefix(c.Detail, "present, not verified (no --pubkey)") {
		t.Errorf("own signature without --pubkey: %+v", c)
	}
	for _, c := range r.Checks {
		if strings.Contains(c.Detail, "signed by") {
			t.Errorf("unverified signature shown as signed: %+v", c)
		}
	}
	os.WriteFile(filepath.Join(cp, SignatureFile), bytes.Replace(sig, []byte("approval"), []byte("review"), 1), 0o644)
	if r := verify(t, cp, VerifyOptions{PubKey: key + ".pub"}); r.Outcome != ClassIntegrity {
		t.Errorf("edited meaning: %s", r.Outcome)
	}
}

// TestTransplantedSignature: a signature.json copied from another run, its signer renamed,
// names that run's head and record count, which is an integrity failure with or without a key.
func TestTransplantedSignature(t *testing.T) {
	key, signed := signedRun(t, t.TempDir())
	_, plain := newRun(t, RunOptions{Reason: "another run"})
	sig := must(os.ReadFile(filepath.Join(signed.Dir, SignatureFile)))
	sig = bytes.Replace(sig, []byte("A. Analyst"), []byte("B. Boss"), 1)
	if err := os.WriteFile(filepath.Join(plain.Dir, SignatureFile), sig, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, pub := range []string{"", key + ".pub"} {
		r := verify(t, plain.Dir, VerifyOptions{Head: plain.Head, PubKey: pub})
		c := findCheck(r, "signature")
		if r.Outcome != ClassIntegrity || c.Verdict != Fail || c.File != SignatureFile || !strings.Contains(c.Detail, SignatureFile) {
			t.Errorf("pubkey %q: outcome %s, check %+v", pub, r.Outcome, c)
		}
	}
}

func findCheck(r *VerifyReport, name string) Check {
	for _, c := range r.Checks {
		if c.Name == name {
			return c
		}
	}
	return Check{}
}

// TestProvenance: the in-toto statement names the outputs with their SHA-256 and the plan
// and data as resolved dependencies (in-toto Statement v1, SLSA Provenance v1 field names).
func TestProvenance(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	var st struct {
		Type          string `json:"_type"`
		PredicateType string `json:"predicateType"`
		Subject       []struct {
			Name   string
			Digest map[string]string
		}
		Predicate struct {
			BuildDefinition struct {
				ResolvedDependencies []struct {
					Name   string
					Digest map[string]string
				}
			}
		}
	}
	if err := json.Unmarshal(must(os.ReadFile(filepath.Join(rec.Dir, ProvenanceFile))), &st); err != nil {
		t.Fatal(err)
	}
	if st.Type != "https://in-toto.io/Statement/v1" || st.PredicateType != "https://slsa.dev/provenance/v1" || len(st.Subject) != 2 {
		t.Fatalf("%+v", st)
	}
	for _, s := range st.Subject {
		d, _, _ := audit.DigestFile(filepath.Join(rec.Dir, s.Name))
		if "sha256:"+s.Digest["sha256"] != d {
			t.Errorf("subject %s digest %s, file %s", s.Name, s.Digest["sha256"], d)
		}
	}
	deps := st.Predicate.BuildDefinition.ResolvedDependencies
	if len(deps) < 2 || deps[1].Digest["sha256"] != rec.Prepared.Data.SHA256 {
		t.Errorf("dependencies %+v", deps)
	}
}

// TestIncompleteName: a run folder still carrying the .incomplete-XXXX mark was stopped
// before it was moved into place, even when its log is complete (a kill between the last
// file and the rename), so verify reports it as incomplete.
func TestIncompleteName(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	marked := filepath.Join(t.TempDir(), "run.incomplete-0a1b2c3d")
	if err := os.CopyFS(marked, os.DirFS(rec.Dir)); err != nil {
		t.Fatal(err)
	}
	if r := verify(t, marked, VerifyOptions{}); r.Outcome != ClassIncomplete {
		t.Errorf("outcome %s", r.Outcome)
	}
}

// TestVerifyMarkdown checks the Markdown form of a verify report: the outcome heading, one
// table row per check with cell text escaped (a "|" in a detail must not end the cell), and
// a failed check marked in bold.
func TestVerifyMarkdown(t *testing.T) {
	r := &VerifyReport{Dir: "out/run", Outcome: ClassIntegrity, Records: 3, Head: "sha256:ab", Checks: []Check{
		{Name: "audit log", Verdict: Pass, File: AuditFile, Detail: "3 records"},
		{Name: "outputs", Verdict: Fail, Class: ClassIntegrity, File: "pairs.csv", Detail: "a|b *changed*"},
		{Name: "signature", Verdict: Skip, Detail: "the run is not signed"},
	}}
	var b strings.Builder
	if err := r.WriteMarkdown(&b); err != nil {
		t.Fatal(err)
	}
	want := "### Verify status: **not verified** (integrity)\n\n" +
		"`rankplan verify out/run`\n\n" +
		"| check | verdict | file | detail |\n|---|---|---|---|\n" +
		"| audit log | pass | audit.jsonl | 3 records |\n" +
		"| outputs | **fail** | pairs.csv | a\\|b \\*changed\\* |\n" +
		"| signature | skip |  | the run is not signed |\n" +
		"\nAudit head seen: `sha256:ab` (record 3).\n" +
		"\nA skipped check is not a pass.\n"
	if got := b.String(); got != want {
		t.Errorf("WriteMarkdown:\n%s\nwant:\n%s", got, want)
	}
	r.Outcome, r.Checks = Verified, r.Checks[:1]
	b.Reset()
	r.WriteMarkdown(&b)
	if !strings.HasPrefix(b.String(), "### Verify status: verified\n") || strings.Contains(b.String(), "skipped") {
		t.Errorf("verified report without skips:\n%s", b.String())
	}
}

// TestRunLargeGroups runs a plan whose groups are larger than the points the report draws
// (report.MaxPointsPerGroup): the run must write its renderings from the thinned values, and the
// report must say that it shows some of the observations.
func TestRunLargeGroups(t *testing.T) {
	var csv strings.Builder
	csv.WriteString("g,y\n")
	for i := range 3 * (report.MaxPointsPerGroup + 201) {
		fmt.Fprintf(&csv, "%c,%d\n", 'A'+i%3, (i*7919)%1000+i%3*40)
	}
	p := methodPlan(t, "{method: asymptotic}", "{interval: bootstrap, resamples: 50}", csv.String())
	rec, err := Run(context.Background(), p.File, RunOptions{Out: filepath.Join(t.TempDir(), "run"), Now: clock(), Getenv: noEnv})
	if err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(rec.Dir, ReportFile))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(page), "groups with more than 400 observations show 400 of them") {
		t.Errorf("%s does not say that it shows some of the observations", ReportFile)
	}
	if r := verify(t, rec.Dir, VerifyOptions{}); r.Outcome != Verified {
		t.Errorf("verify: %s: %+v", r.Outcome, r.Checks)
	}
}
