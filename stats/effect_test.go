package stats

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"testing"

	"rankplan/stats/stream"
)

// The Dobson (1983) plant weights: H* = 7.988229, epsilon-squared 0.275456 and eta-squared(H)
// 0.221786, all from docs/methods.md §1.1 and §2, verified there with scipy 1.10.1.
func TestEffectSizesDobson1983PlantWeights(t *testing.T) {
	const h = 7.988228749443715 // scipy 1.10.1 stats.kruskal, testdata/reference/kruskal_scipy.json
	eps, err := EpsilonSquared(h, 30)
	if err != nil || math.Abs(eps-0.275456) > 5e-7 {
		t.Errorf("epsilon-squared %v %v, want 0.275456", eps, err)
	}
	eta, err := EtaSquaredH(h, 30, 3)
	if err != nil || math.Abs(eta-0.221786) > 5e-7 {
		t.Errorf("eta-squared(H) %v %v, want 0.221786", eta, err)
	}
}

func TestEffectSizesEdges(t *testing.T) {
	// Negative eta-squared is reported as it is: (0.771429 - 2)/11 (docs/methods.md §2).
	if eta, _ := EtaSquaredH(0.771429, 14, 3); math.Abs(eta-(0.771429-2)/11) > 1e-15 || eta >= 0 {
		t.Errorf("eta %v", eta)
	}
	for _, tc := range []struct {
		h    float64
		n, k int
	}{{1, 3, 3}, {1, 2, 3}, {math.NaN(), 10, 3}, {-1, 10, 3}, {1, 10, 1}} {
		if _, err := EtaSquaredH(tc.h, tc.n, tc.k); err == nil {
			t.Errorf("EtaSquaredH(%v, %d, %d): no error", tc.h, tc.n, tc.k)
		}
	}
	if _, err := EpsilonSquared(1, 1); err == nil {
		t.Error("EpsilonSquared with N = 1: no error")
	}
	if e, _ := EpsilonSquared(3, 4); e != 1 {
		t.Errorf("perfect separation gives %v, want 1", e)
	}
}

func bootRanking(t *testing.T, groups [][]float64) *Ranking {
	t.Helper()
	g, v := flatten(groups)
	r, err := Rank(g, v, len(groups))
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// TestBootstrapReference replays the bootstrap against an independent implementation:
// stats/testdata/bootstrap/kw_bootstrap_ref.py (its own stream code, scipy 1.10.1
// stats.kruskal for H*, numpy 1.24.2 percentile for the interval ends).
func TestBootstrapReference(t *testing.T) {
	b, err := os.ReadFile("testdata/bootstrap/kw_bootstrap_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Designs []struct {
			Name       string
			Seed       uint64
			AnalysisID string `json:"analysis_id"`
			Resamples  int64
			Level      float64
			Groups     [][]float64
			HLow       float64 `json:"h_low"`
			HHigh      float64 `json:"h_high"`
			Degenerate int64
		}
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Designs) < 3 {
		t.Fatalf("only %d designs", len(ref.Designs))
	}
	for _, d := range ref.Designs {
		r := bootRanking(t, d.Groups)
		for _, workers := range []int{1, 2, 3, 8} {
			got, err := KruskalWallisBootstrap(context.Background(), r, BootstrapOptions{Seed: d.Seed, AnalysisID: d.AnalysisID,
				Resamples: d.Resamples, Level: d.Level, Workers: workers})
			if err != nil {
				t.Fatal(err)
			}
			if !closeRel(got.HLow, d.HLow, 1e-12) || !closeRel(got.HHigh, d.HHigh, 1e-12) || got.Degenerate != d.Degenerate {
				t.Errorf("%s workers=%d: [%v, %v] degenerate %d; reference [%v, %v] %d",
					d.Name, workers, got.HLow, got.HHigh, got.Degenerate, d.HLow, d.HHigh, d.Degenerate)
			}
		}
	}
}

