package runner

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"rankplan/runner/audit"
	"rankplan/runner/folder"
	"rankplan/runner/results"
)

// Every file of a run folder besides the log is either recorded input (plan.yaml,
// lock.json), the results, or derived from them and the log (provenance.intoto.json and
// the renderings). A forger who rewrites a file together with its output.written record
// and the chain passes the hash checks; these checks tie each file to the rest, so that
// such a rewrite shows unless it is made consistently everywhere, which the rerun then
// catches for results.json. They run after the hash checks of the folder.

// requiredOutputs are the files a finished run folder records, in the order Run writes
// them (folder.Run.Writes); lock.json is required when the plan was locked, and only then.
func requiredOutputs(locked bool) []string {
	var out []string
	for _, name := range folder.Run.Writes {
		if name != LockCopyFile || locked {
			out = append(out, name)
		}
	}
	return out
}

// crossCheck ties the files of a finished run folder to its log: the required outputs in
// their order; plan.yaml and lock.json to the hashes plan.bound recorded; results.json's
// data section to data.bound and its analyses to exclusions.applied and analysis.finished;
// provenance.intoto.json, pairs.csv and summary.md to what this build writes from the
// recorded records and results (when the same build wrote them). It returns the results
// read, or nil when they could not be.
func crossCheck(r *VerifyReport, f *folder.Folder, sameBuild bool) *results.Results {
	dir := f.Dir
	var plan folder.PlanBound
	var data folder.DataBound
	var excl folder.ExclusionsApplied
	var started folder.RunStarted
	if !f.First(folder.EventPlanBound, &plan) || !f.First(folder.EventDataBound, &data) ||
		!f.First(folder.EventExclusions, &excl) || !f.First(folder.EventRunStarted, &started) {
		r.add("contract", Fail, ClassIntegrity, AuditFile, "the log lacks a record of its inputs")
		return nil
	}
	outputs := f.Outputs()
	var names []string
	byName := map[string]folder.Output{}
	for _, o := range outputs {
		names = append(names, o.File)
		byName[o.File] = o
	}
	want := requiredOutputs(plan.Lock.Status != folder.LockNone)
	if !slices.Equal(names, want) {
		r.add("contract", Fail, ClassIntegrity, AuditFile, "the log records the outputs %v, but a run writes %v", names, want)
		return nil
	}
	checkLockState(r, dir, plan)
	problems := 0
	fail := func(file, format string, args ...any) {
		problems++
		r.add("contract", Fail, ClassIntegrity, file, format, args...)
	}
	if got := byName[PlanCopyFile].SHA256; got != plan.RawSHA256 {
		fail(PlanCopyFile, "%s has SHA-256 %s, but plan.bound recorded the plan as %s", PlanCopyFile, got, plan.RawSHA256)
	}
	if o, ok := byName[LockCopyFile]; ok && o.SHA256 != plan.Lock.LockSHA256 {
		fail(LockCopyFile, "%s has SHA-256 %s, but plan.bound recorded the lock as %s", LockCopyFile, o.SHA256, plan.Lock.LockSHA256)
	}
	resBytes, err := os.ReadFile(filepath.Join(dir, ResultsFile))
	if err != nil {
		fail(ResultsFile, "cannot read %s: %v", ResultsFile, unwrapPathError(err))
		return nil
	}
	res, err := decodeResults(resBytes)
	if err != nil {
		fail(ResultsFile, "%s is not of the results format: %v", ResultsFile, err)
		return nil
	}
	if d := res.Data; "sha256:"+d.SHA256 != data.SHA256 || d.Bytes != data.Bytes || d.Rows != data.Rows || d.HighPrecisionCells != data.HighPrecisionCells {
		fail(ResultsFile, "%s describes the data as sha256:%s, %d bytes, %d rows, but data.bound recorded %s, %d bytes, %d rows",
			ResultsFile, d.SHA256, d.Bytes, d.Rows, data.SHA256, data.Bytes, data.Rows)
	}
	var finished []folder.AnalysisFinished
	for _, rec := range f.Chain.Records {
		if rec.Event == folder.EventAnalysisFinished {
			var a folder.AnalysisFinished
			folder.Decode(rec, &a)
			finished = append(finished, a)
		}
	}
	var ids, bound, ran []string
	for _, a := range res.Analyses {
		ids = append(ids, a.ID+" ("+a.Status+")")
	}
	for _, e := range excl.Analyses {
		bound = append(bound, e.Analysis)
	}
	for _, a := range finished {
		ran = append(ran, a.Analysis+" ("+a.Status+")")
	}
	var resIDs []string
	for _, a := range res.Analyses {
		resIDs = append(resIDs, a.ID)
	}
	if !slices.Equal(ids, ran) || !slices.Equal(resIDs, bound) {
		fail(AuditFile, "the analyses of %s %v, of exclusions.applied %v and of the analysis.finished records %v do not agree", ResultsFile, ids, bound, ran)
	}
	if !sameBuild {
		r.add("contract", Warn, "", "", "another build wrote the folder: %s, %s and %s were not rendered again for comparison", ProvenanceFile, SummaryFile, PairsFile)
		return res
	}
	planCopy, err := os.ReadFile(filepath.Join(dir, PlanCopyFile))
	if err != nil {
		fail(PlanCopyFile, "cannot read %s: %v", PlanCopyFile, unwrapPathError(err))
		return res
	}
	tool := ToolInfo{Version: started.Tool.Version}
	prov, err := provenance([]namedBytes{{ResultsFile, resBytes}, {PlanCopyFile, planCopy}}, plan.AbsolutePath, planCopy,
		data.AbsolutePath, data.SHA256, started.Tool.ExecutableSHA256, tool)
	if err == nil {
		compareFile(r, fail, dir, ProvenanceFile, prov, "the provenance this build writes from the recorded inputs and results.json")
	}
	seq := byName[ReportFile].Seq - 1
	meta := reportMeta(plan, data, started.Tool, res.Plan.Seed, recordHead(f, seq), seq)
	texts, err := renderTexts(res, meta, started.Out)
	if err != nil {
		fail(ResultsFile, "%s cannot be rendered: %v", ResultsFile, err)
		return res
	}
	for _, o := range texts {
		compareFile(r, fail, dir, o.name, o.b, "the rendering of results.json and the log by this build")
	}
	if problems == 0 {
		r.add("contract", Pass, "", "", "plan.yaml%s and the data section of results.json match the bound inputs; the analyses agree; %s, %s and %s are what results.json and the log give",
			map[bool]string{true: ", lock.json", false: ""}[plan.Lock.Status != folder.LockNone], ProvenanceFile, SummaryFile, PairsFile)
	}
	return res
}

