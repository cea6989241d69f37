package selftest

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"rankplan/internal/audittest"
	"rankplan/runner"
	"rankplan/runner/audit"
	"rankplan/runner/folder"
)

// repoRoot is the repository root, seen from this package's folder.
const repoRoot = "../.."

// clock is a fixed, advancing clock for tests.
func clock() func() time.Time {
	t := time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC)
	return func() time.Time { t = t.Add(1500 * time.Microsecond); return t }
}

func noEnv(string) string { return "" }

// wrongCase is a case added by the tests only: H* of the Dobson (1983) plant weights (7.988229, scipy 1.10.1
// stats.kruskal on Dobson's 1983 data) with a deliberately wrong expected value, so that the
// failure path can be seen.
func wrongCase() Case {
	return Case{
		ID: "injected-wrong-h", Checks: "H* of the Dobson (1983) plant weights against a deliberately wrong value <b>&</b>",
		Compute: "kw.h", Input: Input{Dataset: "dobson1983-plant-weights"}, Expected: NumberValue(7.9),
		Tolerance: Tolerance{Abs: 5e-7, Why: "half a unit in the 6th decimal"},
		Source:    Source{Reference: `a wrong value, for the tests of the failure path "<script>"`, Origin: "runner/selftest/selftest_test.go wrongCase"},
	}
}

// TestSelftestBuiltinPasses: this build reproduces every built-in case, and the case file
// keeps to 30-80 cases.
func TestSelftestBuiltinPasses(t *testing.T) {
	rep, err := Run(context.Background(), Options{Now: clock(), Getenv: noEnv})
	if err != nil {
		t.Fatal(err)
	}
	s := rep.Results.Summary
	if s.Cases < 30 || s.Cases > 80 || s.Passed != s.Cases || s.Failed != 0 || s.Outcome != runner.Pass || s.Added != 0 {
		t.Errorf("summary %+v", s)
	}
	for _, o := range rep.Results.Cases {
		if o.Verdict != runner.Pass {
			t.Errorf("%s: %s", o.ID, o.Detail)
		}
	}
	var text bytes.Buffer
	if err := rep.WriteText(&text); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(text.String(), "selftest passed") || strings.Contains(text.String(), "FAIL") {
		t.Errorf("text report:\n%s", text.String())
	}
}

// TestSelftestCasesTraceable holds every expected value to its origin: a value with a
// reference file must be exactly the value at its pointers; any other value must appear
// literally in the origin test file(s), which must exist and name the tests cited. The
// data sets are checked against their reference files, and the embedded NIST file against
// the copy in stats/testdata.
func TestSelftestCasesTraceable(t *testing.T) {
	set, _, err := Builtin()
	if err != nil {
		t.Fatal(err)
	}
	for name, d := range set.Datasets {
		originText(t, "data set "+name, d.Origin)
		if d.File != "" {
			var want [][]float64
			decodeAt(t, d.File, d.Pointer, &want)
			var got [][]float64
			for _, g := range d.Groups {
				got = append(got, g.Values)
			}
			if !slicesEqual2(got, want) {
				t.Errorf("data set %s differs from %s %s", name, d.File, d.Pointer)
			}
		}
		if d.NIST != "" {
			emb, _ := files.ReadFile("cases/" + d.NIST)
			orig, err := os.ReadFile(filepath.Join(repoRoot, "stats/testdata/nist", d.NIST))
			if err != nil || !bytes.Equal(emb, orig) {
				t.Errorf("cases/%s is not an unchanged copy of stats/testdata/nist/%s (%v)", d.NIST, d.NIST, err)
			}
		}
	}
	for _, c := range set.Cases {
		text := originText(t, c.ID, c.Source.Origin)
		if c.Source.File == "" {
			for _, lit := range literals(c.Expected) {
				if !strings.Contains(text, lit[0]) && !strings.Contains(text, lit[1]) {
					t.Errorf("%s: expected value %s does not appear in %s", c.ID, lit[0], c.Source.Origin)
				}
			}
			continue
		}
		if got := valueAt(t, c); !sameValue(got, c.Expected) {
			t.Errorf("%s: expected %s, but %s %v holds %s", c.ID, c.Expected, c.Source.File, c.Source.Pointers, got)
		}
		if c.Source.InputPointer == "" {
			continue
		}
		if obj, ok := readAt(t, c.Source.File, c.Source.InputPointer).(map[string]any); ok {
			inputMembers(t, c, obj)
			continue
		}
		var want []float64
		decodeAt(t, c.Source.File, c.Source.InputPointer, &want)
		in := c.Input.Values
		if in == nil {
			in = c.Input.PValues
		}
		if !slices.Equal(in, want) {
			t.Errorf("%s: input %v differs from %s %s", c.ID, in, c.Source.File, c.Source.InputPointer)
		}
	}
}

