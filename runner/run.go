package runner

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"time"

	"rankplan/internal/infile"
	"rankplan/runner/audit"
	"rankplan/runner/folder"
	"rankplan/runner/report"
	"rankplan/runner/results"
	"rankplan/schemas"
	"rankplan/spec"
	"rankplan/stats"
	"rankplan/stats/stream"
)

// The files of a run folder (see package folder, which owns the folder's contract).
const (
	ResultsFile    = folder.ResultsFile
	AuditFile      = folder.AuditFile
	HeadFile       = folder.HeadFile
	PlanCopyFile   = folder.PlanCopyFile
	LockCopyFile   = folder.LockCopyFile
	SignatureFile  = folder.SignatureFile
	ProvenanceFile = folder.ProvenanceFile
	ReportFile     = folder.ReportFile
	SummaryFile    = folder.SummaryFile
	PairsFile      = folder.PairsFile
)

// RunOptions are the inputs of [Run] besides the plan.
type RunOptions struct {
	Out     string // the run folder to create; it must not exist
	Workers int    // resampling goroutines; results do not depend on it
	Signer  string // a declared name, recorded with every record
	Reason  string // why the run is made, recorded
	// LockPath names a plan lock (rankplan lock). A plan that differs from it runs only
	// with at least one Deviation, and DataSeen must then say whether the data had been
	// seen when the plan was changed.
	LockPath   string
	Deviations []string
	DataSeen   *bool
	// SignKey names an Ed25519 private key; the final audit head is signed with Meaning.
	SignKey string
	Meaning string
	Args    []string            // the command line, recorded
	Now     func() time.Time    // clock; nil means time.Now
	Getenv  func(string) string // environment; nil means os.Getenv
}

// RunRecord is what a finished run reports back.
type RunRecord struct {
	Dir        string
	Prepared   *Prepared
	Results    *results.Results
	Head       string
	Seq        int64
	Deviations []Deviation
	Signature  *audit.Signature
	// Lock is whether the plan was locked and whether it matched its lock, as plan.bound
	// records it.
	Lock LockState
}

// LockState says whether the plan was locked and whether it matches its lock.
type LockState = folder.LockState

// LockText says a lock state in one sentence, as the run summary, summary.md,
// report.html and verify show it.
func LockText(lock LockState) string {
	switch lock.Status {
	case folder.LockMatches:
		return fmt.Sprintf("locked: the plan matches its lock %s (locked %s)", lock.LockSHA256, lock.LockedAt)
	case folder.LockDeviates:
		return fmt.Sprintf("locked, with deviations: the plan differs from its lock %s (locked %s)", lock.LockSHA256, lock.LockedAt)
	}
	return "no lock: the plan was not locked before this run"
}

// Deviation is one difference between the locked plan and the plan that ran.
type Deviation = folder.Deviation

// Run validates the plan and its data, runs every analysis and writes the run folder:
// results.json, a copy of the plan, the hash-chained audit log, its head, and optionally a
// lock copy and a signature (package folder states the folder's contract and writes it).
// Everything is written into a fresh sibling folder named DIR.incomplete-XXXX, each file
// synced, and that folder is renamed to DIR only after the last record; the rename refuses
// an existing DIR. A run that fails or is stopped leaves no DIR, only the .incomplete
// folder, whose log ends with run.failed (or, when killed, wherever it stopped) and which
// `verify` reports as incomplete.
//
// It is a pipeline: bind the inputs (read and validate everything; nothing is written
// when this fails) → open the folder and record the inputs → execute → write the outputs
// and close the folder.
func Run(ctx context.Context, planPath string, opt RunOptions) (*RunRecord, error) {
	in, err := bindInputs(ctx, planPath, opt)
	if err != nil {
		return nil, err
	}
	w, err := openRunFolder(in, opt)
	if err != nil {
		return nil, err
	}
	// From here on every error leaves the working folder, its log closed by run.failed.
	unfinished := func(err error) (*RunRecord, error) {
		w.Abandon(Failure(ctx, err))
		if errors.Is(err, folder.ErrExists) {
			err = &InputError{Err: err}
		}
		return nil, &UnfinishedError{Dir: w.WorkDir(), Err: err}
	}
	ex, err := execute(ctx, in.prep, Options{Workers: opt.Workers})
	if err != nil {
		return unfinished(err)
	}
	rec, err := closeRunFolder(ctx, w, in, ex, opt)
	if err != nil {
		return unfinished(err)
	}
	return rec, nil
}

