package stats

import (
	"math"

	"rankplan/stats/stream"
)

// This file is the binomial sampler of the stream specification (package stream, §6), as
// code: it is here rather than in package stream because it is built on the portable
// logarithm and exponential of this package (portable.go, exp.go). Its bits are the same
// on every architecture: it uses only the stream's raw values, integer arithmetic, float64
// +, −, ×, ÷, math.Sqrt and math.Floor (correctly rounded or exact under IEEE 754 on
// every platform), logPortable, log1pPortable and expPortable, and every product that is
// then added is written float64(x*y), so that no fused multiply-add can change a result.

// uniform01 returns u = (x >> 11)·2^−53 for the stream's next raw value x: one of the
// 2^53 multiples of 2^−53 in [0, 1), each with probability 2^−53, computed exactly.
func uniform01(s *stream.Stream) float64 {
	return float64(s.Uint64()>>11) * 0x1p-53
}

// binomialInversionBelow is the mean n·min(p, 1 − p) below which [binomialParams.draw] draws
// by inversion; at or above it, by BTPE. Part of the stream specification (§6).
const binomialInversionBelow = 30

// binomialParams is a binomial probability a/b, 0 <= a <= b, b >= 1, prepared for
// drawing counts: what the sampler computes from a and b alone, so that a caller drawing
// many counts with one probability (and varying n) computes it once. [binomialParams.draw]
// draws from Binomial(n, a/b), n >= 0, as the stream specification (package stream, §6)
// defines it:
//
//	n = 0 or a = 0: 0, and a = b: n, with no draw;
//	if 2a > b: draw y for the probability (b − a)/b instead and return n − y;
//	p = a/b, q = (b − a)/b (each one correctly rounded division of integers);
//	n·p < 30: inversion ([binomialInversion]); else BTPE ([binomialBTPE]).
//
// The symmetry step is decided in integers, so it never depends on rounding.
type binomialParams struct {
	zero, all, flip bool
	p, q            float64 // p = a/b <= 1/2 after the symmetry step, q = (b − a)/b
	sr, lq          float64 // p/q and log1p(−p), for the inversion
}

func newBinomialParams(a, b int64) binomialParams {
	if a == 0 {
		return binomialParams{zero: true}
	}
	if a == b {
		return binomialParams{all: true}
	}
	var bp binomialParams
	if 2*a > b {
		a, bp.flip = b-a, true
	}
	bp.p = float64(a) / float64(b)
	bp.q = float64(b-a) / float64(b)
	bp.sr = bp.p / bp.q
	bp.lq = log1pPortable(-bp.p)
	return bp
}

// draw draws the count of n trials (see [binomialParams]).
func (bp *binomialParams) draw(s *stream.Stream, n int64) int64 {
	switch {
	case n == 0 || bp.zero:
		return 0
	case bp.all:
		return n
	}
	var y int64
	if float64(float64(n)*bp.p) < binomialInversionBelow {
		y = binomialInversion(s, n, bp)
	} else {
		y = binomialBTPE(s, n, bp.p, bp.q)
	}
	if bp.flip {
		return n - y
	}
	return y
}

