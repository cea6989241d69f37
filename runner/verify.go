package runner

import (
	"context"
	"crypto/ed25519"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"unicode/utf8"

	"rankplan/runner/audit"
	"rankplan/runner/folder"
	"rankplan/runner/report"
	"rankplan/runner/results"
	"rankplan/spec"
)

// Verdict is the verdict of a check: of verify, or of a selftest case (pass or fail only).
type Verdict string

// Verdicts of a check. A skipped check is never counted as passed.
const (
	Pass Verdict = "pass"
	Fail Verdict = "fail"
	Skip Verdict = "skip"
	Warn Verdict = "warn"
)

// Class is the class of a failed verify check, and the outcome of a verify: the class of
// its worst failed check, or [Verified].
type Class string

// Classes of failure, from the most to the least severe, and the outcome when no check
// failed.
const (
	ClassIntegrity  Class = "integrity"          // tampering, broken chain, bad signature, missing files
	ClassIncomplete Class = "incomplete"         // the run never finished (killed, or failed)
	ClassDiffer     Class = "differ"             // inputs changed, or the rerun gives other results
	ClassConclusion Class = "conclusion-changed" // verify --data: a decision at alpha flipped
	Verified        Class = "verified"
)

// The records and the main file of a selftest folder (rankplan selftest --out), which
// verify tells from a run folder by its first record (see package folder).
const (
	ValidationFile   = folder.ValidationFile
	SelftestStarted  = folder.EventSelftestStarted
	SelftestFinished = folder.EventSelftestFinished
	SelftestFailed   = folder.EventSelftestFailed
)

// Check is one verdict of [Verify].
type Check struct {
	Name    string  `json:"check"`
	Verdict Verdict `json:"verdict"`
	Class   Class   `json:"class,omitempty"` // for failures
	File    string  `json:"file,omitempty"`
	Detail  string  `json:"detail"`
}

// VerifyReport is everything [Verify] found.
type VerifyReport struct {
	Dir     string  `json:"dir"`
	Outcome Class   `json:"outcome"`
	Records int64   `json:"records"`
	Head    string  `json:"head"`
	Checks  []Check `json:"checks"`
	// ConclusionChanges lists, for verify --data, every conclusion at alpha that differs
	// from the run's ([ConclusionChange]); Conclusions counts what was compared.
	ConclusionChanges []ConclusionChange `json:"conclusion_changes,omitempty"`
	Conclusions       *ConclusionCounts  `json:"conclusions,omitempty"`
}

// VerifyOptions select the optional checks of [Verify].
type VerifyOptions struct {
	Head    string // an audit head kept elsewhere (CI artifact, lab notebook); "" skips the truncation check
	PubKey  string // a pinned Ed25519 public key; the run's signature must verify against it
	Data    string // drift mode: rerun the plan on this data file instead of the recorded one
	Workers int
	Getenv  func(string) string
	// IntegrityOnly makes every check but the rerun, which is listed as skipped: quick on
	// big data. It cannot be combined with Data.
	IntegrityOnly bool
	// Selftest reruns the built-in reference cases of `rankplan selftest` and returns the
	// digest of their results, for a selftest folder (the command line passes
	// selftest.ResultsDigest); nil skips that rerun.
	Selftest func(ctx context.Context) (string, error)
	// AllowExtra accepts regular files in the folder that the log does not name, as
	// warnings; without it they fail integrity. Symbolic links and special files fail
	// either way.
	AllowExtra bool
}

// ParseHead reads an audit head as people copy it: "sha256:" followed by 64 hex digits,
// or the 64 hex digits alone, in either case. It returns the head as the log writes it,
//
//	"sha256:" + lowercase hex(SHA-256)    (the form of audit.Digest, FIPS 180-4)
//
// and an error naming what is wrong for anything else.
func ParseHead(s string) (string, error) {
	hexPart := strings.TrimPrefix(s, "sha256:")
	if len(hexPart) != 64 {
		return "", fmt.Errorf("%q is not an audit head: want 64 hex digits, with or without the sha256: prefix (found %d characters)", s, utf8.RuneCountInString(hexPart))
	}
	for _, c := range hexPart {
		if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f' || c >= 'A' && c <= 'F') {
			return "", fmt.Errorf("%q is not an audit head: want 64 hex digits, with or without the sha256: prefix (found %q)", s, c)
		}
	}
	return "sha256:" + strings.ToLower(hexPart), nil
}