// runInputs are the inputs of a run, read and validated before anything is written.
type runInputs struct {
	planPath, absPlan string
	raw, canon        []byte // the plan file and its canonical form
	plan              *spec.Plan
	lock              folder.LockState
	lockBytes         []byte
	devs              []Deviation
	prep              *Prepared
	absData           string
	signKey           []byte
	tool              ToolInfo
	planRec           folder.PlanBound
	dataRec           folder.DataBound
	toolRec           folder.Tool
	exe               string
	exeSize           int64
	missing           []string // folders above --out to create, outermost first
	now               func() time.Time
}

// bindInputs reads and checks everything a run needs: the output folder's name and the
// folders above it that are missing (created later, by openRunFolder), the plan, its lock and deviations, the data, the work's size and the signing key.
func bindInputs(ctx context.Context, planPath string, opt RunOptions) (*runInputs, error) {
	startRunWork()
	in := &runInputs{planPath: planPath, now: opt.Now}
	if in.now == nil {
		in.now = time.Now
	}
	if err := CheckNewFile(opt.Out); err != nil {
		return nil, err
	}
	var err error
	if in.missing, err = missingParents(opt.Out); err != nil {
		return nil, err
	}
	if in.raw, err = spec.ReadFile(planPath); err != nil {
		return nil, &InputError{Err: err}
	}
	if in.plan, err = spec.Parse(planPath, in.raw); err != nil {
		return nil, &InputError{Err: err}
	}
	in.plan.Dir = filepath.Dir(planPath)
	if in.canon, err = PlanCanonical(in.plan); err != nil {
		return nil, err
	}
	if in.lock, in.devs, in.lockBytes, err = checkLock(in.plan, in.canon, opt); err != nil {
		return nil, err
	}
	if in.signKey, err = loadSignKey(opt); err != nil {
		return nil, err
	}
	if in.prep, err = Prepare(ctx, in.plan); err != nil {
		return nil, err
	}
	if err := in.prep.CheckWork(ctx); err != nil {
		return nil, err
	}
	in.absPlan, _ = filepath.Abs(planPath)
	in.absData, _ = filepath.Abs(in.prep.DataPath)
	in.tool = Tool()
	in.exe, in.exeSize = Executable()
	in.toolRec = in.tool.Record(in.exe, in.exeSize)
	p, prep := in.plan, in.prep
	in.planRec = folder.PlanBound{
		Path: planPath, AbsolutePath: in.absPlan, Bytes: len(in.raw),
		RawSHA256: audit.Digest(in.raw), CanonicalSHA256: audit.Digest(in.canon),
		PlanID: p.ID, PlanFormat: spec.FormatVersion, Schema: schemas.PlanID,
		Lock: in.lock, Deviations: in.devs,
	}
	in.dataRec = folder.DataBound{
		Path: prep.DataPath, AbsolutePath: in.absData, Bytes: prep.Data.Bytes,
		SHA256: "sha256:" + prep.Data.SHA256, Rows: prep.Data.Rows, HighPrecisionCells: prep.Data.HighPrecisionCells,
	}
	return in, nil
}

// openRunFolder creates the missing folders above --out, then the working folder, and
// records the bound inputs: run.started (naming the folders it created), plan.bound,
// data.bound and exclusions.applied.
func openRunFolder(in *runInputs, opt RunOptions) (*folder.Writer, error) {
	getenv := opt.Getenv
	if getenv == nil {
		getenv = os.Getenv
	}
	created, err := createParents(in.missing)
	if err != nil {
		return nil, err
	}
	w, err := folder.Create(opt.Out, folder.Run, audit.CurrentActor(getenv, opt.Signer, opt.Reason), in.now)
	if err != nil {
		return nil, fmt.Errorf("create run folder: %w", err)
	}
	p, prep := in.plan, in.prep
	excl := folder.ExclusionsApplied{Analyses: []folder.Exclusions{}}
	for _, a := range prep.Analyses {
		counts := map[string]int{}
		for j, g := range a.Groups {
			counts[g] = a.Counts[j]
		}
		excl.Analyses = append(excl.Analyses, folder.Exclusions{
			Analysis: a.Analysis.ID, Outcome: a.Analysis.Outcome, N: len(a.Values),
			RowsPerGroup: counts, Excluded: a.Excluded,
			Rule: "missing policy " + string(p.Data.Missing.Policy) + "; each row counted once, first reason of: missing-group, group-not-included, outside-subset, missing-outcome",
		})
	}
	for _, r := range []folder.Record{
		folder.RunStarted{
			Tool: in.toolRec, Command: opt.Args, Out: opt.Out, Workers: opt.Workers, CPUs: runtime.NumCPU(),
			Note:           "the plan and its data were validated before this record was written",
			CreatedFolders: created,
		},
		in.planRec,
		in.dataRec,
		excl,
	} {
		if err := w.Record(r); err != nil {
			w.Abandon(folder.Failure{Error: err.Error()})
			return nil, err
		}
	}
	return w, nil
}

