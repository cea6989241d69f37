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
	"regexp"
	"slices"
	"strings"
	"unicode/utf8"

	"rankplan/runner/audit"
	"rankplan/runner/report"
	"rankplan/runner/results"
	"rankplan/spec"
)

// Verdicts of a verify check. A skipped check is never counted as passed.
const (
	Pass = "pass"
	Fail = "fail"
	Skip = "skip"
	Warn = "warn"
)

// Classes of failure, from the most to the least severe; the outcome of a verify is the
// class of its worst failed check, or "verified".
const (
	ClassIntegrity  = "integrity"          // tampering, broken chain, bad signature, missing files
	ClassIncomplete = "incomplete"         // the run never finished (killed, or failed)
	ClassDiffer     = "differ"             // inputs changed, or the rerun gives other results
	ClassConclusion = "conclusion-changed" // verify --data: a decision at alpha flipped
	Verified        = "verified"
)

// The records and the main file of a selftest folder (rankplan selftest --out), which
// verify tells from a run folder by its first record.
const (
	ValidationFile   = "validation.json"
	SelftestStarted  = "selftest.started"
	SelftestFinished = "selftest.finished"
	SelftestFailed   = "selftest.failed"
)

// folderKind is what verify expects of a kind of folder: the events that open and close
// its log, the records that must come first, and the file whose results digest it records.
type folderKind struct {
	started, finished, failed string
	sequence                  []string
	sequenceOK                string
	main                      string
}

var (
	runFolder = &folderKind{"run.started", "run.finished", "run.failed",
		[]string{"run.started", "plan.bound", "data.bound", "exclusions.applied"},
		"the plan was bound before the data, the data before any result", ResultsFile}
	selftestFolder = &folderKind{SelftestStarted, SelftestFinished, SelftestFailed,
		[]string{SelftestStarted, "cases.bound"},
		"the reference cases were bound before any result", ValidationFile}
)

// incompleteName matches the working folder of a run that was never moved into place.
var incompleteName = regexp.MustCompile(`\.incomplete-[0-9a-f]{8}$`)

// Check is one verdict of [Verify].
type Check struct {
	Name    string `json:"check"`
	Verdict string `json:"verdict"`
	Class   string `json:"class,omitempty"` // for failures
	File    string `json:"file,omitempty"`
	Detail  string `json:"detail"`
}

// VerifyReport is everything [Verify] found.
type VerifyReport struct {
	Dir     string  `json:"dir"`
	Outcome string  `json:"outcome"`
	Records int64   `json:"records"`
	Head    string  `json:"head"`
	Checks  []Check `json:"checks"`
	// ConclusionChanges lists, for verify --data, every decision that differs from the run's.
	ConclusionChanges []string `json:"conclusion_changes,omitempty"`
}

