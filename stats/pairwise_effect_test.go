package stats

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// PlantGrowth pairs (Dobson 1983 data, METHODS.md §8.2): counts, δ, A, HL shift and the
// 95% Moses interval from METHODS.md §5 [V], re-derived by brute force over the 100
// differences with Python 3.11 (statistics.median and the sorted differences d[23], d[76]).
func TestPairEffectsPlantGrowth(t *testing.T) {
	ctrl := []float64{4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14}
	trt1 := []float64{4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69}
	trt2 := []float64{6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26}
	for _, tc := range []struct {
		name             string
		x, y             []float64
		gt, lt, ties     int64
		delta, a         float64
		shift, low, high float64
	}{
		{"trt2 vs trt1", trt2, trt1, 84, 16, 0, 0.68, 0.84, 0.945, 0.31, 1.50},
		{"trt2 vs ctrl", trt2, ctrl, 75, 25, 0, 0.50, 0.75, 0.490, -0.04, 1.00},
		{"ctrl vs trt1", ctrl, trt1, 67, 32, 1, 0.35, 0.675, 0.405, -0.29, 1.01},
	} {
		e, err := PairEffectSizes(tc.x, tc.y)
		if err != nil {
			t.Fatal(err)
		}
		if e.Greater != tc.gt || e.Less != tc.lt || e.Ties != tc.ties || math.Abs(e.CliffsDelta-tc.delta) > 1e-15 ||
			math.Abs(e.VarghaDelaneyA-tc.a) > 1e-15 || math.Abs(e.CliffsDelta-(2*e.VarghaDelaneyA-1)) > 1e-15 {
			t.Errorf("%s: %+v", tc.name, e)
		}
		hl, err := HodgesLehmannShift(tc.x, tc.y, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		// c = 23 for m = n = 10 at 95%, coverage 0.95674 (METHODS.md §5 [V]).
		if hl.C != 23 || math.Abs(hl.Coverage-0.95674) > 5e-6 || !hl.ExactIndex {
			t.Errorf("%s: c = %d, coverage %v", tc.name, hl.C, hl.Coverage)
		}
		if math.Abs(hl.Shift-tc.shift) > 1e-12 || math.Abs(hl.Low-tc.low) > 1e-12 || math.Abs(hl.High-tc.high) > 1e-12 {
			t.Errorf("%s: HL %v [%v, %v], want %v [%v, %v]", tc.name, hl.Shift, hl.Low, hl.High, tc.shift, tc.low, tc.high)
		}
	}
}

// TestKthDifferenceBruteForce compares the selection of the k-th difference with sorting
// all m·n differences, on random samples with ties (fixed seed).
func TestKthDifferenceBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	for trial := 0; trial < 200; trial++ {
		m, n := 1+rng.IntN(12), 1+rng.IntN(12)
		x, y := make([]float64, m), make([]float64, n)
		for i := range x {
			x[i] = float64(rng.IntN(9)) / 4
		}
		for j := range y {
			y[j] = float64(rng.IntN(9))/4 + rng.NormFloat64()*float64(trial%2)
		}
		var d []float64
		for _, a := range x {
			for _, b := range y {
				d = append(d, a-b)
			}
		}
		slices.Sort(d)
		xs, ys := slices.Sorted(slices.Values(x)), slices.Sorted(slices.Values(y))
		for k := int64(1); k <= int64(len(d)); k++ {
			if got := kthDifference(xs, ys, k); got != d[k-1] {
				t.Fatalf("trial %d, k = %d: %v, want %v", trial, k, got, d[k-1])
			}
		}
		e, _ := PairEffectSizes(x, y)
		var gt, lt int64
		for _, a := range x {
			for _, b := range y {
				if a > b {
					gt++
				} else if a < b {
					lt++
				}
			}
		}
		if e.Greater != gt || e.Less != lt {
			t.Fatalf("trial %d: counts %+v, want %d %d", trial, e, gt, lt)
		}
	}
}

