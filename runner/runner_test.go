package runner

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"rankplan/runner/results"
	"rankplan/spec"
	"rankplan/stats"
)

const planHead = `rankplan: 1
id: t
title: T
data:
  file: data.csv
  group: g
  outcome: y
`

const planTail = `alpha: 0.05
seed: 1
analyses:
  - id: a
    test: kruskal-wallis
    pvalue: {method: asymptotic}
`

// setup writes a plan (planHead + extra + planTail) and data.csv into a new folder.
func setup(t *testing.T, extra, csv string) *spec.Plan {
	t.Helper()
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "data.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "plan.yaml")
	if err := os.WriteFile(path, []byte(planHead+extra+planTail), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := spec.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func runAll(t *testing.T, p *spec.Plan) *results.Results {
	t.Helper()
	prep, err := Prepare(context.Background(), p)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Execute(context.Background(), prep, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := EncodeResults(res); err != nil {
		t.Fatal(err)
	}
	return res
}

func TestExclusions(t *testing.T) {
	csv := "g,y\nA,1\nA,NA\n,3\nB,2\nB, \nC,9\nC,NA\nD,4\nD,5\n"
	p := setup(t, "groups:\n  include: [B, A, D]\n", csv)
	res := runAll(t, p)
	a := res.Analyses[0]
	want := []results.Exclusion{
		{Group: "", Reason: results.ReasonMissingGroup, Rows: 1},
		{Group: "C", Reason: results.ReasonNotIncluded, Rows: 2},
		{Group: "A", Reason: results.ReasonMissingOutcome, Rows: 1},
		{Group: "B", Reason: results.ReasonMissingOutcome, Rows: 1},
	}
	if !reflect.DeepEqual(a.Excluded, want) {
		t.Errorf("excluded %+v\nwant %+v", a.Excluded, want)
	}
	var names []string
	for _, g := range a.Groups {
		names = append(names, fmt.Sprintf("%s:%d", g.Name, g.N))
	}
	if got := strings.Join(names, " "); got != "B:1 A:1 D:2" || a.N != 4 || res.Data.Rows != 9 {
		t.Errorf("groups %s N %d rows %d", got, a.N, res.Data.Rows)
	}
}

func TestMissingPolicyFail(t *testing.T) {
	p := setup(t, "", "g,y\nA,1\nA,NA\nB,2\n")
	p.Data.Missing.Policy = spec.FailOnMissing
	_, err := Prepare(context.Background(), p)
	if err == nil || !strings.Contains(err.Error(), `data.csv:3:3: column "y": missing value "NA"`) {
		t.Errorf("got %v", err)
	}
	var ie *InputError
	if !errors.As(err, &ie) {
		t.Errorf("%T is not an InputError", err)
	}
}

func TestGroupChecks(t *testing.T) {
	for _, tc := range []struct {
		name, extra, csv, want string
	}{
		{"include names a group not in data", "groups: {include: [A, Z]}\n", "g,y\nA,1\nB,2\n",
			`plan.yaml:8:23: groups.include[1]: no rows of group "Z" in column "g"`},
		{"order misses a data group", "groups: {order: [B, A]}\n", "g,y\nA,1\nB,2\nC,3\n",
			`plan.yaml:8:10: groups.order: does not list group "C" found in`},
		{"one group", "", "g,y\nA,1\nA,2\n", `plan.yaml:6:10: data.group: column "g" of`},
		{"empty after exclusion", "", "g,y\nA,1\nB,NA\nC,2\n", `group "B" has no observations of "y" left to analyse; 1 row(s) excluded as missing-outcome`},
		{"group column missing", "", "h,y\nA,1\nB,2\n", `plan.yaml:6:10: data.group: no column "g" in`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Prepare(context.Background(), setup(t, tc.extra, tc.csv))
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got %v\nwant it to contain %s", err, tc.want)
			}
		})
	}
}

func TestDefaultGroupOrderIsByLabel(t *testing.T) {
	res := runAll(t, setup(t, "", "g,y\nb,1\na,2\nc,3\na,4\n"))
	var names []string
	for _, g := range res.Analyses[0].Groups {
		names = append(names, g.Name)
	}
	if strings.Join(names, ",") != "a,b,c" {
		t.Errorf("order %v", names)
	}
}

func TestAllTied(t *testing.T) {
	res := runAll(t, setup(t, "", "g,y\nA,3\nA,3\nB,3\nC,3\n"))
	a := res.Analyses[0]
	if a.Status != "not-computable" || !strings.Contains(a.Reason, "all observations are tied") ||
		a.KruskalWallis != nil || a.PValue != nil || a.Decision != nil {
		t.Errorf("%+v", a)
	}
}

// TestTinyPValue: two perfectly separated groups of 1000 give H* = 1499.25 on 1 df, whose
// chi-square tail is below the smallest normal double. The value is then null and the log10
// is given. Reference: for 1 df, Q = erfc(sqrt(H/2)) (common practice), and the log10 of
// erfc(z) for large z is log10(exp(-z^2)/(z sqrt(pi)) (1 - 1/(2z^2) + 3/(4z^4))), the
// asymptotic series of erfc (Abramowitz & Stegun 1964, 7.1.23).
func TestTinyPValue(t *testing.T) {
	var b strings.Builder
	b.WriteString("g,y\n")
	for i := 0; i < 1000; i++ {
		fmt.Fprintf(&b, "A,%d\nB,%d\n", i, 10000+i)
	}
	res := runAll(t, setup(t, "", b.String()))
	a := res.Analyses[0]
	if a.PValue.Value != nil {
		t.Fatalf("p value %v, want null", *a.PValue.Value)
	}
	h := a.KruskalWallis.H
	// H for two separated groups of n: 12/(N(N+1)) Σ n (R̄_i - (N+1)/2)^2 with R̄ = (n+1)/2, n + (n+1)/2.
	if want := 3.0 * 2000 * 2000 / 4 / 2001; math.Abs(h-want) > 1e-9*want {
		t.Errorf("H = %v, want %v", h, want)
	}
	z := math.Sqrt(h / 2)
	want := (-z*z - math.Log(z*math.Sqrt(math.Pi)) + math.Log1p(-1/(2*z*z)+3/(4*z*z*z*z))) / math.Ln10
	if math.Abs(a.PValue.Log10-want) > 1e-6 {
		t.Errorf("log10 p = %v, want %v", a.PValue.Log10, want)
	}
	if !a.Decision.Reject {
		t.Error("not rejected")
	}
}

// TestInvariance: the results do not depend on the order of rows, and a strictly increasing
// transform of the outcome leaves H, p and the ranks unchanged.
func TestInvariance(t *testing.T) {
	rows := []string{"A,3.1", "B,2.5", "A,4.0", "C,7.7", "B,2.5", "C,6.0", "A,1.2", "B,9.9", "C,6.0", "A,3.1"}
	rev := make([]string, len(rows))
	exp := make([]string, len(rows))
	for i, r := range rows {
		rev[len(rows)-1-i] = r
		var g string
		var y float64
		fmt.Sscanf(strings.Replace(r, ",", " ", 1), "%s %g", &g, &y)
		exp[i] = fmt.Sprintf("%s,%.17g", g, math.Exp(y)*10)
	}
	base := runAll(t, setup(t, "", "g,y\n"+strings.Join(rows, "\n")+"\n"))
	other := runAll(t, setup(t, "", "g,y\n"+strings.Join(rev, "\n")+"\n"))
	base.Data, other.Data = results.Data{}, results.Data{}
	if !reflect.DeepEqual(base, other) {
		t.Errorf("row order changed the results")
	}
	mono := runAll(t, setup(t, "", "g,y\n"+strings.Join(exp, "\n")+"\n"))
	b, m := base.Analyses[0], mono.Analyses[0]
	if *b.KruskalWallis != *m.KruskalWallis || *b.PValue.Value != *m.PValue.Value {
		t.Errorf("transform changed H or p: %+v %+v", b.KruskalWallis, m.KruskalWallis)
	}
	for i := range b.Groups {
		if b.Groups[i].RankSum != m.Groups[i].RankSum {
			t.Errorf("rank sums differ")
		}
	}
}

// TestAgainstStats: the runner reports what package stats computes, and H agrees with
// scipy 1.10.1 stats.kruskal on the same invented data (value frozen here from
// /usr/bin/python3 -c "from scipy import stats; print(stats.kruskal([3.1,4.0,1.2,3.1],[2.5,2.5,9.9],[7.7,6.0,6.0]))").
func TestAgainstStats(t *testing.T) {
	res := runAll(t, setup(t, "", "g,y\nA,3.1\nB,2.5\nA,4.0\nC,7.7\nB,2.5\nC,6.0\nA,1.2\nB,9.9\nC,6.0\nA,3.1\n"))
	a := res.Analyses[0]
	r, err := stats.Rank([]int32{0, 1, 0, 2, 1, 2, 0, 1, 2, 0}, []float64{3.1, 2.5, 4.0, 7.7, 2.5, 6.0, 1.2, 9.9, 6.0, 3.1}, 3)
	if err != nil {
		t.Fatal(err)
	}
	kw, _ := stats.KruskalWallisTest(r)
	if a.KruskalWallis.H != kw.H || *a.PValue.Value != kw.P {
		t.Errorf("runner %v %v, stats %v %v", a.KruskalWallis.H, *a.PValue.Value, kw.H, kw.P)
	}
	const scipyH, scipyP = 3.166666666666667, 0.20528965757990922
	if math.Abs(kw.H-scipyH) > 1e-12*scipyH || math.Abs(kw.P-scipyP) > 1e-10*scipyP {
		t.Errorf("H %v p %v; scipy %v %v", kw.H, kw.P, scipyH, scipyP)
	}
}

// TestWriteNewFile: a file is written once and never replaced, with no temporary file
// left beside it; encoding the same results twice gives the same bytes.
func TestWriteNewFile(t *testing.T) {
	res := runAll(t, setup(t, "", "g,y\nA,1\nB,2\nA,3\n"))
	dir := t.TempDir()
	first, err := EncodeResults(res)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "results.json")
	if err := WriteNewFile(path, first); err != nil {
		t.Fatal(err)
	}
	var ie *InputError
	if err := WriteNewFile(path, []byte("x")); !errors.As(err, &ie) {
		t.Errorf("second write: %v, want an InputError", err)
	}
	if err := writeFileAtomic(path, []byte("x")); err == nil {
		t.Error("writeFileAtomic replaced an existing file")
	}
	again, _ := os.ReadFile(path)
	if !bytes.Equal(first, again) {
		t.Error("results.json changed")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("leftover files: %v", entries)
	}
	// Determinism: a second run of the same plan gives the same bytes.
	b2, err := EncodeResults(res)
	if err != nil || !bytes.Equal(first, b2) {
		t.Errorf("encoding differs: %v", err)
	}
}

