package runner

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"

	"rankplan/internal/audittest"
	"rankplan/internal/infile/infiletest"
	"rankplan/runner/audit"
)

// tamperData are invented scores of three arms (five rows each, one tie) whose Dunn
// comparisons under Holm reject one pair of three, so the run's results hold p-values,
// reject decisions, compact letters and effect sizes of both kinds.
const tamperData = "g,y\nA,1.5\nA,2\nA,2\nA,3.25\nA,1\nB,4\nB,5\nB,3.5\nB,6\nB,4.5\nC,9\nC,8\nC,7.5\nC,10\nC,6.5\n"

// tamperPlan is a small plan over tamperData with a post-hoc family; its resample counts
// are small, since every verify that passes the integrity checks reruns it.
func tamperPlan(seed int) string {
	return fmt.Sprintf(`rankplan: 1
id: tamper-matrix
title: "Invented scores in three arms"
data:
  file: data.csv
  group: g
  outcome: y
alpha: 0.05
seed: %d
analyses:
  - id: score
    test: kruskal-wallis
    pvalue: {method: permutation, resamples: 200}
    effect_size: {interval: bootstrap, resamples: 50}
    posthoc: {method: dunn, adjust: holm, when: always}
`, seed)
}

// tamperFixture is what every case of TestTamperMatrix starts from; cases change copies
// of dir, never dir itself.
type tamperFixture struct {
	dir       string // a finished run of a locked plan, signed with the pinned key
	head      string // its audit head, as kept elsewhere (--head)
	pubKey    string // the pinned public key (--pubkey)
	other     string // a second run of the same plan with another seed, signed with the same key
	forgerKey string // a private key that is not the pinned one
	otherData string // tamperData with one value changed
}

