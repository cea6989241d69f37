package stats

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/big"
	"os"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"

	"rankplan/stats/stream"
)

var update = flag.Bool("update", false,
	"rewrite testdata/permutation/golden.json from the current code (read the diff: any change breaks reproducibility)")

// Designs of the permutation tests.
var (
	// tiedToy is the tied toy data of docs/methods.md §1.5 (constructed there); exact
	// conditional p = 47/1925 [V there], confirmed below by brute force and by
	// kw_permutation_ref.py.
	tiedToy = [][]float64{{1, 2, 2, 3}, {2, 3, 3, 4}, {3, 4, 5, 5}}
	// inventedP03 is invented for these tests (ties at 2.2 and 4.4); its exact p is
	// 2857/9240 = 0.30920 (brute force here and in kw_permutation_ref.py).
	inventedP03 = [][]float64{{3.1, 4.7, 2.2, 5.0}, {4.1, 5.9, 6.3, 3.8, 4.4}, {2.2, 4.4, 3.3}}
)

// dobson1983PlantWeightsExactP is the exact conditional p of the Dobson (1983) plant weights from docs/methods.md §1.5 [V]
// (a DP over tie blocks there, with a Monte Carlo check); it is printed to 6 decimals.
const dobson1983PlantWeightsExactP = 0.014592

// permRun runs KruskalWallisPermutation on groups (rows in group order).
func permRun(t testing.TB, groups [][]float64, opt PermutationOptions) Permutation {
	t.Helper()
	g, v := flatten(groups)
	return permRunRows(t, g, v, len(groups), opt)
}

func permRunRows(t testing.TB, g []int32, v []float64, k int, opt PermutationOptions) Permutation {
	t.Helper()
	r, err := Rank(g, v, k)
	if err != nil {
		t.Fatal(err)
	}
	p, err := KruskalWallisPermutation(context.Background(), g, v, k, r, opt)
	if err != nil {
		t.Fatalf("KruskalWallisPermutation: %v", err)
	}
	return p
}

func lcmInt64(xs []int64) int64 {
	l := int64(1)
	for _, x := range xs {
		a, b := l, x
		for b != 0 {
			a, b = b, a%b
		}
		l = l / a * x
	}
	return l
}

// definitionStat returns the rows' labels of groups, the group sizes, and T·L of a
// labelling in int64 from the definition (doubled rank 2·#smaller + #equal + 1,
// L = lcm of the sizes), for designs small enough.
func definitionStat(groups [][]float64) (g []int32, sizes []int64, stat func(lab []int32) int64) {
	g, v := flatten(groups)
	d := naiveRank2(v)
	sizes = make([]int64, len(groups))
	for i, x := range groups {
		sizes[i] = int64(len(x))
	}
	l := lcmInt64(sizes)
	return g, sizes, func(lab []int32) int64 {
		s := make([]int64, len(sizes))
		for j, x := range lab {
			s[x] += d[j]
		}
		var q int64
		for i := range s {
			q += s[i] * s[i] * (l / sizes[i])
		}
		return q
	}
}

// bruteExactP enumerates every assignment of the rows to groups of the observed sizes
// and returns #{T·L >= observed} and the number of assignments, with T·L computed in
// int64 from the definition (the designs here are small enough).
func bruteExactP(groups [][]float64) (hits, total int64) {
	g, sizes, stat := definitionStat(groups)
	obs := stat(g)
	left := slices.Clone(sizes)
	lab := make([]int32, len(g))
	var rec func(j int)
	rec = func(j int) {
		if j == len(lab) {
			total++
			if stat(lab) >= obs {
				hits++
			}
			return
		}
		for i := range left {
			if left[i] > 0 {
				left[i]--
				lab[j] = int32(i)
				rec(j + 1)
				left[i]++
			}
		}
	}
	rec(0)
	return hits, total
}

// permRef is testdata/permutation/kw_permutation_ref.json (kw_permutation_ref.py:
// Python 3.11.2 with the independent stream of stats/stream/testdata/stream_ref.py,
// brute-force fractions, scipy 1.10.1 stats.beta.ppf).
type permRef struct {
	Versions map[string]string `json:"versions"`
	Runs     []struct {
		Design     string      `json:"design"`
		Groups     [][]float64 `json:"groups"`
		Seed       string      `json:"seed"`
		AnalysisID string      `json:"analysis_id"`
		Resamples  string      `json:"resamples"`
		Exceed     string      `json:"exceed"`
	} `json:"runs"`
	Exact []struct {
		Design      string      `json:"design"`
		Groups      [][]float64 `json:"groups"`
		Assignments int64       `json:"assignments"`
		Num         int64       `json:"num"`
		Den         int64       `json:"den"`
	} `json:"exact"`
	Summaries []struct {
		B      string  `json:"b"`
		M      string  `json:"m"`
		P      float64 `json:"p"`
		SE     float64 `json:"se"`
		CILow  float64 `json:"ci_low"`
		CIHigh float64 `json:"ci_high"`
	} `json:"summaries"`
}