func (r *VerifyReport) add(name string, verdict Verdict, class Class, file, format string, args ...any) {
	if verdict != Fail {
		class = ""
	}
	r.Checks = append(r.Checks, Check{Name: name, Verdict: verdict, Class: class, File: file, Detail: fmt.Sprintf(format, args...)})
}

// Verify checks a run folder: the audit log's records and hash chain, each record against
// the audit-record schema and the order package folder prescribes, that the run finished,
// its head (against the folder's head file and, if given, a copy kept elsewhere), every
// output file against its recorded hash, the signature, the tool version; then the plan and
// data against theirs; then it reruns the plan from the recorded inputs and seed and
// compares the results digest, naming the first field that differs. With opt.Data it
// reruns on that file instead and reports which conclusions at the plan's alpha changed.
// Only an unusable folder, or a check stopped by ctx (its error, wrapped), is an error;
// everything else is a check.
//
// It is a pipeline: read the folder → integrity checks → inputs → rerun → compare. A stage
// runs only when the ones before it allow: nothing a log names outside the folder is read
// before the log itself verified. With opt.IntegrityOnly it makes every check but the
// rerun.
func Verify(ctx context.Context, dir string, opt VerifyOptions) (*VerifyReport, error) {
	st, err := os.Stat(dir)
	if err != nil || !st.IsDir() {
		if err == nil {
			err = errors.New("not a folder")
		}
		return nil, &InputError{Err: fmt.Errorf("verify %s: %w", dir, err)}
	}
	if opt.IntegrityOnly && opt.Data != "" {
		return nil, &InputError{Err: fmt.Errorf("verify %s: --integrity-only makes no rerun, so it cannot be combined with --data", dir)}
	}
	if opt.Head != "" {
		head, err := ParseHead(opt.Head)
		if err != nil {
			return nil, &InputError{Err: fmt.Errorf("verify %s: head kept elsewhere: %w", dir, err)}
		}
		opt.Head = head
	}
	pub, err := checkVerifyFlags(opt)
	if err != nil {
		return nil, err
	}
	r := &VerifyReport{Dir: dir}
	defer func() { r.Outcome = outcome(r.Checks) }()

	f := readLog(r, dir)
	if f == nil {
		return r, nil
	}
	resultsDigest, sameBuild := checkFolder(r, f, opt, pub)
	if f.Kind == folder.Selftest {
		if opt.IntegrityOnly {
			r.add("rerun", Skip, "", "", "not rerun: --integrity-only")
			return r, nil
		}
		rerunSelftest(ctx, r, f.Last(), resultsDigest, opt.Selftest)
		if err := ctx.Err(); err != nil { // stopped, not a verdict
			return nil, fmt.Errorf("verify %s: rerun: %w", dir, err)
		}
		return r, nil
	}
	if failed(r.Checks, ClassIntegrity) {
		r.add("inputs", Skip, "", "", "the plan and data files the log names are not read: the record itself did not verify")
		if opt.IntegrityOnly {
			r.add("rerun", Skip, "", "", "not rerun: --integrity-only")
		} else {
			r.add("rerun", Skip, "", "", "not rerun: the record itself did not verify")
		}
		return r, nil
	}
	dataPath, ok, err := checkInputs(ctx, r, f, opt)
	if err != nil {
		return nil, fmt.Errorf("verify %s: %w", dir, err)
	}
	switch {
	case opt.IntegrityOnly:
		r.add("rerun", Skip, "", "", "not rerun: --integrity-only")
		return r, nil
	case !f.Finished():
		r.add("rerun", Skip, "", "", "not rerun: the run did not finish")
		return r, nil
	case !ok:
		r.add("rerun", Skip, "", "", "not rerun: the recorded data are not at hand")
		return r, nil
	}
	if err := rerunAndCompare(ctx, r, f, sameBuild, dataPath, resultsDigest, opt); err != nil {
		return nil, fmt.Errorf("verify %s: %w", dir, err)
	}
	return r, nil
}