// inputMembers checks a case's scalar inputs against the members of the reference object
// its input pointer names: at is x, df is df, noncentrality is nc, level is level, sizes
// are m and n. Every such input the case gives must be there with the same value, and the
// case must give at least one.
func inputMembers(t *testing.T, c Case, obj map[string]any) {
	t.Helper()
	in := c.Input
	given := map[string]float64{}
	if in.At != nil {
		given["x"] = *in.At
	}
	if in.DF != nil {
		given["df"] = float64(*in.DF)
	}
	if in.NC != nil {
		given["nc"] = *in.NC
	}
	if in.Level != 0 {
		given["level"] = in.Level
	}
	if len(in.Sizes) == 2 {
		given["m"], given["n"] = float64(in.Sizes[0]), float64(in.Sizes[1])
	}
	if len(given) == 0 {
		t.Errorf("%s: %s %s is an object, but the case gives none of its inputs", c.ID, c.Source.File, c.Source.InputPointer)
	}
	for name, v := range given {
		if ref, ok := obj[name].(float64); !ok || ref != v {
			t.Errorf("%s: input %s = %v, but %s %s/%s holds %v", c.ID, name, v, c.Source.File, c.Source.InputPointer, name, obj[name])
		}
	}
}

// originText checks an origin ("path name, name; path name") and returns the text of
// its files: every path must exist, and every name must occur in its file.
func originText(t *testing.T, what, origin string) string {
	t.Helper()
	var all strings.Builder
	for _, part := range strings.Split(origin, "; ") {
		path, names, _ := strings.Cut(part, " ")
		b, err := os.ReadFile(filepath.Join(repoRoot, filepath.FromSlash(path)))
		if err != nil {
			t.Errorf("%s: origin %q: %v", what, part, err)
			continue
		}
		for _, n := range strings.Split(names, ", ") {
			if n != "" && !bytes.Contains(b, []byte(n)) {
				t.Errorf("%s: origin %s does not name %q", what, path, n)
			}
		}
		all.Write(b)
	}
	return all.String()
}

// literals lists each expected number as written by strconv 'g' and 'f' (either may be how
// the origin writes it), and each word of a text.
func literals(v Value) [][2]string {
	var out [][2]string
	nums := v.Numbers
	if v.Number != nil {
		nums = []float64{*v.Number}
	}
	for _, x := range nums {
		out = append(out, [2]string{strconv.FormatFloat(x, 'g', -1, 64), strconv.FormatFloat(x, 'f', -1, 64)})
	}
	if v.Text != nil {
		for _, w := range strings.Fields(*v.Text) {
			out = append(out, [2]string{w, w})
		}
	}
	return out
}

func decodeAt(t *testing.T, file, ptr string, dst any) {
	t.Helper()
	v := readAt(t, file, ptr)
	b, _ := json.Marshal(v)
	if err := json.Unmarshal(b, dst); err != nil {
		t.Fatalf("%s %s: %v", file, ptr, err)
	}
}

func readAt(t *testing.T, file, ptr string) any {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(repoRoot, filepath.FromSlash(file)))
	if err != nil {
		t.Fatal(err)
	}
	var doc any
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatalf("%s: %v", file, err)
	}
	v, err := pointer(doc, ptr)
	if err != nil {
		t.Fatalf("%s: %v", file, err)
	}
	return v
}

