package stats

import (
	"errors"
	"fmt"
	"math"
)

// The parameter ranges of [NoncentralChiSquareTails]. Outside them it returns an error;
// inside them the work is bounded (see the function's comment).
const (
	NoncentralMinDF = 0.01 // smallest degrees of freedom
	NoncentralMaxDF = 1e10 // largest degrees of freedom
	NoncentralMaxNC = 1e10 // largest noncentrality
)

const (
	ncxTol      = 1e-17   // a sum stops when what is left is below this share of it
	ncxMaxSteps = 1 << 27 // safety net on the terms of one sum; the ranges above need far fewer
	ncxRescale  = 0x1p500 // running terms above this are scaled down by it
)

// errNoncentralSteps reports a sum that did not settle within ncxMaxSteps terms.
var errNoncentralSteps = errors.New("noncentral chi-square: the series did not settle within its step limit")

// NoncentralChiSquareTails returns lower = P(X ≤ x) and upper = P(X > x) for X with the
// noncentral chi-square distribution of df degrees of freedom and noncentrality nc, each
// summed directly (neither is computed as one minus a small other), with the same bits on
// every architecture (portable.go).
//
// The distribution is the Poisson mixture of central chi-squares (Johnson, Kotz &
// Balakrishnan 1995, Continuous Univariate Distributions vol. 2, ch. 29, eq. 29.2, recalled
// from memory):
//
//	P(X ≤ x) = Σ_{j≥0} w_j P(a + j, z),   P(X > x) = Σ_{j≥0} w_j Q(a + j, z),
//	w_j = e^{−μ} μ^j / j!,   a = df/2,   z = x/2,   μ = nc/2,
//
// with P and Q the regularized incomplete gamma functions. The tail on the side of x away
// from the mean df + nc is summed (the other is one minus it, at least about 0.3, so no
// digits are lost). Each sum starts at the index j₀ near its largest term,
// j₀ = ⌊2μz/(a + √(a² + 4μz))⌋, where one P (or Q) and the ratio g/P (or g/Q),
// g = e^{−z} z^{a+j} / Γ(a + j + 1), are computed directly ([regGammaStart]); the other
// terms follow from the recurrences P(b − 1, z) = P(b, z) + g(b − 1, z) and
// Q(b + 1, z) = Q(b, z) + g(b, z) (DLMF 8.8.11 and 8.8.12, recalled from memory), used
// only in the direction in which they add positive terms: for P from j₀ downwards and,
// for the terms above j₀, downwards again from a far index J computed directly (the
// scheme of Benton & Krishnamoorthy 2003, Computational Statistics & Data Analysis
// 43:249-267, which starts at the Poisson mode; recalled from memory). Written as ratios of
// consecutive terms, the recurrences carry no quantity that can overflow. A sum stops when
// a geometric bound on what is left falls below 1e-17 of it: the ratio of consecutive terms
// only falls further along the direction of summation, and P(b + 1, z)/P(b, z) ≤ z/(b + 1),
// Q(b − 1, z)/Q(b, z) ≤ b/z bound the terms not yet computed.
//
// Before that, the Chernoff bound of the tail on the side of x (the exact exponential rate,
// ln P ≤ z(u − 1) − a ln u − μ(u − 1)/u below the mean and ln Q ≤ −z(1 − u) − a ln u +
// μ(1 − u)/u above it, with u = (a + √(a² + 4μz))/(2z); common practice) decides whether
// that tail is below e^{−750}, smaller than the smallest double: it is then 0 and the other
// tail 1. So the sums only run where the tail is representable, which keeps them within
// O(√μ + √a) terms; the result is returned in log space and exponentiated once.
//
// Accuracy, checked on a grid (testdata/reference/ncx2_scipy.json): both tails within
// 4e-13 relative of the mpmath sums for df ≤ 200, nc ≤ 300 and tails down to 1e-300, and
// within 4e-12 of scipy's ncx2 up to df = 1000, nc = 10^5, where the difference is
// scipy's (a point checked in mpmath).
//
// df must lie in [NoncentralMinDF, NoncentralMaxDF], nc in [0, NoncentralMaxNC], and x must
// be finite and not negative; anything else (NaN, ±Inf) is an error. x = 0 gives (0, 1).
func NoncentralChiSquareTails(x, df, nc float64) (lower, upper float64, err error) {
	switch {
	case !(df >= NoncentralMinDF && df <= NoncentralMaxDF):
		return 0, 0, fmt.Errorf("noncentral chi-square: degrees of freedom must lie in [%g, %g], got %v", float64(NoncentralMinDF), float64(NoncentralMaxDF), df)
	case !(nc >= 0 && nc <= NoncentralMaxNC):
		return 0, 0, fmt.Errorf("noncentral chi-square: noncentrality must lie in [0, %g], got %v", float64(NoncentralMaxNC), nc)
	case !(x >= 0 && x <= math.MaxFloat64):
		return 0, 0, fmt.Errorf("noncentral chi-square: x must be finite and not negative, got %v", x)
	case x == 0:
		return 0, 1, nil
	}
	z, a, mu := x/2, df/2, nc/2
	below := x < df+nc
	if chernoffLog(z, a, mu, below) < -750 {
		if below {
			return 0, 1, nil
		}
		return 1, 0, nil
	}
	ln, err := ncxTailLog(z, a, mu, below)
	if err != nil {
		return 0, 0, fmt.Errorf("noncentral chi-square at x = %v, df = %v, nc = %v: %w", x, df, nc, err)
	}
	tail := min(expPortable(ln), 1)
	if below {
		return tail, 1 - tail, nil
	}
	return 1 - tail, tail, nil
}

