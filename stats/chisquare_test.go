package stats

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mathext"
)

// TestChiSquareTwoDF uses the fact that chi-square(2) is exponential with mean 2, so
// P(X >= x) = exp(-x/2) and log10 P = -x/(2 ln 10) (common practice). From x = 1500 on
// the tail underflows float64 and only the log-space path can give log10p.
func TestChiSquareTwoDF(t *testing.T) {
	for _, x := range []float64{0.5, 5.991, 80, 1500, 5000, 20000} {
		p, lp, err := ChiSquareUpperTail(x, 2)
		if err != nil {
			t.Fatalf("x = %v: %v", x, err)
		}
		wantLog := -x / (2 * math.Ln10)
		if !relClose(lp, wantLog, 1e-12) {
			t.Errorf("x = %v: log10p = %.17g, want -x/(2 ln 10) = %.17g", x, lp, wantLog)
		}
		if want := math.Exp(-x / 2); !relClose(p, want, 1e-13) {
			t.Errorf("x = %v: p = %.17g, want exp(-x/2) = %.17g", x, p, want)
		}
	}
}

// TestChiSquareMpmath compares p and log10p with mpmath 1.2.1 gammainc (50 digits),
// from testdata/reference/kruskal_scipy.json: normal range, near the switch to the log
// path (df = 2, x = 1416..1418 straddles 2.2e-308), subnormal and underflowed tails.
func TestChiSquareMpmath(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.ChisqTail {
		t.Run(fmt.Sprintf("x=%g,df=%d", c.X, c.DF), func(t *testing.T) {
			p, lp, err := ChiSquareUpperTail(c.X, c.DF)
			if err != nil {
				t.Fatal(err)
			}
			if !relClose(lp, c.Log10P, 1e-12) {
				t.Errorf("log10p = %.17g, mpmath %.17g", lp, c.Log10P)
			}
			switch {
			case c.P >= minNormal:
				// gonum evaluates the prefactor z^a e^-z / Γ(a) as exp(a ln z - z - ln Γ(a))
				// for z far from a, so p carries a relative error of a few ε·(a ln z + z):
				// about 2e-12 at df = 10^4 (seen here), negligible at small df.
				a, z := float64(c.DF)/2, c.X/2
				tol := 1e-12 + 8*0x1p-52*(a*math.Abs(math.Log(z))+z)
				if !relClose(p, c.P, tol) {
					t.Errorf("p = %.17g, mpmath %.17g (tolerance %.2g)", p, c.P, tol)
				}
			default:
				// Subnormal or zero: float64 has no relative precision left, so allow
				// two units of the smallest subnormal.
				if math.Abs(p-c.P) > 2*math.SmallestNonzeroFloat64 {
					t.Errorf("p = %g, mpmath %g", p, c.P)
				}
			}
		})
	}
}

// TestLogUpperGammaCFOverlap compares the log-space continued fraction with gonum's
// GammaIncRegComp (gonum v0.17.0) where both work: z > a + 1 and the tail still normal.
//
// ln Q = a ln z - z - ln Γ(a) - ln F adds terms of size up to a ln z + z, so the
// fraction's ln Q carries an absolute rounding error of a few ε·(a ln z + z + ln Γ(a)).
// Near z ≈ a with a large, where ln Q is close to 0, that is a large relative error
// (about 1e-11 at a = 5000), and this is why ChiSquareUpperTail uses the fraction only
// when p underflows, where |ln Q| > 708. So the comparison is: within that error model
// everywhere, and within a relative 1e-12 wherever Q < 1e-100.
func TestLogUpperGammaCFOverlap(t *testing.T) {
	const eps = 0x1p-52
	worst := 0.0
	points := 0
	for _, df := range []int{1, 2, 3, 4, 5, 8, 13, 20, 50, 100, 333, 1000, 10000} {
		a := float64(df) / 2
		for z := a + 1.5; ; z *= 1.07 {
			q := mathext.GammaIncRegComp(a, z)
			if q < 1e-300 {
				break
			}
			lnq, err := logUpperGammaCF(a, z)
			if err != nil {
				t.Fatalf("a = %v, z = %v: %v", a, z, err)
			}
			want := math.Log(q)
			d := math.Abs(lnq - want)
			lg, _ := math.Lgamma(a)
			model := 1e-12*math.Abs(want) + 8*eps*(a*math.Abs(math.Log(z))+z+math.Abs(lg))
			if d > model {
				t.Errorf("a = %v, z = %v: ln Q = %.17g by the fraction, %.17g from gonum (error model %.2g)",
					a, z, lnq, want, model)
			}
			if q < 1e-100 {
				points++
				if d > 1e-12*math.Abs(want) {
					t.Errorf("a = %v, z = %v: ln Q = %.17g by the fraction, %.17g from gonum", a, z, lnq, want)
				}
				worst = math.Max(worst, d/math.Abs(want))
			}
		}
	}
	if points < 50 {
		t.Errorf("only %d comparison points with Q < 1e-100", points)
	}
	t.Logf("largest relative difference in ln Q where Q < 1e-100: %.3g over %d points", worst, points)
}

