package stats

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

func TestReferenceFileVersions(t *testing.T) {
	ref := loadReference(t)
	// The versions the reference values were generated with (Debian bookworm packages).
	want := map[string]string{"scipy": "1.10.1", "numpy": "1.24.2", "mpmath": "1.2.1"}
	for lib, v := range want {
		if ref.Versions[lib] != v {
			t.Errorf("reference file made with %s %q, tests cite %q", lib, ref.Versions[lib], v)
		}
	}
	if len(ref.Kruskal) < 6 || len(ref.ChisqTail) == 0 || len(ref.Quartiles) == 0 {
		t.Errorf("reference file too small: %d kruskal, %d tail, %d quartile sets",
			len(ref.Kruskal), len(ref.ChisqTail), len(ref.Quartiles))
	}
}

// TestKruskalWallisScipy compares H* and p with scipy 1.10.1 stats.kruskal on the data
// sets in testdata/reference/kruskal_scipy.json (invented sets, the plant weights of Dobson
// 1983, NIST StRD SmLs01 read from stats/testdata/nist/SmLs01.dat, and the SmLs02/03
// designs rebuilt), and log10 p with mpmath 1.2.1 (50 digits) at scipy's H*.
func TestKruskalWallisScipy(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.Kruskal {
		t.Run(c.Name, func(t *testing.T) {
			groups := c.groupsOf(t)
			for i, g := range groups {
				if len(g) != c.Sizes[i] {
					t.Fatalf("group %d has %d values, the reference %d", i, len(g), c.Sizes[i])
				}
			}
			kw, err := KruskalWallisTest(mustRank(t, groups))
			if err != nil {
				t.Fatal(err)
			}
			if kw.DF != c.DF {
				t.Errorf("DF = %d, scipy %d", kw.DF, c.DF)
			}
			if !relClose(kw.H, c.H, 1e-12) {
				t.Errorf("H = %.17g, scipy 1.10.1 stats.kruskal %.17g", kw.H, c.H)
			}
			if c.P > 1e-300 && !relClose(kw.P, c.P, 1e-9) {
				t.Errorf("P = %.17g, scipy 1.10.1 stats.kruskal %.17g", kw.P, c.P)
			}
			if !relClose(kw.Log10P, c.Log10PMpmath, 1e-12) && math.Abs(kw.Log10P-c.Log10PMpmath) > 1e-15 {
				t.Errorf("Log10P = %.17g, mpmath 1.2.1 %.17g", kw.Log10P, c.Log10PMpmath)
			}
		})
	}
}

// dobson1983PlantWeights holds the plant weights of Dobson (1983), An Introduction to Statistical
// Modelling, as listed in docs/methods.md §8.2 (ctrl, trt1, trt2; 10 plants each).
var dobson1983PlantWeights = [][]float64{
	{4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14},
	{4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69},
	{6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26},
}