// valueAt reads a case's expected value from its reference file: one pointer to a number,
// a string (text, or a number written with more digits than a double holds) or an array
// (of numbers, or of words joined by spaces); or one pointer per number.
func valueAt(t *testing.T, c Case) Value {
	t.Helper()
	scalar := func(v any) Value {
		switch x := v.(type) {
		case float64:
			return NumberValue(x)
		case string:
			if c.Expected.Number != nil {
				f, err := strconv.ParseFloat(x, 64)
				if err == nil {
					return NumberValue(f)
				}
			}
			return TextValue(x)
		}
		t.Fatalf("%s: %s holds %v", c.ID, c.Source.File, v)
		return Value{}
	}
	if len(c.Source.Pointers) == 1 {
		v := readAt(t, c.Source.File, c.Source.Pointers[0])
		arr, ok := v.([]any)
		if !ok {
			return scalar(v)
		}
		var nums []float64
		var words []string
		for _, x := range arr {
			switch y := x.(type) {
			case float64:
				nums = append(nums, y)
			case string:
				words = append(words, y)
			}
		}
		if words != nil {
			return TextValue(strings.Join(words, " "))
		}
		return NumbersValue(nums)
	}
	var nums []float64
	for _, p := range c.Source.Pointers {
		v := scalar(readAt(t, c.Source.File, p))
		if v.Number == nil {
			t.Fatalf("%s: %s %s is not a number", c.ID, c.Source.File, p)
		}
		nums = append(nums, *v.Number)
	}
	return NumbersValue(nums)
}

func sameValue(a, b Value) bool {
	switch {
	case a.Number != nil && b.Number != nil:
		return *a.Number == *b.Number
	case a.Text != nil && b.Text != nil:
		return *a.Text == *b.Text
	case a.Numbers != nil && b.Numbers != nil:
		return slices.Equal(a.Numbers, b.Numbers)
	}
	return false
}

func slicesEqual2(a, b [][]float64) bool {
	return slices.EqualFunc(a, b, func(x, y []float64) bool { return slices.Equal(x, y) })
}

// TestSelftestComputationsUsed: every computation is used by a built-in case, and the
// cases span the statistics a run reports.
func TestSelftestComputationsUsed(t *testing.T) {
	set, _, err := Builtin()
	if err != nil {
		t.Fatal(err)
	}
	used := map[string]bool{}
	fields := ""
	for _, c := range set.Cases {
		used[c.Compute] = true
		fields += strings.Join(c.Input.Fields, " ") + " "
	}
	for name := range computations {
		if !used[name] {
			t.Errorf("computation %s is used by no case", name)
		}
	}
	for _, f := range []string{"/kruskal_wallis/h", "/p_value/value", "/p_value/log10",
		"/mean_rank", "/q1", "/median", "/p_adjusted", "/hodges_lehmann/shift", "/monte_carlo/exceedances"} {
		if !strings.Contains(fields, f) {
			t.Errorf("no whole-plan case reads %s from results.json", f)
		}
	}
}