// chernoffLog is the Chernoff bound on the log of the tail P(X ≤ x) (below) or P(X > x)
// (not below) of [NoncentralChiSquareTails], minimised over the exponent:
// E e^{−sX/2} = (1 + s)^{−a} e^{−μs/(1+s)} and E e^{sX/2} = (1 − s)^{−a} e^{μs/(1−s)}, whose
// optimum is at 1 + s = u and 1 − s = u respectively, u = (a + √(a² + 4μz))/(2z). It is 0
// when x lies on the other side of the mean than asked.
func chernoffLog(z, a, mu float64, below bool) float64 {
	h := a / float64(2*z)
	u := h + math.Sqrt(float64(h*h)+mu/z)
	if below {
		if !(u > 1) {
			return 0
		}
		return float64(z*(u-1)) - float64(a*logPortable(u)) - float64(mu*(u-1))/u
	}
	if !(u < 1) {
		return 0
	}
	return -float64(z*(1-u)) - float64(a*logPortable(u)) + float64(mu*(1-u))/u
}

// ncxStart is the index near the largest term of both tail sums: the root of
// j(a + j) = μz, the point where the ratio of consecutive terms is about 1 (with P(b, z) ≈ g
// for z < b and Q(b, z) ≈ g b/(z − b) for z > b), written without cancellation.
func ncxStart(z, a, mu float64) float64 {
	if mu == 0 {
		return 0
	}
	mz := float64(mu * z)
	return math.Floor(float64(2*mz) / (a + math.Sqrt(float64(a*a)+float64(4*mz))))
}

// lnPoisson is ln(e^{−μ} μ^j / j!).
func lnPoisson(mu, j float64) float64 {
	if mu == 0 {
		if j == 0 {
			return 0
		}
		return math.Inf(-1)
	}
	return logGammaDensity(mu, j+1)
}

// scaledSum is a sum of positive terms kept as sum·2^exp, so that terms far larger than
// the first do not overflow.
type scaledSum struct {
	term, sum float64
	exp       int
}

// add multiplies the running term by r and adds it.
func (s *scaledSum) add(r float64) {
	s.term = float64(s.term * r)
	s.sum += s.term
	if s.term > ncxRescale {
		s.term = math.Ldexp(s.term, -500)
		s.sum = math.Ldexp(s.sum, -500)
		s.exp += 500
	}
}