func closeRel(a, b, rel float64) bool {
	return a == b || math.Abs(a-b) <= rel*math.Max(math.Abs(a), math.Abs(b))
}

func TestBootstrapStreams(t *testing.T) {
	r := bootRanking(t, [][]float64{{1.5, 2.25, 3, 8}, {4, 5.5, 6, 7, 9}, {0.5, 10, 11}})
	opt := BootstrapOptions{Seed: 1, AnalysisID: "a", Resamples: 1000, Level: 0.95}
	base, err := KruskalWallisBootstrap(context.Background(), r, opt)
	if err != nil {
		t.Fatal(err)
	}
	opt.Seed = 2
	other, _ := KruskalWallisBootstrap(context.Background(), r, opt)
	opt.Seed, opt.AnalysisID = 1, "b"
	otherID, _ := KruskalWallisBootstrap(context.Background(), r, opt)
	if base == other || base == otherID {
		t.Errorf("seed or analysis id did not change the stream: %+v %+v %+v", base, other, otherID)
	}
	if !(base.HLow <= base.HHigh) || base.HLow < 0 || base.HHigh > float64(r.N-1) {
		t.Errorf("interval %+v", base)
	}
	for _, bad := range []BootstrapOptions{{Resamples: 0, Level: 0.95}, {Resamples: 10, Level: 1}, {Resamples: 10, Level: math.NaN()}} {
		if _, err := KruskalWallisBootstrap(context.Background(), r, bad); err == nil {
			t.Errorf("%+v: no error", bad)
		}
	}
}

