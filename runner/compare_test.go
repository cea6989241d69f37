package runner

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/rogpeppe/go-internal/txtar"

	"rankplan/runner/results"
	"rankplan/spec"
)

// comparedBase is a constructed pair of recorded results: analysis "a" (Kruskal-Wallis
// rejected, Dunn comparisons with Holm over A, B, C, letters) and analysis "e" (rejected, no
// comparisons). The numbers are invented; only the decisions matter here.
func comparedBase() *results.Results {
	p := func(v float64) *float64 { return &v }
	pair := func(g1, g2 string, padj float64, reject bool) results.Pair {
		return results.Pair{Groups: [2]string{g1, g2}, P: p(padj / 3), PAdjusted: p(padj), Reject: reject}
	}
	return &results.Results{Analyses: []results.Analysis{
		{ID: "a", Test: "kruskal-wallis", Status: "ok",
			PValue:   &results.PValue{Value: p(0.004), Log10: -2.3979400086720375},
			Decision: &results.Decision{Alpha: 0.05, Reject: true},
			PostHoc: &results.PostHoc{Method: "dunn", Adjust: "holm", Family: "all-pairs", Ran: true, Why: "rejected",
				Pairs:   []results.Pair{pair("A", "B", 0.3, false), pair("A", "C", 0.012, true), pair("B", "C", 0.04, true)},
				Letters: []results.GroupLetters{{Group: "A", Display: "a"}, {Group: "B", Display: "a"}, {Group: "C", Display: "b"}}}},
		{ID: "e", Test: "kruskal-wallis", Status: "ok",
			PValue:   &results.PValue{Value: p(0.01), Log10: -2},
			Decision: &results.Decision{Alpha: 0.05, Reject: true}},
	}}
}

// change is the part of a ConclusionChange a case checks.
type change struct{ analysis, kind, item, before, after string }