// binomialInversion draws from Binomial(n, p), p <= 1/2, n·p < 30, by sequential search
// of the distribution function from 0 (inversion; algorithm BINV of Kachitvichyanukul &
// Schmeiser 1988, "Binomial random variate generation", Commun. ACM 31:216-222, and
// Devroye 1986, Non-Uniform Random Variate Generation, §X.4, both recalled from memory):
//
//	s = p/q;  a = (n + 1)·s;  f₀ = exp(n·log1p(−p))          (= qⁿ)
//	bound = min(n, floor(n·p + 10·sqrt(n·p·q + 1)))
//	repeat:
//	    u = U();  y = 0;  f = f₀
//	    while u >= f:
//	        u = u − f;  y = y + 1
//	        if y > bound: start again with a new u
//	        f = f·(a/y − s)                                (= f(y) from f(y − 1))
//	    return y
//
// with U from [uniform01]. f(y)/f(y − 1) = (n − y + 1)p/(y q) = a/y − s. The bound lies
// ten standard deviations above the mean, so a restart has a chance below 10^−20: it
// only catches the last bits of probability that rounding leaves out of the sum.
func binomialInversion(s *stream.Stream, n int64, bp *binomialParams) int64 {
	p, q, sr := bp.p, bp.q, bp.sr
	a := float64(float64(n+1) * sr)
	f0 := expPortable(float64(float64(n) * bp.lq))
	mu := float64(float64(n) * p)
	bound := math.Floor(mu + float64(10*math.Sqrt(float64(mu*q)+1)))
	if fn := float64(n); bound > fn {
		bound = fn
	}
	for {
		u := uniform01(s)
		f := f0
		y := 0.0
		for u >= f {
			u -= f
			y++
			if y > bound {
				break
			}
			f = float64(f * (a/y - sr))
		}
		if y <= bound {
			return int64(y)
		}
	}
}

// binomialBTPE draws from Binomial(n, p), p <= 1/2, n·p >= 30, by algorithm BTPE of
// Kachitvichyanukul & Schmeiser (1988, Commun. ACM 31:216-222; steps as recalled from the
// paper): rejection from a hat of a triangle (region 1), two parallelograms (region 2)
// and two exponential tails (regions 3 and 4), with q = 1 − p, npq = n·p·q:
//
//	set-up:
//	  f_M = n·p + p;  M = floor(f_M);  x_M = M + 0.5
//	  p₁ = floor(2.195·sqrt(npq) − 4.6·q) + 0.5
//	  x_L = x_M − p₁;  x_R = x_M + p₁;  c = 0.134 + 20.5/(15.3 + M)
//	  a = (f_M − x_L)/(f_M − x_L·p);  λ_L = a·(1 + a/2)
//	  a = (x_R − f_M)/(x_R·q);        λ_R = a·(1 + a/2)
//	  p₂ = p₁·(1 + 2c);  p₃ = p₂ + c/λ_L;  p₄ = p₃ + c/λ_R
//	step 1: u = U()·p₄;  v = U()
//	  u <= p₁: return floor(x_M − p₁·v + u)
//	  u <= p₂: x = x_L + (u − p₁)/c;  v = v·c + 1 − |M − x + 0.5|/p₁
//	           if v > 1: go to step 1;  y = floor(x)
//	  u <= p₃: y = floor(x_L + log(v)/λ_L);  if v = 0 or y < 0: go to step 1
//	           v = v·(u − p₂)·λ_L
//	  else:    y = floor(x_R − log(v)/λ_R);  if v = 0 or y > n: go to step 1
//	           v = v·(u − p₃)·λ_R
//	step 2 (accept y with probability f(y)/f(M) against v): k = |y − M|
//	  if k <= 20 or k >= npq/2 − 1: F = f(y)/f(M) by the recurrence
//	           F = Π_{i=M+1..y} (a'/i − s) for y > M, 1/Π_{i=y+1..M} (a'/i − s) for y < M,
//	           s = p/q, a' = (n + 1)·s;  accept when v <= F
//	  else: ρ = (k/npq)·((k·(k/3 + 0.625) + 1/6)/npq + 0.5);  t = −k²/(2·npq);  A = log(v)
//	        A < t − ρ: accept;  A > t + ρ: go to step 1
//	        with x₁ = y + 1, f₁ = M + 1, z = n + 1 − M, w = n − y + 1:
//	        accept when A <= x_M·log(f₁/x₁) + (n − M + 0.5)·log(z/w) + (y − M)·log(w·p/(x₁·q))
//	                          + st(f₁) + st(z) + st(x₁) + st(w)
//	        where st(x) = (13860 − (462 − (132 − (99 − 140/x²)/x²)/x²)/x²)/x/166320,
//	        the Stirling terms of the log of the ratio of the two factorial products.
//
// U is [uniform01], log is logPortable; each product that is then added is rounded on its
// own. A step "go to step 1" draws two new uniforms.
func binomialBTPE(s *stream.Stream, n int64, p, q float64) int64 {
	fn := float64(n)
	npq := float64(float64(fn*p) * q)
	fM := float64(fn*p) + p
	m := math.Floor(fM)
	xM := m + 0.5
	p1 := math.Floor(float64(2.195*math.Sqrt(npq))-float64(4.6*q)) + 0.5
	xL := xM - p1
	xR := xM + p1
	c := 0.134 + 20.5/(15.3+m)
	a := (fM - xL) / (fM - float64(xL*p))
	lamL := float64(a * (1 + a/2))
	a = (xR - fM) / float64(xR*q)
	lamR := float64(a * (1 + a/2))
	p2 := float64(p1 * (1 + float64(2*c)))
	p3 := p2 + c/lamL
	p4 := p3 + c/lamR
	for {
		u := float64(uniform01(s) * p4)
		v := uniform01(s)
		var y float64
		switch {
		case u <= p1:
			return int64(math.Floor(xM - float64(p1*v) + u))
		case u <= p2:
			x := xL + (u-p1)/c
			v = float64(v*c) + 1 - math.Abs(m-x+0.5)/p1
			if v > 1 {
				continue
			}
			y = math.Floor(x)
		case u <= p3:
			if v == 0 {
				continue
			}
			y = math.Floor(xL + logPortable(v)/lamL)
			if y < 0 {
				continue
			}
			v = float64(float64(v*(u-p2)) * lamL)
		default:
			if v == 0 {
				continue
			}
			y = math.Floor(xR - logPortable(v)/lamR)
			if y > fn {
				continue
			}
			v = float64(float64(v*(u-p3)) * lamR)
		}
		if btpeAccept(y, v, fn, m, xM, p, q, npq) {
			return int64(y)
		}
	}
}

