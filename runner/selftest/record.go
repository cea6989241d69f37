package selftest

import (
	"bytes"
	"fmt"
	"strconv"
	"time"

	"rankplan/runner"
	"rankplan/schemas"
)

// ReportFile is the rendering of validation.json for people in a selftest folder.
const ReportFile = "report.html"

// writeFolder writes the selftest folder opt.Out with the guarantees of a run folder
// ([runner.OutputFolder]): validation.json, report.html, the hash-chained audit log and
// its head. Records: selftest.started (the build), cases.bound (the case file),
// cases.evaluated (the verdicts), output.written for each file, selftest.finished.
func writeFolder(rep *Report, opt Options, now func() time.Time) error {
	f, err := runner.CreateOutputFolder(opt.Out, rep.Actor, now)
	if err != nil {
		return err
	}
	fail := func(err error) error {
		f.Abandon(runner.SelftestFailed, err)
		return err
	}
	res := rep.Results
	if err := f.Append(runner.SelftestStarted, map[string]any{
		"tool":    rep.Tool.Record(rep.Executable, rep.ExeBytes),
		"command": opt.Args,
		"note":    "installation and operational qualification: this build computes the built-in reference cases and compares each with its published or library value",
	}); err != nil {
		return fail(err)
	}
	var datasets []string
	for _, d := range res.Datasets {
		datasets = append(datasets, d.Name)
	}
	if err := f.Append("cases.bound", map[string]any{
		"file": CasesFile + " (embedded in the executable)", "sha256": res.CaseFile,
		"cases": res.Summary.Cases - res.Summary.Added, "added_cases": res.Summary.Added, "datasets": datasets,
	}); err != nil {
		return fail(err)
	}
	var failed []string
	for _, o := range res.Cases {
		if o.Verdict != Pass {
			failed = append(failed, o.ID)
		}
	}
	if err := f.Append("cases.evaluated", map[string]any{
		"cases": res.Summary.Cases, "passed": res.Summary.Passed, "failed": res.Summary.Failed, "failed_cases": failed,
	}); err != nil {
		return fail(err)
	}
	b, err := EncodeRecord(rep)
	if err != nil {
		return fail(err)
	}
	if err := f.WriteFile(runner.ValidationFile, b, map[string]any{
		"results_digest":      rep.Digest,
		"results_digest_rule": "SHA-256 of the RFC 8785 canonical form of the results member of validation.json (which holds no times, hosts or paths)",
	}); err != nil {
		return fail(err)
	}
	head, seq := f.Head()
	var h bytes.Buffer
	if err := HTML(&h, rep, head, seq); err != nil {
		return fail(err)
	}
	if err := f.WriteFile(ReportFile, h.Bytes(), map[string]any{
		"note": "a rendering of validation.json for people; it shows the audit head at record " + strconv.FormatInt(seq, 10),
	}); err != nil {
		return fail(err)
	}
	rep.Head, rep.Seq, err = f.Finish(runner.SelftestFinished, map[string]any{
		"status": res.Summary.Outcome, "cases": res.Summary.Cases, "passed": res.Summary.Passed, "failed": res.Summary.Failed,
	})
	if err != nil {
		return fail(err) // a closing record already written stays the last: the log is closed
	}
	rep.Dir = opt.Out
	return nil
}

// EncodeRecord returns the bytes of validation.json for rep: indented JSON ending in a
// newline, checked against the embedded validation schema first.
func EncodeRecord(rep *Report) ([]byte, error) {
	t := rep.Tool
	rec := Record{Format: Format, Results: rep.Results, Tool: ToolInfo{
		Name: "rankplan", Version: t.Version, Revision: t.Revision, Modified: t.Modified,
		Go: t.GoVersion, Platform: t.GOOS + "/" + t.GOARCH, Executable: rep.Executable,
	}}
	b, err := runner.EncodeJSON(rec)
	if err != nil {
		return nil, fmt.Errorf("encode validation record: %w", err)
	}
	if err := ValidateRecord(b); err != nil {
		return nil, err
	}
	return b, nil
}

// ValidateRecord checks validation.json bytes against the embedded validation schema.
func ValidateRecord(b []byte) error {
	schema, _, err := schemas.Validation()
	if err != nil {
		return err
	}
	return schemas.Check(schema, schemas.ValidationID, "the validation record's contents", b)
}
