package stats

// The element-wise implementation of the pairwise effect sizes and of the Hodges-Lehmann
// selection that the run-based code in hlruns.go replaced, kept unchanged (renamed) as the
// oracle of TestRunsMatchElementwise: both samples cloned and sorted per call, the pair
// counts by one merge over the values, and the k-th difference by bisection on the value
// with an O(m + n) count per step.

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

func oldPairEffectSizes(x, y []float64) (PairEffect, error) {
	xs, ys, err := oldSortedPair(x, y)
	if err != nil {
		return PairEffect{}, err
	}
	var e PairEffect
	// For each x, count the y below it and the y equal to it.
	lo, hi := 0, 0
	for _, v := range xs {
		for lo < len(ys) && ys[lo] < v {
			lo++
		}
		if hi < lo {
			hi = lo
		}
		for hi < len(ys) && ys[hi] == v {
			hi++
		}
		e.Greater += int64(lo)
		e.Ties += int64(hi - lo)
	}
	mn := int64(len(xs)) * int64(len(ys))
	e.Less = mn - e.Greater - e.Ties
	fmn := float64(mn)
	e.CliffsDelta = float64(e.Greater-e.Less) / fmn
	e.VarghaDelaneyA = (float64(e.Greater) + float64(e.Ties)/2) / fmn
	return e, nil
}

func oldSortedPair(x, y []float64) ([]float64, []float64, error) {
	if len(x) == 0 || len(y) == 0 {
		return nil, nil, errors.New("pairwise effect: both samples must be non-empty")
	}
	for _, s := range [][]float64{x, y} {
		for i, v := range s {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, nil, fmt.Errorf("pairwise effect: value %d is %v", i, v)
			}
		}
	}
	xs, ys := slices.Clone(x), slices.Clone(y)
	slices.Sort(xs)
	slices.Sort(ys)
	return xs, ys, nil
}

func oldHodgesLehmannShift(x, y []float64, level float64) (HodgesLehmann, error) {
	if !(level > 0 && level < 1) {
		return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: level must lie in (0, 1), got %v", level)
	}
	xs, ys, err := oldSortedPair(x, y)
	if err != nil {
		return HodgesLehmann{}, err
	}
	m, n := int64(len(xs)), int64(len(ys))
	mn := m * n
	out := HodgesLehmann{Tied: oldHasTies(xs, ys)}
	if mn%2 == 1 {
		out.Shift = oldKthDifference(xs, ys, mn/2+1)
	} else {
		a, b := oldKthDifference(xs, ys, mn/2), oldKthDifference(xs, ys, mn/2+1)
		out.Shift = a + float64(b-a)/2
	}
	switch widest, cov, err := widestUnattainable(len(xs), len(ys), level); {
	case err != nil:
		return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: %w", err)
	case widest:
		out.C, out.Coverage, out.ExactIndex, out.Attainable = 0, cov, true, false
	case MosesExact(len(xs), len(ys)):
		null, err := newMannWhitneyNull(len(xs), len(ys), int(mn/2))
		if err != nil {
			return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: %w", err)
		}
		ix, err := null.index(level)
		if err != nil {
			return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: %w", err)
		}
		out.C, out.Coverage, out.ExactIndex, out.Attainable = int64(ix.c), ix.coverage, true, ix.attainable
	default:
		z := normalCritical(float64(1 - level))
		c := math.Floor(float64(mn)/2 - float64(z*math.Sqrt(float64(float64(mn)*float64(m+n+1))/12)))
		// The level is attainable (checked above), so c >= 0 is a valid index; and c <= (mn−1)/2
		// keeps the interval's ends in order.
		out.C = min(max(int64(c), 0), (mn-1)/2)
		out.Coverage, out.Attainable = math.NaN(), true
	}
	out.Low = oldKthDifference(xs, ys, out.C+1)
	out.High = oldKthDifference(xs, ys, mn-out.C)
	return out, nil
}

func oldHasTies(xs, ys []float64) bool {
	for _, s := range [][]float64{xs, ys} {
		for i := 1; i < len(s); i++ {
			if s[i] == s[i-1] {
				return true
			}
		}
	}
	j := 0
	for _, v := range xs {
		for j < len(ys) && ys[j] < v {
			j++
		}
		if j < len(ys) && ys[j] == v {
			return true
		}
	}
	return false
}

func oldCountAtMost(xs, ys []float64, d float64) int64 {
	// The test is the rounded difference itself, x_i − y_j <= d, exactly as kthDifference
	// reports differences (y_j >= x_i − d is not the same test in floating point). Rounded
	// subtraction is monotone, so for growing x_i the first j that passes moves right.
	var count int64
	j := 0
	for _, v := range xs {
		for j < len(ys) && v-ys[j] > d {
			j++
		}
		count += int64(len(ys) - j)
	}
	return count
}

func oldKthDifference(xs, ys []float64, k int64) float64 {
	lo := xs[0] - ys[len(ys)-1] // the smallest difference: count(<= lo) >= 1
	hi := xs[len(xs)-1] - ys[0] // the largest: count(<= hi) = m n
	if oldCountAtMost(xs, ys, lo) >= k {
		return lo
	}
	// Invariant: count(<= lo) < k <= count(<= hi).
	for range 2200 { // enough to reach adjacent doubles anywhere in the range
		mid := lo + float64(hi-lo)/2
		if mid == lo || mid == hi {
			break
		}
		if oldCountAtMost(xs, ys, mid) >= k {
			hi = mid
		} else {
			lo = mid
		}
	}
	// The answer is the smallest difference above lo.
	best := math.Inf(1)
	j := 0
	for _, v := range xs {
		// smallest x_i − y_j > lo  ⇔  largest y_j < x_i − lo
		for j < len(ys) && v-ys[j] > lo {
			j++
		}
		if j > 0 {
			if d := v - ys[j-1]; d > lo && d < best {
				best = d
			}
		}
	}
	return best
}