// btpeAccept is step 2 of [binomialBTPE]: whether v <= f(y)/f(M), evaluated exactly by the
// recurrence near the mode and far in the tails, and otherwise by the squeeze and
// Stirling bound of the paper.
func btpeAccept(y, v, fn, m, xM, p, q, npq float64) bool {
	k := math.Abs(y - m)
	if k <= 20 || k >= npq/2-1 {
		sr := p / q
		a := float64((fn + 1) * sr)
		f := 1.0
		if m < y {
			for i := m + 1; i <= y; i++ {
				f = float64(f * (a/i - sr))
			}
		} else if m > y {
			for i := y + 1; i <= m; i++ {
				f /= a/i - sr
			}
		}
		return v <= f
	}
	rho := float64((k / npq) * ((float64(k*(k/3+0.625))+1.0/6)/npq + 0.5))
	t := -float64(k*k) / float64(2*npq)
	lv := logPortable(v)
	if lv < t-rho {
		return true
	}
	if lv > t+rho {
		return false
	}
	x1 := y + 1
	f1 := m + 1
	z := fn + 1 - m
	w := fn - y + 1
	bound := float64(xM*logPortable(f1/x1)) + float64((fn-m+0.5)*logPortable(z/w)) +
		float64((y-m)*logPortable(float64(w*p)/float64(x1*q))) +
		stirlingBTPE(f1) + stirlingBTPE(z) + stirlingBTPE(x1) + stirlingBTPE(w)
	return lv <= bound
}

// stirlingBTPE is the correction term of step 2 of [binomialBTPE],
//
//	st(x) = (13860 − (462 − (132 − (99 − 140/x²)/x²)/x²)/x²)/x/166320,
//
// the first five terms 1/(12x) − 1/(360x³) + 1/(1260x⁵) − 1/(1680x⁷) + 1/(1188x⁹) of
// Stirling's series for ln x! − [(x + 1/2) ln x − x + ln √(2π)] (common practice).
func stirlingBTPE(x float64) float64 {
	x2 := float64(x * x)
	return (13860 - (462-(132-(99-140/x2)/x2)/x2)/x2) / x / 166320
}