// TestSelftestJudge checks the verdict rules one by one.
func TestSelftestJudge(t *testing.T) {
	nan := math.NaN()
	for _, tc := range []struct {
		name     string
		expected Value
		tol      Tolerance
		got      Value
		err      error
		pass     bool
		detail   string
	}{
		{"abs inside", NumberValue(1.5), Tolerance{Abs: 0.05}, NumberValue(1.54), nil, true, ""},
		{"abs on the bound", NumberValue(1), Tolerance{Abs: 0.5}, NumberValue(1.5), nil, true, ""},
		{"abs outside", NumberValue(1.5), Tolerance{Abs: 0.05}, NumberValue(1.56), nil, false, "obtained 1.56, expected 1.5, outside abs 0.05"},
		{"rel inside", NumberValue(-200), Tolerance{Rel: 1e-3}, NumberValue(-200.1), nil, true, ""},
		{"rel outside", NumberValue(-200), Tolerance{Rel: 1e-3}, NumberValue(-200.3), nil, false, "outside rel 0.001"},
		{"rel of an expected 0 is exact", NumberValue(0), Tolerance{Rel: 1e-3}, NumberValue(1e-300), nil, false, "expected 0"},
		{"exact", NumberValue(0.1), Tolerance{}, NumberValue(0.1), nil, true, ""},
		{"exact misses by one ulp", NumberValue(0.1), Tolerance{}, NumberValue(math.Nextafter(0.1, 1)), nil, false, "outside exact"},
		{"list, second element outside", NumbersValue([]float64{1, 2, 3}), Tolerance{Abs: 0.1}, NumbersValue([]float64{1, 2.5, 3}), nil, false, "element 2: obtained 2.5"},
		{"list of another length", NumbersValue([]float64{1, 2}), Tolerance{Abs: 0.1}, NumbersValue([]float64{1, 2, 3}), nil, false, "obtained 3 values, expected 2"},
		{"NaN", NumberValue(1), Tolerance{Abs: 1}, NumberValue(nan), nil, false, "not finite"},
		{"infinite element", NumbersValue([]float64{1}), Tolerance{Abs: 1}, NumbersValue([]float64{math.Inf(1)}), nil, false, "not finite"},
		{"text equal", TextValue("221"), Tolerance{}, TextValue("221"), nil, true, ""},
		{"text differs", TextValue("221"), Tolerance{}, TextValue("222"), nil, false, "the text differs"},
		{"kind differs", TextValue("1"), Tolerance{}, NumberValue(1), nil, false, "obtained number, expected text"},
		{"computation failed", NumberValue(1), Tolerance{Abs: 1}, Value{}, errors.New("boom"), false, "the computation failed: boom"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			tc.tol.Why = "test"
			o := judge(Case{ID: "x", Expected: tc.expected, Tolerance: tc.tol}, tc.got, tc.err)
			if (o.Verdict == runner.Pass) != tc.pass || !strings.Contains(o.Detail, tc.detail) {
				t.Errorf("verdict %s, detail %q; want pass %v, detail containing %q", o.Verdict, o.Detail, tc.pass, tc.detail)
			}
			if (tc.err != nil || !tc.got.finite()) != (o.Obtained == nil) {
				t.Errorf("obtained %v", o.Obtained)
			}
		})
	}
}