func loadPermRef(t *testing.T) *permRef {
	t.Helper()
	b, err := os.ReadFile("testdata/permutation/kw_permutation_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref permRef
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if ref.Versions["scipy"] != "1.10.1" || ref.Versions["python"] != "3.11.2" {
		t.Fatalf("reference made with %v; the tests cite scipy 1.10.1 and Python 3.11.2", ref.Versions)
	}
	if len(ref.Runs) < 3 || len(ref.Exact) < 2 || len(ref.Summaries) < 10 {
		t.Fatal("kw_permutation_ref.json is incomplete")
	}
	return &ref
}

func parseInt64(t *testing.T, s string) int64 {
	t.Helper()
	v, err := strconv.ParseInt(s, 10, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// TestPermutationPythonReference: the exceedance counts b agree exactly with the
// independent Python implementation of the documented scheme (kw_permutation_ref.py),
// over several blocks including a partial last one.
func TestPermutationPythonReference(t *testing.T) {
	ref := loadPermRef(t)
	for _, c := range ref.Runs {
		t.Run(fmt.Sprintf("%s/m=%s", c.Design, c.Resamples), func(t *testing.T) {
			seed, _ := strconv.ParseUint(c.Seed, 10, 64)
			p := permRun(t, c.Groups, PermutationOptions{Seed: seed, AnalysisID: c.AnalysisID, Resamples: parseInt64(t, c.Resamples), Workers: 2})
			if want := parseInt64(t, c.Exceed); p.Exceed != want {
				t.Errorf("Exceed = %d, Python reference %d", p.Exceed, want)
			}
			if p.Comparison != ComparisonExact {
				t.Errorf("Comparison = %q, want %q", p.Comparison, ComparisonExact)
			}
		})
	}
}

// TestPermutationBruteForce checks the enumeration oracle used below against the
// published and independent values: 47/1925 for the tied toy (docs/methods.md §1.5 [V]) and
// the Python brute force (kw_permutation_ref.py) for both small designs.
func TestPermutationBruteForce(t *testing.T) {
	ref := loadPermRef(t)
	for _, c := range ref.Exact {
		hits, total := bruteExactP(c.Groups)
		if total != c.Assignments || big.NewRat(hits, total).Cmp(big.NewRat(c.Num, c.Den)) != 0 {
			t.Errorf("%s: brute force %d/%d, Python %d/%d of %d", c.Design, hits, total, c.Num, c.Den, c.Assignments)
		}
	}
	if hits, total := bruteExactP(tiedToy); big.NewRat(hits, total).Cmp(big.NewRat(47, 1925)) != 0 {
		t.Errorf("tied toy: %d/%d, docs/methods.md §1.5 47/1925", hits, total)
	}
}

// TestPermutationConvergence: with 10^6 resamples the exact p lies inside the 99%
// Clopper-Pearson interval on three designs (fixed seeds, so this is deterministic).
func TestPermutationConvergence(t *testing.T) {
	hitsB, totalB := bruteExactP(inventedP03)
	cases := []struct {
		name   string
		groups [][]float64
		exact  float64
	}{
		{"tied toy", tiedToy, 47.0 / 1925},                                               // docs/methods.md §1.5 [V], brute force
		{"invented p 0.3", inventedP03, float64(hitsB) / float64(totalB)},                // brute force: 2857/9240
		{"Dobson1983PlantWeights", dobson1983PlantWeights, dobson1983PlantWeightsExactP}, // docs/methods.md §1.5 [V]
	}
	for i, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := permRun(t, c.groups, PermutationOptions{Seed: uint64(1000 + i), AnalysisID: "convergence", Resamples: 1_000_000, Level: 0.99})
			if !(p.CILow <= c.exact && c.exact <= p.CIHigh) {
				t.Errorf("exact p %.6f outside the 99%% interval [%.6f, %.6f] (P = %.6f, b = %d)", c.exact, p.CILow, p.CIHigh, p.P, p.Exceed)
			}
			if w := p.CIHigh - p.CILow; w > 6*p.SE || w < 4*p.SE {
				t.Errorf("interval width %.3g is not about 2·2.576·SE = %.3g", w, 5.15*p.SE)
			}
		})
	}
}

// TestPermutationWorkers: the whole result is identical for 1, 2, 3 and 8 workers and
// for the default, over 5 full blocks and a partial one.
func TestPermutationWorkers(t *testing.T) {
	opt := PermutationOptions{Seed: 42, AnalysisID: "workers", Resamples: 5*PermutationBlockSize + 123}
	var first Permutation
	for i, w := range []int{1, 2, 3, 8, 0, -1} {
		opt.Workers = w
		p := permRun(t, inventedP03, opt)
		if i == 0 {
			first = p
			continue
		}
		if p != first {
			t.Errorf("Workers = %d: %+v, Workers = 1: %+v", w, p, first)
		}
	}
}