// TestChiSquareSwitchIsSmooth checks that log10p has no jump where the computation
// moves to the log-space path (p = 2.2e-308, near x = 1436 for df = 5). Far in the tail
// d ln Q(a, z)/dz = -1 + (a-1)/z - (a-1)/z^2 + O(z^-3) (from the asymptotic series
// Q ≈ z^(a-1) e^(-z)/Γ(a) · (1 + (a-1)/z + (a-1)(a-2)/z^2), common practice), so each
// step of 0.25 in x lowers log10 p by a predictable amount; the slope formula at the
// step midpoint is good to about 1e-7 here.
func TestChiSquareSwitchIsSmooth(t *testing.T) {
	const df = 5
	a := float64(df) / 2
	var prev float64
	sawNormal, sawLog := false, false
	for x := 1390.0; x <= 1480; x += 0.25 {
		p, lp, err := ChiSquareUpperTail(x, df)
		if err != nil {
			t.Fatal(err)
		}
		if p >= minNormal {
			sawNormal = true
		} else {
			sawLog = true
		}
		if x > 1390 {
			zm := (x - 0.125) / 2
			want := 0.125 * (1 - (a-1)/zm + (a-1)/(zm*zm)) / math.Ln10
			if step := prev - lp; math.Abs(step-want) > 1e-6 {
				t.Errorf("x = %v: log10p step %.9f, want %.9f", x, step, want)
			}
		}
		prev = lp
	}
	if !sawNormal || !sawLog {
		t.Errorf("grid did not cross the switch (normal %v, log path %v)", sawNormal, sawLog)
	}
}

func TestChiSquareUpperTailEdges(t *testing.T) {
	p, lp, err := ChiSquareUpperTail(0, 3)
	if err != nil || p != 1 || lp != 0 {
		t.Errorf("x = 0: p, log10p, err = %v, %v, %v; want 1, 0, nil", p, lp, err)
	}
	// A tail very close to 1 keeps a relative accurate log10p: P(X < x) ≈ x^5/(2^5 5!)
	// for df = 10 and tiny x (leading term of the lower series, common practice).
	x := 1e-3
	_, lp, err = ChiSquareUpperTail(x, 10)
	if want := -math.Pow(x/2, 5) / 120 / math.Ln10; err != nil || !relClose(lp, want, 1e-3) {
		t.Errorf("x = 1e-3, df = 10: log10p = %g, err %v; want about %g", lp, err, want)
	}
	bad := []struct {
		x  float64
		df int
	}{
		{-1e-300, 2}, {-1, 1}, {math.NaN(), 2}, {math.Inf(1), 2}, {math.Inf(-1), 2}, {3, 0}, {3, -2},
	}
	for _, b := range bad {
		if p, lp, err := ChiSquareUpperTail(b.x, b.df); err == nil {
			t.Errorf("x = %v, df = %d: p, log10p = %v, %v; want an error", b.x, b.df, p, lp)
		}
	}
}
