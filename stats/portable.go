package stats

import "math"

// The functions in this file replace math.Log, math.Log1p, math.Expm1, math.Log10 and
// math.Lgamma wherever a number reaches results.json. Their bits are the same on every
// architecture: they use only float64 +, −, ×, ÷, math.Sqrt (correctly rounded by IEEE
// 754 everywhere), math.Frexp and math.Ldexp (exact), and every product that is then added
// is written float64(x*y) so that the compiler cannot fuse it into an FMA. math.Log has an
// amd64 assembly version and a plain Go version elsewhere, which arm64 builds compile with
// fused multiply-adds; math.Lgamma and math.Log1p are plain Go with the same exposure.
// bench/arch-determinism.sh found such a difference in a chi-square p-value.

// logPortable returns the natural logarithm of x > 0 with portable arithmetic: x = m·2^e,
// m ∈ [√½, √2), t = (m − 1)/(m + 1), log m = 2 atanh t = 2 Σ t^(2j+1)/(2j+1) (common
// practice), 14 terms (|t| ≤ 0.172, truncation below 1e-21), plus e·ln 2.
func logPortable(x float64) float64 {
	switch {
	case math.IsNaN(x) || x < 0:
		return math.NaN()
	case x == 0:
		return math.Inf(-1)
	case math.IsInf(x, 1):
		return x
	}
	m, e := math.Frexp(x)
	if m < math.Sqrt2/2 {
		m *= 2
		e--
	}
	t := (m - 1) / (m + 1)
	t2 := float64(t * t)
	p := 1.0 / 29
	for j := 13; j >= 0; j-- {
		p = float64(p*t2) + 1/float64(2*j+1)
	}
	const (
		ln2Hi = 6.93147180369123816490e-01
		ln2Lo = 1.90821492927058770002e-10
	)
	fe := float64(e)
	return float64(fe*ln2Hi) + (float64(2*float64(t*p)) + float64(fe*ln2Lo))
}

// log1pPortable returns log(1 + x), accurate also for small x.
//
// Method (Goldberg 1991, "What every computer scientist should know about floating-point
// arithmetic", ACM Computing Surveys 23:5-48, Theorem 4, recalled from memory): with
// u = 1 + x rounded, log1p(x) = x when u = 1, else log(u)·x/(u − 1).
func log1pPortable(x float64) float64 {
	switch {
	case math.IsNaN(x) || x < -1:
		return math.NaN()
	case x == -1:
		return math.Inf(-1)
	case math.IsInf(x, 1):
		return x
	}
	u := 1 + x
	if u == 1 {
		return x
	}
	return float64(logPortable(u)*x) / float64(u-1)
}

// expm1Portable returns e^x − 1, accurate also for small x: the Taylor series Σ x^n/n!
// (n = 1..17, Horner with rounding points) for |x| < ln2/2, where its remainder is below
// 1e-19 relative; expPortable(x) − 1 elsewhere, where no digits cancel badly (the result
// is at least 0.29 in size).
func expm1Portable(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if math.Abs(x) >= math.Ln2/2 {
		return expPortable(x) - 1
	}
	p := invFactorial[15] / 16
	p = float64(p * x / 17)
	p += invFactorial[15] / 16
	for n := 15; n >= 1; n-- {
		p = float64(p*x) + invFactorial[n]
	}
	return float64(p * x)
}

// Log10 returns the base-10 logarithm of x, with the same bits on every architecture (see
// the top of this file): log(x)/ln 10. It is the log10 of every p-value in results.json.
func Log10(x float64) float64 {
	return logPortable(x) / math.Ln10
}

// lgammaPortable returns ln Γ(z) for z > 0.
//
// Method (common practice): for z >= 10, Stirling's series (z − 1/2) ln z − z + ln(2π)/2 +
// δ(z) with δ from [stirlingTail]; below 10, the recurrence ln Γ(z) = ln Γ(z + n) −
// ln(z (z+1) ··· (z+n−1)) with z + n >= 10. The error is a few ulp of the largest term:
// about 5e-16 relative above 2.5, and up to about 1e-14 absolute below (TestPortableMath),
// so near the zeros of ln Γ (z = 1, 2) it is absolute, not relative. z <= 0 or NaN
// gives NaN, +Inf gives +Inf.
func lgammaPortable(z float64) float64 {
	switch {
	case math.IsNaN(z) || z <= 0:
		return math.NaN()
	case math.IsInf(z, 1):
		return z
	}
	shift := 0.0
	if z < 10 {
		prod := 1.0
		for z < 10 {
			prod = float64(prod * z)
			z++
		}
		shift = logPortable(prod)
	}
	const halfLog2Pi = 0.91893853320467274178 // ln(2π)/2
	return float64(float64(z-0.5)*logPortable(z)) - z + halfLog2Pi + stirlingTail(z) - shift
}

// logGammaDensity returns ln[e^{−z} z^{m−1} / Γ(m)] for z > 0, m > 0: the log of a Poisson
// probability e^{−z} z^j / j! when m = j + 1. Written with Stirling's series as
//
//	(m − 1)·log1p((z − m)/m) − (z − m) − ln(m)/2 − ln(2π)/2 − δ(m)
//
// (δ from [stirlingTail]; ln(z/m) as log1p((z − m)/m) when |z − m| < m/2, else as
// ln z − ln m), so that the large terms (m − 1) ln z, ln Γ(m) and z, which
// cancel when z is near m, never appear: the error is a few ulp of |z − m| + ln m rather
// than of z ln z (the device of Loader 2000, "Fast and accurate computation of binomial
// probabilities", recalled from memory).
func logGammaDensity(z, m float64) float64 {
	const halfLog2Pi = 0.91893853320467274178 // ln(2π)/2
	d := z - m
	lr := logPortable(z) - logPortable(m) // ln(z/m); far from 1 no digits cancel
	if math.Abs(d) < 0.5*m {
		lr = log1pPortable(d / m)
	}
	return float64(float64(m-1)*lr) - d - float64(0.5*logPortable(m)) - halfLog2Pi - stirlingTail(m)
}
