package folder

import (
	"context"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"sort"
	"strings"
	"sync"
	"testing"
	"time"

	"rankplan/runner/audit"
	"rankplan/schemas"
)

// allRecords holds one value of every typed record, with every optional member set, and
// the events they are written under.
var allRecords = []struct {
	event string
	def   string // the schema's $defs entry for the data
	rec   any
}{
	{EventRunStarted, "run_started", RunStarted{Tool: tool(), Command: []string{"run", "plan.yaml"}, Out: "runs/a/run", Workers: 2, CPUs: 2, Note: "n",
		CreatedFolders: []string{"runs", "runs/a"}}},
	{EventPlanBound, "plan_bound", PlanBound{Path: "p.yaml", AbsolutePath: "/p.yaml", Bytes: 10, RawSHA256: digest, CanonicalSHA256: digest,
		PlanID: "x", PlanFormat: 1, Schema: schemas.PlanID,
		Lock:       LockState{Status: LockDeviates, Path: "l.json", LockSHA256: digest, LockedAt: "2026-01-01T00:00:00Z", LockedPlanSHA256: digest},
		Deviations: []Deviation{{Changed: []string{"alpha"}, Reason: "r", DataSeen: true}}}},
	{EventDataBound, "data_bound", DataBound{Path: "d.csv", AbsolutePath: "/d.csv", Bytes: 5, SHA256: digest, Rows: 3, HighPrecisionCells: 0}},
	{EventExclusions, "exclusions_applied", ExclusionsApplied{Analyses: []Exclusions{{Analysis: "a", Outcome: "y", N: 3,
		RowsPerGroup: map[string]int{"A": 1}, Rule: "r"}}}},
	{EventAnalysisFinished, "analysis_finished", AnalysisFinished{Analysis: "a", Status: "ok", PValueRequested: "auto", PValueMethod: "exact", Reason: "r",
		RandomStream: RandomStream{Generator: "g", Scheme: "s", KeyLayout: "k", Seed: "1", Uses: []StreamUse{{Purpose: "p", BlockSize: 256}}}}},
	{EventOutputWritten, "output_written", OutputWritten{File: "results.json", Bytes: 1, SHA256: digest, ResultsDigest: digest, ResultsDigestRule: "r", Note: "n"}},
	{EventRunFinished, "run_finished", RunFinished{Status: "ok", ExitCode: 0, Analyses: 1}},
	{EventRunFailed, "failure", Failure{Error: "e", Signal: "SIGINT"}},
	{EventSelftestStarted, "selftest_started", SelftestStarted{Tool: tool(), Command: []string{"selftest"}, Note: "n"}},
	{EventCasesBound, "cases_bound", CasesBound{File: "f", SHA256: digest, Cases: 2, AddedCases: 0, Datasets: []string{"d"}}},
	{EventCasesEvaluated, "cases_evaluated", CasesEvaluated{Cases: 2, Passed: 2, Failed: 0, FailedCases: []string{}}},
	{EventSelftestFinished, "selftest_finished", SelftestFinished{Status: "pass", Cases: 2, Passed: 2}},
	{EventSelftestFailed, "failure", Failure{Error: "e"}},
}

const digest = "sha256:0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef"

func tool() Tool {
	return Tool{Name: "rankplan", Version: "1", ExecutableSHA256: digest, ExecutableBytes: 9, Go: "go1.26", GOOS: "linux", GOARCH: "amd64", GOAMD64: "v1"}
}

func record(event string, data any) audit.Record {
	b, err := json.Marshal(data)
	if err != nil {
		panic(err)
	}
	return audit.Record{Schema: audit.RecordSchema, Seq: 1, Prev: audit.GenesisPrev, Time: "2026-12-03T10:00:00.000000000Z",
		Event: event, Actor: audit.Actor{User: "u", Host: "h"}, Data: b}
}

// TestRecordsMatchSchema: every typed record, as written, is valid under the audit-record
// schema, and its members are exactly the properties the schema declares for its event:
// the Go types and the published schema are one definition.
func TestRecordsMatchSchema(t *testing.T) {
	_, tree, err := schemas.AuditRecord()
	if err != nil {
		t.Fatal(err)
	}
	defs := tree.(map[string]any)["$defs"].(map[string]any)
	seen := map[string]bool{}
	for _, c := range allRecords {
		seen[c.event] = true
		if r, ok := c.rec.(Record); ok && r.Event() != c.event {
			t.Errorf("%T.Event() = %s, want %s", c.rec, r.Event(), c.event)
		}
		if err := ValidateRecord(record(c.event, c.rec)); err != nil {
			t.Errorf("%s: %v", c.event, err)
		}
		props := defs[c.def].(map[string]any)["properties"].(map[string]any)
		var want []string
		for k := range props {
			want = append(want, k)
		}
		sort.Strings(want)
		if got := jsonNames(reflect.TypeOf(c.rec)); !slices.Equal(got, want) {
			t.Errorf("%s: Go members %v, schema properties %v", c.event, got, want)
		}
	}
	for _, e := range tree.(map[string]any)["properties"].(map[string]any)["event"].(map[string]any)["enum"].([]any) {
		if !seen[e.(string)] {
			t.Errorf("the schema knows event %s, which has no typed record", e)
		}
	}
}