// TestKruskalWallisWorkedExamples checks published and documented worked numbers at the
// precision they are printed with.
func TestKruskalWallisWorkedExamples(t *testing.T) {
	t.Run("Dobson1983PlantWeights", func(t *testing.T) {
		r := mustRank(t, dobson1983PlantWeights)
		kw, err := KruskalWallisTest(r)
		if err != nil {
			t.Fatal(err)
		}
		// docs/methods.md §1.1 worked example [V, scipy 1.10.1]: rank sums 147.5, 103.5, 214;
		// C = 0.9997775306; H = 7.986452; H* = 7.988229; p = 0.0184238.
		if want := []int64{295, 207, 428}; !slices.Equal(r.RankSum2, want) {
			t.Errorf("RankSum2 = %v, want %v", r.RankSum2, want)
		}
		checks := []struct {
			name      string
			got, want float64
			abs       float64
		}{
			{"C", kw.TieCorrection, 0.9997775306, 5e-11},
			{"H", kw.HUncorrected, 7.986452, 5e-7},
			{"H*", kw.H, 7.988229, 5e-7},
			{"p", kw.P, 0.0184238, 5e-8},
			{"mean rank ctrl", kw.MeanRank[0], 14.75, 0},
			{"mean rank trt1", kw.MeanRank[1], 10.35, 0},
			{"mean rank trt2", kw.MeanRank[2], 21.4, 0},
		}
		for _, c := range checks {
			if math.Abs(c.got-c.want) > c.abs {
				t.Errorf("%s = %.10g, want %.10g (±%g)", c.name, c.got, c.want, c.abs)
			}
		}
	})
	t.Run("tied toy", func(t *testing.T) {
		// docs/methods.md §1.5 [V]: H* = 6.630556 with C = 135/143, chi-square p = 0.036324.
		kw, err := KruskalWallisTest(mustRank(t, [][]float64{{1, 2, 2, 3}, {2, 3, 3, 4}, {3, 4, 5, 5}}))
		if err != nil {
			t.Fatal(err)
		}
		if !relClose(kw.TieCorrection, 135.0/143.0, 1e-15) {
			t.Errorf("C = %.17g, want 135/143", kw.TieCorrection)
		}
		if math.Abs(kw.H-6.630556) > 5e-7 || math.Abs(kw.P-0.036324) > 5e-7 {
			t.Errorf("H*, p = %.8g, %.8g, want 6.630556, 0.036324", kw.H, kw.P)
		}
	})
	t.Run("NIST SmLs03 design", func(t *testing.T) {
		// docs/methods.md §8.1 [V, scipy 1.10.1 and mpmath 1.2.1]: H* = 8164.338058,
		// p = 0 in float64, log10 p = -1762.8086.
		kw, err := KruskalWallisTest(mustRank(t, smlsDesign(1000)))
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(kw.H-8164.338058) > 5e-7 {
			t.Errorf("H* = %.10f, want 8164.338058", kw.H)
		}
		if kw.P != 0 {
			t.Errorf("P = %g, want 0 (the tail underflows float64)", kw.P)
		}
		if math.Abs(kw.Log10P-(-1762.8086)) > 5e-5 {
			t.Errorf("Log10P = %.7f, want -1762.8086", kw.Log10P)
		}
	})
	t.Run("NIST SmLs01 file equals the rebuilt design", func(t *testing.T) {
		file, err := parseNISTAnova("testdata/nist/SmLs01.dat")
		if err != nil {
			t.Fatal(err)
		}
		a, _ := KruskalWallisTest(mustRank(t, file))
		b, _ := KruskalWallisTest(mustRank(t, smlsDesign(10)))
		// docs/methods.md §8.1 [V, scipy 1.10.1]: H* = 88.685398, p = 8.59457e-16.
		if a.H != b.H || math.Abs(a.H-88.685398) > 5e-7 || math.Abs(a.P-8.59457e-16) > 5e-21 {
			t.Errorf("file H* = %.10g p = %.6g, design H* = %.10g; want 88.685398, 8.59457e-16", a.H, a.P, b.H)
		}
	})
}