// readLog reads the folder's audit log and checks the chain, the records' schema, whether
// the run finished, and the order of the records. It returns nil when nothing more can be
// checked.
func readLog(r *VerifyReport, dir string) *folder.Folder {
	// Run writes into DIR.incomplete-XXXX and renames the folder only after its last record
	// and file: a folder still carrying the mark was stopped before that, however full its
	// log, and one stopped before its first record holds no log or an empty one.
	base := filepath.Base(filepath.Clean(dir))
	f, err := folder.Read(dir)
	if f.Marked && (errors.Is(err, fs.ErrNotExist) || err == nil && len(f.Chain.Records) == 0 && len(f.Problems) == 1) {
		r.add("complete", Fail, ClassIncomplete, AuditFile, "the folder is still named %s and its audit log holds no record: the run was stopped before its first record", base)
		return nil
	}
	if f.Marked && folder.Busy(dir) {
		r.add("complete", Fail, ClassIncomplete, "", "the folder %s is still being written: a running rankplan holds it; verify it when that run has ended", base)
		return nil
	}
	if err != nil {
		r.add("audit log", Fail, ClassIntegrity, AuditFile, "cannot read the audit log: %v", reasonOf(err))
		return nil
	}
	if f.Marked && f.Chain.Torn > 0 && onlyLine(f.Problems, f.Chain.Torn) {
		// A run stopped in the middle of writing a record (killed, or out of disk space)
		// leaves its last line cut off; the records before it still verify.
		r.add("audit log", Pass, "", AuditFile, "the %d records before line %d are canonical and chained", f.Chain.Torn-1, f.Chain.Torn)
		r.add("complete", Fail, ClassIncomplete, AuditFile, "the folder is still named %s and the last line of its log (line %d) was cut off while it was written: the run was stopped", base, f.Chain.Torn)
		return nil
	}
	for _, p := range f.Problems {
		r.add("audit log", Fail, ClassIntegrity, AuditFile, "%v", p)
	}
	for _, w := range f.Warnings {
		r.add("timestamps", Warn, "", AuditFile, "%v", w)
	}
	records := f.Chain.Records
	if len(f.Problems) > 0 || len(records) == 0 {
		if len(f.Problems) == 0 {
			r.add("audit log", Fail, ClassIntegrity, AuditFile, "the audit log has no records")
		}
		return nil
	}
	r.add("audit log", Pass, "", AuditFile, "%d records; each line canonical and of the audit-record schema; seq 1..%d without gaps; every prev link holds",
		len(records), len(records))
	r.Records, r.Head = int64(len(records)), f.Chain.Head

	kind, last := f.Kind, f.Last()
	if f.Marked {
		r.add("complete", Fail, ClassIncomplete, "", "the folder is still named %s: the run was stopped before it was moved into place", base)
	}
	switch last.Event {
	case kind.Finished:
		r.add("complete", Pass, "", AuditFile, "the log ends with %s (record %d)", kind.Finished, last.Seq)
	case kind.Failed:
		var d folder.Failure
		folder.Decode(last, &d)
		by := ""
		if d.Signal != "" {
			by = " (stopped by " + d.Signal + ")"
		}
		r.add("complete", Fail, ClassIncomplete, AuditFile, "the run failed and produced no results%s: %s", by, d.Error)
	default:
		r.add("complete", Fail, ClassIncomplete, AuditFile, "the log stops at record %d (%s) without %s: the run did not finish, or records were cut off", last.Seq, last.Event, kind.Finished)
	}
	if msg := kind.CheckOrder(f.Events()); msg != "" {
		r.add("sequence", Fail, ClassIntegrity, AuditFile, "%s", msg)
		return nil
	}
	r.add("sequence", Pass, "", AuditFile, "%s", kind.SequenceText)
	return f
}

// onlyLine reports whether every problem is on line n.
func onlyLine(problems []audit.Problem, n int) bool {
	for _, p := range problems {
		if p.Line != n {
			return false
		}
	}
	return true
}

