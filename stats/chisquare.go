package stats

import (
	"fmt"
	"math"
)

// minNormal is the smallest positive normal float64, 2^-1022.
const minNormal = 0x1p-1022

// ChiSquareUpperTail returns p = P(X >= x) for X ~ chi-square(df), and log10p = log10 p,
// with the same bits on every architecture (see portable.go).
//
// The tail is the regularized upper incomplete gamma function Q(a, z), a = df/2, z = x/2,
// evaluated directly as an upper tail, never as 1 − CDF. For integer df it is a finite
// sum of positive terms (DLMF 8.4.10 and 8.4.11 with 8.4.6; common practice):
//
//	df even, a = n:        Q = Σ_{j=0}^{n−1} t_j,                t_j = e^{−z} z^j / j!
//	df odd,  a = n + 1/2:  Q = erfc(√z) + Σ_{j=0}^{n−1} u_j,     u_j = e^{−z} z^{j+1/2} / Γ(j + 3/2)
//
// with t_j = t_{j−1}·z/j and u_j = u_{j−1}·z/(j + 1/2), so no digits cancel and the
// relative error grows only with the number of terms (about n rounding errors). The terms
// are Poisson-like probabilities, never above 1, and the sum stops once the terms past z
// fall below 1e-18 of it. For z < 700, t_0 = e^{−z} comes from [expPortable] and erfc from
// [NormalTwoSided]. For z >= 700, where e^{−z} underflows, the same sums are taken in log
// space relative to their largest term j* (the last one, or the one nearest z), with
// ln t_j* = −z + j*·ln z − ln Γ(j* + 1) and, for odd df, ln erfc(√z) = −z + ln erfcx(√z)
// from the asymptotic series of erfcx (DLMF 7.12.1); p is then e^{ln Q} (0 or subnormal
// when it underflows) and log10p = ln Q / ln 10 stays finite however small the tail is.
// For df = 2 this gives p = e^{−x/2} and log10p = −x/(2 ln 10) to rounding.
//
// When p is 1/2 or more, log10p is computed from the lower tail P = 1 − p, summed as its
// own series P = e^{−z} z^a Σ_{m>=0} z^m / Γ(a + m + 1) (DLMF 8.7.1), as log1p(−P)/ln 10,
// so that it keeps its relative accuracy as p approaches 1.
//
// x = 0 gives p = 1 and log10p = 0. x < 0, NaN or ±Inf, or df < 1, is an error.
func ChiSquareUpperTail(x float64, df int) (p, log10p float64, err error) {
	switch {
	case df < 1:
		return 0, 0, fmt.Errorf("chi-square tail: degrees of freedom must be at least 1, got %d", df)
	case math.IsNaN(x) || math.IsInf(x, 0):
		return 0, 0, fmt.Errorf("chi-square tail: x must be finite, got %v", x)
	case x < 0:
		return 0, 0, fmt.Errorf("chi-square tail: x must not be negative, got %v", x)
	case x == 0:
		return 1, 0, nil
	}
	z := x / 2
	if z >= 700 {
		lnq := logChiSquareTail(z, df)
		if lnq > -0.5 {
			// p >= 0.6: only very large df get here.
			q := expPortable(lnq)
			return min(q, 1), log1pPortable(-lowerGammaSeries(float64(df)/2, z)) / math.Ln10, nil
		}
		return expPortable(lnq), lnq / math.Ln10, nil
	}
	q := chiSquareTailSum(z, df)
	if q >= 0.5 {
		return min(q, 1), log1pPortable(-lowerGammaSeries(float64(df)/2, z)) / math.Ln10, nil
	}
	return q, Log10(q), nil
}

// chiSquareTailSum is Q(df/2, z) for z < 700 by the finite sums of [ChiSquareUpperTail].
func chiSquareTailSum(z float64, df int) float64 {
	n := df / 2
	var q, term, j0 float64
	if df%2 == 0 {
		term = expPortable(-z) // t_0
	} else {
		const twoOverSqrtPi = 1.1283791670955125739 // 2/√π = 1/Γ(3/2)
		q = NormalTwoSided(math.Sqrt(float64(2 * z)))
		term = float64(float64(expPortable(-z)*math.Sqrt(z)) * twoOverSqrtPi) // u_0
		j0 = 0.5
	}
	for j := 0; j < n; j++ {
		if j > 0 {
			term = float64(term*z) / float64(float64(j)+j0)
		}
		q += term
		if float64(j) > z && term < float64(1e-18*q) {
			break
		}
	}
	return q
}

// logChiSquareTail is ln Q(df/2, z) for large z, summing the terms of [ChiSquareUpperTail]
// relative to the largest one so that nothing underflows.
func logChiSquareTail(z float64, df int) float64 {
	n := df / 2
	off := 0.0 // 0 for t_j (even df), 1/2 for u_j (odd df)
	if df%2 == 1 {
		off = 0.5
	}
	// ln of the odd-df erfc term, or −Inf when there is none.
	lnE := math.Inf(-1)
	if df%2 == 1 {
		lnE = -z + logErfcx(math.Sqrt(z))
	}
	if n == 0 {
		return lnE
	}
	// The terms rise while j + off < z: the largest is at j* = min(n−1, ⌊z − off⌋).
	js := n - 1
	if float64(js)+off > z {
		js = int(z - off)
	}
	lnMax := logGammaDensity(z, float64(js)+off+1)
	sum := 1.0
	r := 1.0
	for j := js + 1; j < n; j++ { // forward: r_j = r_{j−1}·z/(j + off) <= 1
		r = float64(r*z) / float64(float64(j)+off)
		sum += r
		if r < float64(1e-18*sum) {
			break
		}
	}
	r = 1.0
	for j := js; j > 0; j-- { // backward: r_{j−1} = r_j·(j + off)/z <= 1
		r = float64(r*float64(float64(j)+off)) / z
		sum += r
		if r < float64(1e-18*sum) {
			break
		}
	}
	if d := lnE - lnMax; d > -745 {
		sum += expPortable(d)
	}
	return lnMax + logPortable(sum)
}

// logErfcx returns ln(e^{y²} erfc(y)) for y >= 26 from the asymptotic series
// erfcx(y) = 1/(y√π) Σ_{m>=0} (−1)^m (2m − 1)!! / (2y²)^m (DLMF 7.12.1); at y >= 26 its
// terms fall by a factor of at least 1300 each, and eight of them reach full precision.
func logErfcx(y float64) float64 {
	const halfLogPi = 0.57236494292470008707 // ln(π)/2
	w := 1 / float64(2*float64(y*y))
	sum, term := 0.0, 1.0
	for m := 1; m <= 8; m++ {
		term = -float64(term*float64(2*m-1)) * w
		sum += term
	}
	return log1pPortable(sum) - logPortable(y) - halfLogPi
}

// lowerGammaSeries is the regularized lower incomplete gamma function
//
//	P(a, z) = e^{−z} z^a Σ_{m>=0} z^m / Γ(a + m + 1)   (DLMF 8.7.1)
//
// used where P <= 1/2, so z is below about a + 1 and the terms soon fall; the prefactor
// e^{−z} z^a / Γ(a + 1) comes from [logGammaDensity].
func lowerGammaSeries(a, z float64) float64 {
	sum, term := 1.0, 1.0
	for m := 1; m < 1_000_000; m++ {
		term = float64(term*z) / float64(a+float64(m))
		sum += term
		if term < float64(1e-17*sum) {
			break
		}
	}
	return float64(expPortable(logGammaDensity(z, a+1)) * sum)
}