// checkReport compares report.html with the rendering of results.json, the log and the
// rerun's values by this build, after a rerun on the recorded data reproduced the results.
func checkReport(r *VerifyReport, f *folder.Folder, res *results.Results, ex *execution) {
	var plan folder.PlanBound
	var data folder.DataBound
	var started folder.RunStarted
	f.First(folder.EventPlanBound, &plan)
	f.First(folder.EventDataBound, &data)
	f.First(folder.EventRunStarted, &started)
	var seq int64
	for _, o := range f.Outputs() {
		if o.File == ReportFile {
			seq = o.Seq - 1
		}
	}
	meta := reportMeta(plan, data, started.Tool, res.Plan.Seed, recordHead(f, seq), seq)
	meta.ValueScale = ex.valueScale
	h, err := renderReport(res, meta, ex.sorted)
	if err != nil {
		r.add("report", Fail, ClassDiffer, ReportFile, "%s cannot be rendered again: %v", ReportFile, err)
		return
	}
	ok := true
	fail := func(file, format string, args ...any) {
		ok = false
		r.add("report", Fail, ClassIntegrity, file, format, args...)
	}
	compareFile(r, fail, f.Dir, ReportFile, h, "the rendering of the reproduced results by this build")
	if ok {
		r.add("report", Pass, "", ReportFile, "%s is the rendering of the reproduced results", ReportFile)
	}
}

