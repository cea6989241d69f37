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
				// The tolerance of the Cephes prefactor exp(a ln z − z − ln Γ(a)), which this
				// test allowed when p came from gonum; the finite sums of ChiSquareUpperTail
				// stay well within it (their error grows with the number of terms only).
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

// TestChiSquareAgainstGonum compares with gonum v0.17.0 mathext.GammaIncRegComp (a port of
// the Cephes and Boost incomplete gamma routines, a general-purpose library) on a grid of
// df and x that crosses z = x/2 = 700, where ChiSquareUpperTail moves from its direct sums
// to log space, and the p = 1/2 switch of log10p. Cephes forms its prefactor as
// exp(a ln z − z − ln Γ(a)), with a relative error of a few ε·(a ln z + z); the tolerance
// allows that, and 1e-13 besides.
func TestChiSquareAgainstGonum(t *testing.T) {
	const eps = 0x1p-52
	points := 0
	for _, df := range []int{1, 2, 3, 4, 5, 8, 13, 20, 50, 99, 100, 333, 1000, 1399, 1400, 1401, 1500, 3000} {
		a := float64(df) / 2
		for x := 1e-3; x < 3000; x *= 1.09 {
			z := x / 2
			want := mathext.GammaIncRegComp(a, z)
			if want < 1e-300 {
				break
			}
			p, lp, err := ChiSquareUpperTail(x, df)
			if err != nil {
				t.Fatal(err)
			}
			tol := 1e-13 + 8*eps*(a*math.Abs(math.Log(z))+z)
			if !relClose(p, want, tol) {
				t.Errorf("df = %d, x = %v: p = %.17g, gonum %.17g (tolerance %.2g)", df, x, p, want, tol)
			}
			if !relClose(lp, math.Log10(want), tol) && math.Abs(lp-math.Log10(want)) > 1e-15 {
				t.Errorf("df = %d, x = %v: log10p = %.17g, gonum %.17g", df, x, lp, math.Log10(want))
			}
			points++
		}
	}
	// Both sides of z = 700 exactly, for even and odd df: the direct sum and the log-space
	// sum agree, to the sensitivity of p to the one-ulp change of x (d ln p/d ln x = a − z
	// at most 1000 here, times 1.1e-16).
	for _, df := range []int{1, 2, 3, 7, 1200, 1399, 1401, 2000} {
		below, lb, _ := ChiSquareUpperTail(math.Nextafter(1400, 0), df)
		above, la, _ := ChiSquareUpperTail(1400, df)
		if !relClose(below, above, 1e-12) || !relClose(lb, la, 1e-12) {
			t.Errorf("df = %d at x = 1400: p %.17g below, %.17g at; log10p %.17g, %.17g", df, below, above, lb, la)
		}
	}
	if points < 500 {
		t.Errorf("only %d comparison points", points)
	}
}