// checkFolder checks what the folder holds against its log: the head file and a head kept
// elsewhere, every output, the results digest of the main file, files the log does not
// name, the signature and the tool; then, for a finished run, how its files tie together
// (crossCheck). It returns the recorded results digest, and whether this build wrote the
// folder.
func checkFolder(r *VerifyReport, f *folder.Folder, opt VerifyOptions, pub ed25519.PublicKey) (string, bool) {
	dir, kind, chain := f.Dir, f.Kind, f.Chain
	// A run that did not finish never wrote its head file: a missing one is part of the
	// incompleteness, not a sign of tampering. A head file that is there must still match.
	unfinished := f.Marked || !f.Finished()
	headFile, err := readFolderFile(dir, HeadFile, MaxHeadBytes)
	switch {
	case unfinished && errors.Is(err, fs.ErrNotExist):
		r.add("head file", Fail, ClassIncomplete, HeadFile, "no %s: the run stopped before writing it", HeadFile)
	case err != nil:
		r.add("head file", Fail, ClassIntegrity, HeadFile, "cannot read the head file: %v", unwrapPathError(err))
	case string(headFile) != chain.Head+"\n":
		r.add("head file", Fail, ClassIntegrity, HeadFile, "%s holds %q, but the log's last record hashes to %s", HeadFile, strings.TrimSpace(string(headFile)), chain.Head)
	default:
		r.add("head file", Pass, "", HeadFile, "%s", chain.Head)
	}
	if opt.Head == "" {
		r.add("truncation", Skip, "", AuditFile, "no --head given: integrity verified up to record %d; records removed from the end would not show", len(chain.Records))
	} else if opt.Head != chain.Head {
		r.add("truncation", Fail, ClassIntegrity, AuditFile, "the head kept elsewhere is %s, but the log ends at %s: records were removed or replaced", opt.Head, chain.Head)
	} else {
		r.add("truncation", Pass, "", AuditFile, "the log ends at the head kept elsewhere")
	}

	// Output files.
	known := map[string]bool{}
	var resultsDigest string
	for _, o := range f.Outputs() {
		if known[o.File] || kind.Files(o.File) {
			r.add("outputs", Fail, ClassIntegrity, AuditFile, "record %d writes %s, which is already part of the folder", o.Seq, o.File)
			continue
		}
		known[o.File] = true
		if o.File == kind.Main {
			resultsDigest = o.ResultsDigest
		}
		got, size, err := digestOutput(dir, o.File, int64(o.Bytes))
		switch {
		case err != nil:
			r.add("outputs", Fail, ClassIntegrity, o.File, "%s is missing or unreadable: %v", o.File, unwrapPathError(err))
		case size != int64(o.Bytes):
			r.add("outputs", Fail, ClassIntegrity, o.File, "%s has %d bytes, but record %d wrote %d: the file was changed", o.File, size, o.Seq, o.Bytes)
		case got != o.SHA256:
			r.add("outputs", Fail, ClassIntegrity, o.File, "%s has SHA-256 %s, but record %d wrote %s: the file was changed", o.File, got, o.Seq, o.SHA256)
		default:
			r.add("outputs", Pass, "", o.File, "%s matches record %d", o.File, o.Seq)
		}
	}
	if !known[kind.Main] && f.Finished() {
		r.add("outputs", Fail, ClassIntegrity, AuditFile, "no record of %s", kind.Main)
	}
	if kind == folder.Run && known[ResultsFile] {
		checkResultsDigest(r, dir, resultsDigest)
	}
	checkFolderEntries(r, dir, known, kind, unfinished, opt.AllowExtra)
	verifySignature(r, dir, chain, opt.PubKey, pub, f.Finished())
	sameBuild := checkTool(r, f)
	if kind == folder.Run && f.Finished() && !failed(r.Checks, ClassIntegrity) {
		crossCheck(r, f, sameBuild)
	}
	return resultsDigest, sameBuild
}

// checkTool compares the build that wrote the folder with the running one, and reports
// whether they are the same.
func checkTool(r *VerifyReport, f *folder.Folder) bool {
	var started struct {
		Tool folder.Tool `json:"tool"`
	}
	json.Unmarshal(f.Chain.Records[0].Data, &started)
	cur := Tool()
	exe, _ := Executable()
	var diffs []string
	if started.Tool.Version != cur.Version {
		diffs = append(diffs, fmt.Sprintf("version %s, now %s", started.Tool.Version, cur.Version))
	}
	if started.Tool.Revision != cur.Revision {
		diffs = append(diffs, fmt.Sprintf("revision %q, now %q", started.Tool.Revision, cur.Revision))
	}
	if started.Tool.ExecutableSHA256 != exe {
		diffs = append(diffs, fmt.Sprintf("executable %s, now %s", started.Tool.ExecutableSHA256, exe))
	}
	if len(diffs) == 0 {
		r.add("tool", Pass, "", "", "the same rankplan build (version %s) ran it", cur.Version)
		return true
	}
	r.add("tool", Warn, "", "", "another rankplan build ran it: %s", strings.Join(diffs, "; "))
	return false
}