// compareFile fails when the file name in dir is not want.
func compareFile(r *VerifyReport, fail func(file, format string, args ...any), dir, name string, want []byte, what string) {
	got, err := os.ReadFile(filepath.Join(dir, name))
	switch {
	case err != nil:
		fail(name, "cannot read %s: %v", name, unwrapPathError(err))
	case !bytes.Equal(got, want):
		fail(name, "%s is not %s (SHA-256 %s, expected %s)", name, what, audit.Digest(got), audit.Digest(want))
	}
}

// recordHead is the head of the log at record seq: the SHA-256 of its canonical bytes.
func recordHead(f *folder.Folder, seq int64) string {
	if seq < 1 || seq > int64(len(f.Chain.Records)) {
		return ""
	}
	line, err := audit.Canonical(f.Chain.Records[seq-1])
	if err != nil {
		return ""
	}
	return audit.Digest(line)
}

// decodeResults reads results.json bytes, refusing members the results format lacks.
func decodeResults(b []byte) (*results.Results, error) {
	var res results.Results
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&res); err != nil {
		return nil, err
	}
	return &res, nil
}

// checkLockState states whether the plan was locked, as plan.bound records it, and checks
// that lock.json agrees: for "matches" the lock's plan digest is the canonical digest of
// the plan that ran; for "deviates" it is the digest plan.bound recorded for the locked
// plan, differs from the plan that ran, and the log records the reasons for the
// deviation. A lock state that is not one of the three, or a lock that disagrees, is an
// integrity failure; a deviation is a warning.
func checkLockState(r *VerifyReport, dir string, plan folder.PlanBound) {
	lock := plan.Lock
	if lock.Status == folder.LockNone {
		r.add("lock", Pass, "", "", "%s", LockText(lock))
		return
	}
	if lock.Status != folder.LockMatches && lock.Status != folder.LockDeviates {
		r.add("lock", Fail, ClassIntegrity, AuditFile, "plan.bound records the lock state %q; expected none, matches or deviates", lock.Status)
		return
	}
	b, err := os.ReadFile(filepath.Join(dir, LockCopyFile))
	if err != nil {
		r.add("lock", Fail, ClassIntegrity, LockCopyFile, "cannot read %s: %v", LockCopyFile, unwrapPathError(err))
		return
	}
	l, err := audit.ParseLock(b)
	if err != nil {
		r.add("lock", Fail, ClassIntegrity, LockCopyFile, "%s is not a plan lock: %v", LockCopyFile, err)
		return
	}
	switch {
	case l.PlanSHA256 != lock.LockedPlanSHA256:
		r.add("lock", Fail, ClassIntegrity, LockCopyFile, "%s locks the plan %s, but plan.bound records the locked plan as %s", LockCopyFile, l.PlanSHA256, lock.LockedPlanSHA256)
	case lock.Status == folder.LockMatches && l.PlanSHA256 != plan.CanonicalSHA256:
		r.add("lock", Fail, ClassIntegrity, LockCopyFile, "plan.bound says the plan matches its lock, but %s locks the plan %s and the plan that ran is %s", LockCopyFile, l.PlanSHA256, plan.CanonicalSHA256)
	case lock.Status == folder.LockMatches:
		r.add("lock", Pass, "", LockCopyFile, "%s; %s locks the plan that ran (%s)", LockText(lock), LockCopyFile, plan.CanonicalSHA256)
	case l.PlanSHA256 == plan.CanonicalSHA256:
		r.add("lock", Fail, ClassIntegrity, LockCopyFile, "plan.bound records deviations, but %s locks the plan that ran (%s)", LockCopyFile, plan.CanonicalSHA256)
	case len(plan.Deviations) == 0:
		r.add("lock", Fail, ClassIntegrity, AuditFile, "the plan differs from its lock, but plan.bound records no reason for the deviation")
	default:
		reasons := make([]string, len(plan.Deviations))
		for i, d := range plan.Deviations {
			reasons[i] = fmt.Sprintf("%q (data seen: %v)", d.Reason, d.DataSeen)
		}
		r.add("lock", Warn, "", LockCopyFile, "%s; changed: %s; reasons recorded: %s", LockText(lock),
			strings.Join(plan.Deviations[0].Changed, ", "), strings.Join(reasons, "; "))
	}
}
