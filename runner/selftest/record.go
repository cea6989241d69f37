package selftest

import (
	"bytes"
	"context"
	"fmt"
	"strconv"
	"time"

	"rankplan/runner"
	"rankplan/runner/audit"
	"rankplan/runner/folder"
	"rankplan/schemas"
)

// ReportFile is the rendering of validation.json for people in a selftest folder.
const ReportFile = "report.html"

// writeFolder writes the selftest folder opt.Out with the guarantees of a run folder
// ([folder.Writer]): validation.json, report.html, the hash-chained audit log and
// its head. Records: selftest.started (the build), cases.bound (the case file),
// cases.evaluated (the verdicts), output.written for each file, selftest.finished.
func writeFolder(ctx context.Context, rep *Report, opt Options, now func() time.Time) error {
	f, err := folder.Create(opt.Out, folder.Selftest, rep.Actor, now)
	if err != nil {
		return err
	}
	fail := func(err error) error {
		f.Abandon(folder.Failure{Error: err.Error()})
		return err
	}
	res := rep.Results
	var datasets []string
	for _, d := range res.Datasets {
		datasets = append(datasets, d.Name)
	}
	failed := []string{}
	for _, o := range res.Cases {
		if o.Verdict != runner.Pass {
			failed = append(failed, o.ID)
		}
	}
	for _, r := range []folder.Record{
		folder.SelftestStarted{
			Tool: rep.Tool.Record(rep.Executable, rep.ExeBytes), Command: opt.Args,
			Note: "installation and operational qualification: this build computes the built-in reference cases and compares each with its published or library value",
		},
		folder.CasesBound{
			File: CasesFile + " (embedded in the executable)", SHA256: res.CaseFile,
			Cases: res.Summary.Cases - res.Summary.Added, AddedCases: res.Summary.Added, Datasets: datasets,
		},
		folder.CasesEvaluated{Cases: res.Summary.Cases, Passed: res.Summary.Passed, Failed: res.Summary.Failed, FailedCases: failed},
	} {
		if err := f.Record(r); err != nil {
			return fail(err)
		}
	}
	b, err := EncodeRecord(rep)
	if err != nil {
		return fail(err)
	}
	if err := f.WriteFile(folder.ValidationFile, b, folder.OutputWritten{
		ResultsDigest: rep.Digest, ResultsDigestRule: folder.ResultsDigestRuleCases,
	}); err != nil {
		return fail(err)
	}
	head, seq := f.Head()
	var h bytes.Buffer
	if err := HTML(&h, rep, head, seq); err != nil {
		return fail(err)
	}
	if err := f.WriteFile(ReportFile, h.Bytes(), folder.OutputWritten{
		Note: "a rendering of validation.json for people; it shows the audit head at record " + strconv.FormatInt(seq, 10),
	}); err != nil {
		return fail(err)
	}
	rep.Head, rep.Seq, err = f.Finish(ctx, folder.SelftestFinished{
		Status: string(res.Summary.Outcome), Cases: res.Summary.Cases, Passed: res.Summary.Passed, Failed: res.Summary.Failed,
	}, nil)
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
	b, err := audit.Indented(rec)
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