func TestCompareResults(t *testing.T) {
	p := func(v float64) *float64 { return &v }
	family := func(r *results.Results, rule spec.MultiplicityRule, tested, reject bool, padjE float64) {
		r.Multiplicity = &results.Multiplicity{Rule: rule, Alpha: 0.05, Members: []results.Member{
			{ID: "a", P: &results.Tail{Value: p(0.004)}, PAdjusted: 0.004, Tested: true, Reject: true},
			{ID: "e", P: &results.Tail{Value: p(0.01)}, PAdjusted: padjE, Tested: tested, Reject: reject}}}
	}
	for _, tc := range []struct {
		name   string
		before func(*results.Results) // edits of the recorded results, if any
		after  func(*results.Results) // edits of the rerun
		want   []change
		// counts: conclusions compared, p-values compared and moved
		compared, pvalues, moved int
		text                     string // the first change's text, if checked
	}{
		{name: "unchanged", after: func(*results.Results) {},
			compared: 9, pvalues: 5},
		{name: "p-values move, decisions stay",
			after: func(r *results.Results) {
				r.Analyses[0].PValue.Value, r.Analyses[0].PValue.Log10 = p(0.003), -2.5228787452803374
				*r.Analyses[0].PostHoc.Pairs[1].PAdjusted = 0.02
			},
			compared: 9, pvalues: 5, moved: 2},
		{name: "omnibus flip",
			after: func(r *results.Results) {
				r.Analyses[1].PValue.Value, r.Analyses[1].PValue.Log10 = p(0.2), -0.6989700043360187
				r.Analyses[1].Decision.Reject = false
			},
			want:     []change{{"e", ConclusionOmnibus, "kruskal-wallis", StateRejected, StateNotRejected}},
			compared: 9, pvalues: 5, moved: 1,
			text: "analysis e, omnibus kruskal-wallis: rejected before (p 0.01), not rejected now (p 0.2)"},
		{name: "omnibus p below the smallest normal double",
			before: func(r *results.Results) {
				r.Analyses[1].PValue.Value, r.Analyses[1].PValue.Log10 = nil, -400.25
			},
			after: func(r *results.Results) {
				r.Analyses[1].PValue.Value, r.Analyses[1].PValue.Log10 = p(0.2), -0.6989700043360187
				r.Analyses[1].Decision.Reject = false
			},
			want:     []change{{"e", ConclusionOmnibus, "kruskal-wallis", StateRejected, StateNotRejected}},
			compared: 9, pvalues: 5, moved: 1,
			text: "analysis e, omnibus kruskal-wallis: rejected before (p < 1e-400 (log10 p = -400.2500)), not rejected now (p 0.2)"},
		{name: "family flip: not tested after a fixed sequence stops",
			before: func(r *results.Results) { family(r, "fixed-sequence", true, true, 0.01) },
			after: func(r *results.Results) {
				family(r, "fixed-sequence", false, false, 0.01)
				r.Multiplicity.Members[0].Reject, r.Multiplicity.Members[0].PAdjusted = false, 0.06
				r.Analyses[0].Decision.Reject = false
			},
			want: []change{
				{"a", ConclusionFamily, "fixed-sequence", StateRejected, StateNotRejected},
				{"e", ConclusionFamily, "fixed-sequence", StateRejected, StateNotTested}},
			compared: 9, pvalues: 5, moved: 1,
			text: "analysis a, decision in the multiplicity family (fixed-sequence): rejected before (p_adj 0.004), not rejected now (p_adj 0.06)"},
		{name: "family flip: adjusted p above alpha",
			before: func(r *results.Results) { family(r, "holm", true, true, 0.02) },
			after:  func(r *results.Results) { family(r, "holm", true, false, 0.051) },
			want:   []change{{"e", ConclusionFamily, "holm", StateRejected, StateNotRejected}},
			// the family's p_adj replaces the omnibus p of both analyses
			compared: 9, pvalues: 5, moved: 1},
		{name: "pair flip",
			after: func(r *results.Results) {
				pr := &r.Analyses[0].PostHoc.Pairs[1]
				*pr.PAdjusted, pr.Reject = 0.081, false
			},
			want:     []change{{"a", ConclusionPair, "A vs C", StateRejected, StateNotRejected}},
			compared: 9, pvalues: 5, moved: 1,
			text: "analysis a, pair A vs C (dunn, holm): rejected before (p_adj 0.012), not rejected now (p_adj 0.081)"},
		{name: "pair with its groups the other way round",
			after: func(r *results.Results) {
				pr := &r.Analyses[0].PostHoc.Pairs[1]
				pr.Groups = [2]string{"C", "A"}
			},
			compared: 9, pvalues: 5},
		{name: "pair becomes not computable",
			after: func(r *results.Results) {
				pr := &r.Analyses[0].PostHoc.Pairs[2]
				pr.P, pr.PAdjusted, pr.Reject, pr.NotComputable = nil, nil, false, "both groups constant"
			},
			want:     []change{{"a", ConclusionPair, "B vs C", StateRejected, StateNotComputable}},
			compared: 9, pvalues: 4,
			text: "analysis a, pair B vs C (dunn, holm): rejected before (p_adj 0.04), not computable now (both groups constant)"},
		{name: "pair becomes computable",
			before: func(r *results.Results) {
				pr := &r.Analyses[0].PostHoc.Pairs[0]
				pr.P, pr.PAdjusted, pr.Reject, pr.NotComputable = nil, nil, false, "both groups constant"
			},
			after:    func(*results.Results) {},
			want:     []change{{"a", ConclusionPair, "A vs B", StateNotComputable, StateNotRejected}},
			compared: 9, pvalues: 4},
		{name: "comparisons become not computable",
			after: func(r *results.Results) {
				ph := r.Analyses[0].PostHoc
				ph.Ran, ph.Pairs, ph.Letters, ph.NotComputable = false, nil, nil, "every group is internally constant"
			},
			want:     []change{{"a", ConclusionPostHoc, "dunn, holm", StateRan, StateNotComputable}},
			compared: 3, pvalues: 2,
			text: "analysis a, comparisons (dunn, holm): ran before, not computable now (every group is internally constant)"},
		{name: "comparisons not run after the omnibus flips",
			after: func(r *results.Results) {
				a := &r.Analyses[0]
				a.PValue.Value, a.Decision.Reject = p(0.09), false
				a.PostHoc.Ran, a.PostHoc.Pairs, a.PostHoc.Letters = false, nil, nil
				a.PostHoc.Why = "the omnibus test did not reject at alpha"
			},
			want: []change{
				{"a", ConclusionOmnibus, "kruskal-wallis", StateRejected, StateNotRejected},
				{"a", ConclusionPostHoc, "dunn, holm", StateRan, StateNotRun}},
			compared: 3, pvalues: 2, moved: 1},
		{name: "analysis becomes not computable",
			after: func(r *results.Results) {
				a := &r.Analyses[1]
				a.Status, a.Reason, a.PValue, a.Decision = "not-computable", "all observations are tied", nil, nil
			},
			want:     []change{{"e", ConclusionOmnibus, "kruskal-wallis", StateRejected, StateNotComputable}},
			compared: 9, pvalues: 4,
			text: "analysis e, omnibus kruskal-wallis: rejected before (p 0.01), not computable now (all observations are tied)"},
		{name: "letters change",
			after: func(r *results.Results) {
				r.Analyses[0].PostHoc.Letters[1].Display = "ab"
			},
			want:     []change{{"a", ConclusionLetters, "B", "a", "ab"}},
			compared: 9, pvalues: 5,
			text: `analysis a, letters of B (dunn, holm): "a" before, "ab" now`},
		{name: "group and its pairs on one side only",
			after: func(r *results.Results) {
				ph := r.Analyses[0].PostHoc
				ph.Pairs = append(ph.Pairs, results.Pair{Groups: [2]string{"A", "D\u200b"}, PAdjusted: p(0.001), Reject: true})
				ph.Letters = append(ph.Letters, results.GroupLetters{Group: "D\u200b", Display: "c"})
			},
			want: []change{
				{"a", ConclusionPair, "A vs D\u200b", StateAbsent, StateRejected},
				{"a", ConclusionLetters, "D\u200b", StateAbsent, "c"}},
			compared: 11, pvalues: 5,
			text: `analysis a, pair A vs "D\u200b" (U+0044 U+200B) (dunn, holm): absent before (in the rerun only), rejected now (p_adj 0.001)`},
		{name: "pair missing now",
			after: func(r *results.Results) {
				ph := r.Analyses[0].PostHoc
				ph.Pairs = ph.Pairs[:2]
			},
			want:     []change{{"a", ConclusionPair, "B vs C", StateRejected, StateAbsent}},
			compared: 9, pvalues: 4,
			text: "analysis a, pair B vs C (dunn, holm): rejected before (p_adj 0.04), absent now (in the recorded results only)"},
		{name: "analysis missing now, another new",
			after: func(r *results.Results) {
				r.Analyses[1].ID = "f"
			},
			want: []change{
				{"f", ConclusionAnalysis, "", StateAbsent, StatePresent},
				{"e", ConclusionAnalysis, "", StatePresent, StateAbsent}},
			compared: 10, pvalues: 4,
			text: "analysis f: absent before, present now"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			was, now := comparedBase(), comparedBase()
			if tc.before != nil {
				tc.before(was)
			}
			if tc.after != nil {
				tc.after(now)
			}
			c := compareResults(was, now)
			var got []change
			for _, ch := range c.Changes {
				got = append(got, change{ch.Analysis, ch.Kind, ch.Item, ch.Before, ch.After})
			}
			if !reflect.DeepEqual(got, tc.want) {
				t.Errorf("changes\ngot  %q\nwant %q", got, tc.want)
			}
			if c.Compared != tc.compared || c.PValues != tc.pvalues || c.PMoved != tc.moved {
				t.Errorf("compared %d, p-values %d, moved %d; want %d, %d, %d", c.Compared, c.PValues, c.PMoved, tc.compared, tc.pvalues, tc.moved)
			}
			if tc.text != "" && (len(c.Changes) == 0 || c.Changes[0].Text != tc.text) {
				t.Errorf("text of the first change\ngot  %+v\nwant %q", c.Changes, tc.text)
			}
		})
	}
}

