package stats

import (
	"errors"
	"fmt"
	"math"
)

// Quartiles returns the first quartile, the median and the third quartile of sorted,
// which must be in ascending order, using the sample quantile definition of type 7 in
// Hyndman & Fan (1996, The American Statistician 50:361-365): linear interpolation
// between order statistics. With x_0 <= ... <= x_{n-1} and p in {1/4, 1/2, 3/4},
//
//	h = (n - 1) p
//	Q(p) = x_⌊h⌋ + (h - ⌊h⌋) (x_{⌊h⌋+1} - x_⌊h⌋)
//
// For n = 1 all three equal the single value. The products are rounded explicitly,
// so no fused multiply-add changes the result between architectures; (n - 1) p is
// exact for these p. If the gap x_{⌊h⌋+1} - x_⌊h⌋ overflows (values near ±MaxFloat64),
// the formula is applied to the halved values and the result doubled, which is exact.
//
// Quartiles returns an error for an empty slice, a NaN or ±Inf value, or values not in
// ascending order. It does not modify sorted.
func Quartiles(sorted []float64) (q1, median, q3 float64, err error) {
	if len(sorted) == 0 {
		return 0, 0, 0, errors.New("quartiles: no values")
	}
	for i, v := range sorted {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, 0, 0, fmt.Errorf("quartiles: value %d is %v, not finite", i, v)
		}
		if i > 0 && v < sorted[i-1] {
			return 0, 0, 0, fmt.Errorf("quartiles: values not in ascending order at index %d (%v after %v)",
				i, v, sorted[i-1])
		}
	}
	return type7(sorted, 0.25), type7(sorted, 0.5), type7(sorted, 0.75), nil
}

// type7 is the Hyndman & Fan type 7 quantile of the ascending, finite, non-empty x.
func type7(x []float64, p float64) float64 {
	h := float64(float64(len(x)-1) * p)
	lo := math.Floor(h)
	i := int(lo)
	frac := h - lo
	if frac == 0 || i+1 >= len(x) {
		return x[i]
	}
	diff := x[i+1] - x[i]
	if math.IsInf(diff, 0) {
		// The gap between two finite values overflowed (|x| near MaxFloat64): apply the
		// same formula to the halved values and double the result. Halving and doubling
		// are exact at these magnitudes, so this is the value the formula would give
		// without the overflow.
		lo, hi := x[i]/2, x[i+1]/2
		return 2 * (lo + float64(frac*(hi-lo)))
	}
	return x[i] + float64(frac*diff)
}

// QuartileSkewness is Bowley's quartile coefficient of skewness, a measure of the shape of
// the middle half of a sample (common practice; Bowley 1901, Elements of Statistics,
// recalled from memory):
//
//	((Q3 − median) − (median − Q1)) / (Q3 − Q1)
//
// It lies in [−1, 1]: 0 when the median sits midway between the quartiles, positive when
// the upper part of the middle half is the longer. ok is false when Q3 <= Q1, where it is
// undefined, and when the median does not lie in [Q1, Q3] or a value is NaN or ±Inf (not
// quartiles of a sample). Each difference is at most Q3 − Q1, so |s| <= 1 after rounding
// too. When Q1 or Q3 reaches half of MaxFloat64 in magnitude, Q3 − Q1 could overflow, and
// the formula is applied to the halved quartiles instead: halving is exact there (the
// quartiles are far from the subnormal range; a subnormal median loses at most one unit
// of 2^-1074, nothing beside differences that large), and the ratio is unchanged. Halving
// is not used for small values, where it would round subnormal quartiles (Q1 = 3·2^-1074
// and Q3 = 4·2^-1074 would both halve to 2·2^-1074 and give 0/0).
func QuartileSkewness(q1, median, q3 float64) (s float64, ok bool) {
	if !(q3 > q1 && q1 <= median && median <= q3) || math.IsInf(q1, 0) || math.IsInf(q3, 0) {
		return 0, false
	}
	if math.Abs(q1) < math.MaxFloat64/2 && math.Abs(q3) < math.MaxFloat64/2 {
		return ((q3 - median) - (median - q1)) / (q3 - q1), true
	}
	a, m, b := q1/2, median/2, q3/2
	return ((b - m) - (m - a)) / (b - a), true
}