// closeRunFolder records how each analysis ended, writes the outputs (results.json and the
// other computed files, then the renderings for people, which show the audit head as it
// stands after every computed output was recorded), closes the log with run.finished and
// moves the folder into place, signed when a key was given.
func closeRunFolder(ctx context.Context, w *folder.Writer, in *runInputs, ex *execution, opt RunOptions) (*RunRecord, error) {
	// stopped is ctx's error, checked between the steps of writing the folder.
	stopped := func() error {
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("write the run folder: %w", err)
		}
		return nil
	}
	res, p := ex.results, in.plan
	for _, a := range res.Analyses {
		d := folder.AnalysisFinished{Analysis: a.ID, Status: a.Status, RandomStream: folder.RandomStream{
			Generator: stream.Generator, Scheme: stream.Label, KeyLayout: stream.KeyLayout, Seed: p.Seed.String(),
			Uses: []folder.StreamUse{
				{Purpose: stats.PermutationPurpose, BlockSize: stats.PermutationBlockSize},
				{Purpose: stats.BootstrapPurpose, BlockSize: stats.BootstrapBlockSize},
				{Purpose: stats.CountsPurpose, BlockSize: stats.CountsBlockSize},
			},
		}}
		if a.PValue != nil {
			d.PValueRequested, d.PValueMethod, d.Reason = a.PValue.Requested, a.PValue.Method, a.PValue.Reason
		}
		if err := w.Record(d); err != nil {
			return nil, err
		}
	}
	if err := stopped(); err != nil {
		return nil, err
	}
	resBytes, err := EncodeResults(res)
	if err != nil {
		return nil, err
	}
	digest, err := ResultsDigest(res)
	if err != nil {
		return nil, err
	}
	outputs := []namedBytes{{ResultsFile, resBytes}, {PlanCopyFile, in.raw}}
	if in.lockBytes != nil {
		outputs = append(outputs, namedBytes{LockCopyFile, in.lockBytes})
	}
	prov, err := provenance(outputs[:2], in.absPlan, in.raw, in.absData, "sha256:"+in.prep.Data.SHA256, in.exe, in.tool)
	if err != nil {
		return nil, err
	}
	outputs = append(outputs, namedBytes{ProvenanceFile, prov})
	for _, o := range outputs {
		if err := stopped(); err != nil {
			return nil, err
		}
		var rec folder.OutputWritten
		if o.name == ResultsFile {
			rec.ResultsDigest, rec.ResultsDigestRule = digest, folder.ResultsDigestRuleRun
		}
		if err := w.WriteFile(o.name, o.b, rec); err != nil {
			return nil, err
		}
	}
	head, seq := w.Head()
	meta := reportMeta(in.planRec, in.dataRec, in.toolRec, p.Seed.String(), head, seq)
	meta.ValueScale = ex.valueScale
	renders, err := renderings(ctx, res, meta, ex.sorted, opt.Out)
	if err != nil {
		return nil, err
	}
	for _, o := range renders {
		if err := stopped(); err != nil {
			return nil, err
		}
		note := "a rendering of results.json for people; it shows the audit head at record " + strconv.FormatInt(seq, 10)
		if err := w.WriteFile(o.name, o.b, folder.OutputWritten{Note: note}); err != nil {
			return nil, err
		}
	}
	rec := &RunRecord{Dir: opt.Out, Prepared: in.prep, Results: res, Deviations: in.devs, Lock: in.lock}
	var seal folder.Seal
	if in.signKey != nil {
		seal = func(head string, seq int64) (string, []byte, error) {
			meaning := opt.Meaning
			if meaning == "" {
				meaning = "authorship"
			}
			sig, err := audit.Sign(in.signKey, head, seq, opt.Signer, meaning, in.now())
			if err != nil {
				return "", nil, fmt.Errorf("sign: %w", err)
			}
			b, err := audit.Indented(sig)
			rec.Signature = &sig
			return SignatureFile, b, err
		}
	}
	if err := stopped(); err != nil {
		return nil, err
	}
	rec.Head, rec.Seq, err = w.Finish(ctx, folder.RunFinished{Status: "ok", ExitCode: 0, Analyses: len(res.Analyses)}, seal)
	if err != nil {
		return nil, err
	}
	return rec, nil
}