// checkInputs checks the plan and data files the log names, once the log has verified:
// the plan (the copy in the folder was checked as an output) and the data. It returns the
// data file to rerun on (opt.Data when given) and whether it is at hand; an error only when
// ctx ended.
func checkInputs(ctx context.Context, r *VerifyReport, f *folder.Folder, opt VerifyOptions) (string, bool, error) {
	var plan folder.PlanBound
	if !f.First(folder.EventPlanBound, &plan) {
		r.add("plan file", Skip, "", "", "the log records no plan")
	} else if got, _, err := digestInput(plan.AbsolutePath); err != nil {
		r.add("plan file", Skip, "", "", "the original plan %s is not at hand (%v); the copy in the run folder is used", plan.AbsolutePath, unwrapPathError(err))
	} else if got != plan.RawSHA256 {
		r.add("plan file", Fail, ClassDiffer, plan.AbsolutePath, "the plan %s has changed since the run (SHA-256 %s, recorded %s)", plan.AbsolutePath, got, plan.RawSHA256)
	} else {
		r.add("plan file", Pass, "", plan.AbsolutePath, "the original plan is unchanged")
	}
	var data folder.DataBound
	switch {
	case !f.First(folder.EventDataBound, &data):
		r.add("data file", Skip, "", "", "the log records no data file")
		return "", false, nil
	case opt.Data != "":
		return opt.Data, true, nil
	}
	// Hashing gigabytes takes seconds: given up at once when ctx ends (see await).
	got, err := await(ctx, "hash the data file", func() (string, error) {
		d, _, err := digestInput(data.AbsolutePath)
		return d, err
	})
	if ctx.Err() != nil {
		return "", false, fmt.Errorf("hash the data file: %w", ctx.Err())
	}
	switch {
	case err != nil:
		r.add("data file", Fail, ClassDiffer, data.AbsolutePath, "the data file %s cannot be read: %v", data.AbsolutePath, unwrapPathError(err))
	case got != data.SHA256:
		r.add("data file", Fail, ClassDiffer, data.AbsolutePath, "the data file %s has changed since the run (SHA-256 %s, recorded %s)", data.AbsolutePath, got, data.SHA256)
	default:
		r.add("data file", Pass, "", data.AbsolutePath, "the data are unchanged (%s)", got)
		return data.AbsolutePath, true, nil
	}
	return "", false, nil
}

// rerunAndCompare reruns the plan copy on dataPath and compares: the results digest with
// the recorded one, or, with opt.Data, the conclusions at alpha.
func rerunAndCompare(ctx context.Context, r *VerifyReport, f *folder.Folder, sameBuild bool, dataPath, resultsDigest string, opt VerifyOptions) error {
	dir := f.Dir
	ex, err := rerun(ctx, filepath.Join(dir, PlanCopyFile), dataPath, opt.Workers)
	if err != nil && ctx.Err() != nil { // stopped, not a verdict
		return fmt.Errorf("rerun: %w", err)
	}
	var fresh *results.Results
	if ex != nil {
		fresh = ex.results
	}
	if err != nil {
		r.add("rerun", Fail, ClassDiffer, "", "the plan does not run on %s: %v", dataPath, err)
		return nil
	}
	old, err := readFolderFile(dir, ResultsFile, MaxOutputBytes)
	if err != nil {
		r.add("rerun", Fail, ClassIntegrity, ResultsFile, "cannot read %s: %v", ResultsFile, err)
		return nil
	}
	newBytes, err := EncodeResults(fresh)
	if err != nil {
		return err
	}
	digest, err := ResultsDigest(fresh)
	if err != nil {
		return err
	}
	if opt.Data != "" {
		compareConclusions(r, old, fresh, dataPath)
		return nil
	}
	if digest == resultsDigest {
		r.add("rerun", Pass, "", ResultsFile, "rerunning the plan on the recorded data reproduces the results digest %s", digest)
		if sameBuild {
			checkReport(r, f, fresh, ex)
		}
		return nil
	}
	first := "(no field differs: the digests disagree)"
	if d, err := audit.Diff(jsonRaw(old), jsonRaw(newBytes)); err == nil && len(d) > 0 {
		first = d[0]
	}
	r.add("rerun", Fail, ClassDiffer, ResultsFile, "rerunning gives results digest %s, recorded %s; the first field that differs is %s", digest, resultsDigest, first)
	return nil
}

