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
// samples and one merge over their runs of equal values, in O((m + n) log(m + n)) time,
// without forming the m·n pairs. x and y must be non-empty and finite; they are not
// modified. For samples already sorted, [PairWork.EffectSizes] skips the copies and sorts.
func PairEffectSizes(x, y []float64) (PairEffect, error) {
	xr, yr, err := sortedPair(x, y)
	if err != nil {
		return PairEffect{}, err
	}
	var w PairWork
	return w.EffectSizes(xr, yr)
}

// sortedPair checks that both samples are non-empty and finite and returns sorted copies
// of them as runs.
func sortedPair(x, y []float64) (*SortedRuns, *SortedRuns, error) {
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
	xr, err := NewSortedRuns(xs)
	if err != nil {
		return nil, nil, fmt.Errorf("pairwise effect: %w", err)
	}
	yr, err := NewSortedRuns(ys)
	if err != nil {
		return nil, nil, fmt.Errorf("pairwise effect: %w", err)
	}
	return xr, yr, nil
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
// The k-th smallest difference is found without forming the m·n differences, by selection
// over the runs of equal values of the sorted samples ([PairWork.kth]); for samples already
// sorted, [PairWork.HodgesLehmann] skips the copies and sorts.
func HodgesLehmannShift(x, y []float64, level float64) (HodgesLehmann, error) {
	if !(level > 0 && level < 1) {
		return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: level must lie in (0, 1), got %v", level)
	}
	xr, yr, err := sortedPair(x, y)
	if err != nil {
		return HodgesLehmann{}, err
	}
	var w PairWork
	return w.HodgesLehmann(xr, yr, level)
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
