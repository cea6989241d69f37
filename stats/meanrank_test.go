package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestMeanRankInterval checks the standard error behind the interval against full
// enumeration: on the tied toy data (docs/methods.md §1.5), the variance of the mean of four
// midranks over all C(12, 4) = 495 equally likely choices of four observations equals
// S²(N − n)/(N n), and the interval of a group of four (B) is centred on its mean rank with
// half-width z·SE (z = 1.959963984540054 at 95%, common practice).
func TestMeanRankInterval(t *testing.T) {
	values := []float64{1, 2, 2, 3, 2, 3, 3, 4, 3, 4, 5, 5}
	group := []int32{0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2}
	r, err := Rank(group, values, 3)
	if err != nil {
		t.Fatal(err)
	}
	// The pooled midranks, by the definition of midranks.
	mid := make([]float64, len(values))
	for i, v := range values {
		below, tied := 0, 0
		for _, w := range values {
			if w < v {
				below++
			} else if w == v {
				tied++
			}
		}
		mid[i] = float64(below) + float64(tied+1)/2
	}
	var sum, sum2, count float64
	for a := 0; a < 12; a++ {
		for b := a + 1; b < 12; b++ {
			for c := b + 1; c < 12; c++ {
				for d := c + 1; d < 12; d++ {
					m := (mid[a] + mid[b] + mid[c] + mid[d]) / 4
					sum += m
					sum2 += m * m
					count++
				}
			}
		}
	}
	mean := sum / count
	variance := sum2/count - mean*mean
	// Group B (2, 3, 3, 4): a mean of four midranks like group A's, whose interval stays
	// inside the range (group A's is cut at its lower end).
	lo, hi, clipped, err := MeanRankInterval(r, 1, 0.95)
	if err != nil || clipped {
		t.Fatal(err, clipped)
	}
	se := (hi - lo) / 2 / 1.959963984540054
	if count != 495 || math.Abs(se*se-variance) > 1e-12 {
		t.Errorf("SE² = %.15g, enumeration %.15g over %v subsets", se*se, variance, count)
	}
	if c := (lo + hi) / 2; math.Abs(c-meanRank(r, 1)) > 1e-12 {
		t.Errorf("centre %v, mean rank %v", c, meanRank(r, 1))
	}
	for _, bad := range []struct {
		i     int
		level float64
	}{{-1, 0.95}, {3, 0.95}, {0, 0}, {0, 1}} {
		if _, _, _, err := MeanRankInterval(r, bad.i, bad.level); err == nil {
			t.Errorf("group %d level %v: no error", bad.i, bad.level)
		}
	}
}

// TestMeanRankIntervalRange checks that the interval stays within the range a mean of n_i
// ranks of 1..N can take, [(n_i + 1)/2, N − (n_i − 1)/2] (by the definition of ranks), and
// says when it was cut. The unclipped ends are R̄_i ± z·SE_i with z = 1.959963984540054
// (common practice) and S² = N(N + 1)/12 without ties (RankVariance).
func TestMeanRankIntervalRange(t *testing.T) {
	const z = 1.959963984540054
	for _, tc := range []struct {
		name    string
		groups  [][]float64
		i       int
		lo, hi  float64
		clipped bool
	}{
		// N = 9, the single top value: SE² = 7.5·8/9, R̄ = 9; the upper end 14.06 is cut to 9.
		{"n = 1 at the top", [][]float64{{9}, {1, 2, 3, 4}, {5, 6, 7, 8}}, 0, 9 - z*math.Sqrt(7.5*8/9), 9, true},
		// N = 9, the single bottom value: the lower end −4.06 is cut to 1.
		{"n = 1 at the bottom", [][]float64{{1}, {2, 3, 4, 5}, {6, 7, 8, 9}}, 0, 1, 1 + z*math.Sqrt(7.5*8/9), true},
		// N = 6, ranks 1 and 2: R̄ = 1.5, SE² = 3.5·4/12; the lower end is cut to (2 + 1)/2.
		{"n = 2 at the bottom", [][]float64{{1, 2}, {3, 4}, {5, 6}}, 0, 1.5, 1.5 + z*math.Sqrt(3.5*4.0/12), true},
		// N = 6, ranks 5 and 6: the upper end is cut to 6 − 1/2.
		{"n = 2 at the top", [][]float64{{1, 2}, {3, 4}, {5, 6}}, 2, 5.5 - z*math.Sqrt(3.5*4.0/12), 5.5, true},
		// N = 12, ranks 6 and 7: R̄ = 6.5, SE² = 13·10/24, [1.94, 11.06] inside [1.5, 11.5].
		{"n = 2 in the middle", [][]float64{{1, 2, 3, 4, 5}, {6, 7}, {8, 9, 10, 11, 12}}, 1, 6.5 - z*math.Sqrt(13*10.0/24), 6.5 + z*math.Sqrt(13*10.0/24), false},
	} {
		r := bootRanking(t, tc.groups)
		lo, hi, clipped, err := MeanRankInterval(r, tc.i, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(lo-tc.lo) > 1e-9 || math.Abs(hi-tc.hi) > 1e-9 || clipped != tc.clipped {
			t.Errorf("%s: [%v, %v] clipped %v, want [%v, %v] clipped %v", tc.name, lo, hi, clipped, tc.lo, tc.hi, tc.clipped)
		}
	}
	// Every group of random tied designs stays in its range.
	for seed := range uint64(200) {
		groups := tiedDesign(seed)
		r := bootRanking(t, groups)
		for i := range groups {
			lo, hi, _, err := MeanRankInterval(r, i, 0.99)
			if err != nil {
				t.Fatal(err)
			}
			ni := float64(len(groups[i]))
			if lo < (ni+1)/2 || hi > float64(r.N)-(ni-1)/2 || lo > meanRank(r, i) || hi < meanRank(r, i) {
				t.Errorf("seed %d group %d (n = %v, N = %d): [%v, %v] around %v", seed, i, ni, r.N, lo, hi, meanRank(r, i))
			}
		}
	}
}

// tiedDesign is a small random design with ties and groups of 1 to 6 values.
func tiedDesign(seed uint64) [][]float64 {
	rng := rand.New(rand.NewPCG(seed, 7))
	groups := make([][]float64, 2+rng.IntN(4))
	for i := range groups {
		for range 1 + rng.IntN(6) {
			groups[i] = append(groups[i], float64(rng.IntN(6)))
		}
	}
	return groups
}
