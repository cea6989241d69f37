package stats

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"testing"

	"rankplan/stats/stream"
)

// PlantGrowth (Dobson 1983): H* = 7.988229, epsilon-squared 0.275456 and eta-squared(H)
// 0.221786, all from METHODS.md §1.1 and §2, verified there with scipy 1.10.1.
func TestEffectSizesPlantGrowth(t *testing.T) {
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
	// Negative eta-squared is reported as it is: (0.771429 - 2)/11 (METHODS.md §2).
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
			got, err := KruskalWallisBootstrap(r, BootstrapOptions{Seed: d.Seed, AnalysisID: d.AnalysisID,
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
	base, err := KruskalWallisBootstrap(r, opt)
	if err != nil {
		t.Fatal(err)
	}
	opt.Seed = 2
	other, _ := KruskalWallisBootstrap(r, opt)
	opt.Seed, opt.AnalysisID = 1, "b"
	otherID, _ := KruskalWallisBootstrap(r, opt)
	if base == other || base == otherID {
		t.Errorf("seed or analysis id did not change the stream: %+v %+v %+v", base, other, otherID)
	}
	if !(base.HLow <= base.HHigh) || base.HLow < 0 || base.HHigh > float64(r.N-1) {
		t.Errorf("interval %+v", base)
	}
	for _, bad := range []BootstrapOptions{{Resamples: 0, Level: 0.95}, {Resamples: 10, Level: 1}, {Resamples: 10, Level: math.NaN()}} {
		if _, err := KruskalWallisBootstrap(r, bad); err == nil {
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
		if _, err := KruskalWallisBootstrap(r, BootstrapOptions{Seed: 1, AnalysisID: "x", Resamples: 2000, Level: 0.95}); err != nil {
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
	w := newBootWorker(r, bi)
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
