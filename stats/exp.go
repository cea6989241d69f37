package stats

import "math"

// expPortable returns e^x computed only with float64 arithmetic written with explicit
// conversions, so that its bits are the same on every architecture (math.Exp has assembly
// implementations on some architectures, arm64 among them, whose last bits can differ from
// amd64's; bench/arch-determinism.sh found such a difference).
//
// Method (common practice; Cody & Waite 1980 range reduction, recalled from memory):
// k = round(x / ln 2), r = (x − k·ln2_hi) − k·ln2_lo with ln 2 split so that k·ln2_hi is exact,
// e^r from its Taylor series to degree 16 (|r| <= ln2/2, so the remainder is below 1e-19
// relative), evaluated by Horner's rule with a rounding point after every product, and
// the result scaled by 2^k with math.Ldexp (exact). Relative error within a few ulp of
// math.Exp (TestExpPortable).
func expPortable(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x > 709.782712893384:
		return math.Inf(1)
	case x < -745.1332191019412:
		return 0
	}
	const (
		ln2Hi  = 6.93147180369123816490e-01 // ln 2, high part (its low bits are zero)
		ln2Lo  = 1.90821492927058770002e-10 // ln 2 − ln2Hi
		invLn2 = 1.44269504088896338700e+00
	)
	k := math.Round(float64(x * invLn2))
	r := float64(x-float64(k*ln2Hi)) - float64(k*ln2Lo)
	// Horner: Σ r^n/n!, n = 0..16
	p := 1.0 / 20922789888000 // 1/16!
	for n := 15; n >= 0; n-- {
		p = float64(p*r) + invFactorial[n]
	}
	return math.Ldexp(p, int(k))
}

// invFactorial[n] = 1/n! for n = 0..15, correctly rounded.
var invFactorial = [16]float64{
	1, 1, 0.5, 1.0 / 6, 1.0 / 24, 1.0 / 120, 1.0 / 720, 1.0 / 5040, 1.0 / 40320, 1.0 / 362880,
	1.0 / 3628800, 1.0 / 39916800, 1.0 / 479001600, 1.0 / 6227020800, 1.0 / 87178291200, 1.0 / 1307674368000,
}
