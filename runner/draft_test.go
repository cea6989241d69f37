package runner

import (
	"cmp"
	"context"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"rankplan/runner/data"
	"rankplan/spec"
)

// draftCase is one call of Draft on a data file (or none) and what the plan must hold.
type draftCase struct {
	name string
	csv  string // the data file's text; "" for no file (ExpectPath)
	o    DraftOptions
	// want are texts the plan must contain; check inspects the parsed plan.
	want   []string
	source spec.DraftSource
	check  func(t *testing.T, p *spec.Plan)
	// errWant are texts the error must contain; dataErr: a *data.Error must be in its chain.
	errWant []string
	dataErr bool
}

// draftOptions fills the fields of o that the flags always set with the flags' defaults
// (and seed 9), for the cases below.
func draftOptions(o DraftOptions) DraftOptions {
	seed := uint64(9)
	o.Group, o.Outcome = cmp.Or(o.Group, "arm"), cmp.Or(o.Outcome, "score")
	o.Delimiter, o.Decimal = cmp.Or(o.Delimiter, "auto"), cmp.Or(o.Decimal, "auto")
	o.PValue, o.PostHoc, o.Adjust = cmp.Or(o.PValue, spec.Asymptotic), cmp.Or(o.PostHoc, spec.NoPostHoc), cmp.Or(o.Adjust, spec.NoAdjustment)
	o.Alpha, o.Seed = 0.05, &seed
	return o
}

// labExport is an invented lab export: semicolons, decimal commas, "n/a" for a sample
// that was not measured (line 3).
const labExport = "arm;score\nA;317,6\nA;n/a\nB;320,1\nB;318\nC;330,5\nC;331\n"