// TestConclusionChangeJSON: the typed list that verify --json prints, with the p-values the
// decisions rest on, null where there is none.
func TestConclusionChangeJSON(t *testing.T) {
	was, now := comparedBase(), comparedBase()
	pr := &now.Analyses[0].PostHoc.Pairs[1]
	*pr.PAdjusted, pr.Reject = 0.081, false
	now.Analyses[0].PostHoc.Pairs[2].PAdjusted, now.Analyses[0].PostHoc.Pairs[2].NotComputable = nil, "both groups constant"
	now.Analyses[0].PostHoc.Pairs[2].Reject = false
	b, err := json.Marshal(compareResults(was, now).Changes)
	if err != nil {
		t.Fatal(err)
	}
	want := `[{"analysis":"a","kind":"pair","item":"A vs C","groups":["A","C"],"before":"rejected","after":"not rejected","p_name":"p_adj","p_before":0.012,"p_after":0.081,` +
		`"text":"analysis a, pair A vs C (dunn, holm): rejected before (p_adj 0.012), not rejected now (p_adj 0.081)"},` +
		`{"analysis":"a","kind":"pair","item":"B vs C","groups":["B","C"],"before":"rejected","after":"not computable","p_name":"p_adj","p_before":0.04,"p_after":null,` +
		`"text":"analysis a, pair B vs C (dunn, holm): rejected before (p_adj 0.04), not computable now (both groups constant)"}]`
	if string(b) != want {
		t.Errorf("JSON\ngot  %s\nwant %s", b, want)
	}
}