// TestPermutationStreams: another seed or another analysis id gives another stream
// (different b on a design with p near 0.3); the same options give the same b.
func TestPermutationStreams(t *testing.T) {
	base := PermutationOptions{Seed: 1, AnalysisID: "a", Resamples: 100_000}
	p0 := permRun(t, inventedP03, base)
	if again := permRun(t, inventedP03, base); again != p0 {
		t.Errorf("same options, different results: %+v, %+v", p0, again)
	}
	seed := base
	seed.Seed = 2
	if p := permRun(t, inventedP03, seed); p.Exceed == p0.Exceed {
		t.Errorf("seeds 1 and 2 both give b = %d", p.Exceed)
	}
	id := base
	id.AnalysisID = "b"
	if p := permRun(t, inventedP03, id); p.Exceed == p0.Exceed {
		t.Errorf("analysis ids a and b both give b = %d", p.Exceed)
	}
}

// TestPermutationOneResample: m = 1 gives b in {0, 1}; the tied toy with seed 12345
// gives b = 0 (Python reference), so P = 1/2, SE = 0 and the interval at the default
// level 0.95 is [0, Beta⁻¹(0.975; 1, 1)] = [0, 0.975] (scipy 1.10.1 stats.beta.ppf).
func TestPermutationOneResample(t *testing.T) {
	p := permRun(t, tiedToy, PermutationOptions{Seed: 12345, AnalysisID: "tied-toy", Resamples: 1})
	want := Permutation{Resamples: 1, Exceed: 0, P: 0.5, SE: 0, Level: 0.95, CILow: 0, CIHigh: 0.975, Comparison: ComparisonExact}
	if p.Resamples != want.Resamples || p.Exceed != want.Exceed || p.P != want.P || p.SE != want.SE || p.Level != want.Level ||
		p.CILow != want.CILow || math.Abs(p.CIHigh-want.CIHigh) > 1e-12 || p.Comparison != want.Comparison {
		t.Errorf("m = 1: %+v, want %+v", p, want)
	}
}

// TestPermutationSummary checks the estimate, SE and 99% Clopper-Pearson interval
// against scipy 1.10.1 (stats.beta.ppf, kw_permutation_ref.json) and, at their printed
// precision, against the table of docs/methods.md §1.6 [V].
func TestPermutationSummary(t *testing.T) {
	ref := loadPermRef(t)
	for _, c := range ref.Summaries {
		b, m := parseInt64(t, c.B), parseInt64(t, c.M)
		got, err := permutationSummary(b, m, 0.99)
		if err != nil {
			t.Fatal(err)
		}
		if got.Exceed != b || got.Resamples != m {
			t.Errorf("b = %d, m = %d: counts changed to %d, %d", b, m, got.Exceed, got.Resamples)
		}
		if !relClose(got.P, c.P, 1e-15) || !relClose(got.SE, c.SE, 1e-14) {
			t.Errorf("b = %d, m = %d: P = %.17g, SE = %.17g; Python %.17g, %.17g", b, m, got.P, got.SE, c.P, c.SE)
		}
		// BetaQuantile against scipy 1.10.1 beta.ppf, to the accuracy documented on
		// Permutation: relative error below max(1e-12, 1e-17·m).
		tol := max(1e-12, 1e-17*float64(m))
		if !relClose(got.CILow, c.CILow, tol) || !relClose(got.CIHigh, c.CIHigh, tol) {
			t.Errorf("b = %d, m = %d: CI [%.17g, %.17g], scipy [%.17g, %.17g] (tolerance %.1g)", b, m, got.CILow, got.CIHigh, c.CILow, c.CIHigh, tol)
		}
	}
	// docs/methods.md §1.6, tied toy rows (b of m; 99% Clopper-Pearson printed to 6 decimals).
	methods := []struct {
		b, m          int64
		p, se, lo, hi float64
	}{
		{17, 999, 0.018000, 0.004092, 0.008291, 0.030609},
		{236, 9999, 0.023700, 0.001518, 0.019869, 0.027796},
		{2457, 99999, 0.024580, 0.000490, 0.023327, 0.025859},
	}
	for _, c := range methods {
		got, _ := permutationSummary(c.b, c.m, 0.99)
		for _, f := range []struct {
			name      string
			got, want float64
		}{{"P", got.P, c.p}, {"SE", got.SE, c.se}, {"CILow", got.CILow, c.lo}, {"CIHigh", got.CIHigh, c.hi}} {
			if math.Abs(f.got-f.want) > 5e-7 {
				t.Errorf("b = %d, m = %d: %s = %.7f, docs/methods.md §1.6 %.6f", c.b, c.m, f.name, f.got, f.want)
			}
		}
	}
	// Counts above 2^53 stay exact.
	big1, big2 := int64(1)<<60+1, int64(1)<<61+3
	if got, _ := permutationSummary(big1, big2, 0.99); got.Exceed != big1 || got.Resamples != big2 {
		t.Errorf("counts above 2^53 changed: %d, %d", got.Exceed, got.Resamples)
	}
	for _, c := range [][2]int64{{-1, 10}, {11, 10}, {0, 0}} {
		if _, err := permutationSummary(c[0], c[1], 0.99); err == nil {
			t.Errorf("permutationSummary(%d, %d): no error", c[0], c[1])
		}
	}
}