// Failure is what the log's closing run.failed record says of err: its text, and the
// signal's name when a signal stopped the run (see [InterruptedBy]).
func Failure(ctx context.Context, err error) folder.Failure {
	f := folder.Failure{Error: err.Error()}
	if in := InterruptedBy(ctx); in != nil {
		f.Signal = in.Name()
	}
	return f
}

// ResultsDigest is the SHA-256 of the canonical (RFC 8785) form of the results: the
// fingerprint `verify` compares after rerunning a plan.
func ResultsDigest(res *results.Results) (string, error) {
	b, err := EncodeResults(res)
	if err != nil {
		return "", err
	}
	c, err := audit.Canonical(jsonRaw(b))
	if err != nil {
		return "", err
	}
	return audit.Digest(c), nil
}

// PlanCanonical is the canonical (RFC 8785) form of the plan as it runs, defaults
// applied: the plan hash a lock fixes.
func PlanCanonical(p *spec.Plan) ([]byte, error) {
	return audit.Canonical(p)
}

// goamd64 is the amd64 microarchitecture level the running binary was built for, from its
// build information (the GOAMD64 setting at build time; never the environment at run
// time, which does not change the code that runs).
func goamd64() string {
	return buildSetting("GOAMD64")
}

// checkLock compares the plan with the lock named in opt, if any. It returns what the
// audit log records about the lock, the deviations, and the lock file's bytes.
func checkLock(p *spec.Plan, canon []byte, opt RunOptions) (folder.LockState, []Deviation, []byte, error) {
	var none folder.LockState
	if opt.LockPath == "" {
		if len(opt.Deviations) > 0 {
			return none, nil, nil, &InputError{Err: errors.New("--deviation needs --lock: a deviation is a difference from a locked plan")}
		}
		return folder.LockState{Status: folder.LockNone}, nil, nil, nil
	}
	lockBytes, err := infile.ReadFile(opt.LockPath, MaxLockBytes)
	if err != nil {
		return none, nil, nil, &InputError{Err: fmt.Errorf("--lock %s: cannot open the lock file: %w", opt.LockPath, err)}
	}
	l, err := audit.ParseLock(lockBytes)
	if err != nil {
		return none, nil, nil, &InputError{Err: fmt.Errorf("--lock %s: %w", opt.LockPath, err)}
	}
	info := folder.LockState{Path: opt.LockPath, LockSHA256: audit.Digest(lockBytes), LockedAt: l.LockedAt,
		LockedPlanSHA256: l.PlanSHA256}
	if l.PlanSHA256 == audit.Digest(canon) {
		if len(opt.Deviations) > 0 {
			return none, nil, nil, &InputError{Err: errors.New("--deviation given, but the plan matches its lock")}
		}
		info.Status = folder.LockMatches
		return info, nil, lockBytes, nil
	}
	changed, err := audit.Diff(l.Plan, canon)
	if err != nil {
		return none, nil, nil, err
	}
	if len(opt.Deviations) == 0 {
		return none, nil, nil, &InputError{Err: fmt.Errorf("the plan differs from its lock %s (locked %s) at: %s; "+
			"to run it anyway, state each reason with --deviation \"...\" and say whether the data had been seen with --data-seen=true|false",
			opt.LockPath, l.LockedAt, joinMax(changed, 10))}
	}
	if opt.DataSeen == nil {
		return none, nil, nil, &InputError{Err: errors.New("a deviation must say whether the data had been seen: add --data-seen=true or --data-seen=false")}
	}
	var devs []Deviation
	for _, r := range opt.Deviations {
		devs = append(devs, Deviation{Changed: changed, Reason: r, DataSeen: *opt.DataSeen})
	}
	info.Status = folder.LockDeviates
	return info, devs, lockBytes, nil
}

func joinMax(s []string, n int) string {
	out := ""
	for i, x := range s {
		if i == n {
			return out + ", … (" + strconv.Itoa(len(s)) + " in all)"
		}
		if i > 0 {
			out += ", "
		}
		out += x
	}
	return out
}

