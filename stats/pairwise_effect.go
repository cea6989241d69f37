package stats

import (
	"errors"
	"fmt"
	"math"
	"math/big"
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
// (1966) (docs/methods.md §5). The pair counts are exact integers, found by sorting both
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
	Shift     float64 // the median of the m·n differences x_i − y_j
	Low, High float64 // D_(c+1) and D_(mn−c), the order statistics of the differences
	C         int64   // c, the number of differences cut from each end (0: the widest interval)
	// Coverage is 1 − 2 P0(U <= c) under the untied null, correctly rounded: the exact
	// coverage for continuous data. NaN when c comes from the normal approximation.
	Coverage float64
	// ExactIndex: c from the exact Mann-Whitney null; else from its normal approximation.
	ExactIndex bool
	// Attainable is false when even the widest interval [D_(1), D_(mn)] has coverage below
	// the level, 1 − 2/C(m+n, m) < level; the interval is then that widest one (C = 0) and
	// Coverage its coverage.
	Attainable bool
	// Tied: the pooled m + n values hold ties (within or between the samples). Coverage is
	// then that of continuous data, not the actual one, which is typically higher.
	Tied bool
}

// Bounds of the exact branch of [HodgesLehmannShift], with s = min(m, n) and W the 64-bit
// words of C(m+n, m): the work estimate s·⌊mn/2⌋·W word additions must not exceed
// MosesExactWork (about 0.15 s on one idle x86-64 core of the project's build machine;
// measured 0.12 s for m = n = 300, whose estimate is 1.35e8), and the table of
// counts, (⌊mn/2⌋ + 1)·W words, not MosesExactWords (16 MiB).
const (
	MosesExactWork  = 150_000_000
	MosesExactWords = 1 << 21
)

// MosesExact reports whether [HodgesLehmannShift] takes c from the exact null for sizes m
// and n (both >= 1); see [MosesExactWork].
func MosesExact(m, n int) bool {
	if m < 1 || n < 1 {
		return false
	}
	s, half := int64(min(m, n)), int64(m)*int64(n)/2
	if half+1 > MosesExactWords || s*half > MosesExactWork { // W >= 1
		return false
	}
	w := int64(new(big.Int).Binomial(int64(m+n), s).BitLen()/64 + 1)
	return s*half*w <= MosesExactWork && (half+1)*w <= MosesExactWords
}

// HodgesLehmannShift computes the Hodges-Lehmann estimate of the shift of x against y
// (Hodges & Lehmann 1963, Ann. Math. Statist. 34:598-611),
//
//	Δ̂ = median{ x_i − y_j : i ≤ m, j ≤ n },
//
// and the distribution-free interval [D_(c+1), D_(mn−c)] of the sorted differences (Moses,
// as presented by Hollander & Wolfe; docs/methods.md §5, recalled there from memory), with
//
//	c = max{ u : P0(U ≤ u) ≤ (1 − level)/2 }
//
// under the untied Mann-Whitney null (Mann & Whitney 1947), whose coverage is
// 1 − 2 P0(U ≤ c) for continuous data. When [MosesExact](m, n), c and the coverage are exact:
// the null counts in integer arithmetic ([newMannWhitneyNull]) and the comparison with the
// level in rationals, the level read as the exact decimal it prints as (0.95 = 19/20).
// Otherwise c ≈ mn/2 − z_{(1+level)/2} √(mn(m+n+1)/12), rounded down (the normal
// approximation, common practice), and the coverage is not computed.
//
// If even c = 0 has P0(U ≤ 0) = 1/C(m+n, m) > (1 − level)/2, the level cannot be reached
// (3 and 3 values: at most 1 − 2/20 = 0.9): the widest interval [D_(1), D_(mn)] is returned
// with its coverage 1 − 2/C(m+n, m) and Attainable false. That test is exact for any sizes.
//
// With ties the coverage 1 − 2 P0(U ≤ c) is that of the untied null, not the actual one
// (which is typically higher for this closed interval); Tied says so.
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
	out := HodgesLehmann{Tied: hasTies(xs, ys)}
	if mn%2 == 1 {
		out.Shift = kthDifference(xs, ys, mn/2+1)
	} else {
		a, b := kthDifference(xs, ys, mn/2), kthDifference(xs, ys, mn/2+1)
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
	out.Low = kthDifference(xs, ys, out.C+1)
	out.High = kthDifference(xs, ys, mn-out.C)
	return out, nil
}

// widestUnattainable reports whether even the widest interval misses the level, that is
// 2 <= (1 − level) C(m+n, m) fails, and if so its coverage 1 − 2/C(m+n, m). C(m+n, m) is
// built factor by factor and the loop stops as soon as it exceeds 2/(1 − level), so this is
// cheap for any sizes (each factor (b+k)/k is at least 2).
func widestUnattainable(m, n int, level float64) (bool, float64, error) {
	lv, err := exactLevel(level)
	if err != nil {
		return false, 0, err
	}
	// Attainable iff C >= 2q/(q − p) for level = p/q.
	need := new(big.Rat).SetFrac(new(big.Int).Lsh(lv.Denom(), 1), new(big.Int).Sub(lv.Denom(), lv.Num()))
	s, b := min(m, n), max(m, n)
	box := big.NewInt(1)
	var num, den big.Int
	for k := 1; k <= s; k++ {
		box.Mul(box, num.SetInt64(int64(b+k)))
		box.Quo(box, den.SetInt64(int64(k)))
		if new(big.Rat).SetInt(box).Cmp(need) >= 0 {
			return false, 0, nil
		}
	}
	return true, coverageOf(box, big.NewInt(1)), nil
}

// hasTies reports whether the pooled sorted samples hold two equal values.
func hasTies(xs, ys []float64) bool {
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