// methodPlan is a plan with one analysis of the given p-value block and effect-size block.
func methodPlan(t *testing.T, pvalue, effect, csv string) *spec.Plan {
	t.Helper()
	return methodPlanWith(t, pvalue, effect, "", csv)
}

// tiedToy is the constructed tied example of docs/methods.md §1.5: exact p = 47/1925.
const tiedToy = "g,y\nA,1\nA,2\nA,2\nA,3\nB,2\nB,3\nB,3\nB,4\nC,3\nC,4\nC,5\nC,5\n"

func TestPValueMethods(t *testing.T) {
	exact := runAll(t, methodPlan(t, "{method: exact}", "{interval: none}", tiedToy)).Analyses[0]
	if exact.PValue.Method != "exact" || math.Abs(*exact.PValue.Value-47.0/1925) > 1e-13 || exact.PValue.Exact == nil ||
		exact.EffectSizes.Interval != nil {
		t.Errorf("exact: %+v", exact.PValue)
	}
	auto := runAll(t, methodPlan(t, "{method: auto, resamples: 1000}", "{interval: none}", tiedToy)).Analyses[0]
	if auto.PValue.Method != "exact" || auto.PValue.Requested != "auto" || *auto.PValue.Value != *exact.PValue.Value ||
		!strings.Contains(auto.PValue.Reason, "fits the work budget") {
		t.Errorf("auto: %+v", auto.PValue)
	}
	mc := runAll(t, methodPlan(t, "{method: permutation, resamples: 20000}", "{interval: none}", tiedToy)).Analyses[0]
	m := mc.PValue.MonteCarlo
	if mc.PValue.Method != "permutation" || m == nil || m.Resamples != "20000" || !(m.CI.Low <= 47.0/1925 && 47.0/1925 <= m.CI.High) {
		t.Errorf("permutation: %+v %+v", mc.PValue, m)
	}
	for _, a := range []results.Analysis{exact, auto, mc} {
		// chi-square p of H* = 6.630556 on 2 df, 0.036324 (docs/methods.md §1.5, verified there with scipy 1.10.1)
		if math.Abs(*a.AsymptoticP.Value-0.036324) > 5e-7 {
			t.Errorf("asymptotic p beside %s: %v", a.PValue.Method, *a.AsymptoticP.Value)
		}
	}
}