// provenance writes an in-toto Statement v1 (https://in-toto.io/Statement/v1, an open
// standard) for supply-chain tooling: the outputs are its subjects, and the plan, the data
// and the executable are the resolved dependencies of a SLSA Provenance v1 predicate. It
// holds no times, so that it is the same for the same inputs.
func provenance(outputs []namedBytes, planPath string, plan []byte, dataPath, dataDigest, exeDigest string, tool ToolInfo) ([]byte, error) {
	hexOf := func(d string) string { return strings.TrimPrefix(d, "sha256:") }
	var subjects []map[string]any
	for _, o := range outputs {
		subjects = append(subjects, map[string]any{"name": o.name, "digest": map[string]string{"sha256": hexOf(audit.Digest(o.b))}})
	}
	deps := []map[string]any{
		{"name": "plan", "uri": "file://" + filepath.ToSlash(planPath), "digest": map[string]string{"sha256": hexOf(audit.Digest(plan))}},
		{"name": "data", "uri": "file://" + filepath.ToSlash(dataPath), "digest": map[string]string{"sha256": hexOf(dataDigest)}},
	}
	if exeDigest != "" {
		deps = append(deps, map[string]any{"name": "rankplan " + tool.Version, "digest": map[string]string{"sha256": hexOf(exeDigest)}})
	}
	st := map[string]any{
		"_type":         "https://in-toto.io/Statement/v1",
		"subject":       subjects,
		"predicateType": "https://slsa.dev/provenance/v1",
		"predicate": map[string]any{
			"buildDefinition": map[string]any{
				"buildType":            "https://rankplan.invalid/run/v1",
				"externalParameters":   map[string]any{"plan": filepath.Base(planPath)},
				"resolvedDependencies": deps,
			},
			"runDetails": map[string]any{
				"builder": map[string]any{"id": "https://rankplan.invalid/rankplan@" + tool.Version},
			},
		},
	}
	return audit.Indented(st)
}

type namedBytes struct {
	name string
	b    []byte
}

// reportMeta collects what the renderings show beyond the results: fingerprints, lock
// status, tool and stream identity, and the audit head so far. It takes them from the
// records of the bound inputs alone, so that verify can render the same from a log.
func reportMeta(plan folder.PlanBound, data folder.DataBound, tool folder.Tool, seed, head string, seq int64) report.Meta {
	m := report.Meta{
		PlanFile: plan.Path, PlanSHA256: plan.RawSHA256, PlanCanonicalSHA256: plan.CanonicalSHA256,
		DataFile: data.Path, DataSHA256: data.SHA256,
		Tool: fmt.Sprintf("rankplan %s (revision %s, %s, %s/%s)", tool.Version, orUnknown(tool.Revision), tool.Go, tool.GOOS, tool.GOARCH),
		Seed: seed, RNG: "ChaCha8Rand (C2SP chacha8rand), scheme " + stream.Label,
		AuditHead: head, AuditSeq: seq,
	}
	m.Lock = LockText(plan.Lock)
	for _, d := range plan.Deviations {
		seen := "before the data were seen"
		if d.DataSeen {
			seen = "after the data were seen"
		}
		m.Deviations = append(m.Deviations, fmt.Sprintf("%s (changed: %s; %s)", d.Reason, strings.Join(d.Changed, ", "), seen))
	}
	return m
}

func orUnknown(s string) string {
	if s == "" {
		return "unknown"
	}
	return s
}

// renderings writes report.html, summary.md and pairs.csv from the results.
func renderings(ctx context.Context, res *results.Results, meta report.Meta, sorted [][][]float64, dir string) ([]namedBytes, error) {
	h, err := renderReport(res, meta, sorted)
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("write %s: %w", SummaryFile, err)
	}
	texts, err := renderTexts(res, meta, dir)
	if err != nil {
		return nil, err
	}
	return append([]namedBytes{{ReportFile, h}}, texts...), nil
}

// renderReport writes report.html; sorted holds each analysis's groups sorted ascending,
// for the plots.
func renderReport(res *results.Results, meta report.Meta, sorted [][][]float64) ([]byte, error) {
	values := make([]report.AnalysisValues, len(sorted))
	for i, groups := range sorted {
		values[i].ID = res.Analyses[i].ID
		for j, g := range groups {
			rg := res.Analyses[i].Groups[j]
			values[i].Groups = append(values[i].Groups, report.ThinBox(g, report.MaxPointsPerGroup, rg.Q1, rg.Q3))
		}
	}
	var h bytes.Buffer
	if err := report.HTML(&h, res, meta, values); err != nil {
		return nil, fmt.Errorf("write %s: %w", ReportFile, err)
	}
	return h.Bytes(), nil
}

// renderTexts writes summary.md and pairs.csv, which need no more than the results.
func renderTexts(res *results.Results, meta report.Meta, dir string) ([]namedBytes, error) {
	var md, pc bytes.Buffer
	if err := report.Markdown(&md, res, meta, dir); err != nil {
		return nil, fmt.Errorf("write %s: %w", SummaryFile, err)
	}
	if err := report.PairsCSV(&pc, res); err != nil {
		return nil, fmt.Errorf("write %s: %w", PairsFile, err)
	}
	return []namedBytes{{SummaryFile, md.Bytes()}, {PairsFile, pc.Bytes()}}, nil
}