// TestPermutationErrors: bad input gives errors (never panics), all tied gives ErrAllTied.
func TestPermutationErrors(t *testing.T) {
	g, v := flatten(tiedToy)
	r, err := Rank(g, v, 3)
	if err != nil {
		t.Fatal(err)
	}
	other := slices.Clone(v)
	other[0] = 1.5
	badLabel := slices.Clone(g)
	badLabel[2] = 7
	swapped := slices.Clone(g)
	swapped[0], swapped[len(swapped)-1] = swapped[len(swapped)-1], swapped[0]
	tg, tv := []int32{0, 0, 1, 1, 2}, []float64{3, 3, 3, 3, 3}
	tr, err := Rank(tg, tv, 3)
	if err != nil {
		t.Fatal(err)
	}
	ok := PermutationOptions{Seed: 1, Resamples: 10}
	cancelled, cancel := context.WithCancel(context.Background())
	cancel()
	cases := []struct {
		name   string
		ctx    context.Context
		g      []int32
		v      []float64
		k      int
		r      *Ranking
		opt    PermutationOptions
		target error
		want   string
	}{
		{"no resamples", context.Background(), g, v, 3, r, PermutationOptions{}, nil, "need at least 1 resample, got 0"},
		{"negative resamples", context.Background(), g, v, 3, r, PermutationOptions{Resamples: -5}, nil, "got -5"},
		{"nil ranking", context.Background(), g, v, 3, nil, ok, nil, "nil ranking"},
		{"k differs", context.Background(), g, v, 4, r, ok, nil, "the ranking has N = 12, K = 3; the data N = 12, k = 4"},
		{"lengths differ", context.Background(), g[:5], v, 3, r, ok, nil, "5 group labels for 12 values"},
		{"label out of range", context.Background(), badLabel, v, 3, r, ok, nil, "observation 2: group index 7 is outside [0, 3)"},
		{"value not ranked", context.Background(), g, other, 3, r, ok, nil, "observation 0: value 1.5 is not in the ranking of group 0"},
		{"rows moved between groups", context.Background(), swapped, v, 3, r, ok, nil, "not in the ranking"},
		{"all tied", context.Background(), tg, tv, 3, tr, ok, ErrAllTied, "all observations are tied"},
		{"cancelled", cancelled, g, v, 3, r, ok, context.Canceled, "context canceled"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := KruskalWallisPermutation(c.ctx, c.g, c.v, c.k, c.r, c.opt)
			if err == nil {
				t.Fatal("no error")
			}
			if !strings.HasPrefix(err.Error(), "kw permutation: ") || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %q, want it to contain %q", err, c.want)
			}
			if c.target != nil && !errors.Is(err, c.target) {
				t.Errorf("error %q is not %v", err, c.target)
			}
		})
	}
}

// TestPermutationDoesNotMutate: the caller's labels, values and Ranking are unchanged.
func TestPermutationDoesNotMutate(t *testing.T) {
	g, v := flatten(inventedP03)
	r, err := Rank(g, v, 3)
	if err != nil {
		t.Fatal(err)
	}
	g0, v0 := slices.Clone(g), slices.Clone(v)
	r0 := *r
	r0.Counts, r0.RankSum2, r0.Blocks = slices.Clone(r.Counts), slices.Clone(r.RankSum2), slices.Clone(r.Blocks)
	r0.Sorted = nil
	for _, s := range r.Sorted {
		r0.Sorted = append(r0.Sorted, slices.Clone(s))
	}
	if _, err := KruskalWallisPermutation(context.Background(), g, v, 3, r, PermutationOptions{Seed: 3, Resamples: 2 * PermutationBlockSize, Workers: 2}); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(g, g0) || !slices.Equal(v, v0) || !reflect.DeepEqual(*r, r0) {
		t.Error("KruskalWallisPermutation modified its input")
	}
}

// TestPermutationInvariance: an increasing transform of the values and a relabeling of
// the groups leave the result identical; reordering the rows changes the stream's
// mapping (the label array is in row order) but not the observed statistic, and the
// estimate stays within its interval of the exact p.
func TestPermutationInvariance(t *testing.T) {
	opt := PermutationOptions{Seed: 77, AnalysisID: "invariance", Resamples: 100_000}
	g, v := flatten(tiedToy)
	base := permRunRows(t, g, v, 3, opt)

	tv := make([]float64, len(v))
	for i, x := range v {
		tv[i] = math.Exp(x/2) + 10 // strictly increasing
	}
	if p := permRunRows(t, g, tv, 3, opt); p != base {
		t.Errorf("increasing transform: %+v, original %+v", p, base)
	}

	relabel := []int32{2, 0, 1}
	rg := make([]int32, len(g))
	for i, x := range g {
		rg[i] = relabel[x]
	}
	if p := permRunRows(t, rg, v, 3, opt); p != base {
		t.Errorf("group relabeling: %+v, original %+v", p, base)
	}

	// Reverse the rows.
	og, ov := slices.Clone(g), slices.Clone(v)
	slices.Reverse(og)
	slices.Reverse(ov)
	p := permRunRows(t, og, ov, 3, opt)
	if exact := 47.0 / 1925; !(p.CILow <= exact && exact <= p.CIHigh) { // docs/methods.md §1.5 [V]
		t.Errorf("reordered rows: exact p %.6f outside [%.6f, %.6f]", exact, p.CILow, p.CIHigh)
	}
	ps1 := mustPermSetup(t, g, v, 3)
	ps2 := mustPermSetup(t, og, ov, 3)
	if !ps1.exact || !ps2.exact || ps1.obsQ != ps2.obsQ {
		t.Errorf("reordered rows: observed T·L %v, original %v", ps2.obsQ, ps1.obsQ)
	}
}