func TestKruskalWallisEdgeCases(t *testing.T) {
	t.Run("all tied", func(t *testing.T) {
		for _, groups := range [][][]float64{
			{{3, 3}, {3}},
			{{0}, {math.Copysign(0, -1)}}, // -0 and +0 are the same value
		} {
			_, err := KruskalWallisTest(mustRank(t, groups))
			if !errors.Is(err, ErrAllTied) {
				t.Errorf("%v: error %v, want ErrAllTied", groups, err)
			}
		}
	})
	t.Run("N = 2", func(t *testing.T) {
		// Two singletons: H* = 1 = N-1 and p = P(chi-square(1) >= 1) = erfc(sqrt(1/2))
		// (chi-square(1) is the square of a standard normal: common practice).
		kw, err := KruskalWallisTest(mustRank(t, [][]float64{{2}, {1}}))
		if err != nil {
			t.Fatal(err)
		}
		if kw.H != 1 || kw.TieCorrection != 1 || !relClose(kw.P, math.Erfc(math.Sqrt(0.5)), 1e-14) {
			t.Errorf("H* = %v, C = %v, p = %v; want 1, 1, %v", kw.H, kw.TieCorrection, kw.P, math.Erfc(math.Sqrt(0.5)))
		}
		if !slices.Equal(kw.MeanRank, []float64{2, 1}) {
			t.Errorf("MeanRank = %v, want [2 1]", kw.MeanRank)
		}
	})
	t.Run("groups of size one", func(t *testing.T) {
		// Three singletons 1, 2, 3: D = -2, 0, 2, so H = 12/12 · (1 + 0 + 1) = 2 = N-1,
		// and with 2 df p = exp(-1) (common practice: chi-square(2) is exponential).
		kw, err := KruskalWallisTest(mustRank(t, [][]float64{{3}, {1}, {2}}))
		if err != nil {
			t.Fatal(err)
		}
		if kw.H != 2 || !relClose(kw.P, math.Exp(-1), 1e-14) {
			t.Errorf("H* = %v, p = %v; want 2, %v", kw.H, kw.P, math.Exp(-1))
		}
	})
	t.Run("perfect separation is capped at N-1", func(t *testing.T) {
		// {1,1} vs {2,2}: H = 2.4 and C = 0.8 by hand, so H* = 3 = N-1; the float64
		// division 2.4/0.8 rounds below 3 and scipy 1.10.1 reports 2.9999999999999982.
		kw, err := KruskalWallisTest(mustRank(t, [][]float64{{1, 1}, {2, 2}}))
		if err != nil {
			t.Fatal(err)
		}
		if kw.H > 3 || !relClose(kw.H, 3, 1e-15) {
			t.Errorf("H* = %.17g, want 3 within 1e-15 and not above", kw.H)
		}
	})
	t.Run("balanced design gives exactly zero, not a tiny negative", func(t *testing.T) {
		// Ranks 1..66 dealt to 3 groups of 22 in a snake order: every R_i = 737, so
		// H = 0 exactly. The uncentred form 12/(N(N+1)) Σ R_i^2/n_i - 3(N+1), evaluated
		// as scipy 1.10.1 does, rounds to -2.8e-14 here (checked with /usr/bin/python3).
		groups := make([][]float64, 3)
		v := 1.0
		for row := range 22 {
			for c := range 3 {
				g := c
				if row%2 == 1 {
					g = 2 - c
				}
				groups[g] = append(groups[g], v)
				v++
			}
		}
		r := mustRank(t, groups)
		ssbn := 0.0
		for i := range r.K {
			ri := r.RankSum2[i] / 2
			ssbn += float64(ri*ri) / float64(r.Counts[i])
		}
		n := float64(r.N)
		uncentred := float64(12/float64(n*float64(n+1))*ssbn) - 3*(n+1)
		if !(uncentred < 0) {
			t.Fatalf("uncentred form gave %v; the test data no longer shows the rounding trap", uncentred)
		}
		kw, err := KruskalWallisTest(r)
		if err != nil {
			t.Fatal(err)
		}
		if kw.H != 0 || kw.HUncorrected != 0 || kw.P != 1 || kw.Log10P != 0 {
			t.Errorf("H* = %v, H = %v, P = %v, Log10P = %v; want 0, 0, 1, 0", kw.H, kw.HUncorrected, kw.P, kw.Log10P)
		}
	})
}

