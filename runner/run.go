package runner

import (
	"bytes"
	"context"
	"crypto/rand"
	"encoding/hex"
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
	"rankplan/runner/report"
	"rankplan/runner/results"
	"rankplan/spec"
	"rankplan/stats"
	"rankplan/stats/stream"
)

// The files of a run folder.
const (
	ResultsFile    = "results.json"
	AuditFile      = "audit.jsonl"
	HeadFile       = "audit.head"
	PlanCopyFile   = "plan.yaml"
	LockCopyFile   = "lock.json"
	SignatureFile  = "signature.json"
	ProvenanceFile = "provenance.intoto.json"
	ReportFile     = "report.html"
	SummaryFile    = "summary.md"
	PairsFile      = "pairs.csv"
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
}

// Deviation is one difference between the locked plan and the plan that ran.
type Deviation struct {
	Changed  []string `json:"changed"` // key paths that differ from the locked plan
	Reason   string   `json:"reason"`
	DataSeen bool     `json:"data_seen"`
}

// Run validates the plan and its data, runs every analysis and writes the run folder:
// results.json, a copy of the plan, the hash-chained audit log, its head, and optionally a
// lock copy and a signature. Everything is written into a fresh sibling folder named
// DIR.incomplete-XXXX, each file synced, and that folder is renamed to DIR only after the
// last record; the rename refuses an existing DIR. A run that fails or is killed leaves no
// DIR, only the .incomplete folder, whose log `verify` reports as incomplete.
//
// When ctx ends (the command line cancels it on SIGINT and SIGTERM, with an
// [*Interrupted] cause), every step stops within about a second: before the folder is
// created Run returns ctx's error (wrapped) and leaves nothing; after, it records
// run.failed with the error and the signal's name, and returns an [*UnfinishedError]
// naming the folder it leaves. Any error between the folder's creation and the
// run.finished record is such an *UnfinishedError. A run whose --out was created by
// another process meanwhile fails the same way, before its closing record (see
// reserveOut).
func Run(ctx context.Context, planPath string, opt RunOptions) (*RunRecord, error) {
	now := opt.Now
	if now == nil {
		now = time.Now
	}
	getenv := opt.Getenv
	if getenv == nil {
		getenv = os.Getenv
	}
	if err := CheckNewFile(opt.Out); err != nil {
		return nil, err
	}
	if parent := filepath.Dir(opt.Out); !isDir(parent) {
		return nil, &InputError{Err: fmt.Errorf("--out %s: the folder %s does not exist; create it first, or name a folder inside an existing one", opt.Out, parent)}
	}
	raw, err := spec.ReadFile(planPath)
	if err != nil {
		return nil, &InputError{Err: err}
	}
	p, err := spec.Parse(planPath, raw)
	if err != nil {
		return nil, &InputError{Err: err}
	}
	p.Dir = filepath.Dir(planPath)
	canon, err := PlanCanonical(p)
	if err != nil {
		return nil, err
	}
	lockInfo, devs, lockBytes, err := checkLock(p, canon, opt)
	if err != nil {
		return nil, err
	}
	prep, err := Prepare(ctx, p)
	if err != nil {
		return nil, err
	}
	if err := prep.CheckWork(ctx); err != nil {
		return nil, err
	}
	var signKey []byte
	if opt.SignKey != "" {
		if _, err := infile.ReadFile(opt.SignKey, MaxKeyBytes); err != nil {
			return nil, &InputError{Err: fmt.Errorf("--sign %s: cannot open the key file: %w", opt.SignKey, err)}
		}
		k, err := audit.LoadPrivateKey(opt.SignKey)
		if err != nil {
			return nil, &InputError{Err: fmt.Errorf("--sign: %w", err)}
		}
		signKey = k
	}

	tmp, err := makeTemp(opt.Out)
	if err != nil {
		return nil, err
	}
	actor := audit.CurrentActor(getenv, opt.Signer, opt.Reason)
	log, err := audit.Create(filepath.Join(tmp, AuditFile), actor, now)
	if err != nil {
		return nil, fmt.Errorf("create audit log: %w", err)
	}
	defer log.Close()
	fail := func(err error) (*RunRecord, error) {
		d := map[string]any{"error": err.Error()}
		if in := InterruptedBy(ctx); in != nil {
			d["signal"] = in.Name()
		}
		log.Append("run.failed", d)
		return nil, &UnfinishedError{Dir: tmp, Err: err}
	}
	// stopped is ctx's error, checked between the steps of writing the folder.
	stopped := func() error {
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("write the run folder: %w", err)
		}
		return nil
	}

	tool := Tool()
	exe, exeSize := Executable()
	if _, err := log.Append("run.started", map[string]any{
		"tool":    tool.Record(exe, exeSize),
		"command": opt.Args,
		"workers": opt.Workers, "cpus": runtime.NumCPU(),
		"note": "the plan and its data were validated before this record was written",
	}); err != nil {
		return fail(fmt.Errorf("write audit log: %w", err))
	}
	absPlan, _ := filepath.Abs(planPath)
	if _, err := log.Append("plan.bound", map[string]any{
		"path": planPath, "absolute_path": absPlan, "bytes": len(raw),
		"raw_sha256": audit.Digest(raw), "canonical_sha256": audit.Digest(canon),
		"plan_id": p.ID, "plan_format": spec.FormatVersion, "schema": "https://rankplan.invalid/schema/plan-v1.json",
		"lock": lockInfo, "deviations": devs,
	}); err != nil {
		return fail(err)
	}
	absData, _ := filepath.Abs(prep.DataPath)
	if _, err := log.Append("data.bound", map[string]any{
		"path": prep.DataPath, "absolute_path": absData, "bytes": prep.Data.Bytes,
		"sha256": "sha256:" + prep.Data.SHA256, "rows": prep.Data.Rows,
		"high_precision_cells": prep.Data.HighPrecisionCells,
	}); err != nil {
		return fail(err)
	}
	var excl []map[string]any
	for _, in := range prep.Analyses {
		counts := map[string]int{}
		for j, g := range in.Groups {
			counts[g] = in.Counts[j]
		}
		excl = append(excl, map[string]any{
			"analysis": in.Analysis.ID, "outcome": in.Analysis.Outcome, "n": len(in.Values),
			"rows_per_group": counts, "excluded": in.Excluded,
			"rule": "missing policy " + string(p.Data.Missing.Policy) + "; each row counted once, first reason of: missing-group, group-not-included, outside-subset, missing-outcome",
		})
	}
	if _, err := log.Append("exclusions.applied", map[string]any{"analyses": excl}); err != nil {
		return fail(err)
	}

	res, err := Execute(ctx, prep, Options{Workers: opt.Workers})
	if err != nil {
		return fail(err)
	}
	for _, a := range res.Analyses {
		d := map[string]any{"analysis": a.ID, "status": a.Status}
		if a.PValue != nil {
			d["p_value_requested"], d["p_value_method"], d["reason"] = a.PValue.Requested, a.PValue.Method, a.PValue.Reason
		}
		d["random_stream"] = map[string]any{
			"generator": stream.Generator, "scheme": stream.Label, "key_layout": stream.KeyLayout,
			"seed": p.Seed.String(),
			"uses": []map[string]any{
				{"purpose": stats.PermutationPurpose, "block_size": stats.PermutationBlockSize},
				{"purpose": stats.BootstrapPurpose, "block_size": stats.BootstrapBlockSize},
			},
		}
		if _, err := log.Append("analysis.finished", d); err != nil {
			return fail(err)
		}
	}

	if err := stopped(); err != nil {
		return fail(err)
	}
	resBytes, err := EncodeResults(res)
	if err != nil {
		return fail(err)
	}
	digest, err := ResultsDigest(res)
	if err != nil {
		return fail(err)
	}
	outputs := []struct {
		name string
		b    []byte
	}{{ResultsFile, resBytes}, {PlanCopyFile, raw}}
	if lockBytes != nil {
		outputs = append(outputs, struct {
			name string
			b    []byte
		}{LockCopyFile, lockBytes})
	}
	prov, err := provenance(outputs[:2], absPlan, raw, absData, "sha256:"+prep.Data.SHA256, exe, tool)
	if err != nil {
		return fail(err)
	}
	outputs = append(outputs, struct {
		name string
		b    []byte
	}{ProvenanceFile, prov})
	for _, o := range outputs {
		if err := stopped(); err != nil {
			return fail(err)
		}
		if err := writeFileAtomic(filepath.Join(tmp, o.name), o.b); err != nil {
			return fail(err)
		}
		d := map[string]any{"file": o.name, "bytes": len(o.b), "sha256": audit.Digest(o.b)}
		if o.name == ResultsFile {
			d["results_digest"] = digest
			d["results_digest_rule"] = "SHA-256 of the RFC 8785 canonical form of results.json (which holds no times, hosts or paths)"
		}
		if _, err := log.Append("output.written", d); err != nil {
			return fail(err)
		}
	}
	// The renderings for people come last, so that they can show the audit chain's head as
	// it stands after every computed output was recorded.
	meta := reportMeta(p, planPath, raw, canon, prep, lockInfo, devs, tool, log.Head(), log.Seq())
	renders, err := renderings(ctx, res, meta, prep, opt.Out)
	if err != nil {
		return fail(err)
	}
	for _, o := range renders {
		if err := stopped(); err != nil {
			return fail(err)
		}
		if err := writeFileAtomic(filepath.Join(tmp, o.name), o.b); err != nil {
			return fail(err)
		}
		d := map[string]any{"file": o.name, "bytes": len(o.b), "sha256": audit.Digest(o.b),
			"note": "a rendering of results.json for people; it shows the audit head at record " + strconv.FormatInt(meta.AuditSeq, 10)}
		if _, err := log.Append("output.written", d); err != nil {
			return fail(err)
		}
	}
	if err := stopped(); err != nil {
		return fail(err)
	}
	// From here on the run is finished: under the lock of --out's folder, DIR must still
	// be free before the closing record is written (see reserveOut).
	release, err := reserveOut(ctx, opt.Out)
	if err != nil {
		return fail(err)
	}
	defer release()
	if _, err := log.Append("run.finished", map[string]any{"status": "ok", "exit_code": 0, "analyses": len(res.Analyses)}); err != nil {
		return fail(err)
	}
	head, seq := log.Head(), log.Seq()
	if err := log.Close(); err != nil {
		return nil, fmt.Errorf("close audit log: %w", err)
	}
	if err := writeFileAtomic(filepath.Join(tmp, HeadFile), []byte(head+"\n")); err != nil {
		return nil, err
	}
	rec := &RunRecord{Dir: opt.Out, Prepared: prep, Results: res, Head: head, Seq: seq, Deviations: devs}
	if signKey != nil {
		meaning := opt.Meaning
		if meaning == "" {
			meaning = "authorship"
		}
		sig, err := audit.Sign(signKey, head, seq, opt.Signer, meaning, now())
		if err != nil {
			return nil, fmt.Errorf("sign: %w", err)
		}
		b, err := EncodeJSON(sig)
		if err != nil {
			return nil, err
		}
		if err := writeFileAtomic(filepath.Join(tmp, SignatureFile), b); err != nil {
			return nil, err
		}
		rec.Signature = &sig
	}
	if err := renameNoReplace(tmp, opt.Out); err != nil {
		return nil, fmt.Errorf("move the finished run into place (it stays in %s): %w", tmp, err)
	}
	syncDir(filepath.Dir(opt.Out))
	return rec, nil
}