// TestReportConclusions: the checks verify adds: one summing up, one per changed conclusion.
func TestReportConclusions(t *testing.T) {
	was, now := comparedBase(), comparedBase()
	old, err := json.Marshal(was)
	if err != nil {
		t.Fatal(err)
	}
	r := &VerifyReport{}
	reportConclusions(r, old, now, "new.csv")
	if len(r.Checks) != 1 || r.Checks[0].Verdict != Pass ||
		r.Checks[0].Detail != "no conclusion at alpha changed on new.csv: 9 conclusions compared; 0 of 5 p-values moved" {
		t.Errorf("unchanged: %+v", r.Checks)
	}
	now.Analyses[1].Decision.Reject = false
	now.Analyses[0].PostHoc.Pairs[0].Reject = true
	r = &VerifyReport{}
	reportConclusions(r, old, now, "new.csv")
	var lines []string
	for _, c := range r.Checks {
		lines = append(lines, string(c.Verdict)+" "+string(c.Class)+" "+c.Name+": "+c.Detail)
	}
	want := []string{
		"fail conclusion-changed conclusions: 2 of 9 conclusions at alpha changed on new.csv (0 of 5 p-values moved); each one follows",
		"fail conclusion-changed changed: analysis a, pair A vs B (dunn, holm): not rejected before (p_adj 0.3), rejected now (p_adj 0.3)",
		"fail conclusion-changed changed: analysis e, omnibus kruskal-wallis: rejected before (p 0.01), not rejected now (p 0.01)",
	}
	if outcome(r.Checks) != ClassConclusion || len(r.ConclusionChanges) != 2 ||
		*r.Conclusions != (ConclusionCounts{Data: "new.csv", Compared: 9, Changed: 2, PValues: 5}) {
		t.Errorf("outcome %s, changes %v, counts %+v", outcome(r.Checks), r.ConclusionChanges, r.Conclusions)
	}
	if got := strings.Join(lines, "\n"); got != strings.Join(want, "\n") {
		t.Errorf("checks\ngot  %s\nwant %s", got, strings.Join(want, "\n"))
	}
}

// driftRef is testdata/reference/verify_drift_dunn.json: scipy 1.10.1 Kruskal-Wallis and
// Dunn z-tests with the statsmodels 0.13.5 Holm adjustment (Debian python3-scipy and
// python3-statsmodels) on the two data files of the archive the test reads.
type driftRef struct {
	Alpha float64   `json:"alpha"`
	Base  driftSide `json:"base"`
	New   driftSide `json:"new"`
}