func BenchmarkKruskalWallisBootstrap(b *testing.B) {
	groups := make([][]float64, 4)
	for i := range groups {
		for j := 0; j < 250; j++ {
			groups[i] = append(groups[i], float64((j*7919+i*31)%500)/10)
		}
	}
	g, v := flatten(groups)
	r, _ := Rank(g, v, 4)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := KruskalWallisBootstrap(context.Background(), r, BootstrapOptions{Seed: 1, AnalysisID: "x", Resamples: 2000, Level: 0.95}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestBootstrapCountingRanks checks the counting ranks of a bootstrap resample, both ways
// (per draw and per group), against ranking the same drawn values from scratch with
// [Rank]: the same draws (one Below(n_i) per value, groups in order) must give the same
// bits of H*, with ties, -0 beside +0, all values distinct, and every value tied.
func TestBootstrapCountingRanks(t *testing.T) {
	sets := map[string][][]float64{
		"ties":      {{1, 2, 2, 3, 5, 5, 5}, {2, 3, 3, 4, 8}, {0.5, 1, 5, 9, 9, 9, 9, 10}},
		"zeros":     {{math.Copysign(0, -1), 0, 1, 2}, {0, 0, math.Copysign(0, -1), -1}, {3, -2, 0}},
		"distinct":  {{1.5, 2.25, 3, 8}, {4, 5.5, 6, 7, 9}, {0.5, 10, 11}},
		"all-tied":  {{4, 4}, {4, 4, 4}},
		"grades":    {{1, 2, 2, 3, 3, 3, 4, 5, 5, 1, 2, 3}, {3, 4, 4, 5, 5, 5, 2, 3, 4, 4}, {1, 1, 2, 2, 3, 1, 2, 1, 1}},
		"long runs": make([][]float64, 3),
	}
	for i := range sets["long runs"] {
		for j := range 300 + 37*i {
			sets["long runs"][i] = append(sets["long runs"][i], float64((j*7+i)%6))
		}
	}
	for _, byGroup := range []bool{false, true} {
		for name, groups := range sets {
			t.Run(fmt.Sprintf("%s/byGroup=%v", name, byGroup), func(t *testing.T) { checkCountingRanks(t, name, groups, byGroup) })
		}
	}
}

func checkCountingRanks(t *testing.T, name string, groups [][]float64, byGroup bool) {
	r := bootRanking(t, groups)
	bi, err := newBootIndex(r)
	if err == nil {
		err = bi.withIndex(r)
	}
	if err != nil {
		t.Fatal(err)
	}
	if bi.byGroup != (int64(r.K)*int64(len(r.Blocks)) <= int64(r.N)) {
		t.Errorf("%s: byGroup = %v with K = %d, m = %d, N = %d", name, bi.byGroup, r.K, len(r.Blocks), r.N)
	}
	// Every position's run, found through the coarse table, holds that position's value.
	off := 0
	for i, vals := range r.Sorted {
		g := bi.runs[i]
		for j := range vals {
			l := g.coarse[j>>g.shift]
			for g.bounds[l+1] <= int32(j) {
				l++
			}
			if g.bounds[l] > int32(j) || g.blocks[l] != bi.index[off+j] {
				t.Fatalf("%s group %d position %d: run %d (from %d, block %d), index says block %d", name, i, j, l, g.bounds[l], g.blocks[l], bi.index[off+j])
			}
		}
		off += len(vals)
	}
	// Force the path under test.
	bi.byGroup = byGroup
	w := newBootWorker(r, bi, false)
	key := stream.Key(BootstrapPurpose, 7, name, 0)
	s, ref := stream.New(key), stream.New(key)
	for b := 0; b < 200; b++ {
		got, gotDeg := w.resample(s)
		var rg []int32
		var rv []float64
		for i, vals := range r.Sorted {
			for range vals {
				rg = append(rg, int32(i))
				rv = append(rv, vals[ref.Below(uint64(len(vals)))])
			}
		}
		rr, err := Rank(rg, rv, r.K)
		if err != nil {
			t.Fatal(err)
		}
		_, want, c := tieCorrectedH(rr.N, rr.Counts, rr.RankSum2, rr.Blocks)
		wantDeg := !(c > 0)
		if wantDeg {
			want = 0
		}
		if math.Float64bits(got) != math.Float64bits(want) || gotDeg != wantDeg {
			t.Fatalf("%s resample %d: H* = %v (degenerate %v), ranking the drawn values gives %v (%v)", name, b, got, gotDeg, want, wantDeg)
		}
	}
}

// TestKruskalWallisEffectInterval checks the interval of ξ² = λ/(N − k) against scipy's
// inversion of its own ncx2 (testdata/reference/ncx2_scipy.json, brentq), on the sleep
// analysis of examples/cream-trial (H* = 2.114325393362999, N = 60, k = 3, asymptotic
// p = 0.34744, permutation p = 0.354: the interval must contain 0) and on the Dobson (1983) plant weights
// (H* = 7.988228749443715, N = 30, k = 3, p = 0.0184 < 0.025: it must not).
func TestKruskalWallisEffectInterval(t *testing.T) {
	ref := readNcx2Reference(t)
	lambda := func(x float64) (lo, hi float64) {
		for _, c := range ref.Intervals {
			if c.X == x && c.DF == 2 && c.Level == 0.95 {
				return c.LamLow, c.LamHigh
			}
		}
		t.Fatalf("no reference interval at x = %v", x)
		return
	}
	for _, tc := range []struct {
		name     string
		h        float64
		n        int
		contains bool
	}{
		{"cream-trial sleep", 2.114325393362999, 60, true},
		{"Dobson1983PlantWeights", 7.988228749443715, 30, false},
	} {
		got, err := KruskalWallisEffectInterval(tc.h, tc.n, 3, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		lo, hi := lambda(tc.h)
		d := float64(tc.n - 3)
		if relDiff(got.NoncentralityLow, lo) > 1e-10 || relDiff(got.NoncentralityHigh, hi) > 1e-10 ||
			relDiff(got.Low, lo/d) > 1e-10 || relDiff(got.High, hi/d) > 1e-10 || got.Clipped || got.Level != 0.95 {
			t.Errorf("%s: %+v, want λ in [%v, %v]", tc.name, got, lo, hi)
		}
		if (got.Low == 0) != tc.contains {
			t.Errorf("%s: [%v, %v], containing 0 should be %v", tc.name, got.Low, got.High, tc.contains)
		}
		eta, _ := EtaSquaredH(tc.h, tc.n, 3)
		if eta > 0 && !(got.Low <= eta && eta <= got.High) {
			t.Errorf("%s: eta-squared(H) %v outside [%v, %v]", tc.name, eta, got.Low, got.High)
		}
	}
	for _, bad := range []struct {
		h     float64
		n, k  int
		level float64
	}{{1, 3, 3, 0.95}, {1, 2, 3, 0.95}, {1, 10, 1, 0.95}, {math.NaN(), 10, 3, 0.95}, {-1, 10, 3, 0.95},
		{math.Inf(1), 10, 3, 0.95}, {1, 10, 3, 1}, {1, 10, 3, 0}} {
		if _, err := KruskalWallisEffectInterval(bad.h, bad.n, bad.k, bad.level); err == nil {
			t.Errorf("%+v: no error", bad)
		}
	}
}

// TestEffectIntervalSmallGroups: designs with a group of one observation. The noncentral
// interval keeps the estimates and stays in [0, 1] (cut, and said so, where λ/(N − k)
// exceeds 1), while the percentile bootstrap of the same data leaves out its own estimate
// of epsilon-squared: the resamples of the single value never vary, which is why the
// results warn about the bootstrap with groups below BootstrapSmallGroup.
func TestEffectIntervalSmallGroups(t *testing.T) {
	for _, groups := range [][][]float64{
		{{10}, {1, 2, 3, 4}, {5, 6, 7, 8, 9}},
		{{1}, {2, 3, 4, 5, 6, 7, 8, 9}},
	} {
		r := bootRanking(t, groups)
		kw, err := KruskalWallisTest(r)
		if err != nil {
			t.Fatal(err)
		}
		eps, _ := EpsilonSquared(kw.H, kw.N)
		eta, _ := EtaSquaredH(kw.H, kw.N, kw.K)
		ei, err := KruskalWallisEffectInterval(kw.H, kw.N, kw.K, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		if !(ei.Low == 0 && ei.High == 1 && ei.Clipped) || !(ei.NoncentralityHigh > float64(kw.N-kw.K)) {
			t.Errorf("%v: %+v, want [0, 1] cut from λ/(N − k) above 1", groups, ei)
		}
		if !(ei.Low <= eta && eta <= ei.High && ei.Low <= eps && eps <= ei.High) {
			t.Errorf("%v: estimates %v, %v outside [%v, %v]", groups, eps, eta, ei.Low, ei.High)
		}
		b, err := KruskalWallisBootstrap(context.Background(), r, BootstrapOptions{Seed: 1, AnalysisID: "a", Resamples: 2000, Level: 0.95})
		if err != nil {
			t.Fatal(err)
		}
		if lo := b.HLow / float64(kw.N-1); !(lo > eps) {
			t.Errorf("%v: bootstrap lower end %v does not exceed the estimate %v (the defect the warning is about)", groups, lo, eps)
		}
	}
	// Twenty groups of three tied values, all different: every rank difference lies between
	// groups, H* = N − 1 = 59 (ξ² estimated as 1), N − k = 40, so the upper end λ/40 lies
	// above 1 and is cut; the lower end stays inside (0, 1).
	groups := make([][]float64, 20)
	for i := range groups {
		groups[i] = []float64{float64(i), float64(i), float64(i)}
	}
	r := bootRanking(t, groups)
	kw, _ := KruskalWallisTest(r)
	ei, err := KruskalWallisEffectInterval(kw.H, kw.N, kw.K, 0.95)
	if err != nil || math.Abs(kw.H-59) > 1e-9 || ei.High != 1 || !ei.Clipped || !(ei.Low > 0 && ei.Low < 1) {
		t.Errorf("perfect separation: H* %v, %+v, %v", kw.H, ei, err)
	}
}