// isDir reports whether path names a directory (after following symbolic links).
func isDir(path string) bool {
	fi, err := os.Stat(path)
	return err == nil && fi.IsDir()
}

// makeTemp creates the run's working folder beside out.
func makeTemp(out string) (string, error) {
	var b [4]byte
	rand.Read(b[:])
	tmp := filepath.Clean(out) + ".incomplete-" + hex.EncodeToString(b[:])
	if err := os.Mkdir(tmp, 0o755); err != nil {
		return "", fmt.Errorf("create run folder: %w", err)
	}
	return tmp, nil
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

// goamd64 is the amd64 microarchitecture level the binary was compiled for, from its
// build information ("" on other architectures): GOAMD64 in the environment of a run
// says nothing about the code that runs.
func goamd64() string {
	return buildSetting("GOAMD64")
}

// checkLock compares the plan with the lock named in opt, if any. It returns what the
// audit log records about the lock, the deviations, and the lock file's bytes.
func checkLock(p *spec.Plan, canon []byte, opt RunOptions) (map[string]any, []Deviation, []byte, error) {
	if opt.LockPath == "" {
		if len(opt.Deviations) > 0 {
			return nil, nil, nil, &InputError{Err: errors.New("--deviation needs --lock: a deviation is a difference from a locked plan")}
		}
		return map[string]any{"status": "none"}, nil, nil, nil
	}
	lockBytes, err := infile.ReadFile(opt.LockPath, MaxLockBytes)
	if err != nil {
		return nil, nil, nil, &InputError{Err: fmt.Errorf("--lock %s: cannot open the lock file: %w", opt.LockPath, err)}
	}
	l, err := audit.ReadLock(opt.LockPath)
	if err != nil {
		return nil, nil, nil, &InputError{Err: fmt.Errorf("--lock %s: %w", opt.LockPath, err)}
	}
	info := map[string]any{"path": opt.LockPath, "lock_sha256": audit.Digest(lockBytes), "locked_at": l.LockedAt,
		"locked_plan_sha256": l.PlanSHA256}
	if l.PlanSHA256 == audit.Digest(canon) {
		if len(opt.Deviations) > 0 {
			return nil, nil, nil, &InputError{Err: errors.New("--deviation given, but the plan matches its lock")}
		}
		info["status"] = "matches"
		return info, nil, lockBytes, nil
	}
	changed, err := audit.Diff(l.Plan, canon)
	if err != nil {
		return nil, nil, nil, err
	}
	if len(opt.Deviations) == 0 {
		return nil, nil, nil, &InputError{Err: fmt.Errorf("the plan differs from its lock %s (locked %s) at: %s; "+
			"to run it anyway, state each reason with --deviation \"...\" and say whether the data had been seen with --data-seen=true|false",
			opt.LockPath, l.LockedAt, joinMax(changed, 10))}
	}
	if opt.DataSeen == nil {
		return nil, nil, nil, &InputError{Err: errors.New("a deviation must say whether the data had been seen: add --data-seen=true or --data-seen=false")}
	}
	var devs []Deviation
	for _, r := range opt.Deviations {
		devs = append(devs, Deviation{Changed: changed, Reason: r, DataSeen: *opt.DataSeen})
	}
	info["status"] = "deviates"
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
func provenance(outputs []struct {
	name string
	b    []byte
}, planPath string, plan []byte, dataPath, dataDigest, exeDigest string, tool ToolInfo) ([]byte, error) {
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
	return EncodeJSON(st)
}

type namedBytes struct {
	name string
	b    []byte
}

// reportMeta collects what the renderings show beyond the results: fingerprints, lock
// status, tool and stream identity, and the audit head so far.
func reportMeta(p *spec.Plan, planPath string, raw, canon []byte, prep *Prepared, lockInfo map[string]any,
	devs []Deviation, tool ToolInfo, head string, seq int64) report.Meta {
	m := report.Meta{
		PlanFile: planPath, PlanSHA256: audit.Digest(raw), PlanCanonicalSHA256: audit.Digest(canon),
		DataFile: prep.DataPath, DataSHA256: "sha256:" + prep.Data.SHA256,
		Tool: fmt.Sprintf("rankplan %s (revision %s, %s, %s/%s)", tool.Version, orUnknown(tool.Revision), tool.GoVersion, tool.GOOS, tool.GOARCH),
		Seed: p.Seed.String(), RNG: "ChaCha8Rand (C2SP chacha8rand), scheme " + stream.Label,
		AuditHead: head, AuditSeq: seq,
	}
	switch lockInfo["status"] {
	case "matches":
		m.Lock = fmt.Sprintf("locked: the plan matches its lock %v (locked %v)", lockInfo["lock_sha256"], lockInfo["locked_at"])
	case "deviates":
		m.Lock = fmt.Sprintf("locked, with deviations: the plan differs from its lock %v (locked %v)", lockInfo["lock_sha256"], lockInfo["locked_at"])
	default:
		m.Lock = "no lock: the plan was not locked before this run"
	}
	for _, d := range devs {
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

// maxPlotPoints bounds the points drawn per group in the report's plots: larger groups
// are shown by evenly spaced order statistics, so a report of 10^7 rows stays small.
const maxPlotPoints = 1000

// renderings writes report.html, summary.md and pairs.csv from the results; it stops with
// ctx's error between them when ctx has ended.
func renderings(ctx context.Context, res *results.Results, meta report.Meta, prep *Prepared, dir string) ([]namedBytes, error) {
	values := make([]report.AnalysisValues, len(prep.Analyses))
	for i, in := range prep.Analyses {
		values[i].ID = in.Analysis.ID
		for _, g := range in.Sorted {
			values[i].Groups = append(values[i].Groups, thin(g, maxPlotPoints))
		}
	}
	var h, md, pc bytes.Buffer
	if err := report.HTML(&h, res, meta, values); err != nil {
		return nil, fmt.Errorf("write %s: %w", ReportFile, err)
	}
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("write %s: %w", SummaryFile, err)
	}
	if err := report.Markdown(&md, res, meta, dir); err != nil {
		return nil, fmt.Errorf("write %s: %w", SummaryFile, err)
	}
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("write %s: %w", PairsFile, err)
	}
	if err := report.PairsCSV(&pc, res); err != nil {
		return nil, fmt.Errorf("write %s: %w", PairsFile, err)
	}
	return []namedBytes{{ReportFile, h.Bytes()}, {SummaryFile, md.Bytes()}, {PairsFile, pc.Bytes()}}, nil
}

// thin returns at most m evenly spaced order statistics of the sorted s (all of s when it
// is short enough), always including the minimum and the maximum.
func thin(s []float64, m int) []float64 {
	if len(s) <= m {
		return s
	}
	out := make([]float64, m)
	for j := range out {
		out[j] = s[int(int64(j)*int64(len(s)-1)/int64(m-1))]
	}
	return out
}