func newTamperFixture(t *testing.T) *tamperFixture {
	t.Helper()
	base := t.TempDir()
	at := func(name string) string { return filepath.Join(base, name) }
	for name, text := range map[string]string{
		"data.csv":       tamperData,
		"other-data.csv": strings.Replace(tamperData, "C,9\n", "C,2\n", 1),
		"plan.yaml":      tamperPlan(20260101),
		"other.yaml":     tamperPlan(777),
	} {
		if err := os.WriteFile(at(name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, key := range []string{"key", "forger"} {
		if _, err := audit.GenerateKey(at(key), at(key+".pub")); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := LockPlan(at("plan.yaml"), at("plan.lock.json"), audit.Actor{User: "t"}, time.Date(2026, 11, 30, 9, 0, 0, 0, time.UTC)); err != nil {
		t.Fatal(err)
	}
	run := func(plan, out, lock string) *RunRecord {
		rec, err := Run(context.Background(), at(plan), RunOptions{Out: at(out), LockPath: lock,
			SignKey: at("key"), Signer: "A. Analyst", Meaning: "approval", Now: clock(), Getenv: noEnv})
		if err != nil {
			t.Fatal(err)
		}
		return rec
	}
	rec := run("plan.yaml", "run", at("plan.lock.json"))
	run("other.yaml", "other-run", "")
	for _, name := range []string{ResultsFile, PlanCopyFile, LockCopyFile, ProvenanceFile, ReportFile, SummaryFile,
		PairsFile, HeadFile, SignatureFile, AuditFile} {
		if _, err := os.Stat(filepath.Join(rec.Dir, name)); err != nil {
			t.Fatalf("the run folder lacks %s: %v", name, err)
		}
	}
	return &tamperFixture{dir: rec.Dir, head: rec.Head, pubKey: at("key.pub"), other: at("other-run"),
		forgerKey: at("forger"), otherData: at("other-data.csv")}
}

// tamperModes name the four ways each folder is verified; mode m gives the head kept
// elsewhere when m&1 and the pinned key when m&2.
var tamperModes = [4]string{"plain", "--head", "--pubkey", "--head --pubkey"}

func (fx *tamperFixture) options(mode int) VerifyOptions {
	var o VerifyOptions
	if mode&1 != 0 {
		o.Head = fx.head
	}
	if mode&2 != 0 {
		o.PubKey = fx.pubKey
	}
	return o
}

// expect holds the outcome class required in each of the tamperModes; "a|b" allows either.
type expect [4]Class

// caught is a content change found either as a contradiction inside the folder
// (integrity) or by the rerun (differ): the issue leaves the class open.
const caught = ClassIntegrity + "|" + ClassDiffer

func every(class Class) expect { return expect{class, class, class, class} }

// pinned: plain verify gives plain; the head kept elsewhere and the signature each show
// that the log is not the one that was pinned.
func pinned(plain Class) expect {
	return expect{plain, ClassIntegrity, ClassIntegrity, ClassIntegrity}
}

// keyOnly: only the pinned key can tell; plain verify and --head give plain.
func keyOnly(plain Class) expect { return expect{plain, plain, ClassIntegrity, ClassIntegrity} }

// tamperStep changes the copy dir of the fixture's run folder.
type tamperStep func(t *testing.T, fx *tamperFixture, dir string)

func steps(s ...tamperStep) tamperStep {
	return func(t *testing.T, fx *tamperFixture, dir string) {
		t.Helper()
		for _, step := range s {
			step(t, fx, dir)
		}
	}
}

// rewrite replaces the file name with f of its bytes.
func rewrite(name string, f func([]byte) []byte) tamperStep {
	return func(t *testing.T, _ *tamperFixture, dir string) {
		t.Helper()
		path := filepath.Join(dir, name)
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, f(b), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func flipAt(pos func([]byte) int) func([]byte) []byte {
	return func(b []byte) []byte {
		b = bytes.Clone(b)
		b[pos(b)] ^= 0x01
		return b
	}
}

func middle(b []byte) int { return len(b) / 2 }

// inSignedHead is a position in the head that signature.json names.
func inSignedHead(b []byte) int {
	i := bytes.Index(b, []byte(`"head": "sha256:`))
	if i < 0 {
		panic("signature.json names no head")
	}
	return i + len(`"head": "sha256:`) + 10
}

func firstHalf(b []byte) []byte { return bytes.Clone(b[:len(b)/2]) }

func nothing([]byte) []byte { return []byte{} }

func removeFiles(names ...string) tamperStep {
	return func(t *testing.T, _ *tamperFixture, dir string) {
		t.Helper()
		for _, name := range names {
			if err := os.Remove(filepath.Join(dir, name)); err != nil {
				t.Fatal(err)
			}
		}
	}
}

// dropSignature removes signature.json, as a forger does whose re-chained log the stale
// signature would betray.
var dropSignature = removeFiles(SignatureFile)

// forge edits the file name as a forger with write access to the folder would: the first
// match of re has its first group replaced by to, the file's SHA-256 in its output.written
// record is updated, the log re-chained and audit.head rewritten.
func forge(name string, re *regexp.Regexp, to string) tamperStep {
	return func(t *testing.T, _ *tamperFixture, dir string) {
		t.Helper()
		b := string(must(os.ReadFile(filepath.Join(dir, name))))
		m := re.FindStringSubmatchIndex(b)
		if len(m) < 4 || m[2] < 0 {
			t.Fatalf("%s: %v matches nothing", name, re)
		}
		old, edited := b[m[0]:m[1]], b[m[0]:m[2]]+to+b[m[3]:m[1]]
		if old == edited {
			t.Fatalf("%s: %q is already %q", name, old, to)
		}
		if err := audittest.ForgeFile(filepath.Join(dir, AuditFile), filepath.Join(dir, HeadFile),
			filepath.Join(dir, name), name, old, edited); err != nil {
			t.Fatal(err)
		}
	}
}

// recordResultsDigest writes the digest of the results.json on disk into its
// output.written record as results_digest, and re-chains the log.
func recordResultsDigest(t *testing.T, _ *tamperFixture, dir string) {
	t.Helper()
	canon, err := audit.Canonical(jsonRaw(must(os.ReadFile(filepath.Join(dir, ResultsFile)))))
	if err != nil {
		t.Fatal(err)
	}
	editData(func(r audit.Record) bool { return audittest.RecordsOutput(r, ResultsFile) },
		func(d map[string]any) { d["results_digest"] = audit.Digest(canon) })(t, nil, dir)
}

// editData changes the data of the matching records and re-chains the log.
func editData(match func(audit.Record) bool, edit func(map[string]any)) tamperStep {
	return func(t *testing.T, _ *tamperFixture, dir string) {
		t.Helper()
		if _, err := audittest.EditData(filepath.Join(dir, AuditFile), filepath.Join(dir, HeadFile), match, edit); err != nil {
			t.Fatal(err)
		}
	}
}

func event(name string) func(audit.Record) bool {
	return func(r audit.Record) bool { return r.Event == name }
}

// rechain edits the records and writes a consistent chain and head.
func rechain(edit func(t *testing.T, recs []audit.Record) []audit.Record) tamperStep {
	return func(t *testing.T, _ *tamperFixture, dir string) {
		t.Helper()
		if _, err := audittest.Rechain(filepath.Join(dir, AuditFile), filepath.Join(dir, HeadFile),
			func(recs []audit.Record) []audit.Record { return edit(t, recs) }); err != nil {
			t.Fatal(err)
		}
	}
}

// indexOf is the index of the first record of the event, or of the output.written record
// of the file when event is a file name.
func indexOf(t *testing.T, recs []audit.Record, event string) int {
	t.Helper()
	i := slices.IndexFunc(recs, func(r audit.Record) bool { return r.Event == event || audittest.RecordsOutput(r, event) })
	if i < 0 {
		t.Fatalf("no record of %s", event)
	}
	return i
}

// logLines edits the audit log line by line without re-chaining it.
func logLines(f func(lines []string) []string) tamperStep {
	return rewrite(AuditFile, func(b []byte) []byte {
		lines := strings.SplitAfter(string(b), "\n")
		return []byte(strings.Join(f(lines[:len(lines)-1]), ""))
	})
}

// replaceOnce replaces the first old in the file name, requiring that there is one.
func replaceOnce(name, old, new string) tamperStep {
	return func(t *testing.T, fx *tamperFixture, dir string) {
		t.Helper()
		rewrite(name, func(b []byte) []byte {
			if !bytes.Contains(b, []byte(old)) {
				t.Fatalf("%s holds no %q", name, old)
			}
			return bytes.Replace(b, []byte(old), []byte(new), 1)
		})(t, fx, dir)
	}
}

// editSignature decodes signature.json, lets edit change it and writes it back as the run
// writes it.
func editSignature(edit func(map[string]any)) tamperStep {
	return func(t *testing.T, fx *tamperFixture, dir string) {
		t.Helper()
		rewrite(SignatureFile, func(b []byte) []byte {
			var sig map[string]any
			if err := json.Unmarshal(b, &sig); err != nil {
				t.Fatal(err)
			}
			edit(sig)
			return must(audit.Indented(sig))
		})(t, fx, dir)
	}
}

// fromOther copies the named files of the second run over this run's.
func fromOther(names ...string) tamperStep {
	return func(t *testing.T, fx *tamperFixture, dir string) {
		t.Helper()
		for _, name := range names {
			if err := os.WriteFile(filepath.Join(dir, name), must(os.ReadFile(filepath.Join(fx.other, name))), 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
}

var (
	// the value of the omnibus p-value, the first in results.json (pValueLine of forge_test.go)
	omnibusP       = pValueLine
	omnibusReject  = regexp.MustCompile(`"decision": \{[^}]*?"reject": (true)`)
	letterAB       = regexp.MustCompile(`"display": "(ab)"`)
	epsilonSquared = regexp.MustCompile(`"epsilon_squared": ([0-9.e+-]+)`)
	shownP         = regexp.MustCompile(`data-key="score\.p"[^>]*>([^<]+)<`)
	summaryReject  = regexp.MustCompile(`\| (\*\*rejected\*\*) \|`)
	pairACReject   = regexp.MustCompile(`,A,C,(?:[^,]*,){6}(true),`)
	planSeed       = regexp.MustCompile(`seed: ([0-9]+)`)
	lockedAlpha    = regexp.MustCompile(`"alpha": ([0-9.]+)`)
	resultsSubject = regexp.MustCompile(`"sha256": "([0-9a-f]{64})"\s*\},\s*"name": "results\.json"`)
)

type tamperCase struct {
	name   string
	why    string // the reason for the expected classes
	tamper tamperStep
	want   expect
	names  string // a file a failed check of plain verify must name ("" for none)
}

// fileTamperCases flip one byte of, truncate, delete and empty each file of the folder.
func fileTamperCases() []tamperCase {
	var cases []tamperCase
	for _, f := range []struct {
		name string
		flip func([]byte) int
		why  string
	}{
		{ResultsFile, middle, "its SHA-256 is not the recorded one"},
		{PlanCopyFile, middle, "its SHA-256 is not the recorded one"},
		{LockCopyFile, middle, "its SHA-256 is not the recorded one"},
		{ProvenanceFile, middle, "its SHA-256 is not the recorded one"},
		{ReportFile, middle, "its SHA-256 is not the recorded one"},
		{SummaryFile, middle, "its SHA-256 is not the recorded one"},
		{PairsFile, middle, "its SHA-256 is not the recorded one"},
		{HeadFile, middle, "it no longer holds the digest of the log's last record"},
		{AuditFile, middle, "its chain breaks, or it no longer ends at the head file"},
		{SignatureFile, inSignedHead, "it no longer names this log's head, or is no signature at all"},
	} {
		cases = append(cases,
			tamperCase{f.name + "/one byte flipped", f.why, rewrite(f.name, flipAt(f.flip)), every(ClassIntegrity), f.name},
			tamperCase{f.name + "/truncated to half", f.why, rewrite(f.name, firstHalf), every(ClassIntegrity), f.name},
			tamperCase{f.name + "/emptied", f.why, rewrite(f.name, nothing), every(ClassIntegrity), f.name})
		if f.name == SignatureFile {
			cases = append(cases, tamperCase{f.name + "/deleted",
				"the log does not say whether the run was signed: without a key this is an unsigned run; --pubkey requires a signature",
				removeFiles(f.name), keyOnly(Verified), ""})
		} else {
			cases = append(cases, tamperCase{f.name + "/deleted",
				"the log of a finished run names every output, and a finished run always has its log and head",
				removeFiles(f.name), every(ClassIntegrity), f.name})
		}
	}
	return cases
}

// forgedFileCases edit a file and re-hash it consistently: its output.written SHA-256
// updated, the log re-chained and audit.head rewritten.
func forgedFileCases() []tamperCase {
	resultsDigest := tamperStep(recordResultsDigest)
	const (
		digestLeft = "the canonical digest of results.json on disk is not the recorded results_digest"
		digestToo  = "the rerun gives the recorded results, not those on disk; --head and --pubkey see another log"
		rendering  = "a rendering shows a number or decision the recorded results do not hold; --head and --pubkey see another log"
	)
	cases := []tamperCase{{"results.json/p-value forged, signature stale", "the signature names the old head; " + digestLeft,
		forge(ResultsFile, omnibusP, "0.0001"), every(ClassIntegrity), ResultsFile}}
	for _, e := range []struct {
		what string
		re   *regexp.Regexp
		to   string
	}{{"p-value", omnibusP, "0.0001"}, {"reject decision", omnibusReject, "false"}, {"letter", letterAB, "a"}, {"effect size", epsilonSquared, "0.25"}} {
		edit := forge(ResultsFile, e.re, e.to)
		cases = append(cases,
			tamperCase{"results.json/" + e.what + " forged, signature removed", digestLeft,
				steps(edit, dropSignature), every(ClassIntegrity), ResultsFile},
			tamperCase{"results.json/" + e.what + " and results digest forged", digestToo,
				steps(edit, resultsDigest, dropSignature), pinned(caught), ResultsFile})
	}
	return append(cases, []tamperCase{
		{"plan.yaml/seed forged", "plan.bound records the plan's SHA-256 (raw_sha256), and the copy no longer has it: the folder was changed, the inputs were not",
			steps(forge(PlanCopyFile, planSeed, "7"), dropSignature), every(ClassIntegrity), PlanCopyFile},
		{"lock.json/locked alpha forged", "plan.bound records the lock's SHA-256 (lock.lock_sha256), and the copy no longer has it",
			steps(forge(LockCopyFile, lockedAlpha, "0.01"), dropSignature), every(ClassIntegrity), LockCopyFile},
		{"provenance/results digest forged", "the statement names a results.json the log never wrote; --head and --pubkey see another log",
			steps(forge(ProvenanceFile, resultsSubject, strings.Repeat("0", 64)), dropSignature), pinned(caught), ProvenanceFile},
		{"report.html/shown p-value forged", rendering,
			steps(forge(ReportFile, shownP, "0.0001"), dropSignature), pinned(caught), ReportFile},
		{"summary.md/decision forged", rendering,
			steps(forge(SummaryFile, summaryReject, "not rejected"), dropSignature), pinned(caught), SummaryFile},
		{"pairs.csv/pair decision forged", rendering,
			steps(forge(PairsFile, pairACReject, "false"), dropSignature), pinned(caught), PairsFile},
	}...)
}

// recordTamperCases delete, reorder, duplicate and edit audit records.
func recordTamperCases() []tamperCase {
	const unchained = "without re-chaining, an edit of the log breaks seq, a prev link or the head file"
	cut := func(i func(n int) int) tamperStep {
		return logLines(func(l []string) []string { k := i(len(l)); return slices.Delete(l, k, k+1) })
	}
	return []tamperCase{
		{"audit.jsonl/first record deleted", unchained, cut(func(int) int { return 0 }), every(ClassIntegrity), AuditFile},
		{"audit.jsonl/middle record deleted", unchained, cut(func(n int) int { return n / 2 }), every(ClassIntegrity), AuditFile},
		{"audit.jsonl/last record deleted", unchained + " (a finished run's head file names the record that is gone)",
			cut(func(n int) int { return n - 1 }), every(ClassIntegrity), ""},
		{"audit.jsonl/two records swapped", unchained,
			logLines(func(l []string) []string { l[1], l[2] = l[2], l[1]; return l }), every(ClassIntegrity), AuditFile},
		{"audit.jsonl/record duplicated", unchained,
			logLines(func(l []string) []string { return slices.Insert(l, 4, l[4]) }), every(ClassIntegrity), AuditFile},
		{"audit.jsonl/record data edited", unchained,
			replaceOnce(AuditFile, `"rows":15,`, `"rows":16,`), every(ClassIntegrity), AuditFile},
		{"audit.jsonl/output record deleted, re-chained", "pairs.csv is then a file the log does not name",
			steps(rechain(func(t *testing.T, r []audit.Record) []audit.Record {
				i := indexOf(t, r, PairsFile)
				return slices.Delete(r, i, i+1)
			}), dropSignature), every(ClassIntegrity), PairsFile},
		{"audit.jsonl/exclusions record deleted, re-chained", "the records must start run.started, plan.bound, data.bound, exclusions.applied",
			steps(rechain(func(t *testing.T, r []audit.Record) []audit.Record {
				i := indexOf(t, r, "exclusions.applied")
				return slices.Delete(r, i, i+1)
			}), dropSignature), every(ClassIntegrity), AuditFile},
		{"audit.jsonl/plan and data records swapped, re-chained", "the plan is bound before the data",
			steps(rechain(func(t *testing.T, r []audit.Record) []audit.Record {
				i, j := indexOf(t, r, "plan.bound"), indexOf(t, r, "data.bound")
				r[i], r[j] = r[j], r[i]
				return r
			}), dropSignature), every(ClassIntegrity), AuditFile},
		{"audit.jsonl/analysis record duplicated, re-chained", "the folder contract has one analysis.finished per analysis",
			steps(rechain(func(t *testing.T, r []audit.Record) []audit.Record {
				i := indexOf(t, r, "analysis.finished")
				return slices.Insert(r, i, r[i])
			}), dropSignature), every(ClassIntegrity), AuditFile},
		{"data.bound/row count edited, re-chained", "the log claims 16 rows where the data and results.json hold 15; --head and --pubkey see another log",
			steps(editData(event("data.bound"), func(d map[string]any) { d["rows"] = json.Number("16") }), dropSignature),
			pinned(caught), ""},
		{"data.bound/sha256 rewritten, re-chained", "the data at the recorded path do not have the recorded digest; --head and --pubkey see another log",
			steps(func(t *testing.T, fx *tamperFixture, dir string) {
				sum, _, err := audit.DigestFile(fx.otherData)
				if err != nil {
					t.Fatal(err)
				}
				editData(event("data.bound"), func(d map[string]any) { d["sha256"] = sum })(t, fx, dir)
			}, dropSignature), pinned(caught), ""},
		{"data.bound/path rewritten, re-chained", "the data at the new path are not the recorded data; --head and --pubkey see another log",
			steps(func(t *testing.T, fx *tamperFixture, dir string) {
				editData(event("data.bound"), func(d map[string]any) { d["path"], d["absolute_path"] = fx.otherData, fx.otherData })(t, fx, dir)
			}, dropSignature), pinned(caught), ""},
		{"run.finished/time moved, re-chained", "nothing in the folder contradicts the time of the last record: only the head kept elsewhere or the signature pins the log",
			steps(rechain(func(t *testing.T, r []audit.Record) []audit.Record {
				r[len(r)-1].Time = "2026-12-01T10:00:00.000000000Z"
				return r
			}), dropSignature), pinned(Verified), ""},
		{"run.finished/removed, re-chained, head and signature removed",
			"this is what a stopped run leaves, incomplete also with --pubkey (a run signs only once it finished); the head kept elsewhere shows the cut",
			steps(rechain(func(t *testing.T, r []audit.Record) []audit.Record { return r[:len(r)-1] }), removeFiles(HeadFile, SignatureFile)),
			expect{ClassIncomplete, ClassIntegrity, ClassIncomplete, ClassIntegrity}, ""},
		{"run.finished/removed, re-chained, signature stale", "the signature names a longer log than the one in the folder",
			rechain(func(t *testing.T, r []audit.Record) []audit.Record { return r[:len(r)-1] }), every(ClassIntegrity), SignatureFile},
	}
}

// folderTamperCases add files the log does not name, or replace an output with another
// kind of file.
func folderTamperCases() []tamperCase {
	const contract = "a run folder holds exactly the files its log names, each a regular file"
	add := func(f func(dir string) error) tamperStep {
		return func(t *testing.T, _ *tamperFixture, dir string) {
			t.Helper()
			if err := f(dir); err != nil {
				t.Fatal(err)
			}
		}
	}
	return []tamperCase{
		{"extra file", contract, add(func(dir string) error {
			return os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("reviewed\n"), 0o644)
		}), every(ClassIntegrity), "notes.txt"},
		{"extra hidden file", contract, add(func(dir string) error {
			return os.WriteFile(filepath.Join(dir, ".notes"), []byte("reviewed\n"), 0o644)
		}), every(ClassIntegrity), ".notes"},
		{"extra directory", contract, add(func(dir string) error { return os.Mkdir(filepath.Join(dir, "attachments"), 0o755) }),
			every(ClassIntegrity), "attachments"},
		{"FIFO in the folder", contract + " (and verify never waits on a FIFO)",
			add(func(dir string) error { return syscall.Mkfifo(filepath.Join(dir, "pipe"), 0o644) }), every(ClassIntegrity), "pipe"},
		{"results.json a symlink to an identical copy outside", contract, add(func(dir string) error {
			outside := filepath.Join(filepath.Dir(dir), "elsewhere.json")
			b, err := os.ReadFile(filepath.Join(dir, ResultsFile))
			if err == nil {
				err = os.WriteFile(outside, b, 0o644)
			}
			if err == nil {
				err = os.Remove(filepath.Join(dir, ResultsFile))
			}
			if err == nil {
				err = os.Symlink(outside, filepath.Join(dir, ResultsFile))
			}
			return err
		}), every(ClassIntegrity), ResultsFile},
	}
}

// signatureTamperCases forge, transplant and re-sign signature.json.
func signatureTamperCases() []tamperCase {
	const keyed = "without a key the signature's value, signer and key are not checkable; with the pinned key they fail"
	const transplanted = "another run's signature names that run's head and record count, checkable without a key"
	return []tamperCase{
		{"signature/value forged", keyed, editSignature(func(s map[string]any) {
			v := []byte(s["signature"].(string)) // base64: any letter in front keeps it 64 bytes
			if v[0] == 'A' {
				v[0] = 'B'
			} else {
				v[0] = 'A'
			}
			s["signature"] = string(v)
		}), keyOnly(Verified), SignatureFile},
		{"signature/signer renamed", keyed, editSignature(func(s map[string]any) { s["signer"] = "B. Boss" }), keyOnly(Verified), ""},
		{"signature/re-signed with another key", keyed, func(t *testing.T, fx *tamperFixture, dir string) {
			b, err := os.ReadFile(fx.forgerKey)
			if err != nil {
				t.Fatal(err)
			}
			key, err := audit.ParsePrivateKey(b)
			if err != nil {
				t.Fatal(err)
			}
			chain, _, _, err := audit.ReadChain(filepath.Join(dir, AuditFile))
			if err != nil {
				t.Fatal(err)
			}
			sig, err := audit.Sign(key, chain.Head, int64(len(chain.Records)), "A. Analyst", "approval", time.Date(2026, 12, 1, 9, 30, 0, 0, time.UTC))
			if err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(filepath.Join(dir, SignatureFile), must(audit.Indented(sig)), 0o644); err != nil {
				t.Fatal(err)
			}
		}, keyOnly(Verified), ""},
		{"signature/transplanted from another run", transplanted, fromOther(SignatureFile), every(ClassIntegrity), SignatureFile},
		{"signature/transplanted, signer renamed", transplanted, steps(fromOther(SignatureFile),
			editSignature(func(s map[string]any) { s["signer"] = "B. Boss" })), every(ClassIntegrity), SignatureFile},
		{"signature/extra field", "signature.json has a fixed set of fields: an unknown one is checkable without a key",
			editSignature(func(s map[string]any) { s["approved_by"] = "B. Boss" }), every(ClassIntegrity), SignatureFile},
	}
}

// otherRunCases copy files of the second run (another seed) into this one.
func otherRunCases() []tamperCase {
	return []tamperCase{
		{"other run/results.json", "its SHA-256 is not the recorded one", fromOther(ResultsFile), every(ClassIntegrity), ResultsFile},
		{"other run/plan.yaml", "its SHA-256 is not the recorded one", fromOther(PlanCopyFile), every(ClassIntegrity), PlanCopyFile},
		{"other run/audit.jsonl and audit.head", "the outputs and the signature are not those the log names",
			fromOther(AuditFile, HeadFile), every(ClassIntegrity), ""},
		{"other run/audit.jsonl, audit.head and signature.json", "the outputs are not those the log names",
			fromOther(AuditFile, HeadFile, SignatureFile), every(ClassIntegrity), ""},
		{"other run/every file", "an authentic run signed with the same key: only the head kept elsewhere tells it from the pinned one",
			func(t *testing.T, fx *tamperFixture, dir string) {
				if err := os.RemoveAll(dir); err != nil {
					t.Fatal(err)
				}
				if err := os.CopyFS(dir, os.DirFS(fx.other)); err != nil {
					t.Fatal(err)
				}
			}, expect{Verified, ClassIntegrity, Verified, ClassIntegrity}, ""},
	}
}

// TestTamperMatrix tampers with copies of one signed run folder in every way listed in
// the cases (each file flipped, truncated, emptied, deleted; files edited and re-hashed
// with a re-chained log; records deleted, reordered, duplicated and edited; extra and
// symlinked files; forged, transplanted and re-signed signatures; another run's files)
// and verifies each copy four ways: plain, with the head kept elsewhere, with the pinned
// public key, and with both. Each way must give its expected outcome class (verified 0,
// differ 3, integrity 4, incomplete 5 at the command line) within a few seconds and
// without an error: only an unusable folder is an error. A failure prints the reason for
// the expected class and the checks that failed.
func TestTamperMatrix(t *testing.T) {
	fx := newTamperFixture(t)
	cases := []tamperCase{
		{"untouched copy", "nothing was changed", func(*testing.T, *tamperFixture, string) {}, every(Verified), ""},
	}
	for _, group := range [][]tamperCase{fileTamperCases(), forgedFileCases(), recordTamperCases(),
		folderTamperCases(), signatureTamperCases(), otherRunCases()} {
		cases = append(cases, group...)
	}
	if len(cases) < 60 {
		t.Fatalf("%d cases, want at least 60", len(cases))
	}
	seen := map[string]bool{}
	for _, c := range cases {
		if seen[c.name] {
			t.Fatalf("two cases named %q", c.name)
		}
		seen[c.name] = true
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			dir := copyDir(t, fx.dir)
			c.tamper(t, fx, dir)
			for mode, want := range c.want {
				var r *VerifyReport
				err := infiletest.Within(t, tamperModes[mode], func() error {
					var err error
					r, err = Verify(context.Background(), dir, fx.options(mode))
					return err
				})
				if err != nil {
					t.Errorf("%s: error %v, want a report", tamperModes[mode], err)
					continue
				}
				if !slices.Contains(strings.Split(string(want), "|"), string(r.Outcome)) {
					t.Errorf("%s: outcome %s, want %s (%s); %s", tamperModes[mode], r.Outcome, want, c.why, failedChecks(r))
					continue
				}
				if mode == 0 && c.names != "" && r.Outcome != Verified && !failsNamingFile(r, c.names) {
					t.Errorf("%s: no failed check names %s; %s", tamperModes[mode], c.names, failedChecks(r))
				}
			}
		})
	}
}

func failsNamingFile(r *VerifyReport, name string) bool {
	return slices.ContainsFunc(r.Checks, func(c Check) bool {
		return c.Verdict == Fail && (c.File == name || strings.Contains(c.Detail, name))
	})
}

// failedChecks lists the failed checks of r, or says that none failed.
func failedChecks(r *VerifyReport) string {
	var out []string
	for _, c := range r.Checks {
		if c.Verdict == Fail {
			out = append(out, fmt.Sprintf("[%s %s %s: %s]", c.Name, c.Class, c.File, c.Detail))
		}
	}
	if out == nil {
		return "no check failed"
	}
	return "failed: " + strings.Join(out, " ")
}