type driftSide struct {
	P      float64     `json:"p"`
	Reject bool        `json:"reject"`
	Pairs  []driftPair `json:"pairs"`
}

type driftPair struct {
	Groups    [2]string `json:"groups"`
	PAdjusted float64   `json:"p_adjusted"`
	Reject    bool      `json:"reject"`
}

// TestVerifyDataPostHocFlip: a run on invented data, then verify --data on a second
// invented file on which the omnibus test still rejects but Dunn-Holm pair decisions flip.
// The flipped pairs and their adjusted p-values before and after are those of the
// independent scipy/statsmodels computation; the omnibus decision is not listed as changed.
func TestVerifyDataPostHocFlip(t *testing.T) {
	const archive = "../cmd/rankplan/testdata/script/verify_data_posthoc_flip.txtar"
	ar, err := txtar.ParseFile(archive)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, f := range ar.Files {
		if err := os.WriteFile(filepath.Join(dir, f.Name), f.Data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	var ref driftRef
	b, err := os.ReadFile("../testdata/reference/verify_drift_dunn.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if ref.Alpha != 0.05 || !ref.Base.Reject || !ref.New.Reject || len(ref.Base.Pairs) != 6 || len(ref.New.Pairs) != 6 {
		t.Fatalf("the reference data do not keep the omnibus rejection: %+v", ref)
	}
	rec, err := Run(context.Background(), filepath.Join(dir, "plan.yaml"), RunOptions{Out: filepath.Join(dir, "run"), Now: clock(), Getenv: noEnv})
	if err != nil {
		t.Fatal(err)
	}
	r := verify(t, rec.Dir, VerifyOptions{Data: filepath.Join(dir, "new.csv")})
	if r.Outcome != ClassConclusion {
		t.Fatalf("outcome %s: %+v", r.Outcome, r.Checks)
	}
	near := func(got *float64, want float64) bool {
		return got != nil && math.Abs(*got-want) <= 1e-12*want
	}
	var wantPairs, gotPairs []string
	for i, x := range ref.Base.Pairs {
		y := ref.New.Pairs[i]
		if x.Groups != y.Groups {
			t.Fatalf("reference pairs in another order: %v, %v", x.Groups, y.Groups)
		}
		if x.Reject != y.Reject {
			wantPairs = append(wantPairs, x.Groups[0]+" vs "+x.Groups[1])
		}
	}
	for _, ch := range r.ConclusionChanges {
		switch ch.Kind {
		case ConclusionPair:
			gotPairs = append(gotPairs, ch.Item)
			i := slices.IndexFunc(ref.Base.Pairs, func(p driftPair) bool { return p.Groups[0]+" vs "+p.Groups[1] == ch.Item })
			if i < 0 || !near(ch.PBefore, ref.Base.Pairs[i].PAdjusted) || !near(ch.PAfter, ref.New.Pairs[i].PAdjusted) || ch.PName != "p_adj" {
				t.Errorf("%s: p_adj %v -> %v, reference %+v", ch.Item, ch.PBefore, ch.PAfter, ch)
			}
		case ConclusionLetters:
		default:
			t.Errorf("a change other than of pairs and letters: %+v", ch)
		}
	}
	if len(wantPairs) == 0 || len(wantPairs) > 2 || !slices.Equal(gotPairs, wantPairs) {
		t.Errorf("flipped pairs %q, reference %q", gotPairs, wantPairs)
	}
	if c := r.Conclusions; c == nil || c.Compared != 12 || c.PValues != 7 || c.PMoved != 7 {
		t.Errorf("counts %+v: want 12 conclusions (omnibus, comparisons, 6 pairs, 4 letters), 7 p-values, all moved", c)
	}
	// On the recorded data nothing changes.
	r = verify(t, rec.Dir, VerifyOptions{Data: filepath.Join(dir, "base.csv")})
	if r.Outcome != Verified || len(r.ConclusionChanges) != 0 || r.Conclusions.PMoved != 0 {
		t.Errorf("recorded data: %s %+v %+v", r.Outcome, r.ConclusionChanges, r.Conclusions)
	}
}