// VerifyOptions select the optional checks of [Verify].
type VerifyOptions struct {
	Head    string // an audit head kept elsewhere (CI artifact, lab notebook); "" skips the truncation check
	PubKey  string // a pinned Ed25519 public key; the run's signature must verify against it
	Data    string // drift mode: rerun the plan on this data file instead of the recorded one
	Workers int
	Getenv  func(string) string
	// Selftest reruns the built-in reference cases of `rankplan selftest` and returns the
	// digest of their results, for a selftest folder (the command line passes
	// selftest.ResultsDigest); nil skips that rerun.
	Selftest func(ctx context.Context) (string, error)
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

func (r *VerifyReport) add(name, verdict, class, file, format string, args ...any) {
	if verdict != Fail {
		class = ""
	}
	r.Checks = append(r.Checks, Check{Name: name, Verdict: verdict, Class: class, File: file, Detail: fmt.Sprintf(format, args...)})
}

// Verify checks a run folder: the audit log's records and hash chain, that the run
// finished, its head (against the folder's head file and, if given, a copy kept
// elsewhere), every output file against its recorded hash, the plan and data against
// theirs, the tool version, the signature; then it reruns the plan from the recorded
// inputs and seed and compares the results digest, naming the first field that differs.
// With opt.Data it reruns on that file instead and reports which conclusions at the
// plan's alpha changed. Only an unusable folder, or a rerun stopped by ctx (its error,
// wrapped), is an error; everything else is a check.
func Verify(ctx context.Context, dir string, opt VerifyOptions) (*VerifyReport, error) {
	st, err := os.Stat(dir)
	if err != nil || !st.IsDir() {
		if err == nil {
			err = errors.New("not a folder")
		}
		return nil, &InputError{Err: fmt.Errorf("verify %s: %w", dir, err)}
	}
	if opt.Head != "" {
		head, err := ParseHead(opt.Head)
		if err != nil {
			return nil, &InputError{Err: fmt.Errorf("verify %s: head kept elsewhere: %w", dir, err)}
		}
		opt.Head = head
	}
	r := &VerifyReport{Dir: dir}
	defer func() { r.Outcome = outcome(r.Checks) }()

	// Run writes into DIR.incomplete-XXXX and renames the folder only after its last record
	// and file: a folder still carrying the mark was stopped before that, however full its
	// log, and one stopped before its first record holds no log or an empty one.
	base := filepath.Base(filepath.Clean(dir))
	marked := incompleteName.MatchString(base)
	chain, problems, warnings, err := audit.ReadChain(filepath.Join(dir, AuditFile))
	if marked && (errors.Is(err, fs.ErrNotExist) || err == nil && len(chain.Records) == 0 && len(problems) == 1) {
		r.add("complete", Fail, ClassIncomplete, AuditFile, "the folder is still named %s and its audit log holds no record: the run was stopped before its first record", base)
		return r, nil
	}
	if err != nil {
		r.add("audit log", Fail, ClassIntegrity, AuditFile, "cannot read the audit log: %v", err)
		return r, nil
	}
	for _, p := range problems {
		r.add("audit log", Fail, ClassIntegrity, AuditFile, "%v", p)
	}
	for _, w := range warnings {
		r.add("timestamps", Warn, "", AuditFile, "%v", w)
	}
	if len(problems) > 0 || len(chain.Records) == 0 {
		if len(problems) == 0 {
			r.add("audit log", Fail, ClassIntegrity, AuditFile, "the audit log has no records")
		}
		return r, nil
	}
	r.add("audit log", Pass, "", AuditFile, "%d records; each line canonical; seq 1..%d without gaps; every prev link holds",
		len(chain.Records), len(chain.Records))
	r.Records, r.Head = int64(len(chain.Records)), chain.Head

	events := map[string][]audit.Record{}
	var order []string
	for _, rec := range chain.Records {
		events[rec.Event] = append(events[rec.Event], rec)
		order = append(order, rec.Event)
	}
	last := chain.Records[len(chain.Records)-1]
	kind := runFolder
	if chain.Records[0].Event == SelftestStarted {
		kind = selftestFolder
	}
	if marked {
		r.add("complete", Fail, ClassIncomplete, "", "the folder is still named %s: the run was stopped before it was moved into place", base)
	}
	// A run that did not finish never wrote its head file: a missing one is part of the
	// incompleteness, not a sign of tampering. A head file that is there must still match.
	unfinished := marked || last.Event != kind.finished
	switch last.Event {
	case kind.finished:
		r.add("complete", Pass, "", AuditFile, "the log ends with %s (record %d)", kind.finished, last.Seq)
	case kind.failed:
		var d struct{ Error string }
		json.Unmarshal(last.Data, &d)
		r.add("complete", Fail, ClassIncomplete, AuditFile, "the run failed and produced no results: %s", d.Error)
	default:
		r.add("complete", Fail, ClassIncomplete, AuditFile, "the log stops at record %d (%s) without %s: the run did not finish, or records were cut off", last.Seq, last.Event, kind.finished)
	}
	want := kind.sequence
	if n := min(len(order), len(want)); !slices.Equal(order[:n], want[:n]) {
		r.add("sequence", Fail, ClassIntegrity, AuditFile, "the records do not start with %s", strings.Join(want, ", "))
		return r, nil
	}
	r.add("sequence", Pass, "", AuditFile, "%s", kind.sequenceOK)

	// The head: the folder's own head file, and a copy kept elsewhere.
	headFile, err := os.ReadFile(filepath.Join(dir, HeadFile))
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
	known := map[string]bool{AuditFile: true, HeadFile: true, SignatureFile: true}
	var resultsDigest string
	for _, rec := range events["output.written"] {
		var d struct {
			File          string
			SHA256        string `json:"sha256"`
			ResultsDigest string `json:"results_digest"`
		}
		if err := json.Unmarshal(rec.Data, &d); err != nil || d.File == "" || filepath.Base(d.File) != d.File {
			r.add("outputs", Fail, ClassIntegrity, AuditFile, "record %d names no valid output file", rec.Seq)
			continue
		}
		known[d.File] = true
		if d.File == kind.main {
			resultsDigest = d.ResultsDigest
		}
		got, _, err := audit.DigestFile(filepath.Join(dir, d.File))
		switch {
		case err != nil:
			r.add("outputs", Fail, ClassIntegrity, d.File, "%s is missing or unreadable: %v", d.File, unwrapPathError(err))
		case got != d.SHA256:
			r.add("outputs", Fail, ClassIntegrity, d.File, "%s has SHA-256 %s, but record %d wrote %s: the file was changed", d.File, got, rec.Seq, d.SHA256)
		default:
			r.add("outputs", Pass, "", d.File, "%s matches record %d", d.File, rec.Seq)
		}
	}
	if !known[kind.main] && last.Event == kind.finished {
		r.add("outputs", Fail, ClassIntegrity, AuditFile, "no record of %s", kind.main)
	}
	if kind == runFolder && known[ResultsFile] {
		checkResultsDigest(r, dir, resultsDigest)
	}
	if entries, err := os.ReadDir(dir); err == nil {
		for _, e := range entries {
			if !known[e.Name()] {
				r.add("outputs", Warn, "", e.Name(), "%s is not part of the run's record", e.Name())
			}
		}
	}

	// Signature.
	verifySignature(r, dir, chain, opt.PubKey)

	// Tool version.
	var started struct {
		Tool struct {
			Version, Revision string
			Exe               string `json:"executable_sha256"`
		}
	}
	firstData := func(event string) json.RawMessage {
		if recs := events[event]; len(recs) > 0 {
			return recs[0].Data
		}
		return json.RawMessage("{}")
	}
	json.Unmarshal(firstData(kind.started), &started)
	cur := Tool()
	exe := ""
	if path, err := os.Executable(); err == nil {
		exe, _, _ = audit.DigestFile(path)
	}
	var diffs []string
	if started.Tool.Version != cur.Version {
		diffs = append(diffs, fmt.Sprintf("version %s, now %s", started.Tool.Version, cur.Version))
	}
	if started.Tool.Revision != cur.Revision {
		diffs = append(diffs, fmt.Sprintf("revision %q, now %q", started.Tool.Revision, cur.Revision))
	}
	if started.Tool.Exe != exe {
		diffs = append(diffs, fmt.Sprintf("executable %s, now %s", started.Tool.Exe, exe))
	}
	if len(diffs) == 0 {
		r.add("tool", Pass, "", "", "the same rankplan build (version %s) ran it", cur.Version)
	} else {
		r.add("tool", Warn, "", "", "another rankplan build ran it: %s", strings.Join(diffs, "; "))
	}
	if kind == selftestFolder {
		rerunSelftest(ctx, r, last, resultsDigest, opt.Selftest)
		if err := ctx.Err(); err != nil { // stopped, not a verdict
			return nil, fmt.Errorf("verify %s: rerun: %w", dir, err)
		}
		return r, nil
	}

	// Inputs: the plan (the copy in the folder is checked above as an output) and the data.
	var planRec struct {
		AbsolutePath string `json:"absolute_path"`
		Raw          string `json:"raw_sha256"`
	}
	json.Unmarshal(firstData("plan.bound"), &planRec)
	if planRec.AbsolutePath == "" {
		r.add("plan file", Skip, "", "", "the log records no plan")
	} else if got, _, err := audit.DigestFile(planRec.AbsolutePath); err != nil {
		r.add("plan file", Skip, "", "", "the original plan %s is not at hand (%v); the copy in the run folder is used", planRec.AbsolutePath, unwrapPathError(err))
	} else if got != planRec.Raw {
		r.add("plan file", Fail, ClassDiffer, planRec.AbsolutePath, "the plan %s has changed since the run (SHA-256 %s, recorded %s)", planRec.AbsolutePath, got, planRec.Raw)
	} else {
		r.add("plan file", Pass, "", planRec.AbsolutePath, "the original plan is unchanged")
	}
	var dataRec struct {
		AbsolutePath string `json:"absolute_path"`
		SHA256       string `json:"sha256"`
	}
	json.Unmarshal(firstData("data.bound"), &dataRec)
	dataOK := false
	if dataRec.AbsolutePath == "" {
		r.add("data file", Skip, "", "", "the log records no data file")
	} else if opt.Data == "" {
		// Hashing gigabytes takes seconds: given up at once when ctx ends (see await).
		got, err := await(ctx, "hash the data file", func() (string, error) {
			d, _, err := audit.DigestFile(dataRec.AbsolutePath)
			return d, err
		})
		if ctx.Err() != nil {
			return nil, fmt.Errorf("verify %s: hash the data file: %w", dir, ctx.Err())
		}
		if err != nil {
			r.add("data file", Fail, ClassDiffer, dataRec.AbsolutePath, "the data file %s cannot be read: %v", dataRec.AbsolutePath, unwrapPathError(err))
		} else if got != dataRec.SHA256 {
			r.add("data file", Fail, ClassDiffer, dataRec.AbsolutePath, "the data file %s has changed since the run (SHA-256 %s, recorded %s)", dataRec.AbsolutePath, got, dataRec.SHA256)
		} else {
			dataOK = true
			r.add("data file", Pass, "", dataRec.AbsolutePath, "the data are unchanged (%s)", got)
		}
	}

	// Rerun.
	switch {
	case failed(r.Checks, ClassIntegrity):
		r.add("rerun", Skip, "", "", "not rerun: the record itself did not verify")
		return r, nil
	case last.Event != "run.finished":
		r.add("rerun", Skip, "", "", "not rerun: the run did not finish")
		return r, nil
	}
	dataPath := dataRec.AbsolutePath
	if opt.Data != "" {
		dataPath = opt.Data
	} else if !dataOK {
		r.add("rerun", Skip, "", "", "not rerun: the recorded data are not at hand")
		return r, nil
	}
	fresh, err := rerun(ctx, filepath.Join(dir, PlanCopyFile), dataPath, opt.Workers)
	if err != nil && ctx.Err() != nil { // stopped, not a verdict
		return nil, fmt.Errorf("verify %s: rerun: %w", dir, err)
	}
	if err != nil {
		r.add("rerun", Fail, ClassDiffer, "", "the plan does not run on %s: %v", dataPath, err)
		return r, nil
	}
	old, err := os.ReadFile(filepath.Join(dir, ResultsFile))
	if err != nil {
		r.add("rerun", Fail, ClassIntegrity, ResultsFile, "cannot read %s: %v", ResultsFile, err)
		return r, nil
	}
	newBytes, err := EncodeResults(fresh)
	if err != nil {
		return nil, err
	}
	digest, err := ResultsDigest(fresh)
	if err != nil {
		return nil, err
	}
	if opt.Data != "" {
		compareConclusions(r, old, fresh, dataPath)
		return r, nil
	}
	if digest == resultsDigest {
		r.add("rerun", Pass, "", ResultsFile, "rerunning the plan on the recorded data reproduces the results digest %s", digest)
		return r, nil
	}
	first := "(no field differs: the digests disagree)"
	if d, err := audit.Diff(jsonRaw(old), jsonRaw(newBytes)); err == nil && len(d) > 0 {
		first = d[0]
	}
	r.add("rerun", Fail, ClassDiffer, ResultsFile, "rerunning gives results digest %s, recorded %s; the first field that differs is %s", digest, resultsDigest, first)
	return r, nil
}

// checkResultsDigest requires the results.json in dir to hold the recorded results:
//
//	Digest(JCS(results.json)) = results_digest of its output.written record   (RFC 8785)
//
// The file's own SHA-256 in that record can be rewritten together with the chain by
// whoever can write the folder; the results digest is what the rerun reproduces, so the
// file on disk must match it as well, or the rerun would vouch for other numbers.
func checkResultsDigest(r *VerifyReport, dir, recorded string) {
	b, err := os.ReadFile(filepath.Join(dir, ResultsFile))
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

func verifySignature(r *VerifyReport, dir string, chain *audit.Chain, pubPath string) {
	b, err := os.ReadFile(filepath.Join(dir, SignatureFile))
	if errors.Is(err, fs.ErrNotExist) {
		if pubPath != "" {
			r.add("signature", Fail, ClassIntegrity, SignatureFile, "--pubkey given, but the run folder holds no %s", SignatureFile)
		} else {
			r.add("signature", Skip, "", "", "the run is not signed")
		}
		return
	}
	var sig audit.Signature
	if err == nil {
		err = json.Unmarshal(b, &sig)
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
	pub, err := audit.LoadPublicKey(pubPath)
	if err != nil {
		r.add("signature", Fail, ClassIntegrity, pubPath, "cannot read the public key: %v", err)
		return
	}
	if err := sig.Verify(ed25519.PublicKey(pub)); err != nil {
		r.add("signature", Fail, ClassIntegrity, SignatureFile, "the signature does not verify against %s: %v", pubPath, err)
		return
	}
	r.add("signature", Pass, "", SignatureFile, "signed by %q with meaning %q at %s; the key is the pinned one", sig.Signer, sig.Meaning, sig.SignedAt)
}

// rerun runs the plan copy on the data file at dataPath, writing nothing.
func rerun(ctx context.Context, planCopy, dataPath string, workers int) (*results.Results, error) {
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
	return Execute(ctx, prep, Options{Workers: workers})
}

// compareConclusions reports, for verify --data, which decisions at alpha changed.
func compareConclusions(r *VerifyReport, old []byte, fresh *results.Results, dataPath string) {
	var was results.Results
	if err := json.Unmarshal(old, &was); err != nil {
		r.add("conclusions", Fail, ClassIntegrity, ResultsFile, "cannot read %s: %v", ResultsFile, err)
		return
	}
	byID := map[string]results.Analysis{}
	for _, a := range was.Analyses {
		byID[a.ID] = a
	}
	moved := 0
	for _, a := range fresh.Analyses {
		b, ok := byID[a.ID]
		if !ok {
			continue
		}
		if decision(b) != decision(a) {
			r.ConclusionChanges = append(r.ConclusionChanges, fmt.Sprintf("analysis %s: %s before, %s on %s", a.ID, decision(b), decision(a), dataPath))
		}
		if pv(b) != pv(a) {
			moved++
		}
	}
	if len(r.ConclusionChanges) > 0 {
		r.add("conclusions", Fail, ClassConclusion, "", "%s", strings.Join(r.ConclusionChanges, "; "))
		return
	}
	r.add("conclusions", Pass, "", "", "no conclusion at alpha changed on %s (%d of %d p-values moved)", dataPath, moved, len(fresh.Analyses))
}

func decision(a results.Analysis) string {
	switch {
	case a.Status != "ok":
		return "not computable"
	case a.Decision.Reject:
		return "reject at alpha"
	}
	return "do not reject at alpha"
}

func pv(a results.Analysis) float64 {
	if a.PValue == nil {
		return -1
	}
	return a.PValue.Log10
}

func failed(checks []Check, class string) bool {
	for _, c := range checks {
		if c.Verdict == Fail && c.Class == class {
			return true
		}
	}
	return false
}

func outcome(checks []Check) string {
	for _, class := range []string{ClassIntegrity, ClassIncomplete, ClassDiffer, ClassConclusion} {
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
		ew.printf("  %-4s  %-11s %s\n", strings.ToUpper(c.Verdict), c.Name, c.Detail)
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
		ew.printf("### Verify status: **not verified** (%s)\n\n", report.MarkdownText(r.Outcome))
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