func mustPermSetup(t testing.TB, g []int32, v []float64, k int) *permSetup {
	t.Helper()
	r, err := Rank(g, v, k)
	if err != nil {
		t.Fatal(err)
	}
	ps, err := newPermSetup(g, v, k, r)
	if err != nil {
		t.Fatal(err)
	}
	return ps
}

// bigQ is T·L = Σ S_i²·(L/n_i) in math/big, from the definition.
func bigQ(labels []int32, d []int64, sizes []int64) *big.Int {
	l := big.NewInt(1)
	for _, n := range sizes {
		bn := big.NewInt(n)
		l.Div(new(big.Int).Mul(l, bn), new(big.Int).GCD(nil, nil, l, bn))
	}
	s := make([]*big.Int, len(sizes))
	for i := range s {
		s[i] = new(big.Int)
	}
	for j, x := range labels {
		s[x].Add(s[x], big.NewInt(d[j]))
	}
	q := new(big.Int)
	for i, si := range s {
		w := new(big.Int).Div(l, big.NewInt(sizes[i]))
		q.Add(q, new(big.Int).Mul(new(big.Int).Mul(si, si), w))
	}
	return q
}

// recount replays the documented scheme with stream.ShuffleInt32 and counts exceedances
// with T·L in math/big, as an oracle for the 128-bit and float rules.
func recount(g []int32, v []float64, k int, opt PermutationOptions) int64 {
	d := naiveRank2Fast(v)
	sizes := make([]int64, k)
	for _, x := range g {
		sizes[x]++
	}
	obs := bigQ(g, d, sizes)
	var b int64
	for j := int64(0); j*PermutationBlockSize < opt.Resamples; j++ {
		a := slices.Clone(g)
		s := stream.New(stream.Key("kw-permutation", opt.Seed, opt.AnalysisID, uint64(j)))
		for i := j * PermutationBlockSize; i < min((j+1)*PermutationBlockSize, opt.Resamples); i++ {
			stream.ShuffleInt32(s, a)
			if bigQ(a, d, sizes).Cmp(obs) >= 0 {
				b++
			}
		}
	}
	return b
}

// naiveRank2Fast is the definition of the doubled midrank (2·#smaller + #equal + 1),
// counted through a sorted copy so that it runs at N = 10^5.
func naiveRank2Fast(v []float64) []int64 {
	s := slices.Clone(v)
	slices.Sort(s)
	out := make([]int64, len(v))
	for i, x := range v {
		less, _ := slices.BinarySearch(s, x)
		eq := 0
		for less+eq < len(s) && s[less+eq] == x {
			eq++
		}
		out[i] = 2*int64(less) + int64(eq) + 1
	}
	return out
}