// log returns ln(sum·2^exp) + base.
func (s *scaledSum) log(base float64) float64 {
	return base + float64(float64(s.exp)*math.Ln2) + logPortable(s.sum)
}

// logAddExp returns ln(e^x + e^y).
func logAddExp(x, y float64) float64 {
	if x < y {
		x, y = y, x
	}
	if math.IsInf(y, -1) {
		return x
	}
	return x + log1pPortable(expPortable(y-x))
}

// ncxTailLog returns ln P(X ≤ x) (lower) or ln P(X > x) (not lower) by the sums of
// [NoncentralChiSquareTails]. The recurrence of each tail adds positive terms in one
// direction, downwards for P and upwards for Q; with ρ_j = g_j/P_j (lower) or g_j/Q_j
// (upper), the ratio of consecutive terms in that direction and the next ρ are
//
//	lower: t_{j−1}/t_j = (j/μ)(1 + c), c = ρ_j (a + j)/z,  ρ_{j−1} = c/(1 + c)
//	upper: t_{j+1}/t_j = (μ/(j + 1))(1 + ρ_j),             ρ_{j+1} = ρ_j (z/(a + j + 1))/(1 + ρ_j)
//
// Segment A sums the terms from j0 in that direction until the rest is negligible;
// segment B sums those on the other side, in the same direction, from a far index J where
// the bound q_j on the ratio of terms away from j0 says that what lies beyond is
// negligible:
//
//	lower: t_{j+1}/t_j ≤ q_j = (μ/(j + 1))·min(1, z/(a + j + 1))
//	upper: t_{j−1}/t_j ≤ q_j = (j/μ)·min(1, (a + j)/z)
func ncxTailLog(z, a, mu float64, lower bool) (float64, error) {
	dir := 1.0 // the direction in which the recurrence adds
	if lower {
		dir = -1
	}
	start := func(j float64) (lnT, rho float64, err error) {
		s, err := regGammaStart(a+j, z)
		if lower {
			return lnPoisson(mu, j) + s.lnP, s.rhoP, err
		}
		return lnPoisson(mu, j) + s.lnQ, s.rhoQ, err
	}
	step := func(j, rho float64) (ratio, next float64) {
		if lower {
			c := float64(rho*(a+j)) / z
			return float64((j / mu) * (1 + c)), c / (1 + c)
		}
		return float64((mu / (j + 1)) * (1 + rho)), float64(rho*(z/(a+j+1))) / (1 + rho)
	}
	farBound := func(j float64) float64 {
		if lower {
			return float64(mu/(j+1)) * min(1, z/(a+j+1))
		}
		return float64((j / mu) * min(1, (a+j)/z))
	}
	steps := 0
	tooLong := func(s *scaledSum) bool {
		steps++
		return steps > ncxMaxSteps || math.IsInf(s.sum, 0) || math.IsNaN(s.sum)
	}

	j0 := ncxStart(z, a, mu)
	lnT0, rho, err := start(j0)
	if err != nil {
		return 0, err
	}
	A := scaledSum{term: 1, sum: 1}
	for j := j0; !(lower && j == 0); j += dir {
		var r float64
		r, rho = step(j, rho)
		A.add(r)
		if r < 1 && float64(A.term*r) <= float64(ncxTol*float64(A.sum*(1-r))) {
			break
		}
		if tooLong(&A) {
			return 0, errNoncentralSteps
		}
	}
	lnA := A.log(lnT0)

	rest := math.Ldexp(float64(ncxTol*A.sum), A.exp) // the tolerance, relative to t_j0
	bound, J := 1.0, j0                              // bound ≥ t_J / t_j0
	for !(!lower && J == 0) {
		q := farBound(J)
		if q < 1 && float64(bound*q) <= float64(rest*(1-q)) {
			break
		}
		bound = float64(bound * q)
		J -= dir
		if tooLong(&A) {
			return 0, errNoncentralSteps
		}
	}
	if J == j0 {
		return lnA, nil
	}
	lnTJ, rho, err := start(J)
	if err != nil {
		return 0, err
	}
	B := scaledSum{term: 1, sum: 1}
	for j := J; float64(dir*(j0-j)) > 1; j += dir {
		var r float64
		r, rho = step(j, rho)
		B.add(r)
		if tooLong(&B) {
			return 0, errNoncentralSteps
		}
	}
	return logAddExp(lnA, B.log(lnTJ)), nil
}