func TestKruskalWallisBadRanking(t *testing.T) {
	good := func() *Ranking { return mustRank(t, [][]float64{{1, 2}, {3, 4, 5}}) }
	tests := []struct {
		name   string
		mangle func(r *Ranking) *Ranking
	}{
		{"nil", func(*Ranking) *Ranking { return nil }},
		{"zero value", func(*Ranking) *Ranking { return &Ranking{} }},
		{"K = 1", func(r *Ranking) *Ranking { r.K = 1; return r }},
		{"short counts", func(r *Ranking) *Ranking { r.Counts = r.Counts[:1]; return r }},
		{"short rank sums", func(r *Ranking) *Ranking { r.RankSum2 = nil; return r }},
		{"empty group", func(r *Ranking) *Ranking { r.Counts[0] = 0; return r }},
		{"N does not match", func(r *Ranking) *Ranking { r.N++; return r }},
		{"bad block", func(r *Ranking) *Ranking { r.Blocks[0].Size = 0; return r }},
		{"rank sums do not add up", func(r *Ranking) *Ranking { r.RankSum2[1]++; return r }},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if _, err := KruskalWallisTest(tt.mangle(good())); err == nil {
				t.Error("no error")
			}
		})
	}
}

// TestDeepRankingChecks: the functions that read the tie blocks' doubled ranks or the
// sorted values (the exact and Monte Carlo p-values, the bootstrap, DSCF) refuse a Ranking
// whose blocks, tie sum or sorted values disagree, where they formerly indexed out of
// range or merged forever (NaN in a sorted group).
func TestDeepRankingChecks(t *testing.T) {
	group := []int32{0, 0, 1, 1, 1, 2, 2}
	values := []float64{1, 2, 2, 4, 5, 6, 6}
	tests := []struct {
		name   string
		mangle func(r *Ranking)
	}{
		{"block rank", func(r *Ranking) { r.Blocks[0].Rank2 = -r.Blocks[0].Rank2 }},
		{"blocks swapped", func(r *Ranking) { r.Blocks[0], r.Blocks[1] = r.Blocks[1], r.Blocks[0] }},
		{"tie sum NaN", func(r *Ranking) { r.TieSum = math.NaN() }},
		{"tie sum off", func(r *Ranking) { r.TieSum += 6 }},
		{"NaN in a sorted group", func(r *Ranking) { r.Sorted[0] = []float64{1, math.NaN()} }},
		{"unsorted group", func(r *Ranking) { r.Sorted[1] = []float64{5, 4, 2} }},
		{"short sorted group", func(r *Ranking) { r.Sorted[0] = r.Sorted[0][:1] }},
		{"missing sorted group", func(r *Ranking) { r.Sorted = r.Sorted[:2] }},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			calls := map[string]func(r *Ranking) error{
				"exact": func(r *Ranking) error {
					_, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
					return err
				},
				"permutation": func(r *Ranking) error {
					_, err := KruskalWallisPermutation(context.Background(), group, values, 3, r, PermutationOptions{Resamples: 10, Workers: 1})
					return err
				},
				"bootstrap": func(r *Ranking) error {
					_, err := KruskalWallisBootstrap(context.Background(), r, BootstrapOptions{Resamples: 10, Level: 0.9, Workers: 1})
					return err
				},
				"dscf": func(r *Ranking) error { _, err := DSCFTest(r, AllPairs(3)); return err },
			}
			for name, call := range calls {
				r, err := Rank(group, values, 3)
				if err != nil {
					t.Fatal(err)
				}
				if call(r) != nil {
					t.Fatalf("%s: the intact ranking is refused", name)
				}
				tt.mangle(r)
				if err := call(r); err == nil || !strings.Contains(err.Error(), "inconsistent ranking") {
					t.Errorf("%s: %v, want an inconsistent ranking", name, err)
				}
			}
		})
	}
}

