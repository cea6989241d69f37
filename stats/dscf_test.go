package stats

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestNemenyiDSCFDobson1983PlantWeights checks the values of docs/methods.md §3.3 and §3.4 ([V],
// scipy 1.10.1 in testdata/reference/dscf_scipy.py) for the pairs ctrl–trt1, ctrl–trt2,
// trt1–trt2 of the Dobson (1983) plant weights. §3.4 lists DSCF's W* (rank sum of the second
// group of the pair); rankplan's Statistic is signed so that positive means the first
// group is larger, so Nemenyi's q carries the sign of R̄_I − R̄_J (+, −, −: Dunn's z in
// §3.1) and DSCF's Statistic is −W*.
func TestNemenyiDSCFDobson1983PlantWeights(t *testing.T) {
	r := mustRank(t, dobson1983PlantWeights)
	pairs := AllPairs(3)
	nem, err := NemenyiTest(r, pairs)
	if err != nil {
		t.Fatal(err)
	}
	dscf, err := DSCFTest(r, pairs)
	if err != nil {
		t.Fatal(err)
	}
	wantQ := []float64{1.580702, -2.389016, -3.969719}
	wantQP := []float64{0.503088, 0.209259, 0.0138549}
	wantW := []float64{-1.871532, 2.672612, 3.634753}
	wantWP := []float64{0.382106, 0.141586, 0.0274497}
	for i := range 3 {
		if math.Abs(nem[i].Statistic-wantQ[i]) > 5e-7 || !relClose(nem[i].P, wantQP[i], 1e-5) {
			t.Errorf("Nemenyi %v: q %.7f p %.7g, docs/methods.md §3.3 %v %v", pairs[i], nem[i].Statistic, nem[i].P, wantQ[i], wantQP[i])
		}
		if math.Abs(-dscf[i].Statistic-wantW[i]) > 5e-7 || !relClose(dscf[i].P, wantWP[i], 1e-5) {
			t.Errorf("DSCF %v: W* %.7f p %.7g, docs/methods.md §3.4 %v %v", pairs[i], -dscf[i].Statistic, dscf[i].P, wantW[i], wantWP[i])
		}
	}
}

type dscfRefCmp struct {
	I    int     `json:"i"`
	J    int     `json:"j"`
	Stat float64 `json:"stat"`
	P    float64 `json:"p"`
}

// TestNemenyiDSCFScipy compares with testdata/reference/dscf_scipy.json, an independent
// computation (scipy 1.10.1: rankdata for the ranks, the tie correction by its formula,
// studentized_range.sf with df = inf) on the Dobson (1983) plant weights and three invented data sets with
// ties and unequal sizes. Tolerance: relative 1e-7 for statistics and p-values (scipy's
// studentized_range.sf with df = inf agrees with mpmath to about 1e-10 in this range;
// TestStudentizedRangeScipy).
func TestNemenyiDSCFScipy(t *testing.T) {
	var ref struct {
		Versions map[string]string `json:"versions"`
		Sets     []struct {
			Name    string       `json:"name"`
			Groups  [][]float64  `json:"groups"`
			DSCF    []dscfRefCmp `json:"dscf"`
			Nemenyi []dscfRefCmp `json:"nemenyi"`
		} `json:"sets"`
	}
	readJSON(t, "../testdata/reference/dscf_scipy.json", &ref)
	if ref.Versions["scipy"] != "1.10.1" || len(ref.Sets) < 4 {
		t.Fatalf("reference %v with %d sets", ref.Versions, len(ref.Sets))
	}
	for _, set := range ref.Sets {
		r := mustRank(t, set.Groups)
		pairs := AllPairs(len(set.Groups))
		for _, m := range []struct {
			name string
			f    func(*Ranking, [][2]int) ([]Comparison, error)
			want []dscfRefCmp
		}{{"dscf", DSCFTest, set.DSCF}, {"nemenyi", NemenyiTest, set.Nemenyi}} {
			got, err := m.f(r, pairs)
			if err != nil {
				t.Fatalf("%s %s: %v", set.Name, m.name, err)
			}
			if len(got) != len(m.want) {
				t.Fatalf("%s %s: %d comparisons, want %d", set.Name, m.name, len(got), len(m.want))
			}
			for i, w := range m.want {
				g := got[i]
				if g.I != w.I || g.J != w.J || !relClose(g.Statistic, w.Stat, 1e-7) || !relClose(g.P, w.P, 1e-7) {
					t.Errorf("%s %s (%d,%d): stat %.12g p %.12g, scipy (%d,%d) %.12g %.12g",
						set.Name, m.name, g.I, g.J, g.Statistic, g.P, w.I, w.J, w.Stat, w.P)
				}
				if !relClose(g.MeanDiff/g.SE, g.Statistic, 1e-14) {
					t.Errorf("%s %s: MeanDiff/SE = %v, Statistic %v", set.Name, m.name, g.MeanDiff/g.SE, g.Statistic)
				}
			}
		}
	}
}

// TestDSCFRankSumIdentity checks W* = √2 × the two-sample Wilcoxon z without continuity
// correction (docs/methods.md §3.4) against RankSumTest's Z on random tied data (fixed seed),
// and Nemenyi's q = √2 × Dunn's z, with the same signs.
func TestDSCFRankSumIdentity(t *testing.T) {
	rng := rand.New(rand.NewPCG(51, 7))
	for trial := range 40 {
		k := 2 + rng.IntN(5)
		groups := make([][]float64, k)
		for i := range groups {
			n := 1 + rng.IntN(15)
			for range n {
				groups[i] = append(groups[i], math.Round(rng.NormFloat64()*3)/2+float64(i%3))
			}
		}
		r := mustRank(t, groups)
		pairs := AllPairs(k)
		dscf, err := DSCFTest(r, pairs)
		if err != nil {
			t.Fatal(err)
		}
		for n, p := range pairs {
			if dscf[n].NotComputable != "" {
				continue
			}
			rs, err := RankSumTest(context.Background(), groups[p[0]], groups[p[1]], false, ExactBudget{MaxStates: 1, MaxWork: 1})
			if err != nil {
				t.Fatal(err)
			}
			if want := math.Sqrt2 * rs.Z; math.Abs(dscf[n].Statistic-want) > 1e-12*max(1, math.Abs(want)) {
				t.Errorf("trial %d pair %v: DSCF %v, √2·Z %v", trial, p, dscf[n].Statistic, want)
			}
		}
		nem, err := NemenyiTest(r, pairs)
		if err != nil {
			t.Fatal(err)
		}
		dunn, err := DunnTest(r, pairs)
		if err != nil {
			t.Fatal(err)
		}
		for n := range pairs {
			if want := math.Sqrt2 * dunn[n].Statistic; math.Abs(nem[n].Statistic-want) > 1e-12*max(1, math.Abs(want)) {
				t.Errorf("trial %d: Nemenyi %v, √2·Dunn z %v", trial, nem[n].Statistic, want)
			}
			if nem[n].MeanDiff != dunn[n].MeanDiff {
				t.Errorf("trial %d: MeanDiff %v, Dunn %v", trial, nem[n].MeanDiff, dunn[n].MeanDiff)
			}
		}
	}
}

// TestDSCFManyToOne checks that a many-to-one family uses k = r.K in the studentized range:
// the p-values equal those of the same pairs within AllPairs.
func TestDSCFManyToOne(t *testing.T) {
	r := mustRank(t, dobson1983PlantWeights)
	all, err := DSCFTest(r, AllPairs(3))
	if err != nil {
		t.Fatal(err)
	}
	m2o, err := DSCFTest(r, ManyToOne(3, 0)) // (1, 0), (2, 0)
	if err != nil {
		t.Fatal(err)
	}
	if m2o[0].P != all[0].P || m2o[1].P != all[1].P || m2o[0].Statistic != -all[0].Statistic {
		t.Errorf("many-to-one %+v, all pairs %+v", m2o, all)
	}
	sf, _ := StudentizedRangeSurvival(math.Abs(all[0].Statistic), 3, math.Inf(1))
	if all[0].P != sf {
		t.Errorf("p %v, sf with k = 3 %v", all[0].P, sf)
	}
}

// TestDSCFErrors checks errors for bad pairs, that an all-tied pair is reported as not
// computable while the other pairs are computed, and that neither test modifies the
// Ranking or the pairs.
func TestDSCFErrors(t *testing.T) {
	r := mustRank(t, [][]float64{{1, 1, 1}, {1, 1}, {2, 3}})
	cmp, err := DSCFTest(r, AllPairs(3))
	if err != nil {
		t.Fatalf("two groups constant at the same value: %v", err)
	}
	if cmp[0].NotComputable != PairAllTied || !math.IsNaN(cmp[0].P) || !math.IsNaN(cmp[0].Statistic) {
		t.Errorf("all tied pair: %+v, want not computable with NaN p", cmp[0])
	}
	for _, c := range cmp[1:] {
		if c.NotComputable != "" || !(c.P > 0 && c.P <= 1) {
			t.Errorf("untied pair %d-%d: %+v", c.I, c.J, c)
		}
	}
	for _, bad := range [][][2]int{{{0, 0}}, {{-1, 1}}, {{0, 3}}} {
		if _, err := DSCFTest(r, bad); err == nil {
			t.Errorf("DSCF pairs %v: no error", bad)
		}
		if _, err := NemenyiTest(r, bad); err == nil {
			t.Errorf("Nemenyi pairs %v: no error", bad)
		}
	}
	tied := mustRank(t, [][]float64{{4, 4}, {4, 4, 4}})
	if _, err := NemenyiTest(tied, AllPairs(2)); !errors.Is(err, ErrAllTied) {
		t.Errorf("Nemenyi all tied: %v", err)
	}
	if _, err := NemenyiTest(nil, AllPairs(2)); err == nil {
		t.Error("nil ranking: no error")
	}

	r = mustRank(t, dobson1983PlantWeights)
	sorted := make([][]float64, len(r.Sorted))
	for i := range r.Sorted {
		sorted[i] = slices.Clone(r.Sorted[i])
	}
	sums := slices.Clone(r.RankSum2)
	pairs := AllPairs(3)
	pairsCopy := slices.Clone(pairs)
	if _, err := DSCFTest(r, pairs); err != nil {
		t.Fatal(err)
	}
	if _, err := NemenyiTest(r, pairs); err != nil {
		t.Fatal(err)
	}
	for i := range sorted {
		if !slices.Equal(sorted[i], r.Sorted[i]) {
			t.Errorf("Sorted[%d] modified", i)
		}
	}
	if !slices.Equal(sums, r.RankSum2) || !slices.Equal(pairs, pairsCopy) {
		t.Error("RankSum2 or pairs modified")
	}
}

// BenchmarkDSCF times DSCF and Nemenyi on 20 groups of 500 000 observations each (10^7
// rows, invented data with ties), all 190 pairs.
func BenchmarkDSCF(b *testing.B) {
	const k, n = 20, 500_000
	rng := rand.New(rand.NewPCG(3, 4))
	g := make([]int32, 0, k*n)
	v := make([]float64, 0, k*n)
	for i := range k {
		for range n {
			g = append(g, int32(i))
			v = append(v, math.Round(rng.NormFloat64()*100+float64(i)))
		}
	}
	r, err := Rank(g, v, k)
	if err != nil {
		b.Fatal(err)
	}
	pairs := AllPairs(k)
	b.Run("dscf", func(b *testing.B) {
		b.ReportAllocs()
		for range b.N {
			if _, err := DSCFTest(r, pairs); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("nemenyi", func(b *testing.B) {
		b.ReportAllocs()
		for range b.N {
			if _, err := NemenyiTest(r, pairs); err != nil {
				b.Fatal(err)
			}
		}
	})
}

func ExampleDSCFTest() {
	// Invented data: three groups of measurements.
	groups := [][]float64{{1.1, 2.0, 2.0, 3.5, 4.2}, {3.9, 4.4, 5.0, 5.0, 6.1, 6.3}, {2.2, 3.0, 3.3, 4.0}}
	var g []int32
	var v []float64
	for i, xs := range groups {
		for _, x := range xs {
			g, v = append(g, int32(i)), append(v, x)
		}
	}
	r, err := Rank(g, v, len(groups))
	if err != nil {
		panic(err)
	}
	cs, err := DSCFTest(r, AllPairs(len(groups)))
	if err != nil {
		panic(err)
	}
	for _, c := range cs {
		fmt.Printf("%d-%d: stat = %+.4f, p = %.4f\n", c.I, c.J, c.Statistic, c.P)
	}
	// Output:
	// 0-1: stat = -3.6313, p = 0.0276
	// 0-2: stat = -1.0436, p = 0.7409
	// 1-2: stat = +3.3267, p = 0.0489
}

func ExampleNemenyiTest() {
	// Invented data: three groups of measurements.
	groups := [][]float64{{1.1, 2.0, 2.0, 3.5, 4.2}, {3.9, 4.4, 5.0, 5.0, 6.1, 6.3}, {2.2, 3.0, 3.3, 4.0}}
	var g []int32
	var v []float64
	for i, xs := range groups {
		for _, x := range xs {
			g, v = append(g, int32(i)), append(v, x)
		}
	}
	r, err := Rank(g, v, len(groups))
	if err != nil {
		panic(err)
	}
	cs, err := NemenyiTest(r, AllPairs(len(groups)))
	if err != nil {
		panic(err)
	}
	for _, c := range cs {
		fmt.Printf("%d-%d: q = %+.4f, p = %.4f\n", c.I, c.J, c.Statistic, c.P)
	}
	// Output:
	// 0-1: q = -3.9586, p = 0.0142
	// 0-2: q = -0.6611, p = 0.8865
	// 1-2: q = +3.0264, p = 0.0819
}

// TestStudentizedRangeTooManyGroups: Nemenyi and DSCF with more groups than the studentized
// range is computed for report ErrNotComputable (a property of the data), not a call error.
func TestStudentizedRangeTooManyGroups(t *testing.T) {
	groups := make([][]float64, srangeMaxK+1)
	for i := range groups {
		groups[i] = []float64{float64(i), float64(i) + 0.5}
	}
	r := mustRank(t, groups)
	pairs := [][2]int{{0, 1}}
	for name, f := range map[string]func(*Ranking, [][2]int) ([]Comparison, error){"nemenyi": NemenyiTest, "dscf": DSCFTest} {
		_, err := f(r, pairs)
		if !errors.Is(err, ErrNotComputable) {
			t.Errorf("%s with k = %d: %v, want ErrNotComputable", name, r.K, err)
		}
	}
}
