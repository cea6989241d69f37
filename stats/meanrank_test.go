package stats

import (
	"math"
	"testing"
)

// TestMeanRankInterval checks the standard error behind the interval against full
// enumeration: on the tied toy data (METHODS.md §1.5), the variance of group A's mean rank
// over all C(12, 4) = 495 equally likely choices of its four observations equals
// S²(N − n)/(N n), and the interval is centred on the mean rank with half-width z·SE
// (z = 1.959963984540054 at 95%, common practice).
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
	lo, hi, err := MeanRankInterval(r, 0, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	se := (hi - lo) / 2 / 1.959963984540054
	if count != 495 || math.Abs(se*se-variance) > 1e-12 {
		t.Errorf("SE² = %.15g, enumeration %.15g over %v subsets", se*se, variance, count)
	}
	if c := (lo + hi) / 2; math.Abs(c-meanRank(r, 0)) > 1e-12 {
		t.Errorf("centre %v, mean rank %v", c, meanRank(r, 0))
	}
	for _, bad := range []struct {
		i     int
		level float64
	}{{-1, 0.95}, {3, 0.95}, {0, 0}, {0, 1}} {
		if _, _, err := MeanRankInterval(r, bad.i, bad.level); err == nil {
			t.Errorf("group %d level %v: no error", bad.i, bad.level)
		}
	}
}