// TestPermutationWideArithmetic: the 128-bit rule at N = 10^5 with T·L far above 2^64,
// and the float rule on 25 groups of prime sizes (L = 2·3·5·…·97 ≈ 2.3·10^36, beyond
// the exact bound), both against the math/big replay of the scheme.
func TestPermutationWideArithmetic(t *testing.T) {
	t.Run("exact 128-bit", func(t *testing.T) {
		// Invented: three shifted groups of sizes 30000, 35001, 34999, values rounded to
		// one decimal so that there are many ties.
		sizes := []int{30000, 35001, 34999}
		var g []int32
		var v []float64
		for i, n := range sizes {
			for j := range n {
				g = append(g, int32(i))
				v = append(v, math.Round(float64((j*7919+i*104729)%20011)/10)+float64(i)*0.1)
			}
		}
		ps := mustPermSetup(t, g, v, 3)
		if !ps.exact {
			t.Fatal("expected the exact rule")
		}
		obs := bigQ(g, naiveRank2Fast(v), []int64{30000, 35001, 34999})
		if obs.BitLen() <= 64 {
			t.Fatalf("T·L has %d bits; the test needs more than 64", obs.BitLen())
		}
		got := new(big.Int).Lsh(new(big.Int).SetUint64(ps.obsQ.Hi), 64)
		got.Or(got, new(big.Int).SetUint64(ps.obsQ.Lo))
		if got.Cmp(obs) != 0 {
			t.Fatalf("observed T·L = %v, math/big %v", got, obs)
		}
		opt := PermutationOptions{Seed: 5, AnalysisID: "wide", Resamples: 40}
		p := permRunRows(t, g, v, 3, opt)
		if want := recount(g, v, 3, opt); p.Exceed != want || p.Comparison != ComparisonExact {
			t.Errorf("Exceed = %d (%s), math/big replay %d", p.Exceed, p.Comparison, want)
		}
	})
	t.Run("float", func(t *testing.T) {
		primes := []int{2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61, 67, 71, 73, 79, 83, 89, 97}
		var g []int32
		var v []float64
		for i, n := range primes {
			for j := range n {
				g = append(g, int32(i))
				// Invented values: a small group effect plus a pseudo-random spread, on a
				// grid of 0.5 so that ties occur.
				v = append(v, math.Round(float64((j*37+i*11)%53)+float64(i)/8)/2)
			}
		}
		k := len(primes)
		ps := mustPermSetup(t, g, v, k)
		if ps.exact {
			t.Fatal("expected the float rule")
		}
		opt := PermutationOptions{Seed: 6, AnalysisID: "float", Resamples: 3000}
		p := permRunRows(t, g, v, k, opt)
		if p.Comparison != ComparisonFloat {
			t.Errorf("Comparison = %q", p.Comparison)
		}
		if want := recount(g, v, k, opt); p.Exceed != want {
			t.Errorf("Exceed = %d, math/big replay %d", p.Exceed, want)
		}
		if p.Exceed == 0 || p.Exceed == opt.Resamples {
			t.Errorf("Exceed = %d of %d: the design does not exercise the comparison", p.Exceed, opt.Resamples)
		}
	})
}

// TestPermutationRulesAgree: on designs where both rules apply, forcing the float rule
// gives the same count as the exact one. The invented (3,3,3) design and its group
// orders have rank sums (12, 38, 40) whose float64 T = Σ S²/3 depends on the order of
// summation by one ulp (1062.6666666666665 or ...667), so without the relative
// tolerance the float rule would miss ties with the observed statistic.
func TestPermutationRulesAgree(t *testing.T) {
	designs := [][][]float64{tiedToy, inventedP03, dobson1983PlantWeights}
	ulp := [][]float64{{1, 2, 3}, {4, 6, 9}, {5, 7, 8}}
	for _, order := range [][3]int{{0, 1, 2}, {0, 2, 1}, {1, 0, 2}, {1, 2, 0}, {2, 0, 1}, {2, 1, 0}} {
		designs = append(designs, [][]float64{ulp[order[0]], ulp[order[1]], ulp[order[2]]})
	}
	for _, groups := range designs {
		g, v := flatten(groups)
		ps := mustPermSetup(t, g, v, len(groups))
		opt := PermutationOptions{Seed: 9, AnalysisID: "rules", Resamples: 3*PermutationBlockSize + 5, Workers: 2}
		exact, _, err := ps.run(context.Background(), opt)
		if err != nil {
			t.Fatal(err)
		}
		r, err := Rank(g, v, len(groups))
		if err != nil {
			t.Fatal(err)
		}
		fl, err := newPermSetupRule(g, v, len(groups), r, false)
		if err != nil || fl.exact {
			t.Fatalf("forcing the float rule: %v", err)
		}
		float, _, err := fl.run(context.Background(), opt)
		if err != nil {
			t.Fatal(err)
		}
		if exact != float {
			t.Errorf("%v: exact rule b = %d, float rule b = %d", groups, exact, float)
		}
	}
}

