package stats

import (
	"encoding/json"
	"fmt"
	"math"
	"math/big"
	"math/bits"
	"os"
	"slices"
	"testing"

	"rankplan/stats/stream"
)

// seqBrute replays the Monte Carlo test one resample at a time from its definition
// (stream.ShuffleInt32 on the label array of each block, continuing from the previous
// resample, and T·L summed in int64 from the rank definition) and returns the index
// L of the resample that brought the h-th exceedance, or 0 when fewer than h of the
// m resamples exceed, with the count b of all m.
func seqBrute(groups [][]float64, seed uint64, id string, m, h int64) (l, b int64) {
	g, _, stat := definitionStat(groups)
	obs := stat(g)
	var a []int32
	var s *stream.Stream
	for r := range m {
		if r%PermutationBlockSize == 0 {
			a = slices.Clone(g)
			s = stream.New(stream.Key(PermutationPurpose, seed, id, uint64(r/PermutationBlockSize)))
		}
		stream.ShuffleInt32(s, a)
		if stat(a) >= obs {
			b++
			if b == h && l == 0 {
				l = r + 1
			}
		}
	}
	return l, b
}

// TestSequentialBruteForce: the sequential rule gives the L of the one-at-a-time
// procedure (Besag & Clifford 1991), P = h/L, SE = sqrt(p̂(1 − p̂)/L) and the interval
// of SequentialInterval, or the fixed-m result when it does not stop; for 1, 2 and 8
// workers alike. The cases stop in the first block, in later blocks (the tied toy's
// exceedance probability is 47/1925, so h = 150 needs about 6000 resamples), at the
// very last resample, and not at all.
func TestSequentialBruteForce(t *testing.T) {
	cases := []struct {
		name   string
		groups [][]float64
		seed   uint64
		m, h   int64
	}{
		{"p 0.3, first block", inventedP03, 3, 5*PermutationBlockSize + 11, 10},
		{"p 0.3, h = 1", inventedP03, 4, 100, 1},
		{"p 0.3, at the last resample", inventedP03, 3, 31, 10}, // L = 31 in the first case
		{"p 0.3, third block", inventedP03, 5, 5*PermutationBlockSize + 11, 3000},
		{"tied toy, second block", tiedToy, 6, 4 * PermutationBlockSize, 150},
		{"tied toy, not reached", tiedToy, 7, 3*PermutationBlockSize + 5, 1000},
		{"Dobson1983PlantWeights", dobson1983PlantWeights, 8, 6 * PermutationBlockSize, 200},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			l, b := seqBrute(c.groups, c.seed, "seq", c.m, c.h)
			t.Logf("L = %d (block %d), b = %d of m = %d", l, (l-1)/PermutationBlockSize, b, c.m)
			fixed := permRun(t, c.groups, PermutationOptions{Seed: c.seed, AnalysisID: "seq", Resamples: c.m})
			if fixed.Exceed != b {
				t.Fatalf("fixed rule b = %d, one at a time %d", fixed.Exceed, b)
			}
			for _, w := range []int{1, 2, 8} {
				p := permRun(t, c.groups, PermutationOptions{Seed: c.seed, AnalysisID: "seq", Resamples: c.m, StopAfter: c.h, Workers: w})
				if p.StopAfter != c.h || p.MaxResamples != c.m {
					t.Errorf("workers %d: StopAfter, MaxResamples = %d, %d; want %d, %d", w, p.StopAfter, p.MaxResamples, c.h, c.m)
				}
				if l == 0 {
					want := fixed
					want.StopAfter, want.MaxResamples = c.h, c.m
					if p != want {
						t.Errorf("workers %d: not stopped, got %+v, want the fixed result %+v", w, p, want)
					}
					continue
				}
				lo, hi, err := SequentialInterval(c.h, l, DefaultPermutationLevel)
				if err != nil {
					t.Fatal(err)
				}
				ph := float64(c.h) / float64(l)
				want := Permutation{Resamples: l, Exceed: c.h, P: ph, SE: math.Sqrt(ph * (1 - ph) / float64(l)),
					Level: DefaultPermutationLevel, CILow: lo, CIHigh: hi, Comparison: ComparisonExact,
					StopAfter: c.h, MaxResamples: c.m, Stopped: true}
				if p != want {
					t.Errorf("workers %d: got %+v\nwant %+v (L = %d by brute force)", w, p, want, l)
				}
			}
		})
	}
}

