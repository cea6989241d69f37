package runner

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"rankplan/internal/audittest"
	"rankplan/runner/audit"
	"rankplan/runner/folder"
)

// rederive makes the derived files of the run folder dir consistent with its (edited and
// re-chained) log, as a forger who knows how rankplan writes them would: it writes
// provenance.intoto.json again from the records and results.json, then summary.md and
// pairs.csv from the log's head before the renderings, and report.html when the recorded
// data can be run for its plots, updating each file's output.written record and
// re-chaining the log and its head file. Plain verify then finds nothing wrong in the
// folder itself.
func rederive(t *testing.T, dir string) {
	t.Helper()
	logPath, headPath := filepath.Join(dir, AuditFile), filepath.Join(dir, HeadFile)
	read := func() (*folder.Folder, folder.PlanBound, folder.DataBound, folder.RunStarted) {
		f, err := folder.Read(dir)
		if err != nil || len(f.Problems) > 0 {
			t.Fatalf("rederive: %v %v", err, f.Problems)
		}
		var plan folder.PlanBound
		var data folder.DataBound
		var started folder.RunStarted
		f.First(folder.EventPlanBound, &plan)
		f.First(folder.EventDataBound, &data)
		f.First(folder.EventRunStarted, &started)
		return f, plan, data, started
	}
	rewrite := func(name string, b []byte) {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
		if _, err := audittest.Rechain(logPath, headPath, func(recs []audit.Record) []audit.Record {
			for i := range recs {
				if audittest.RecordsOutput(recs[i], name) {
					var o folder.OutputWritten
					if err := folder.Decode(recs[i], &o); err != nil {
						t.Fatal(err)
					}
					o.Bytes, o.SHA256 = len(b), audit.Digest(b)
					recs[i].Data = must(json.Marshal(o))
				}
			}
			return recs
		}); err != nil {
			t.Fatal(err)
		}
	}
	_, plan, data, started := read()
	resBytes := must(os.ReadFile(filepath.Join(dir, ResultsFile)))
	planCopy := must(os.ReadFile(filepath.Join(dir, PlanCopyFile)))
	prov := must(provenance([]namedBytes{{ResultsFile, resBytes}, {PlanCopyFile, planCopy}}, plan.AbsolutePath, planCopy,
		data.AbsolutePath, data.SHA256, started.Tool.ExecutableSHA256, ToolInfo{Version: started.Tool.Version}))
	rewrite(ProvenanceFile, prov)
	f, plan, data, started := read()
	var seq int64
	for _, o := range f.Outputs() {
		if o.File == ReportFile {
			seq = o.Seq - 1
		}
	}
	res := must(decodeResults(resBytes))
	meta := reportMeta(plan, data, started.Tool, res.Plan.Seed, recordHead(f, seq), seq)
	for _, o := range must(renderTexts(res, meta, started.Out)) {
		rewrite(o.name, o.b)
	}
	// report.html plots the data's values: made again when the recorded data can be run.
	if ex, err := rerun(context.Background(), filepath.Join(dir, PlanCopyFile), data.AbsolutePath, 0); err == nil {
		rewrite(ReportFile, must(renderReport(res, meta, ex.sorted)))
	}
}