// TestPermutationFusedShuffle: the resampling loop leaves the label array exactly as
// stream.ShuffleInt32 does, and counts as a plain recount does.
func TestPermutationFusedShuffle(t *testing.T) {
	g, v := flatten(dobson1983PlantWeights)
	ps := mustPermSetup(t, g, v, 3)
	opt := PermutationOptions{Seed: 11, AnalysisID: "fused"}
	a := make([]int32, len(g))
	sums := make([]uint64, 2*3)
	got, err := ps.block(context.Background(), opt, 4, 500, a, sums, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := slices.Clone(g)
	s := stream.New(stream.Key("kw-permutation", 11, "fused", 4))
	var b int64
	recount := make([]uint64, 3)
	for range 500 {
		stream.ShuffleInt32(s, want)
		clear(recount)
		for j, x := range want {
			recount[x] += uint64(ps.rank2[j])
		}
		if ps.exceeds(recount) {
			b++
		}
	}
	if !slices.Equal(a, want) || got != b {
		t.Errorf("fused loop: b = %d, labels %v; ShuffleInt32: b = %d, labels %v", got, a, b, want)
	}
}

// permGolden is testdata/permutation/golden.json. It was written by TestPermutationGolden
// with -update and must not be edited by hand: a failure means the recorded
// Monte Carlo p-values of rankplan/stream/v1 are no longer reproducible.
type permGolden struct {
	Note       string  `json:"note"`
	Scheme     string  `json:"scheme"`
	Design     string  `json:"design"`
	Seed       string  `json:"seed"`
	AnalysisID string  `json:"analysis_id"`
	Resamples  string  `json:"resamples"`
	Exceed     string  `json:"exceed"`
	P          float64 `json:"p"`
	SE         float64 `json:"se"`
	CILevel    float64 `json:"ci_level"`
	CILow      float64 `json:"ci_low"`
	CIHigh     float64 `json:"ci_high"`
	Comparison string  `json:"comparison"`
}

// TestPermutationGolden pins seed → p-value on the tied toy data (3 full blocks and a
// partial one) against testdata/permutation/golden.json; see [permGolden].
func TestPermutationGolden(t *testing.T) {
	const path = "testdata/permutation/golden.json"
	opt := PermutationOptions{Seed: 20240229, AnalysisID: "golden", Resamples: 3*PermutationBlockSize + 17}
	p := permRun(t, tiedToy, opt)
	got := permGolden{
		Note:       "written by `go test ./stats -run TestPermutationGolden -update`; do not edit by hand. A change means recorded permutation p-values are no longer reproducible.",
		Scheme:     PermutationScheme,
		Design:     "tied toy {1,2,2,3},{2,3,3,4},{3,4,5,5} (docs/methods.md §1.5)",
		Seed:       strconv.FormatUint(opt.Seed, 10),
		AnalysisID: opt.AnalysisID,
		Resamples:  strconv.FormatInt(p.Resamples, 10),
		Exceed:     strconv.FormatInt(p.Exceed, 10),
		P:          p.P,
		SE:         p.SE,
		CILevel:    p.Level,
		CILow:      p.CILow,
		CIHigh:     p.CIHigh,
		Comparison: p.Comparison,
	}
	if *update {
		b, err := json.MarshalIndent(got, "", "  ")
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, append(b, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var want permGolden
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	// Exceed must match exactly; the float fields are compared at 1e-12 because they
	// pass through gonum's Beta quantile and JSON.
	if got.Scheme != want.Scheme || got.Exceed != want.Exceed || got.Resamples != want.Resamples ||
		got.Comparison != want.Comparison || got.CILevel != want.CILevel || !relClose(got.P, want.P, 1e-15) || !relClose(got.SE, want.SE, 1e-12) ||
		!relClose(got.CILow, want.CILow, 1e-12) || !relClose(got.CIHigh, want.CIHigh, 1e-12) {
		t.Errorf("the permutation p-value no longer reproduces %s: reproducibility is broken\n got  %+v\n want %+v", path, got, want)
	}
}

func ExampleKruskalWallisPermutation() {
	// The tied toy data of docs/methods.md §1.5; its exact permutation p is 47/1925 = 0.0244.
	group := []int32{0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2}
	values := []float64{1, 2, 2, 3, 2, 3, 3, 4, 3, 4, 5, 5}
	r, err := Rank(group, values, 3)
	if err != nil {
		fmt.Println(err)
		return
	}
	p, err := KruskalWallisPermutation(context.Background(), group, values, 3, r,
		PermutationOptions{Seed: 12345, AnalysisID: "tied-toy", Resamples: 10000})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("b = %d of m = %d, p = %.4f, %g%% interval [%.4f, %.4f], %s\n",
		p.Exceed, p.Resamples, p.P, 100*p.Level, p.CILow, p.CIHigh, p.Comparison)
	// Output:
	// b = 221 of m = 10000, p = 0.0222, 95% interval [0.0193, 0.0252], exact-integer
}

// TestClopperPearsonScipy checks ClopperPearson at the levels 0.95, 0.99, 0.9 and 0.5
// against testdata/reference/clopper_pearson_scipy.json: where the file has them, the
// ends solved in mpmath 1.2.1 at 40 digits from short binomial sums, to the accuracy
// documented on Permutation (relative error below tol = max(1e-12, 1e-17·m)); scipy 1.10.1
// stats.beta.ppf within 2·tol (scipy itself is off from mpmath by up to 1.4e-10 relative
// at m = 10^7, as the file shows); and scipy's binomtest(b, m).proportion_ci(method="exact"),
// which finds the ends as roots of the binomial tails, within 1e-12 absolute (it differs
// from beta.ppf by up to 5e-13).
func TestClopperPearsonScipy(t *testing.T) {
	var ref struct {
		Cases []struct {
			B, M             int64
			Level, Low, High float64
			BinomLow         float64  `json:"binomtest_low"`
			BinomHigh        float64  `json:"binomtest_high"`
			MpLow            *float64 `json:"mpmath_low"`
			MpHigh           *float64 `json:"mpmath_high"`
		} `json:"cases"`
	}
	b, err := os.ReadFile("../testdata/reference/clopper_pearson_scipy.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	levels := map[float64]int{}
	mp := 0
	for _, c := range ref.Cases {
		levels[c.Level]++
		lo, hi, err := ClopperPearson(c.B, c.M, c.Level)
		if err != nil {
			t.Errorf("b = %d, m = %d, level %v: %v", c.B, c.M, c.Level, err)
			continue
		}
		tol := max(1e-12, 1e-17*float64(c.M))
		for _, e := range []struct {
			name string
			got  float64
			want *float64
		}{{"low", lo, c.MpLow}, {"high", hi, c.MpHigh}} {
			if e.want == nil {
				continue
			}
			mp++
			if !relClose(e.got, *e.want, tol) {
				t.Errorf("b = %d, m = %d, level %v: %s = %.17g, mpmath %.17g (tolerance %.1g)", c.B, c.M, c.Level, e.name, e.got, *e.want, tol)
			}
		}
		if !relClose(lo, c.Low, 2*tol) || !relClose(hi, c.High, 2*tol) {
			t.Errorf("b = %d, m = %d, level %v: [%.17g, %.17g], scipy beta.ppf [%.17g, %.17g] (tolerance %.1g)", c.B, c.M, c.Level, lo, hi, c.Low, c.High, 2*tol)
		}
		if math.Abs(lo-c.BinomLow) > 1e-12 || math.Abs(hi-c.BinomHigh) > 1e-12 {
			t.Errorf("b = %d, m = %d, level %v: [%.17g, %.17g], scipy binomtest [%.17g, %.17g]", c.B, c.M, c.Level, lo, hi, c.BinomLow, c.BinomHigh)
		}
		if c.B == 0 && lo != 0 || c.B == c.M && hi != 1 {
			t.Errorf("b = %d, m = %d, level %v: [%v, %v] is not closed at the end the count reaches", c.B, c.M, c.Level, lo, hi)
		}
	}
	if levels[0.95] < 40 || len(levels) != 4 || mp < 200 {
		t.Errorf("reference levels %v, %d mpmath ends: expected four levels, at least 40 cases at 0.95 and 200 mpmath ends", levels, mp)
	}
}

// TestClopperPearsonWorked checks worked values: the 95% interval of b = 221 in
// m = 10000 (scipy 1.10.1 stats.beta.ppf: [0.01930852055855326, 0.025174383042594933]),
// the 95% column of docs/methods.md §1.6,
// [0, 0.975] for b = 0 of m = 1 (Beta⁻¹(0.975; 1, 1) = 0.975, the uniform distribution:
// common practice), and that a wider level gives a wider interval.
func TestClopperPearsonWorked(t *testing.T) {
	for _, c := range []struct {
		b, m      int64
		level     float64
		low, high float64
	}{
		{221, 10000, 0.95, 0.01930852055855326, 0.025174383042594933},
		// docs/methods.md §1.6, 95% column (scipy 1.10.1 stats.beta.ppf).
		{17, 999, 0.95, 0.00994348669519334, 0.027106463955994746},
		{236, 9999, 0.95, 0.02071624593113206, 0.026770320732124018},
		{2457, 99999, 0.95, 0.02361953615837806, 0.0255486656982716},
		{0, 1, 0.95, 0, 0.975},
		{1, 1, 0.95, 0.025, 1},
		{0, 1, 0.99, 0, 0.995},
	} {
		lo, hi, err := ClopperPearson(c.b, c.m, c.level)
		if err != nil || !relClose(lo, c.low, 1e-12) || !relClose(hi, c.high, 1e-12) {
			t.Errorf("ClopperPearson(%d, %d, %v) = [%.17g, %.17g], %v; want [%.17g, %.17g]", c.b, c.m, c.level, lo, hi, err, c.low, c.high)
		}
	}
	lo95, hi95, _ := ClopperPearson(221, 10000, 0.95)
	lo99, hi99, _ := ClopperPearson(221, 10000, 0.99)
	if !(lo99 < lo95 && hi95 < hi99) {
		t.Errorf("99%% interval [%v, %v] does not contain the 95%% interval [%v, %v]", lo99, hi99, lo95, hi95)
	}
}

// TestClopperPearsonErrors: counts out of range and levels outside (0, 1) are errors.
func TestClopperPearsonErrors(t *testing.T) {
	for _, c := range []struct {
		name  string
		b, m  int64
		level float64
	}{
		{"level NaN", 1, 10, math.NaN()},
		{"level 0", 1, 10, 0},
		{"level -0", 1, 10, math.Copysign(0, -1)},
		{"level 1", 1, 10, 1},
		{"level +Inf", 1, 10, math.Inf(1)},
		{"level -Inf", 1, 10, math.Inf(-1)},
		{"level 1e308", 1, 10, 1e308},
		{"b negative", -1, 10, 0.95},
		{"b above m", 11, 10, 0.95},
		{"no trials", 0, 0, 0.95},
	} {
		if lo, hi, err := ClopperPearson(c.b, c.m, c.level); err == nil {
			t.Errorf("%s: no error, got [%v, %v]", c.name, lo, hi)
		}
	}
	// A subnormal level is legal: both tails are 1/2 in float64, so the ends meet at the
	// median of the two Beta distributions, low <= high.
	if lo, hi, err := ClopperPearson(1, 10, 5e-324); err != nil || !(lo > 0 && lo <= hi && hi < 1) {
		t.Errorf("subnormal level: [%v, %v], %v", lo, hi, err)
	}
}