// gammaStart holds the regularized incomplete gamma functions P(b, z) and Q(b, z) at one
// point in the forms the recurrences of [NoncentralChiSquareTails] start from: their logs
// and their ratios to g = e^{−z} z^b / Γ(b + 1).
type gammaStart struct {
	lnP, lnQ   float64
	rhoP, rhoQ float64 // g/P and g/Q
}

// regGammaStart computes P(b, z) and Q(b, z) for b > 0, z > 0 (Numerical Recipes, Press et
// al. 2007, §6.2, recalled from memory; the same pair of methods as [NormalTwoSided]):
//
//	z < b + 1:  P = g Σ_{m≥0} z^m / ((b+1)(b+2)···(b+m))                (DLMF 8.7.1)
//	z ≥ b + 1:  Q = g b / (z + 1 − b − 1(1 − b)/(z + 3 − b − 2(2 − b)/(z + 5 − b − …)))
//	            (DLMF 8.9.2), by the modified Lentz method
//
// with ln g from [logGammaDensity]; the other function is one minus the first, which is
// then at least about 0.1 (at b ≥ 0.005), so that little is lost. The series stops when a
// geometric bound on its rest is below 1e-17 of the sum, the fraction when a step changes
// it by less than 1e-16 relative; both need O(√b) steps near z = b and fewer elsewhere.
func regGammaStart(b, z float64) (gammaStart, error) {
	lnG := logGammaDensity(z, b+1)
	var s gammaStart
	limit := 100*int(math.Sqrt(b)) + 10000
	if z < b+1 {
		sum, term := 1.0, 1.0
		for m := 1; ; m++ {
			term = float64(term*z) / (b + float64(m))
			sum += term
			r := z / (b + float64(m+1))
			if float64(term*r) <= float64(1e-17*float64(sum*(1-r))) {
				break
			}
			if m > limit {
				return s, fmt.Errorf("incomplete gamma series at b = %v, z = %v did not settle", b, z)
			}
		}
		s.lnP = lnG + logPortable(sum)
		s.rhoP = 1 / sum
		s.lnQ = log1pPortable(-expPortable(s.lnP))
		s.rhoQ = expPortable(lnG - s.lnQ)
		return s, nil
	}
	h, ok := gammaFraction(b, z, limit)
	if !ok {
		return s, fmt.Errorf("incomplete gamma continued fraction at b = %v, z = %v did not settle", b, z)
	}
	bh := float64(b * h) // Q/g
	s.lnQ = lnG + logPortable(bh)
	s.rhoQ = 1 / bh
	s.lnP = log1pPortable(-expPortable(s.lnQ))
	s.rhoP = expPortable(lnG - s.lnP)
	return s, nil
}

