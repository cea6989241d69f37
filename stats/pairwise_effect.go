package stats

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// PairEffect holds the effect sizes of sample x against sample y.
type PairEffect struct {
	Greater, Less, Ties int64   // #(x > y), #(x < y), #(x = y) over the m·n pairs
	CliffsDelta         float64 // δ = [#(x>y) − #(x<y)] / (m n), equal to the rank-biserial correlation
	VarghaDelaneyA      float64 // A = [#(x>y) + #(x=y)/2] / (m n) = U_x / (m n); δ = 2A − 1
}

// PairEffectSizes computes Cliff's delta (Cliff 1993, Psychological Bulletin
// 114:494-509) and the Vargha-Delaney A (Vargha & Delaney 2000, JEBS 25:101-132) of x
// against y,
//
//	δ = [#(x_i > y_j) − #(x_i < y_j)] / (m n),   A = [#(x_i > y_j) + ½ #(x_i = y_j)] / (m n),
//
// so δ = 2A − 1 and δ is the rank-biserial correlation 2(R̄_x − R̄_y)/(m+n) of Glass
// (1966) (METHODS.md §5). The pair counts are exact integers, found by sorting both
// samples and one merge, in O((m + n) log(m + n)) time, without forming the m·n pairs.
// x and y must be non-empty and finite; they are not modified.
func PairEffectSizes(x, y []float64) (PairEffect, error) {
	xs, ys, err := sortedPair(x, y)
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

func sortedPair(x, y []float64) ([]float64, []float64, error) {
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

// HodgesLehmann is the Hodges-Lehmann shift estimate of x against y with its
// distribution-free confidence interval.
type HodgesLehmann struct {
	Shift      float64 // the median of the m·n differences x_i − y_j
	Low, High  float64 // D_(c+1) and D_(mn−c), the order statistics of the differences
	C          int64   // c, the number of differences cut from each end
	Coverage   float64 // the exact coverage 1 − 2 P0(U <= c) for continuous data (untied null)
	ExactIndex bool    // c from the exact Mann-Whitney null; else from its normal approximation
}

// ExactMannWhitneyLimit is the largest m·n for which [HodgesLehmannShift] takes c from the
// exact null distribution of U; above it, from the normal approximation.
const ExactMannWhitneyLimit = 250_000

// HodgesLehmannShift computes the Hodges-Lehmann estimate of the shift of x against y
// (Hodges & Lehmann 1963, Ann. Math. Statist. 34:598-611),
//
//	Δ̂ = median{ x_i − y_j : i ≤ m, j ≤ n },
//
// and the distribution-free interval [D_(c+1), D_(mn−c)] of the sorted differences (Moses,
// as presented by Hollander & Wolfe; METHODS.md §5, recalled there from memory), with
//
//	c = max{ u : P0(U ≤ u) ≤ (1 − level)/2 }
//
// under the untied Mann-Whitney null (Mann & Whitney 1947), computed exactly for
// m·n ≤ ExactMannWhitneyLimit by the generating function Π_{i=1..m} (1 − q^{n+i})/(1 − q^i)
// and otherwise from c ≈ mn/2 − z_{(1+level)/2} √(mn(m+n+1)/12) (rounded down). With ties the
// coverage is not exact (usually conservative).
//
// The k-th smallest difference is found without forming the m·n differences: bisection on
// the value with an O(m + n) count of differences at or below it, then the exact next
// difference; so the cost is O((m + n) log(m + n)) plus O(m + n) per bisection step.
func HodgesLehmannShift(x, y []float64, level float64) (HodgesLehmann, error) {
	if !(level > 0 && level < 1) {
		return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: level must lie in (0, 1), got %v", level)
	}
	xs, ys, err := sortedPair(x, y)
	if err != nil {
		return HodgesLehmann{}, err
	}
	m, n := int64(len(xs)), int64(len(ys))
	mn := m * n
	out := HodgesLehmann{}
	if mn%2 == 1 {
		out.Shift = kthDifference(xs, ys, mn/2+1)
	} else {
		a, b := kthDifference(xs, ys, mn/2), kthDifference(xs, ys, mn/2+1)
		out.Shift = a + float64(b-a)/2
	}
	tail := float64(1-level) / 2
	if mn <= ExactMannWhitneyLimit {
		cdf := mannWhitneyCDF(int(m), int(n))
		c := int64(-1)
		for u := int64(0); u < int64(len(cdf)) && cdf[u] <= tail; u++ {
			c = u
		}
		out.ExactIndex = true
		out.C = max(c, -1)
		if c >= 0 {
			out.Coverage = 1 - 2*cdf[c]
		} else {
			out.Coverage = 1
		}
	} else {
		z := normalCritical(float64(2 * tail))
		c := math.Floor(float64(mn)/2 - float64(z*math.Sqrt(float64(float64(mn)*float64(m+n+1))/12)))
		out.C = max(int64(c), -1)
		out.Coverage = math.NaN()
	}
	if out.C < 0 {
		// Even the widest interval has coverage below the level: report the whole range.
		out.Low, out.High = kthDifference(xs, ys, 1), kthDifference(xs, ys, mn)
		return out, nil
	}
	out.Low = kthDifference(xs, ys, out.C+1)
	out.High = kthDifference(xs, ys, mn-out.C)
	return out, nil
}

// countAtMost returns #{(i, j) : x_i − y_j <= d} for sorted x and y, in O(m + n).
func countAtMost(xs, ys []float64, d float64) int64 {
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

// kthDifference returns the k-th smallest of the differences x_i − y_j (1 <= k <= m n)
// of sorted samples, exactly (as computed in float64).
func kthDifference(xs, ys []float64, k int64) float64 {
	lo := xs[0] - ys[len(ys)-1] // the smallest difference: count(<= lo) >= 1
	hi := xs[len(xs)-1] - ys[0] // the largest: count(<= hi) = m n
	if countAtMost(xs, ys, lo) >= k {
		return lo
	}
	// Invariant: count(<= lo) < k <= count(<= hi).
	for range 2200 { // enough to reach adjacent doubles anywhere in the range
		mid := lo + float64(hi-lo)/2
		if mid == lo || mid == hi {
			break
		}
		if countAtMost(xs, ys, mid) >= k {
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

// mannWhitneyCDF returns P0(U <= u) for u = 0..m·n under the untied null, from the
// generating function of the counts, Π_{i=1..m} (1 − q^{n+i}) / (1 − q^i), divided by
// C(m+n, m) (common practice; Mann & Whitney 1947).
func mannWhitneyCDF(m, n int) []float64 {
	size := m*n + 1
	a := make([]float64, size)
	a[0] = 1
	for i := 1; i <= m; i++ {
		// multiply by (1 − q^{n+i})
		for u := size - 1; u >= n+i; u-- {
			a[u] -= a[u-n-i]
		}
		// divide by (1 − q^i): a[u] += a[u − i]
		for u := i; u < size; u++ {
			a[u] += a[u-i]
		}
	}
	total := 0.0
	for _, v := range a {
		total += v
	}
	cum := 0.0
	for u, v := range a {
		cum += v
		a[u] = cum / total
	}
	return a
}