// TestSelftestParseCasesErrors: a malformed case file is refused with the case named.
func TestSelftestParseCasesErrors(t *testing.T) {
	good := `{"id": "a-b", "checks": "c", "compute": "kw.h", "input": {"dataset": "d"}, "expected": 1,
		"tolerance": {"abs": 0.1, "why": "w"}, "source": {"reference": "r", "origin": "o"}}`
	wrap := func(cases ...string) string {
		return `{"format": "rankplan-selftest-cases/1", "datasets": {"d": {"source": "s", "origin": "o",
			"groups": [{"name": "a", "values": [1]}, {"name": "b", "values": [2]}]}}, "cases": [` + strings.Join(cases, ",") + `]}`
	}
	if _, err := ParseCases([]byte(wrap(good))); err != nil {
		t.Fatalf("good case refused: %v", err)
	}
	for _, tc := range []struct{ name, from, to, want string }{
		{"unknown field", `"checks"`, `"check": 1, "checks"`, "unknown field"},
		{"bad id", `"a-b"`, `"A B"`, "lowercase"},
		{"unknown computation", `"kw.h"`, `"kw.x"`, "unknown computation"},
		{"no expected value", `"expected": 1,`, ``, "no expected value"},
		{"expected an object", `"expected": 1`, `"expected": {}`, "a value must be"},
		{"expected null", `"expected": 1`, `"expected": null`, "not null"},
		{"negative tolerance", `"abs": 0.1`, `"abs": -0.1`, "not negative"},
		{"two tolerances", `"abs": 0.1`, `"abs": 0.1, "rel": 0.1`, "not both"},
		{"no reason", `"why": "w"`, `"why": ""`, "reason"},
		{"no origin", `"origin": "o"}}`, `"origin": ""}}`, "origin are required"},
		{"no such data set", `"dataset": "d"`, `"dataset": "e"`, `no data set "e"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ParseCases([]byte(wrap(strings.Replace(good, tc.from, tc.to, 1))))
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
	if _, err := ParseCases([]byte(wrap(good, good))); err == nil || !strings.Contains(err.Error(), "used twice") {
		t.Errorf("duplicate id: %v", err)
	}
}

// TestSelftestComputationsRefuseEmptyInput: every computation given no input returns an
// error (a failed case), never a panic or a value.
func TestSelftestComputationsRefuseEmptyInput(t *testing.T) {
	set, _, err := Builtin()
	if err != nil {
		t.Fatal(err)
	}
	e := newEnv(context.Background(), set, 1)
	defer e.close()
	for name, f := range computations {
		t.Run(name, func(t *testing.T) {
			defer func() {
				if r := recover(); r != nil {
					t.Errorf("panic: %v", r)
				}
			}()
			if v, err := f(e, &Case{ID: "empty", Compute: name}); err == nil {
				t.Errorf("no error, value %s", v)
			}
		})
	}
}

// TestSelftestDeterministic: the results digest does not depend on the number of workers
// (TestSelftestFolderVerifies compares it across runs, through verify).
func TestSelftestDeterministic(t *testing.T) {
	set, caseFile, err := Builtin()
	if err != nil {
		t.Fatal(err)
	}
	var digests []string
	for _, w := range []int{1, 3} {
		res, err := Evaluate(context.Background(), set, caseFile, nil, w)
		if err != nil {
			t.Fatal(err)
		}
		d, err := Digest(res)
		if err != nil {
			t.Fatal(err)
		}
		digests = append(digests, d)
	}
	if digests[0] != digests[1] {
		t.Errorf("digests differ: %v", digests)
	}
}

// selftestFolder runs the selftest into a new folder.
func selftestFolder(t *testing.T, added ...Case) (*Report, error) {
	t.Helper()
	out := filepath.Join(t.TempDir(), "iq")
	rep, err := Run(context.Background(), Options{Out: out, Signer: "A. Tester", Reason: "installation qualification",
		Args: []string{"rankplan", "selftest", "--out", out}, Added: added, Now: clock(), Getenv: noEnv})
	if rep == nil {
		t.Fatalf("no report: %v", err)
	}
	return rep, err
}

func verify(t *testing.T, dir string, opt runner.VerifyOptions) *runner.VerifyReport {
	t.Helper()
	r, err := runner.Verify(context.Background(), dir, opt)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func checkOf(r *runner.VerifyReport, name string) runner.Check {
	for _, c := range r.Checks {
		if c.Name == name {
			return c
		}
	}
	return runner.Check{}
}

// TestSelftestFolderVerifies: the folder holds the record, the report and the audit
// trail, in the order of a run; verify recognises it, checks the chain and reruns the
// cases to the same digest; a changed byte, a cut log or a build that computes otherwise
// fail.
func TestSelftestFolderVerifies(t *testing.T) {
	rep, err := selftestFolder(t)
	if err != nil {
		t.Fatal(err)
	}
	dir := rep.Dir
	entries, _ := os.ReadDir(dir)
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	if want := []string{runner.HeadFile, runner.AuditFile, ReportFile, runner.ValidationFile}; !slices.Equal(names, want) {
		t.Errorf("folder holds %v, want %v", names, want)
	}
	if beside, _ := os.ReadDir(filepath.Dir(dir)); len(beside) != 1 {
		t.Errorf("leftovers beside the folder: %v", beside)
	}
	chain, problems, _, err := audit.ReadChain(filepath.Join(dir, runner.AuditFile))
	if err != nil || len(problems) > 0 {
		t.Fatalf("%v %v", err, problems)
	}
	var events []string
	for _, r := range chain.Records {
		events = append(events, r.Event)
		if r.Actor.Signer != "A. Tester" || r.Actor.Reason != "installation qualification" {
			t.Errorf("record %d actor %+v", r.Seq, r.Actor)
		}
	}
	want := []string{runner.SelftestStarted, "cases.bound", "cases.evaluated", "output.written", "output.written", runner.SelftestFinished}
	if !slices.Equal(events, want) || chain.Head != rep.Head {
		t.Errorf("events %v head %s, want %v %s", events, chain.Head, want, rep.Head)
	}
	// Every record is of the audit-record schema and decodes into its typed record.
	f, err := folder.Read(dir)
	if err != nil || len(f.Problems) > 0 || f.Kind != folder.Selftest {
		t.Fatalf("folder.Read: %v %v", err, f.Problems)
	}
	for _, r := range f.Chain.Records {
		if _, err := audittest.Typed(r); err != nil {
			t.Error(err)
		}
	}
	b, err := os.ReadFile(filepath.Join(dir, runner.ValidationFile))
	if err != nil {
		t.Fatal(err)
	}
	if err := ValidateRecord(b); err != nil {
		t.Error(err)
	}
	if bytes.Contains(b, []byte("A. Tester")) || bytes.Contains(b, []byte("2026-12-01")) {
		t.Error("validation.json holds who or when")
	}

	opt := runner.VerifyOptions{Head: rep.Head, Selftest: ResultsDigest}
	r := verify(t, dir, opt)
	if r.Outcome != runner.Verified || checkOf(r, "rerun").Verdict != runner.Pass || checkOf(r, "sequence").Verdict != runner.Pass {
		t.Fatalf("outcome %s: %+v", r.Outcome, r.Checks)
	}
	for _, c := range r.Checks {
		if c.Verdict == runner.Fail || c.Verdict == runner.Warn {
			t.Errorf("check %+v", c)
		}
	}
	if r := verify(t, dir, runner.VerifyOptions{}); r.Outcome != runner.Verified || checkOf(r, "rerun").Verdict != runner.Skip {
		t.Errorf("without the rerun: %s %+v", r.Outcome, checkOf(r, "rerun"))
	}
	other := func(context.Context) (string, error) { return audit.Digest([]byte("another build")), nil }
	if r := verify(t, dir, runner.VerifyOptions{Selftest: other}); r.Outcome != runner.ClassDiffer {
		t.Errorf("a build computing other values: %s", r.Outcome)
	}

	// Tampering, on copies of the folder.
	for _, tc := range []struct {
		name   string
		change func(dir string)
		opt    runner.VerifyOptions
		want   runner.Class
	}{
		{"a byte of validation.json", func(d string) { flipByte(t, filepath.Join(d, runner.ValidationFile)) }, opt, runner.ClassIntegrity},
		{"a byte of report.html", func(d string) { flipByte(t, filepath.Join(d, ReportFile)) }, opt, runner.ClassIntegrity},
		{"the last record cut, head rewritten", func(d string) { cutLastRecord(t, d) }, opt, runner.ClassIntegrity},
		{"the last record cut, head rewritten, no --head", func(d string) { cutLastRecord(t, d) }, runner.VerifyOptions{Selftest: ResultsDigest}, runner.ClassIncomplete},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cp := filepath.Join(t.TempDir(), "copy")
			if err := os.CopyFS(cp, os.DirFS(dir)); err != nil {
				t.Fatal(err)
			}
			tc.change(cp)
			if r := verify(t, cp, tc.opt); r.Outcome != tc.want {
				t.Errorf("outcome %s, want %s: %+v", r.Outcome, tc.want, r.Checks)
			}
		})
	}

	// The folder is never written over.
	if _, err := Run(context.Background(), Options{Out: dir}); err == nil || !errors.As(err, new(*runner.InputError)) {
		t.Errorf("second selftest into %s: %v", dir, err)
	}
}

func flipByte(t *testing.T, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	b[len(b)/2] ^= 0x20
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func cutLastRecord(t *testing.T, dir string) {
	t.Helper()
	path := filepath.Join(dir, runner.AuditFile)
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := bytes.SplitAfter(bytes.TrimSuffix(b, []byte("\n")), []byte("\n"))
	kept := bytes.Join(lines[:len(lines)-1], nil)
	if err := os.WriteFile(path, kept, 0o644); err != nil {
		t.Fatal(err)
	}
	chain, _, _, err := audit.ReadChain(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, runner.HeadFile), []byte(chain.Head+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestSelftestInjectedFailure: a case with a wrong expected value fails, with a
// *FailedError naming it, and is marked FAIL in the text, in validation.json and in
// report.html (escaped); the folder still records the failed qualification, and verify
// says that this build's own cases give another digest.
func TestSelftestInjectedFailure(t *testing.T) {
	rep, err := selftestFolder(t, wrongCase())
	var fe *FailedError
	if !errors.As(err, &fe) || fe.Failed != 1 || fe.Cases != rep.Results.Summary.Cases || !slices.Equal(fe.IDs, []string{"injected-wrong-h"}) {
		t.Fatalf("error %v", err)
	}
	s := rep.Results.Summary
	if s.Failed != 1 || s.Added != 1 || s.Outcome != runner.Fail || s.Passed != s.Cases-1 {
		t.Errorf("summary %+v", s)
	}

	var text bytes.Buffer
	if err := rep.WriteText(&text); err != nil {
		t.Fatal(err)
	}
	for _, re := range []string{
		`(?m)^FAIL +injected-wrong-h +7\.9 +7\.98822874944\d* +abs 5e-07 `,
		`(?m)^ {10}obtained 7\.98822874944\d*, expected 7\.9, outside abs 5e-07$`,
		`(?m)^PASS +kw-dobson1983-plant-weights-h `,
		`(?m)^\d+ cases: \d+ passed, 1 failed$`,
		`(?m)^SELFTEST FAILED: 1 of \d+ cases`,
		`(?m)^  cases +\d+ from cases/cases\.json sha256:[0-9a-f]{64} \(embedded\), and 1 added$`,
	} {
		if !regexp.MustCompile(re).MatchString(text.String()) {
			t.Errorf("text report lacks %s:\n%s", re, text.String())
		}
	}

	b, err := os.ReadFile(filepath.Join(rep.Dir, runner.ValidationFile))
	if err != nil {
		t.Fatal(err)
	}
	var rec struct {
		Results struct {
			Summary Summary
			Cases   []struct {
				ID       string
				Verdict  runner.Verdict
				Obtained json.RawMessage
				Detail   string
			}
		}
	}
	if err := json.Unmarshal(b, &rec); err != nil {
		t.Fatal(err)
	}
	last := rec.Results.Cases[len(rec.Results.Cases)-1]
	var obtained float64
	json.Unmarshal(last.Obtained, &obtained)
	if rec.Results.Summary.Outcome != runner.Fail || last.ID != "injected-wrong-h" || last.Verdict != runner.Fail ||
		math.Abs(obtained-7.988229) > 5e-7 || !strings.Contains(last.Detail, "outside abs 5e-07") {
		t.Errorf("validation.json: %+v, last case %+v", rec.Results.Summary, last)
	}

	h, err := os.ReadFile(filepath.Join(rep.Dir, ReportFile))
	if err != nil {
		t.Fatal(err)
	}
	page := string(h)
	for _, want := range []string{
		`<tr class="fail" id="case-injected-wrong-h"`,
		`data-key="outcome" data-value="fail"`,
		`deliberately wrong value &lt;b&gt;&amp;&lt;/b&gt;`,
		`&#34;&lt;script&gt;&#34;`,
	} {
		if !strings.Contains(page, want) {
			t.Errorf("report.html lacks %s", want)
		}
	}
	for _, bad := range []string{"<script", "<b>&", "src=", "href=", "url(", "@import"} {
		if strings.Contains(page, bad) {
			t.Errorf("report.html holds %q", bad)
		}
	}

	r := verify(t, rep.Dir, runner.VerifyOptions{Head: rep.Head, Selftest: ResultsDigest})
	if r.Outcome != runner.ClassDiffer || checkOf(r, "selftest").Verdict != runner.Warn {
		t.Errorf("verify of a record with an added case: %s %+v", r.Outcome, r.Checks)
	}
}