// TestAutoFallsBack: a design too large for the exact budget (four groups of 40, no ties)
// makes auto use Monte Carlo and say why; the plan method exact is refused with a
// positioned error instead.
func TestAutoFallsBack(t *testing.T) {
	var b strings.Builder
	b.WriteString("g,y\n")
	for i := 0; i < 160; i++ {
		fmt.Fprintf(&b, "G%d,%d\n", i%4, (i*7919)%1000)
	}
	auto := runAll(t, methodPlan(t, "{method: auto, resamples: 500}", "{interval: none}", b.String())).Analyses[0]
	if auto.PValue.Method != "permutation" || !strings.Contains(auto.PValue.Reason, "does not fit the work budget") {
		t.Errorf("auto: %+v", auto.PValue)
	}
	prep, err := Prepare(context.Background(), methodPlan(t, "{method: exact}", "{interval: none}", b.String()))
	if err != nil {
		t.Fatal(err)
	}
	_, err = Execute(context.Background(), prep, Options{})
	var ie *InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "analyses[0].pvalue.method: the exact p-value of this design does not fit the work budget") {
		t.Errorf("exact over budget: %v", err)
	}
}

// TestWorkersDoNotChangeResults: the same plan gives the same results.json bytes for any
// number of workers (Monte Carlo and bootstrap both resample).
func TestWorkersDoNotChangeResults(t *testing.T) {
	p := methodPlan(t, "{method: permutation, resamples: 9000}", "{interval: bootstrap, resamples: 700}", tiedToy)
	prep, err := Prepare(context.Background(), p)
	if err != nil {
		t.Fatal(err)
	}
	var first []byte
	for _, w := range []int{1, 2, 3, 8} {
		res, err := Execute(context.Background(), prep, Options{Workers: w})
		if err != nil {
			t.Fatal(err)
		}
		b, err := EncodeResults(res)
		if err != nil {
			t.Fatal(err)
		}
		if first == nil {
			first = b
		} else if !bytes.Equal(first, b) {
			t.Errorf("workers = %d changed results.json", w)
		}
	}
}