// TestSequentialHandChecked: in {1, 4} against {2, 3} both groups hold doubled ranks
// summing to 10, the least T there is ({2, 4} | {6, 8} gives 36 + 196 = 232 and
// {2, 6} | {4, 8} gives 64 + 144 = 208, against 100 + 100 = 200), so every resample
// exceeds and the rule stops at L = h: P = 1, SE = 0 and, since Beta(h, 1) has
// distribution function x^h, the interval is [((1 − level)/2)^(1/h), 1]; worked by hand.
func TestSequentialHandChecked(t *testing.T) {
	groups := [][]float64{{1, 4}, {2, 3}}
	for _, c := range []struct {
		h     int64
		level float64
		low   float64
	}{
		{1, 0.95, 0.025},
		{3, 0.95, 0.29240177382128663}, // 0.025^(1/3)
		{5, 0.99, 0.34657242157757079}, // 0.005^(1/5)
	} {
		p := permRun(t, groups, PermutationOptions{Seed: 1, AnalysisID: "hand", Resamples: 100, StopAfter: c.h, Level: c.level, Workers: 2})
		if !p.Stopped || p.Resamples != c.h || p.Exceed != c.h || p.P != 1 || p.SE != 0 || p.CIHigh != 1 || !relClose(p.CILow, c.low, 1e-13) {
			t.Errorf("h = %d: %+v; want L = h, P = 1, SE = 0, interval [%v, 1]", c.h, p, c.low)
		}
	}
}