func TestDraft(t *testing.T) {
	cases := []draftCase{
		{name: "data with rows: separators sniffed, groups listed, pin offered",
			csv:    "arm;score\nx;1,5\ny;2,25\nx;3\n",
			want:   []string{`file: "sub/d.csv"`, `delimiter: ";"`, `decimal: ","`, "seed: 9", `"x" (2 rows), "y" (1 rows)`, `# sha256: "`},
			source: spec.DraftFromData},
		{name: "lab export with n/a listed as missing: decimal comma found",
			csv: labExport, o: DraftOptions{Missing: []string{"n/a", "NA", ""}},
			want:   []string{`decimal: ","`, `tokens: ["n/a", "NA", ""]`, `"A" (2 rows)`},
			source: spec.DraftFromData,
			check: func(t *testing.T, p *spec.Plan) {
				if !reflect.DeepEqual(p.Data.Missing.Tokens, []string{"n/a", "NA", ""}) {
					t.Errorf("tokens %q", p.Data.Missing.Tokens)
				}
			}},
		{name: "lab export without n/a: the n/a cell is named, with the flag to use",
			csv:     labExport,
			errWant: []string{`d.csv:3:3: column "score": cannot read "n/a" as a number; if that text marks a missing value, list it with --missing (the missing-value tokens now: "", "NA")`},
			dataErr: true},
		{name: "decimal points, a bad cell late: the notation that read further is reported",
			csv:     "arm;score\nx;1.5\ny;2\nx;3\ny;oops\n",
			errWant: []string{`d.csv:5:3: column "score": cannot read "oops" as a number; if that text marks`}},
		{name: "a fixed decimal mark: the first unreadable cell is reported with the hint",
			csv: "arm;score\nx;1,5\ny;2\n", o: DraftOptions{Decimal: "."},
			errWant: []string{`d.csv:2:3: column "score": cannot read "1,5" as a number; if that text marks`}},
		{name: "a value out of range gets no hint about missing values",
			csv:     "arm,score\nx,1\ny,1e999\n",
			errWant: []string{`d.csv:3:3: column "score": value "1e999" is out of range`}},
		{name: "a record error after the numbers is reported, not a number error",
			csv:     "arm;score\nx;1,5\ny;2\nx;3;4\n",
			errWant: []string{`d.csv:4: record has 3 fields, header has 2`}},
		{name: "header only: columns checked, groups from the list, no pin",
			csv: "arm;score\n", o: DraftOptions{Groups: []string{"placebo", "low", "high"}, Unit: "mg", EffectResamples: 2000},
			want:   []string{`delimiter: ";"`, `decimal: "."`, "# groups found: none yet (the file holds only its header)", "# sha256: not pinned"},
			source: spec.DraftFromHeader,
			check: func(t *testing.T, p *spec.Plan) {
				if !reflect.DeepEqual(p.Groups.Include, []string{"placebo", "low", "high"}) || p.Data.Unit != "mg" || p.Analyses[0].Unit != "mg" ||
					p.Analyses[0].EffectSize.Interval != spec.BootstrapInterval || p.Analyses[0].EffectSize.Resamples != 2000 || p.Data.SHA256 != "" {
					t.Errorf("plan %+v %+v", p.Groups, p.Analyses[0])
				}
			}},
		{name: "header only, decimal comma declared",
			csv: "arm;score\n", o: DraftOptions{Decimal: ","},
			want: []string{`delimiter: ";"`, `decimal: ","`}, source: spec.DraftFromHeader},
		{name: "header only without the outcome column",
			csv: "arm,weight\n", errWant: []string{`d.csv:1: no column "score" in the header (columns: arm, weight)`}},
		{name: "a blank file is not a header",
			csv: "\n", errWant: []string{"d.csv: empty file"}},
		{name: "declared layout: nothing read, the path of the data to come",
			o:      DraftOptions{Columns: []string{`"arm" (text)`, `"score" (number)`}, Groups: []string{"A", "B"}, Control: "A", PostHoc: spec.Dunn, Adjust: spec.Holm},
			want:   []string{`file: "sub/d.csv"`, `# declared columns: "arm" (text), "score" (number)`, `delimiter: ","`, `decimal: "."`, "before\n# the data exist", "not pinned"},
			source: spec.DraftFromLayout,
			check: func(t *testing.T, p *spec.Plan) {
				if ph := p.Analyses[0].PostHoc; ph.Control != "A" || ph.Method != spec.Dunn || ph.Adjust != spec.Holm {
					t.Errorf("posthoc %+v", ph)
				}
			}},
		{name: "declared layout with a decimal comma: semicolons",
			o:    DraftOptions{Decimal: ","},
			want: []string{`delimiter: ";"`, `decimal: ","`}, source: spec.DraftFromLayout},
		{name: "declared layout: the drafted plan is checked",
			o:       DraftOptions{PValue: spec.Exact, PostHoc: spec.DSCF, Adjust: spec.Holm},
			errWant: []string{"the drafted plan would not be valid", "simultaneous by construction"}},
		{name: "data with rows: the drafted plan is checked against them",
			csv: "arm,score\nx,1\ny,2\n", o: DraftOptions{Groups: []string{"x", "z"}},
			errWant: []string{"the drafted plan would not run on", `no rows of group "z"`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			path := filepath.Join(dir, "sub", "d.csv")
			o := draftOptions(c.o)
			o.PlanPath = filepath.Join(dir, "plan.yaml")
			if c.csv != "" {
				if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(path, []byte(c.csv), 0o644); err != nil {
					t.Fatal(err)
				}
				o.DataPath = path
			} else {
				o.ExpectPath = path
			}
			d, err := Draft(context.Background(), o)
			if c.errWant != nil {
				if err == nil {
					t.Fatalf("no error; plan:\n%s", d.Text)
				}
				for _, w := range c.errWant {
					if !strings.Contains(err.Error(), w) {
						t.Errorf("error %q lacks %q", err, w)
					}
				}
				var ie *InputError
				if !errors.As(err, &ie) {
					t.Errorf("error %T is not an InputError", err)
				}
				var de *data.Error
				if c.dataErr && !errors.As(err, &de) {
					t.Errorf("error %T does not hold a *data.Error", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if d.Source != c.source {
				t.Errorf("source %v, want %v", d.Source, c.source)
			}
			for _, w := range c.want {
				if !strings.Contains(string(d.Text), w) {
					t.Errorf("plan lacks %q:\n%s", w, d.Text)
				}
			}
			if c.source != spec.DraftFromData && strings.Contains(string(d.Text), "sha256: \"") {
				t.Errorf("a plan without data offers a pin:\n%s", d.Text)
			}
			p, err := spec.Parse(o.PlanPath, d.Text)
			if err != nil {
				t.Fatal(err)
			}
			if c.check != nil {
				c.check(t, p)
			}
		})
	}
}

// TestDraftPaths: exactly one of the data file and the path of the data to come.
func TestDraftPaths(t *testing.T) {
	for _, o := range []DraftOptions{draftOptions(DraftOptions{}), {DataPath: "a.csv", ExpectPath: "b.csv"}} {
		if _, err := Draft(context.Background(), o); err == nil || !strings.Contains(err.Error(), "name either an existing data file or the path the data will have") {
			t.Errorf("%+v: %v", o, err)
		}
	}
}