// TestMethodInvariance: H and every p-value are unchanged under a strictly increasing
// transform of the outcome and under renaming the groups (same seed, same analysis id,
// same group order); exact and asymptotic p also under reordering rows.
func TestMethodInvariance(t *testing.T) {
	transformed := "g,y\nA,10\nA,100\nA,100\nA,1000\nB,100\nB,1000\nB,1000\nB,10000\nC,1000\nC,10000\nC,100000\nC,100000\n"
	renamed := strings.NewReplacer("A,", "a1,", "B,", "b2,", "C,", "c3,").Replace(tiedToy)
	lines := strings.Split(strings.TrimSpace(tiedToy), "\n")
	reordered := lines[0] + "\n"
	for i := len(lines) - 1; i >= 1; i-- {
		reordered += lines[i] + "\n"
	}
	for _, pv := range []string{"{method: exact}", "{method: permutation, resamples: 5000}"} {
		base := runAll(t, methodPlan(t, pv, "{interval: bootstrap, resamples: 300}", tiedToy)).Analyses[0]
		for name, csv := range map[string]string{"transformed": transformed, "renamed": renamed, "reordered": reordered} {
			got := runAll(t, methodPlan(t, pv, "{interval: bootstrap, resamples: 300}", csv)).Analyses[0]
			if *got.KruskalWallis != *base.KruskalWallis || *got.AsymptoticP.Value != *base.AsymptoticP.Value {
				t.Errorf("%s %s: H or asymptotic p changed", pv, name)
			}
			// The warnings name the groups (renamed here); everything else must stay.
			gw, bw := got.EffectSizes.Interval.Warnings, base.EffectSizes.Interval.Warnings
			got.EffectSizes.Interval.Warnings, base.EffectSizes.Interval.Warnings = nil, nil
			if !reflect.DeepEqual(got.EffectSizes, base.EffectSizes) || len(gw) != 1 || len(bw) != 1 {
				// The bootstrap draws from each group's sorted values, so it does not depend
				// on row order, and its H* values do not change under increasing transforms
				// or renaming.
				t.Errorf("%s %s: effect sizes changed: %+v vs %+v", pv, name, got.EffectSizes.Interval, base.EffectSizes.Interval)
			}
			base.EffectSizes.Interval.Warnings = bw
			if name == "reordered" && strings.Contains(pv, "permutation") {
				// Row order changes which labels the stream shuffles, so the Monte Carlo
				// estimate may move, within its Monte Carlo error.
				if d := math.Abs(*got.PValue.Value - *base.PValue.Value); d > 4*got.PValue.MonteCarlo.SE+4*base.PValue.MonteCarlo.SE {
					t.Errorf("reordered permutation p moved by %v", d)
				}
				continue
			}
			if *got.PValue.Value != *base.PValue.Value {
				t.Errorf("%s %s: p %v, base %v", pv, name, *got.PValue.Value, *base.PValue.Value)
			}
		}
	}
}