// NoncentralityInterval returns the confidence interval [lo, hi] at the level for the
// noncentrality λ of a noncentral chi-square with df degrees of freedom from one observed
// value x, by inverting the distribution (Steiger 2004, "Beyond the F test: effect size
// confidence intervals and tests of close fit in the analysis of variance and contrast
// analysis", Psychological Methods 9:164-182; the method as recalled from memory): with
// α = 1 − level,
//
//	P(X > x | λ = lo) = α/2,   P(X ≤ x | λ = hi) = α/2,
//
// both tails increasing in λ ([NoncentralChiSquareTails]). lo = 0 when P(X > x | λ = 0) ≥
// α/2, that is when the chi-square test of λ = 0 does not reject at α/2; hi = 0 when
// P(X ≤ x | λ = 0) ≤ α/2 (x below the α/2 quantile of the central distribution: the
// interval is then [0, 0]).
//
// Each bound is found by bisection on a bracket that starts at [0, max(1, x)] and doubles
// until it holds the root, and stops when the bracket is narrower than 1e-12 of its upper
// end; the midpoint is returned. The steps depend only on the inputs, so the result is the
// same on every machine. x must be finite and not negative and level in (0, 1); a bound
// above [NoncentralMaxNC] is an error.
func NoncentralityInterval(x, df, level float64) (lo, hi float64, err error) {
	if !(level > 0 && level < 1) {
		return 0, 0, fmt.Errorf("noncentrality interval: level must lie in (0, 1), got %v", level)
	}
	half := float64(1-level) / 2
	lower0, upper0, err := NoncentralChiSquareTails(x, df, 0)
	if err != nil {
		return 0, 0, fmt.Errorf("noncentrality interval: %w", err)
	}
	if upper0 < half {
		lo, err = ncInvert(x, df, half, true)
		if err != nil {
			return 0, 0, err
		}
	}
	if lower0 > half {
		hi, err = ncInvert(x, df, half, false)
		if err != nil {
			return 0, 0, err
		}
	}
	return lo, hi, nil
}

// ncInvert finds λ with P(X > x | λ) = target (upper) or P(X ≤ x | λ) = target (not
// upper), where the tail at λ = 0 is on the other side of target.
func ncInvert(x, df, target float64, upper bool) (float64, error) {
	// beyond reports whether λ lies at or past the root.
	beyond := func(nc float64) (bool, error) {
		l, u, err := NoncentralChiSquareTails(x, df, nc)
		if err != nil {
			return false, fmt.Errorf("noncentrality interval: %w", err)
		}
		if upper {
			return u >= target, nil
		}
		return l <= target, nil
	}
	lo, hi := 0.0, max(1, x)
	for {
		if hi > NoncentralMaxNC {
			return 0, fmt.Errorf("noncentrality interval: the bound at x = %v, df = %v lies above %g", x, df, float64(NoncentralMaxNC))
		}
		past, err := beyond(hi)
		if err != nil {
			return 0, err
		}
		if past {
			break
		}
		lo, hi = hi, 2*hi
	}
	for range 200 {
		if hi-lo <= float64(1e-12*hi) {
			break
		}
		mid := lo + float64(hi-lo)/2
		past, err := beyond(mid)
		if err != nil {
			return 0, err
		}
		if past {
			hi = mid
		} else {
			lo = mid
		}
	}
	return lo + float64(hi-lo)/2, nil
}

// gammaFraction evaluates the continued fraction of the upper incomplete gamma function,
//
//	Γ(a, z) = e^{−z} z^a · 1/(z + 1 − a − 1(1 − a)/(z + 3 − a − 2(2 − a)/(z + 5 − a − …)))
//
// (DLMF 8.9.2), by the modified Lentz method (Numerical Recipes, Press et al. 2007, §6.2,
// recalled from memory), for z ≥ a + 1 where it converges fast. It stops when a step changes
// the value by less than 1e-16 relative (ok) or after limit steps (not ok).
func gammaFraction(a, z float64, limit int) (h float64, ok bool) {
	const tiny = 1e-300
	b := z + 1 - a
	c := 1 / tiny
	d := 1 / b
	h = d
	for i := 1; i <= limit; i++ {
		fi := float64(i)
		an := -float64(fi * float64(fi-a))
		b += 2
		d = float64(an*d) + b
		if math.Abs(d) < tiny {
			d = tiny
		}
		c = b + an/c
		if math.Abs(c) < tiny {
			c = tiny
		}
		d = 1 / d
		del := float64(d * c)
		h = float64(h * del)
		if math.Abs(del-1) < 1e-16 {
			return h, true
		}
	}
	return h, false
}