// checkResultsDigest requires the results.json in dir to hold the recorded results:
//
//	Digest(JCS(results.json)) = results_digest of its output.written record   (RFC 8785)
//
// The file's own SHA-256 in that record can be rewritten together with the chain by
// whoever can write the folder; the results digest is what the rerun reproduces, so the
// file on disk must match it as well, or the rerun would vouch for other numbers.
func checkResultsDigest(r *VerifyReport, dir, recorded string) {
	b, err := readFolderFile(dir, ResultsFile, MaxOutputBytes)
	if err != nil {
		r.add("results", Fail, ClassIntegrity, ResultsFile, "cannot read %s: %v", ResultsFile, unwrapPathError(err))
		return
	}
	if recorded == "" {
		r.add("results", Fail, ClassIntegrity, ResultsFile, "the log records no results digest for %s", ResultsFile)
		return
	}
	canon, err := audit.Canonical(jsonRaw(b))
	if err != nil {
		r.add("results", Fail, ClassIntegrity, ResultsFile, "%s is not JSON: %v", ResultsFile, err)
		return
	}
	if got := audit.Digest(canon); got != recorded {
		r.add("results", Fail, ClassIntegrity, ResultsFile, "%s has results digest %s, but the log records %s: the file does not hold the recorded results", ResultsFile, got, recorded)
		return
	}
	r.add("results", Pass, "", ResultsFile, "%s holds the recorded results (results digest %s)", ResultsFile, recorded)
}

func verifySignature(r *VerifyReport, dir string, chain *audit.Chain, pubPath string, pub ed25519.PublicKey, finished bool) {
	b, err := readFolderFile(dir, SignatureFile, audit.MaxSignatureBytes)
	if errors.Is(err, fs.ErrNotExist) {
		if pubPath != "" && !finished {
			// A run signs its log only once it has finished.
			r.add("signature", Fail, ClassIncomplete, SignatureFile, "--pubkey given, but the run did not finish, and a run is signed only when it finishes")
		} else if pubPath != "" {
			r.add("signature", Fail, ClassIntegrity, SignatureFile, "--pubkey given, but the run folder holds no %s", SignatureFile)
		} else {
			r.add("signature", Skip, "", "", "the run is not signed")
		}
		return
	}
	var sig audit.Signature
	if err == nil {
		sig, err = audit.ParseSignature(b)
	}
	if err != nil {
		r.add("signature", Fail, ClassIntegrity, SignatureFile, "cannot read %s: %v", SignatureFile, err)
		return
	}
	// The head and record count a signature names are checkable without a key: one copied
	// from another run names that run's log, whatever signer it claims.
	if sig.Head != chain.Head || sig.Seq != int64(len(chain.Records)) {
		r.add("signature", Fail, ClassIntegrity, SignatureFile, "%s covers head %s at record %d, but the log ends at %s, record %d", SignatureFile, sig.Head, sig.Seq, chain.Head, len(chain.Records))
		return
	}
	if pubPath == "" {
		// Without a pinned key nothing about the signer is known: never shown as signed.
		r.add("signature", Skip, "", SignatureFile, "present, not verified (no --pubkey); its head and record count match this log; give the pinned public key with --pubkey to check who signed")
		return
	}
	if err := sig.Verify(pub); err != nil {
		r.add("signature", Fail, ClassIntegrity, SignatureFile, "the signature does not verify against %s: %v", pubPath, err)
		return
	}
	r.add("signature", Pass, "", SignatureFile, "signed by %q with meaning %q at %s; the key is the pinned one", sig.Signer, sig.Meaning, sig.SignedAt)
}

// rerun runs the plan copy on the data file at dataPath, writing nothing.
func rerun(ctx context.Context, planCopy, dataPath string, workers int) (*execution, error) {
	p, err := spec.Load(planCopy)
	if err != nil {
		return nil, err
	}
	abs, err := filepath.Abs(dataPath)
	if err != nil {
		return nil, err
	}
	p.Data.File = abs
	prep, err := Prepare(ctx, p)
	if err != nil {
		return nil, err
	}
	return execute(ctx, prep, Options{Workers: workers})
}

// compareConclusions reports, for verify --data, which conclusions at alpha changed
// ([reportConclusions]).
func compareConclusions(r *VerifyReport, old []byte, fresh *results.Results, dataPath string) {
	reportConclusions(r, old, fresh, dataPath)
}

func failed(checks []Check, class Class) bool {
	for _, c := range checks {
		if c.Verdict == Fail && c.Class == class {
			return true
		}
	}
	return false
}