// TestPostHoc: Dunn with Holm on the Dobson (1983) plant weights gives the z and adjusted p of docs/methods.md §3.1
// [V] (z = 1.117725, −1.689290, −2.807015; Holm 0.263684, 0.182328, 0.015001), pairwise
// effect sizes of docs/methods.md §5, and letters consistent with the decisions; gating skips
// the comparisons when the omnibus test does not reject.
func TestPostHoc(t *testing.T) {
	csv := dobson1983PlantWeightsCSV()
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "data.csv"), []byte(csv), 0o644)
	src := planHead + "alpha: 0.05\nseed: 1\nanalyses:\n  - id: a\n    test: kruskal-wallis\n    pvalue: {method: asymptotic}\n" +
		"    effect_size: {interval: none}\n    posthoc: {method: dunn, adjust: holm}\n"
	os.WriteFile(filepath.Join(dir, "plan.yaml"), []byte(src), 0o644)
	p, err := spec.Load(filepath.Join(dir, "plan.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	ph := runAll(t, p).Analyses[0].PostHoc
	if ph == nil || !ph.Ran || len(ph.Pairs) != 3 {
		t.Fatalf("%+v", ph)
	}
	wantZ := []float64{1.117725, -1.689290, -2.807015}
	wantHolm := []float64{0.263684, 0.182328, 0.015001}
	for i, pr := range ph.Pairs {
		if math.Abs(*pr.Statistic-wantZ[i]) > 5e-7 || math.Abs(*pr.PAdjusted-wantHolm[i]) > 5e-7 {
			t.Errorf("pair %v: z %v holm %v", pr.Groups, *pr.Statistic, *pr.PAdjusted)
		}
	}
	if ph.Pairs[2].Groups != [2]string{"trt1", "trt2"} || !ph.Pairs[2].Reject || ph.Pairs[0].Reject ||
		math.Abs(ph.Pairs[2].CliffsDelta-(-0.68)) > 1e-12 || math.Abs(ph.Pairs[2].HodgesLehmann.Shift-(-0.945)) > 1e-12 {
		t.Errorf("trt1 vs trt2: %+v", ph.Pairs[2])
	}
	// The Moses interval (c = 23 for 10 and 10 values, coverage 1 - 2 P0(U <= 23) =
	// 0.95674, testdata/reference/moses_exact.json): ctrl and trt1 share the value 4.17, the
	// other pairs have no ties.
	for i, pr := range ph.Pairs {
		hl := pr.HodgesLehmann
		if hl.Coverage == nil || math.Abs(*hl.Coverage-0.95674) > 5e-6 || hl.IndexMethod != "exact" || !hl.LevelAttainable ||
			hl.TiedValues != (i == 0) {
			t.Errorf("pair %v: %+v", pr.Groups, hl)
		}
	}
	// Only trt1 and trt2 differ, so (worked by hand) ctrl holds both letters and each
	// treatment one of them.
	wantLetters := []results.GroupLetters{
		{Group: "ctrl", Letters: []string{"a", "b"}, Display: "ab"},
		{Group: "trt1", Letters: []string{"a"}, Display: "a"},
		{Group: "trt2", Letters: []string{"b"}, Display: "b"},
	}
	if !reflect.DeepEqual(ph.Letters, wantLetters) || ph.LettersMethod != "insert-absorb-sweep" {
		t.Errorf("letters %+v (%s), want %+v", ph.Letters, ph.LettersMethod, wantLetters)
	}
	// Gating: on the tied toy data at alpha 0.01 the omnibus test does not reject.
	p2 := methodPlan(t, "{method: asymptotic}", "{interval: none}", tiedToy)
	p2.Alpha = 0.01
	p2.Analyses[0].PostHoc = spec.PostHocPlan{Method: spec.Conover, Adjust: spec.Holm, When: "significant"}
	ph2 := runAll(t, p2).Analyses[0].PostHoc
	if ph2 == nil || ph2.Ran || ph2.Pairs != nil || !strings.Contains(ph2.Why, "did not reject") {
		t.Errorf("gated: %+v", ph2)
	}
	p2.Analyses[0].PostHoc.When = "always"
	p2.Analyses[0].PostHoc.Method = spec.RankSum
	ph3 := runAll(t, p2).Analyses[0].PostHoc
	if !ph3.Ran || len(ph3.Pairs) != 3 || ph3.Pairs[0].PMethod != "exact" {
		t.Errorf("always, rank-sum: %+v", ph3)
	}
}

// TestSimultaneousPostHoc runs Nemenyi and DSCF from a plan on the plant weights of Dobson (1983;
// docs/methods.md §3.3-3.4, values verified there with scipy 1.10.1): the p-values come from
// the studentized range, need no adjustment, and the results say so.
func TestSimultaneousPostHoc(t *testing.T) {
	csv := dobson1983PlantWeightsCSV()
	for _, tc := range []struct {
		method spec.PostHoc
		stat   string
		p      []float64
	}{
		{spec.Nemenyi, "q", []float64{0.503088, 0.209259, 0.0138549}},
		{spec.DSCF, "-W*", []float64{0.382106, 0.141586, 0.0274497}},
	} {
		p := methodPlan(t, "{method: asymptotic}", "{interval: none}", csv)
		p.Analyses[0].PostHoc = spec.PostHocPlan{Method: tc.method, Adjust: spec.NoAdjustment, When: "always"}
		ph := runAll(t, p).Analyses[0].PostHoc
		if ph.Statistic != tc.stat || !strings.Contains(ph.Simultaneous, "simultaneous by construction") || len(ph.Pairs) != 3 {
			t.Fatalf("%s: %+v", tc.method, ph)
		}
		for i, pr := range ph.Pairs {
			if math.Abs(*pr.P-tc.p[i]) > 5e-7 || *pr.PAdjusted != *pr.P || pr.PMethod != "studentized-range" || pr.Reject != (*pr.P <= 0.05) {
				t.Errorf("%s pair %v: %+v, want p %v", tc.method, pr.Groups, pr, tc.p[i])
			}
		}
		if tc.method == spec.Nemenyi && !strings.Contains(ph.Note, "equal group sizes (n = 10 each)") {
			t.Errorf("nemenyi note %q", ph.Note)
		}
	}
	p := methodPlan(t, "{method: asymptotic}", "{interval: none}", tiedToy+"A,9\n")
	p.Analyses[0].PostHoc = spec.PostHocPlan{Method: spec.Nemenyi, Adjust: spec.NoAdjustment, When: "always"}
	if ph := runAll(t, p).Analyses[0].PostHoc; !strings.HasPrefix(ph.Note, "unequal group sizes") {
		t.Errorf("unequal sizes note %q", ph.Note)
	}
}

// dobson1983PlantWeightsCSV holds the plant weights of Dobson (1983; docs/methods.md §8.2) as a data file.
func dobson1983PlantWeightsCSV() string {
	csv := "g,y\n"
	for i, g := range [][]float64{
		{4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14},
		{4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69},
		{6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26}} {
		for _, v := range g {
			csv += fmt.Sprintf("%s,%v\n", []string{"ctrl", "trt1", "trt2"}[i], v)
		}
	}
	return csv
}

// TestEffectIntervalCreamTrial runs examples/cream-trial: its sleep analysis does not
// reject (permutation p = 0.354, asymptotic p = 0.347, both from the example's golden
// results), so its noncentral interval of the population effect must contain 0, as the
// test says; the same data with the plan switched to the percentile bootstrap give an
// interval that leaves 0 out, as the bootstrap of a statistic that is never negative does.
func TestEffectIntervalCreamTrial(t *testing.T) {
	p, err := spec.Load("../examples/cream-trial/plan.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// The sleep analysis alone (the others take the exact distribution's time).
	for _, a := range p.Analyses {
		if a.ID == "sleep" {
			p.Analyses, p.Multiplicity = []spec.Analysis{a}, nil
		}
	}
	a := runAll(t, p).Analyses[0]
	if a.ID != "sleep" || math.Abs(*a.PValue.Value-0.354) > 0.01 || math.Abs(*a.AsymptoticP.Value-0.34744) > 5e-6 {
		t.Fatalf("sleep p %v, asymptotic %v", *a.PValue.Value, *a.AsymptoticP.Value)
	}
	iv := a.EffectSizes.Interval
	if iv == nil || iv.Method != spec.NoncentralInterval || iv.PopulationEffect == nil || iv.PopulationEffect.Low != 0 ||
		iv.Noncentrality.Low != 0 || !(iv.PopulationEffect.High > a.EffectSizes.EpsilonSquared) || iv.Level != 0.95 || iv.Warnings != nil {
		t.Errorf("sleep interval %+v", iv)
	}
	p.Analyses[0].EffectSize.Interval, p.Analyses[0].EffectSize.Resamples = spec.BootstrapInterval, 1000
	p.Analyses[0].PValue = spec.PValue{Method: spec.Asymptotic}
	b := runAll(t, p).Analyses[0].EffectSizes.Interval
	if b == nil || b.Method != spec.BootstrapInterval || !(b.EpsilonSquared.Low > 0) {
		t.Errorf("sleep bootstrap interval %+v", b)
	}
}

// TestEffectIntervalMethods: the plan's effect_size.interval picks the interval, and small
// groups bring warnings that name them: with a group of one observation, the bootstrap's
// (whose resamples of that group never vary) and the chi-square approximation's. With one
// observation per group the noncentral interval says why it has no bounds. The mean-rank
// interval of a single top value among nine is cut at 9 and flagged, that of the four
// ranks 5..8 (mean 6.5, half-width 2.0) at 9 − 3/2, that of the ranks 1..4 at 5/2.
func TestEffectIntervalMethods(t *testing.T) {
	oneTop := "g,y\nA,1\nA,2\nA,3\nA,4\nB,5\nB,6\nB,7\nB,8\nC,9\n"
	for _, tc := range []struct {
		name, effect, csv string
		check             func(a results.Analysis) bool
	}{
		{"none", "{interval: none}", tiedToy, func(a results.Analysis) bool { return a.EffectSizes.Interval == nil }},
		{"default", "", tiedToy, func(a results.Analysis) bool {
			iv := a.EffectSizes.Interval
			return iv.Method == "noncentral" && iv.PopulationEffect != nil && len(iv.Warnings) == 1 &&
				strings.HasPrefix(iv.Warnings[0], `"A" (n = 4), "B" (n = 4), "C" (n = 4) have fewer than 5 observations: the chi-square approximation`)
		}},
		{"bootstrap, n = 1", "{interval: bootstrap, resamples: 500}", oneTop, func(a results.Analysis) bool {
			iv := a.EffectSizes.Interval
			return iv.Method == "bootstrap" && iv.Resamples == "500" && iv.EpsilonSquared != nil && iv.EtaSquaredH != nil &&
				len(iv.Warnings) == 1 && strings.HasPrefix(iv.Warnings[0], `"A" (n = 4), "B" (n = 4), "C" (n = 1) have fewer than 5 observations: resampling within a group`)
		}},
		{"noncentral, n = 1", "{interval: noncentral}", oneTop, func(a results.Analysis) bool {
			iv := a.EffectSizes.Interval
			mr := a.Groups[2].MeanRankInterval
			return iv.PopulationEffect != nil && iv.PopulationEffect.Low >= 0 && iv.PopulationEffect.High <= 1 &&
				mr.Clipped && mr.High == 9 && mr.Low > 1 && a.Groups[1].MeanRankInterval.High == 7.5 &&
				a.Groups[0].MeanRankInterval.Low == 2.5 && a.Groups[0].MeanRankInterval.Clipped
		}},
		{"N = k", "{interval: noncentral}", "g,y\nA,1\nB,2\nC,3\n", func(a results.Analysis) bool {
			iv := a.EffectSizes.Interval
			return iv.NotComputed != "" && iv.PopulationEffect == nil && iv.Noncentrality == nil && a.EffectSizes.EtaSquaredH == nil &&
				iv.Warnings == nil
		}},
	} {
		a := runAll(t, methodPlan(t, "{method: asymptotic}", tc.effect, tc.csv)).Analyses[0]
		if !tc.check(a) {
			t.Errorf("%s: %+v; groups %+v", tc.name, a.EffectSizes.Interval, a.Groups)
		}
	}
}