// TestSequentialIntervalScipy: SequentialInterval against roots of scipy 1.10.1's
// negative binomial tails (testdata/reference/sequential_mc_scipy.json; brentq to
// machine precision), within 1e-11 relative: the roots and scipy's own Beta form
// differ by up to 6e-13 there.
func TestSequentialIntervalScipy(t *testing.T) {
	raw, err := os.ReadFile("../testdata/reference/sequential_mc_scipy.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Versions map[string]string `json:"versions"`
		Cases    []struct {
			H, L      int64
			Level     float64
			Low, High float64
		} `json:"cases"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	if ref.Versions["scipy"] != "1.10.1" || len(ref.Cases) < 50 {
		t.Fatalf("reference made with %v, %d cases; the test cites scipy 1.10.1", ref.Versions, len(ref.Cases))
	}
	for _, c := range ref.Cases {
		lo, hi, err := SequentialInterval(c.H, c.L, c.Level)
		if err != nil {
			t.Fatal(err)
		}
		if !relClose(lo, c.Low, 1e-11) || !relClose(hi, c.High, 1e-11) {
			t.Errorf("h = %d, L = %d, level %v: [%v, %v], scipy [%v, %v]", c.H, c.L, c.Level, lo, hi, c.Low, c.High)
		}
	}
}

// TestSequentialErrors: h outside [0, m] and intervals of impossible counts are errors.
func TestSequentialErrors(t *testing.T) {
	g, v := flatten(tiedToy)
	r, err := Rank(g, v, 3)
	if err != nil {
		t.Fatal(err)
	}
	for _, h := range []int64{-1, 11, math.MaxInt64} {
		if _, err := KruskalWallisPermutation(t.Context(), g, v, 3, r, PermutationOptions{Resamples: 10, StopAfter: h}); err == nil {
			t.Errorf("StopAfter = %d with 10 resamples: no error", h)
		}
	}
	for _, c := range [][2]int64{{0, 5}, {3, 2}, {-1, 1}} {
		if _, _, err := SequentialInterval(c[0], c[1], 0.95); err == nil {
			t.Errorf("SequentialInterval(%d, %d): no error", c[0], c[1])
		}
	}
	for _, level := range []float64{0, 1, math.NaN(), -0.5} {
		if _, _, err := SequentialInterval(2, 5, level); err == nil {
			t.Errorf("level %v: no error", level)
		}
	}
}

// TestSequentialDefinition checks the p-values of the rule against Besag & Clifford's
// defining property, by brute force over every outcome: when the observed statistic's
// exceedance probability q is uniform on (0, 1) (its null distribution for a
// continuous statistic), P(p <= u) = u at every value u = h/l the rule can report on
// stopping, and P(p <= u) <= u at the fixed-m values (b + 1)/(m + 1). The probability of
// each outcome is integrated over q in exact rationals from its definition:
// stopping at l has probability C(l−1, h−1) q^h (1−q)^(l−h), drawing all m with b < h
// exceedances C(m, b) q^b (1−q)^(m−b), and ∫ q^a (1−q)^c dq is expanded as
// Σ_j C(c, j) (−1)^j / (a + j + 1). The reported values are those of
// sequentialSummary and permutationSummary, which must equal h/l and (b+1)/(m+1)
// rounded once.
func TestSequentialDefinition(t *testing.T) {
	integral := func(coef int64, a, c int64) *big.Rat { // coef · ∫ q^a (1−q)^c dq
		sum := new(big.Rat)
		for j := int64(0); j <= c; j++ {
			term := new(big.Rat).SetFrac(new(big.Int).Binomial(c, j), big.NewInt(a+j+1))
			if j%2 == 1 {
				term.Neg(term)
			}
			sum.Add(sum, term)
		}
		return sum.Mul(sum, new(big.Rat).SetInt64(coef))
	}
	binom := func(n, k int64) int64 { return new(big.Int).Binomial(n, k).Int64() }
	for _, hm := range [][2]int64{{1, 1}, {1, 20}, {2, 7}, {3, 40}, {10, 45}} {
		h, m := hm[0], hm[1]
		type outcome struct {
			value   *big.Rat // the p-value as a fraction
			prob    *big.Rat
			stopped bool
		}
		var outs []outcome
		for l := h; l <= m; l++ {
			s, err := sequentialSummary(h, l, m, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			if want := float64(h) / float64(l); s.P != want {
				t.Errorf("h %d, L %d: P = %v, want %v", h, l, s.P, want)
			}
			outs = append(outs, outcome{big.NewRat(h, l), integral(binom(l-1, h-1), h, l-h), true})
		}
		for b := range h {
			s, err := permutationSummary(b, m, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			if want := float64(b+1) / float64(m+1); s.P != want {
				t.Errorf("b %d, m %d: P = %v, want %v", b, m, s.P, want)
			}
			outs = append(outs, outcome{big.NewRat(b+1, m+1), integral(binom(m, b), b, m-b), false})
		}
		total := new(big.Rat)
		for _, o := range outs {
			total.Add(total, o.prob)
		}
		if total.Cmp(big.NewRat(1, 1)) != 0 {
			t.Fatalf("h %d, m %d: the outcomes' probabilities sum to %v", h, m, total)
		}
		for _, u := range outs {
			below := new(big.Rat)
			for _, o := range outs {
				if o.value.Cmp(u.value) <= 0 {
					below.Add(below, o.prob)
				}
			}
			switch c := below.Cmp(u.value); {
			case u.stopped && c != 0:
				t.Errorf("h %d, m %d: P(p <= %v) = %v, want equality", h, m, u.value, below)
			case c > 0:
				t.Errorf("h %d, m %d: P(p <= %v) = %v exceeds it", h, m, u.value, below)
			}
		}
	}
}

func ExampleSequentialInterval() {
	// The rule stopped at the 10th exceedance, at resample 412: p = 10/412; the ends
	// agree with scipy 1.10.1 stats.beta.ppf(0.025, 10, 403) and beta.ppf(0.975, 10, 402).
	lo, hi, err := SequentialInterval(10, 412, 0.95)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("p = %.4f, 95%% interval [%.4f, %.4f]\n", 10.0/412, lo, hi)
	// Output:
	// p = 0.0243, 95% interval [0.0117, 0.0412]
}

// TestLemireRejectSteps: the Monte Carlo loop's inline form of stream.Below (one raw
// value, and lemireReject when its low product half is below the bound) draws the same
// integers from the same raw values as Below, on bounds where rejection is common
// (2^63 + 1: t = 2^63 − 1, about half the raw values rejected) and where it is rare.
func TestLemireRejectSteps(t *testing.T) {
	for _, n := range []uint64{1, 2, 3, 1000, 1<<32 + 7, 1<<63 + 1, math.MaxUint64} {
		key := stream.Key("test", 1, "lemire", n)
		below, fused := stream.New(key), stream.New(key)
		rejected := 0
		for range 2000 {
			want := below.Below(n)
			x, lo := bits.Mul64(fused.Uint64(), n)
			if lo < n {
				if lo < -n%n {
					rejected++
				}
				x = lemireReject(fused, n, x, lo)
			}
			if x != want {
				t.Fatalf("n = %d: fused %d, Below %d", n, x, want)
			}
		}
		if n == 1<<63+1 && rejected < 500 {
			t.Errorf("n = 2^63 + 1: only %d of 2000 first values rejected; the slow path went untested", rejected)
		}
	}
}