func outcome(checks []Check) Class {
	for _, class := range []Class{ClassIntegrity, ClassIncomplete, ClassDiffer, ClassConclusion} {
		if failed(checks, class) {
			return class
		}
	}
	return Verified
}

// skipped counts the checks that were skipped.
func (r *VerifyReport) skipped() int {
	n := 0
	for _, c := range r.Checks {
		if c.Verdict == Skip {
			n++
		}
	}
	return n
}

// WriteText writes the report for people: one line per check, then the outcome.
func (r *VerifyReport) WriteText(w io.Writer) error {
	ew := &textWriter{w: w}
	ew.printf("verify %s\n", r.Dir)
	for _, c := range r.Checks {
		ew.printf("  %-4s  %-11s %s\n", strings.ToUpper(string(c.Verdict)), c.Name, c.Detail)
	}
	switch r.Outcome {
	case Verified:
		if skipped := r.skipped(); skipped > 0 {
			ew.printf("verified, with %d check(s) skipped (a skipped check is not a pass)\n", skipped)
		} else {
			ew.printf("verified\n")
		}
	default:
		ew.printf("NOT VERIFIED: %s\n", r.Outcome)
	}
	return ew.err
}

type textWriter struct {
	w   io.Writer
	err error
}

func (t *textWriter) printf(format string, args ...any) {
	if t.err == nil {
		_, t.err = fmt.Fprintf(t.w, format, args...)
	}
}

// WriteMarkdown writes the report as a Markdown section for CI step summaries and pull
// requests, to follow the run's summary.md: a heading with the outcome, a table with one
// row per check, and the head the checks saw. A skipped check is named as such, never as
// a pass.
func (r *VerifyReport) WriteMarkdown(w io.Writer) error {
	ew := &textWriter{w: w}
	skipped := r.skipped()
	switch {
	case r.Outcome != Verified:
		ew.printf("### Verify status: **not verified** (%s)\n\n", report.MarkdownText(string(r.Outcome)))
	case skipped > 0:
		ew.printf("### Verify status: verified, with %d check(s) skipped\n\n", skipped)
	default:
		ew.printf("### Verify status: verified\n\n")
	}
	ew.printf("`rankplan verify %s`\n\n| check | verdict | file | detail |\n|---|---|---|---|\n", strings.ReplaceAll(r.Dir, "`", "'"))
	for _, c := range r.Checks {
		v := c.Verdict
		if v == Fail {
			v = "**fail**"
		}
		ew.printf("| %s | %s | %s | %s |\n", report.MarkdownText(c.Name), v, report.MarkdownText(c.File), report.MarkdownText(c.Detail))
	}
	if r.Head != "" {
		ew.printf("\nAudit head seen: `%s` (record %d).\n", r.Head, r.Records)
	}
	if skipped > 0 {
		ew.printf("\nA skipped check is not a pass.\n")
	}
	return ew.err
}

// rerunSelftest reruns the reference cases of a selftest folder and compares the digest of
// their results with the recorded one. A record of a failed qualification verifies when it
// is authentic; a warning says that it failed.
func rerunSelftest(ctx context.Context, r *VerifyReport, last audit.Record, recorded string, rerun func(context.Context) (string, error)) {
	var fin struct {
		Status         string
		Passed, Failed int
	}
	json.Unmarshal(last.Data, &fin)
	switch {
	case failed(r.Checks, ClassIntegrity) || last.Event != SelftestFinished:
		r.add("rerun", Skip, "", "", "not rerun: the record itself did not verify")
		return
	case rerun == nil:
		r.add("rerun", Skip, "", "", "not rerun: no selftest cases at hand")
		return
	}
	digest, err := rerun(ctx)
	switch {
	case err != nil:
		r.add("rerun", Fail, ClassDiffer, "", "the reference cases do not run: %v", err)
	case digest != recorded:
		r.add("rerun", Fail, ClassDiffer, ValidationFile, "rerunning the reference cases gives results digest %s, recorded %s: "+
			"this build computes other values, or has other cases, than the one that made the record", digest, recorded)
	default:
		r.add("rerun", Pass, "", ValidationFile, "rerunning the reference cases reproduces the results digest %s", digest)
	}
	if fin.Status != "pass" {
		r.add("selftest", Warn, "", ValidationFile, "the recorded qualification did not pass: %d of %d cases failed", fin.Failed, fin.Passed+fin.Failed)
	}
}