func jsonNames(t reflect.Type) []string {
	var out []string
	for i := range t.NumField() {
		name, _, _ := strings.Cut(t.Field(i).Tag.Get("json"), ",")
		out = append(out, name)
	}
	sort.Strings(out)
	return out
}

// TestSchemaRefuses: the schema refuses what no writer writes (each a tampering that a
// consistent re-chaining would otherwise let through as a well-formed log).
func TestSchemaRefuses(t *testing.T) {
	extra := record(EventRunFinished, map[string]any{"status": "ok", "exit_code": 0, "analyses": 1, "verified": true})
	failedExit := record(EventRunFinished, RunFinished{Status: "ok", ExitCode: 1, Analyses: 1})
	unknown := record("run.approved", map[string]any{})
	badFile := record(EventOutputWritten, OutputWritten{File: "../results.json", Bytes: 1, SHA256: digest})
	noRule := record(EventOutputWritten, map[string]any{"file": "results.json", "bytes": 1, "sha256": digest, "results_digest": digest})
	badSignal := record(EventRunFailed, Failure{Error: "e", Signal: "interrupt"})
	badActor := record(EventRunFinished, RunFinished{Status: "ok", Analyses: 1})
	badActor.Actor = audit.Actor{}
	for name, r := range map[string]audit.Record{
		"extra member": extra, "run.finished with exit code 1": failedExit, "unknown event": unknown,
		"output outside the folder": badFile, "results digest without its rule": noRule, "signal name": badSignal,
	} {
		if err := ValidateRecord(r); err == nil {
			t.Errorf("%s: accepted", name)
		} else if !strings.Contains(err.Error(), "does not match "+schemas.AuditRecordID) {
			t.Errorf("%s: %v", name, err)
		}
	}
	// An actor with empty names is well-formed: user and host can be unknown.
	if err := ValidateRecord(badActor); err != nil {
		t.Errorf("empty actor names: %v", err)
	}
}

// TestCheckOrder: the order of a log, as package folder states it.
func TestCheckOrder(t *testing.T) {
	run := []string{EventRunStarted, EventPlanBound, EventDataBound, EventExclusions}
	cat := func(parts ...[]string) []string { return slices.Concat(parts...) }
	tests := []struct {
		name   string
		kind   *Kind
		events []string
		want   string // "" or a part of the message
	}{
		{"finished run", Run, cat(run, []string{EventAnalysisFinished, EventAnalysisFinished, EventOutputWritten, EventOutputWritten, EventRunFinished}), ""},
		{"cut short", Run, run[:2], ""},
		{"failed early", Run, []string{EventRunStarted, EventRunFailed}, ""},
		{"failed after outputs", Run, cat(run, []string{EventAnalysisFinished, EventOutputWritten, EventRunFailed}), ""},
		{"data before plan", Run, []string{EventRunStarted, EventDataBound, EventPlanBound}, "record 2 is data.bound, where plan.bound belongs"},
		{"finished not last", Run, cat(run, []string{EventRunFinished, EventOutputWritten}), "record 5 (run.finished) is not the last record"},
		{"failed not last", Run, cat(run, []string{EventRunFailed, EventRunFinished}), "record 5 (run.failed) is not the last record"},
		{"finished, then the rename failed", Run, cat(run, []string{EventOutputWritten, EventRunFinished, EventRunFailed}), ""},
		{"finished twice", Run, cat(run, []string{EventRunFinished, EventRunFinished}), "record 5 (run.finished) is not the last record"},
		{"starts failed", Run, []string{EventRunFailed}, "the log starts with run.failed"},
		{"analysis after outputs", Run, cat(run, []string{EventOutputWritten, EventAnalysisFinished}), "record 6 (analysis.finished) comes after output.written"},
		{"selftest event in a run", Run, cat(run, []string{EventCasesEvaluated}), "has no place in a run folder's log"},
		{"selftest", Selftest, []string{EventSelftestStarted, EventCasesBound, EventCasesEvaluated, EventOutputWritten, EventSelftestFinished}, ""},
		{"run event in a selftest", Selftest, []string{EventSelftestStarted, EventCasesBound, EventRunFinished}, "has no place in a selftest folder's log"},
	}
	for _, tc := range tests {
		got := tc.kind.CheckOrder(tc.events)
		if tc.want == "" && got != "" || tc.want != "" && !strings.Contains(got, tc.want) {
			t.Errorf("%s: %q, want %q", tc.name, got, tc.want)
		}
	}
}