// TestKruskalWallisInvariance checks that H* depends only on the ranks: it is unchanged
// by a strictly increasing transform of the values and by reordering rows, and
// relabelling groups permutes MeanRank the same way.
func TestKruskalWallisInvariance(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for trial := range 50 {
		k := 2 + rng.IntN(5)
		n := k + rng.IntN(80)
		group := make([]int32, n)
		values := make([]float64, n)
		for j := range n {
			group[j] = int32(j % k)
			if trial%2 == 0 {
				values[j] = float64(rng.IntN(12)) // heavy ties
			} else {
				values[j] = rng.NormFloat64()
			}
		}
		if slices.Min(values) == slices.Max(values) {
			continue // all tied: no H to compare
		}
		base := mustKW(t, group, values, k)

		// A strictly increasing transform; on these values it keeps distinct values
		// distinct and ties tied, so the ranking is the same.
		tv := make([]float64, n)
		for j, x := range values {
			tv[j] = math.Exp(x/3) + 2*x
		}
		if got := mustKW(t, group, tv, k); got.H != base.H || got.P != base.P {
			t.Fatalf("trial %d: transform changed H* %v -> %v", trial, base.H, got.H)
		}

		perm := rng.Perm(n)
		pg, pv := make([]int32, n), make([]float64, n)
		for j, p := range perm {
			pg[j], pv[j] = group[p], values[p]
		}
		if got := mustKW(t, pg, pv, k); got.H != base.H || !slices.Equal(got.MeanRank, base.MeanRank) {
			t.Fatalf("trial %d: row order changed H* %v -> %v", trial, base.H, got.H)
		}

		relabel := rng.Perm(k)
		lg := make([]int32, n)
		for j, g := range group {
			lg[j] = int32(relabel[g])
		}
		got := mustKW(t, lg, values, k)
		// Summing the group terms in another order may change the last bits.
		if !relClose(got.H, base.H, 1e-14) {
			t.Fatalf("trial %d: relabelling changed H* %v -> %v", trial, base.H, got.H)
		}
		for i := range k {
			if got.MeanRank[relabel[i]] != base.MeanRank[i] {
				t.Fatalf("trial %d: MeanRank[%d] = %v after relabelling, was %v at %d",
					trial, relabel[i], got.MeanRank[relabel[i]], base.MeanRank[i], i)
			}
		}
	}
}

// TestKruskalWallisRankANOVAIdentity checks H* against a second formula that holds for
// any tie pattern (docs/methods.md §1.1 [V]): H* = (N-1) · SSB/SST of the one-way ANOVA on
// the midranks, computed here from per-observation midranks of the naive oracle.
func TestKruskalWallisRankANOVAIdentity(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for trial := range 100 {
		k := 2 + rng.IntN(6)
		n := k + 1 + rng.IntN(100)
		group := make([]int32, n)
		values := make([]float64, n)
		for j := range n {
			group[j] = int32(j % k)
			values[j] = float64(rng.IntN(2 + trial))
		}
		d := naiveRank2(values)
		mid := (float64(n) + 1) / 2
		sum := make([]float64, k)
		cnt := make([]float64, k)
		sst := 0.0
		for j, dj := range d {
			rj := float64(dj) / 2
			sum[group[j]] += rj
			cnt[group[j]]++
			sst += (rj - mid) * (rj - mid)
		}
		if sst == 0 {
			continue // all tied
		}
		ssb := 0.0
		for i := range k {
			m := sum[i] / cnt[i]
			ssb += cnt[i] * (m - mid) * (m - mid)
		}
		want := float64(n-1) * ssb / sst
		got := mustKW(t, group, values, k)
		if !relClose(got.H, want, 1e-12) && math.Abs(got.H-want) > 1e-13 {
			t.Fatalf("trial %d: H* = %.17g, (N-1) SSB/SST = %.17g", trial, got.H, want)
		}
	}
}

func mustKW(t testing.TB, group []int32, values []float64, k int) KruskalWallis {
	t.Helper()
	r, err := Rank(group, values, k)
	if err != nil {
		t.Fatal(err)
	}
	kw, err := KruskalWallisTest(r)
	if err != nil {
		t.Fatal(err)
	}
	return kw
}
