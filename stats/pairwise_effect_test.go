package stats

import (
	"math"
	"math/big"
	"math/bits"
	"math/rand/v2"
	"slices"
	"strconv"
	"testing"
)

// Pairs of the Dobson (1983) plant weights (docs/methods.md §8.2): counts, δ, A, HL shift and the
// 95% Moses interval from docs/methods.md §5 [V], re-derived by brute force over the 100
// differences with Python 3.11 (statistics.median and the sorted differences d[23], d[76]).
func TestPairEffectsDobson1983PlantWeights(t *testing.T) {
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
		// c = 23 for m = n = 10 at 95%, coverage 0.95674 (docs/methods.md §5 [V]).
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
		xr, yr, err := sortedPair(x, y)
		if err != nil {
			t.Fatal(err)
		}
		var w PairWork
		dm, err := w.matrix(xr, yr)
		if err != nil {
			t.Fatal(err)
		}
		for k := int64(1); k <= int64(len(d)); k++ {
			if r, err := w.kth(&dm, k); err != nil || r.v != d[k-1] {
				t.Fatalf("trial %d, k = %d: %v %v, want %v", trial, k, r.v, err, d[k-1])
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

// TestMannWhitneyNullCounts: m = 4, n = 5 has 126 arrangements; the two-sided exact p at
// U = 4 is 0.190476 (docs/methods.md §3.6, equal to scipy's method='exact' there), so
// #{U <= 4} = 12 of 126.
func TestMannWhitneyNullCounts(t *testing.T) {
	d, err := newMannWhitneyNull(4, 5, 20)
	if err != nil {
		t.Fatal(err)
	}
	if d.cumAt(4).Int64() != 12 || d.total.Int64() != 126 || d.cumAt(20).Int64() != 126 {
		t.Errorf("#{U <= 4} = %v, #{U <= 20} = %v of %v", d.cumAt(4), d.cumAt(20), d.total)
	}
	for _, bad := range [][3]int{{0, 3, 0}, {3, 0, 0}, {2, 2, 5}, {2, 2, -1}} {
		if _, err := newMannWhitneyNull(bad[0], bad[1], bad[2]); err == nil {
			t.Errorf("%v accepted", bad)
		}
	}
}

// bruteNullCounts enumerates all C(m+n, m) ways to place the first sample among the m + n
// pooled ranks and counts U = #{(x, y) : x > y} for each: the untied null by definition.
func bruteNullCounts(m, n int) []int64 {
	counts := make([]int64, m*n+1)
	for mask := 0; mask < 1<<(m+n); mask++ {
		if bits.OnesCount(uint(mask)) != m {
			continue
		}
		u, ysBelow := 0, 0
		for p := 0; p < m+n; p++ {
			if mask&(1<<p) != 0 {
				u += ysBelow
			} else {
				ysBelow++
			}
		}
		counts[u]++
	}
	return counts
}

// mosesLevels are the levels the index tests try: common ones, ones on the boundary of
// attainability (0.9 = 1 − 2/20 for 3 and 3 values, 0.6 = 1 − 2/5 for 4 and 1), and
// extreme ones.
var mosesLevels = []float64{0.01, 0.5, 0.6, 0.8, 0.9, 0.95, 0.99, 0.999, 1 - 1e-9}

// TestMosesIndexBruteForce compares the exact counts, c and the coverage with a brute-force
// enumeration for every m, n <= 8: c = max{u : 2 #{U <= u} <= (1 − level) C(m+n, m)} with
// the level as its exact decimal, coverage 1 − 2 #{U <= c}/C(m+n, m), and c = 0 with
// Attainable false when no u qualifies.
func TestMosesIndexBruteForce(t *testing.T) {
	for m := 1; m <= 8; m++ {
		for n := 1; n <= 8; n++ {
			counts := bruteNullCounts(m, n)
			d, err := newMannWhitneyNull(m, n, m*n)
			if err != nil {
				t.Fatal(err)
			}
			var cum int64
			cums := make([]int64, len(counts))
			for u, c := range counts {
				cum += c
				cums[u] = cum
				if got := d.cumAt(u); !got.IsInt64() || got.Int64() != cum {
					t.Fatalf("m %d, n %d: #{U <= %d} = %v, want %d", m, n, u, got, cum)
				}
			}
			total := cums[m*n]
			for _, level := range mosesLevels {
				lv, _ := new(big.Rat).SetString(strconv.FormatFloat(level, 'g', -1, 64))
				wantC, attainable := 0, false
				for u, cu := range cums {
					// 2 cu <= (1 − level) total
					lhs := new(big.Rat).SetInt64(2 * cu)
					rhs := new(big.Rat).Mul(new(big.Rat).Sub(big.NewRat(1, 1), lv), new(big.Rat).SetInt64(total))
					if lhs.Cmp(rhs) <= 0 {
						wantC, attainable = u, true
					}
				}
				wantCov, _ := big.NewRat(total-2*cums[wantC], total).Float64()
				for _, ix := range []func() (mosesIndex, error){
					func() (mosesIndex, error) { return d.index(level) },
					func() (mosesIndex, error) { // the table HodgesLehmannShift uses: up to ⌊mn/2⌋
						h, err := newMannWhitneyNull(m, n, m*n/2)
						if err != nil {
							return mosesIndex{}, err
						}
						return h.index(level)
					},
				} {
					got, err := ix()
					if err != nil || got.c != wantC || got.coverage != wantCov || got.attainable != attainable {
						t.Errorf("m %d, n %d, level %v: %+v %v, want c %d coverage %v attainable %v", m, n, level, got, err, wantC, wantCov, attainable)
					}
				}
				widest, cov, err := widestUnattainable(m, n, level)
				if err != nil || widest == attainable || (widest && cov != wantCov) {
					t.Errorf("m %d, n %d, level %v: widest %v coverage %v %v", m, n, level, widest, cov, err)
				}
			}
		}
	}
}

// TestMosesUnattainable: with 3 and 3 values the widest interval [D_(1), D_(9)] has coverage
// 1 − 2/C(6, 3) = 0.9, with 4 and 1 values 1 − 2/C(5, 1) = 0.6 (common practice): at 95% the
// level is not attainable, and that widest interval is reported with its true coverage. At
// exactly 0.9 (3 and 3) and 0.6 (4 and 1) it is attainable, with c = 0.
func TestMosesUnattainable(t *testing.T) {
	for _, tc := range []struct {
		x, y       []float64
		level      float64
		attainable bool
		coverage   float64
		low, high  float64
	}{
		{[]float64{1, 5, 9}, []float64{2, 3, 7}, 0.95, false, 0.9, -6, 7},
		{[]float64{1, 5, 9}, []float64{2, 3, 7}, 0.9, true, 0.9, -6, 7},
		{[]float64{1, 5, 9, 4}, []float64{2}, 0.95, false, 0.6, -1, 7},
		{[]float64{1, 5, 9, 4}, []float64{2}, 0.6, true, 0.6, -1, 7},
		{[]float64{2}, []float64{1, 5, 9, 4}, 0.95, false, 0.6, -7, 1},
		{[]float64{1, 2}, []float64{0}, 0.95, false, 1.0 / 3, 1, 2},
		{[]float64{1}, []float64{0}, 0.5, false, 0, 1, 1},
	} {
		hl, err := HodgesLehmannShift(tc.x, tc.y, tc.level)
		if err != nil {
			t.Fatal(err)
		}
		if hl.Attainable != tc.attainable || hl.C != 0 || hl.Coverage != tc.coverage || !hl.ExactIndex ||
			hl.Low != tc.low || hl.High != tc.high {
			t.Errorf("%v vs %v at %v: %+v", tc.x, tc.y, tc.level, hl)
		}
	}
}

// TestMosesInvertedRegression: the index from a float64 product form cancelled for a first
// sample of 200 or more values and gave inverted intervals. x = 0..199 against y = 0.5, 4.5,
// ..., 196.5 (50 values) gave [121.5, −119.5]; the interval is [−17.5, 19.5]: c = 4103 from
// the exact counts (moses_exact.json, m = 200, n = 50, level 0.95), and D_(4104), D_(5897) by
// sorting the 10000 differences here.
func TestMosesInvertedRegression(t *testing.T) {
	x, y := make([]float64, 200), make([]float64, 50)
	for i := range x {
		x[i] = float64(i)
	}
	for j := range y {
		y[j] = float64(4*j) + 0.5
	}
	hl, err := HodgesLehmannShift(x, y, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	d := allDifferences(x, y)
	if hl.C != 4103 || hl.Low != -17.5 || hl.High != 19.5 || hl.Low != d[4103] || hl.High != d[10000-4104] || !hl.ExactIndex || hl.Tied {
		t.Errorf("%+v", hl)
	}
	// Every size on a small grid of large first samples: the interval is in order and holds
	// the estimate.
	for _, m := range []int{200, 248, 300, 450} {
		for _, n := range []int{3, 50, 187, 300} {
			x, y := make([]float64, m), make([]float64, n)
			for i := range x {
				x[i] = float64(i)
			}
			for j := range y {
				y[j] = float64(j)*float64(m)/float64(n) + 0.25
			}
			hl, err := HodgesLehmannShift(x, y, 0.95)
			if err != nil || !(hl.Low <= hl.Shift && hl.Shift <= hl.High) || !hl.Attainable {
				t.Errorf("m %d, n %d: %+v %v", m, n, hl, err)
			}
		}
	}
}

func allDifferences(x, y []float64) []float64 {
	d := make([]float64, 0, len(x)*len(y))
	for _, a := range x {
		for _, b := range y {
			d = append(d, a-b)
		}
	}
	slices.Sort(d)
	return d
}

// TestHodgesLehmannTiesBruteForce: with tied data the estimate and the interval's ends are
// the median and the order statistics c+1 and mn−c of all m·n differences, sorted (c from
// the brute-force null counts), and Tied is set; the data sets are invented.
func TestHodgesLehmannTiesBruteForce(t *testing.T) {
	for _, tc := range []struct {
		x, y []float64
		tied bool
	}{
		{[]float64{1, 2, 2, 3, 3, 5}, []float64{2, 3, 4, 4, 5, 5, 6, 6}, true},
		{[]float64{0, 0, 0, 1, 1}, []float64{0, 1, 1, 1, 2, 2, 2}, true},
		{[]float64{4, 4, 4, 4}, []float64{4, 4, 4}, true},
		{[]float64{1.5, 2.5, 3.5}, []float64{2.5, 7, 8, 9}, true}, // a tie between the samples only
		{[]float64{1, 1, 7, 8}, []float64{2, 3, 4}, true},         // a tie within one sample only
		{[]float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8}, []float64{0.15, 0.25, 0.35, 0.45, 0.55, 0.65, 0.75, 0.85}, false},
		{[]float64{10, 20, 20, 30, 40, 40, 40, 50}, []float64{15, 20, 25, 40, 45, 45, 60, 70}, true},
	} {
		m, n := len(tc.x), len(tc.y)
		d := allDifferences(tc.x, tc.y)
		mn := m * n
		shift := d[mn/2]
		if mn%2 == 0 {
			shift = d[mn/2-1] + (d[mn/2]-d[mn/2-1])/2
		}
		counts := bruteNullCounts(m, n)
		for _, level := range []float64{0.5, 0.8, 0.9, 0.95} {
			hl, err := HodgesLehmannShift(tc.x, tc.y, level)
			if err != nil {
				t.Fatal(err)
			}
			// c from the brute-force counts: the largest u with 2 #{U <= u} <= (1 − level) C(m+n, m)
			// (these levels are exact in hundredths: compare 200 #{U <= u} <= (100 − 100 level) C).
			var cum, total int64
			for _, c := range counts {
				total += c
			}
			c := 0
			for u, k := range counts {
				cum += k
				if 200*cum <= int64(math.Round(100-100*level))*total {
					c = u
				}
			}
			if hl.Shift != shift || hl.C != int64(c) || hl.Low != d[c] || hl.High != d[mn-c-1] || hl.Tied != tc.tied {
				t.Errorf("%v vs %v at %v: %+v, want shift %v, c %d, [%v, %v], tied %v", tc.x, tc.y, level, hl, shift, c, d[c], d[mn-c-1], tc.tied)
			}
		}
	}
}

// TestMosesCoverage checks the interval's coverage by a seeded simulation: m = 7, n = 9,
// t(3) data with a shift of 0.5, 20000 data sets. docs/methods.md §5 [V] gives the theoretical
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
	// Tiny samples: no interval reaches 95%, so the whole range is reported (c = 0).
	hl, err := HodgesLehmannShift([]float64{1, 2}, []float64{0}, 0.95)
	if err != nil || hl.C != 0 || hl.Attainable || hl.Low != 1 || hl.High != 2 || hl.Shift != 1.5 {
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