// TestWriterRoundTrip: a folder written by Writer reads back with every record valid, in
// order, with its files and head; and a writer that cannot move its folder into place
// (another took the name first) leaves an incomplete folder whose log ends in failure.
func TestWriterRoundTrip(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "run")
	clock := func() time.Time { return time.Date(2026, 12, 3, 10, 0, 0, 0, time.UTC) }
	write := func(out string) (*Writer, error) {
		w, err := Create(out, Selftest, audit.Actor{User: "u", Host: "h"}, clock)
		if err != nil {
			return nil, err
		}
		for _, c := range allRecords {
			if r, ok := c.rec.(Record); ok && slices.Contains(Selftest.Sequence, r.Event()) {
				if err := w.Record(r); err != nil {
					return nil, err
				}
			}
		}
		if err := w.WriteFile(ValidationFile, []byte("{}\n"), OutputWritten{ResultsDigest: digest, ResultsDigestRule: "r"}); err != nil {
			return nil, err
		}
		return w, nil
	}
	w, err := write(out)
	if err != nil {
		t.Fatal(err)
	}
	head, seq, err := w.Finish(context.Background(), SelftestFinished{Status: "pass"}, nil)
	if err != nil || seq != 4 {
		t.Fatalf("Finish: %v (seq %d)", err, seq)
	}
	f, err := Read(out)
	if err != nil || len(f.Problems) > 0 || f.Kind != Selftest || !f.Finished() || f.Marked || f.Chain.Head != head {
		t.Fatalf("Read: %v %v kind %v finished %v", err, f.Problems, f.Kind.Name, f.Finished())
	}
	if msg := f.Kind.CheckOrder(f.Events()); msg != "" {
		t.Error(msg)
	}
	if o := f.Outputs(); len(o) != 1 || o[0].File != ValidationFile || o[0].SHA256 != audit.Digest([]byte("{}\n")) || o[0].Seq != 3 {
		t.Errorf("outputs %+v", o)
	}
	if b, _ := os.ReadFile(filepath.Join(out, HeadFile)); string(b) != head+"\n" {
		t.Errorf("head file %q", b)
	}

	// Two writers racing for one name: exactly one wins; the loser finds the name taken
	// before its closing record, and its log ends in failure, without a head file or seal,
	// under its working name.
	race := filepath.Join(dir, "race")
	var wg sync.WaitGroup
	errs := make([]error, 2)
	ws := make([]*Writer, 2)
	for i := range 2 {
		ws[i], err = write(race)
		if err != nil {
			t.Fatal(err)
		}
	}
	for i := range 2 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			_, _, errs[i] = ws[i].Finish(context.Background(), SelftestFinished{Status: "pass"}, func(string, int64) (string, []byte, error) {
				return "seal.txt", []byte("x"), nil
			})
		}()
	}
	wg.Wait()
	if (errs[0] == nil) == (errs[1] == nil) {
		t.Fatalf("race: errors %v and %v, want exactly one", errs[0], errs[1])
	}
	loser, lerr := ws[0], errs[0]
	if errs[1] != nil {
		loser, lerr = ws[1], errs[1]
	}
	if !errors.Is(lerr, ErrExists) {
		t.Errorf("the loser's error is %v, want one wrapping ErrExists", lerr)
	}
	// The loser wrote no closing record: its caller closes the log with the failure.
	if lf, err := Read(loser.WorkDir()); err != nil || lf.Last().Event != EventCasesEvaluated && lf.Last().Event != EventOutputWritten {
		t.Fatalf("the loser wrote past its outputs before it knew the name was taken: %v %s", err, lf.Last().Event)
	}
	loser.Abandon(Failure{Error: lerr.Error()})
	lf, err := Read(loser.WorkDir())
	if err != nil || len(lf.Problems) > 0 || !lf.Marked || lf.Last().Event != EventSelftestFailed {
		t.Fatalf("loser's folder: %v %v marked %v last %s", err, lf.Problems, lf.Marked, lf.Last().Event)
	}
	for _, name := range []string{HeadFile, "seal.txt"} {
		if _, err := os.Lstat(filepath.Join(loser.WorkDir(), name)); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("the loser's folder keeps %s: %v", name, err)
		}
	}
}