// TestMannWhitneyCDF: m = 4, n = 5 has 126 arrangements; the two-sided exact p at U = 4
// is 0.190476 (METHODS.md §3.6, equal to scipy's method='exact' there), so P(U <= 4) = 12/126.
func TestMannWhitneyCDF(t *testing.T) {
	cdf := mannWhitneyCDF(4, 5)
	if len(cdf) != 21 || math.Abs(cdf[4]-12.0/126) > 1e-15 || math.Abs(2*cdf[4]-0.190476) > 5e-7 || cdf[20] != 1 {
		t.Errorf("cdf %v", cdf)
	}
	for u := range cdf { // symmetric: P(U <= u) = P(U >= mn − u)
		if u > 0 && math.Abs(cdf[u-1]-(1-cdf[20-u])) > 1e-15 {
			t.Errorf("asymmetric at %d", u)
		}
	}
}

// TestMosesCoverage checks the interval's coverage by a seeded simulation: m = 7, n = 9,
// t(3) data with a shift of 0.5, 20000 data sets. METHODS.md §5 [V] gives the theoretical
// coverage 0.95822 for this design; the simulated coverage must lie within 4 standard errors.
func TestMosesCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation")
	}
	rng := rand.New(rand.NewPCG(20240601, 1))
	t3 := func() float64 { // Student t with 3 df: Z / sqrt(χ²_3 / 3)
		z := rng.NormFloat64()
		c := 0.0
		for range 3 {
			g := rng.NormFloat64()
			c += g * g
		}
		return z / math.Sqrt(c/3)
	}
	const runs, shift = 20000, 0.5
	covered := 0
	var coverage float64
	x, y := make([]float64, 7), make([]float64, 9)
	for range runs {
		for i := range x {
			x[i] = t3() + shift
		}
		for j := range y {
			y[j] = t3()
		}
		hl, err := HodgesLehmannShift(x, y, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		coverage = hl.Coverage
		if hl.Low <= shift && shift <= hl.High {
			covered++
		}
	}
	if math.Abs(coverage-0.95822) > 5e-6 {
		t.Errorf("theoretical coverage %v, want 0.95822", coverage)
	}
	got := float64(covered) / runs
	se := math.Sqrt(coverage * (1 - coverage) / runs)
	if math.Abs(got-coverage) > 4*se {
		t.Errorf("simulated coverage %v, theoretical %v (se %v)", got, coverage, se)
	}
}

func TestPairEffectErrors(t *testing.T) {
	for _, tc := range [][2][]float64{{nil, {1}}, {{1}, {}}, {{math.NaN()}, {1}}, {{1}, {math.Inf(-1)}}} {
		if _, err := PairEffectSizes(tc[0], tc[1]); err == nil {
			t.Errorf("%v: no error", tc)
		}
		if _, err := HodgesLehmannShift(tc[0], tc[1], 0.95); err == nil {
			t.Errorf("%v: no error", tc)
		}
	}
	if _, err := HodgesLehmannShift([]float64{1}, []float64{2}, 1); err == nil {
		t.Error("level 1 accepted")
	}
	// Tiny samples: no interval reaches 95%, so the whole range is reported (c = -1).
	hl, err := HodgesLehmannShift([]float64{1, 2}, []float64{0}, 0.95)
	if err != nil || hl.C != -1 || hl.Low != 1 || hl.High != 2 || hl.Shift != 1.5 {
		t.Errorf("tiny: %+v %v", hl, err)
	}
	// Inputs are not modified.
	x, y := []float64{3, 1, 2}, []float64{9, 0}
	PairEffectSizes(x, y)
	HodgesLehmannShift(x, y, 0.9)
	if !slices.Equal(x, []float64{3, 1, 2}) || !slices.Equal(y, []float64{9, 0}) {
		t.Error("inputs modified")
	}
}
