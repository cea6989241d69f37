package stats

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"testing"
)

// ncx2Reference is testdata/reference/ncx2_scipy.json, written by ncx2_scipy.py beside it:
// scipy 1.10.1 stats.ncx2 (Boost's noncentral chi-square) and, for nc <= 300 and df <= 200,
// the Poisson mixture summed in mpmath 1.2.1 at 40 digits.
type ncx2Reference struct {
	Tails []struct {
		DF, NC, X    float64
		Lower, Upper float64
		MPLower      *float64 `json:"mp_lower"`
		MPUpper      *float64 `json:"mp_upper"`
	}
	Spot struct {
		DF, NC, X float64
		Upper     float64
		MPUpper   float64 `json:"mp_upper"`
	}
	Intervals []struct {
		X, DF, Level float64
		LamLow       float64 `json:"lam_low"`
		LamHigh      float64 `json:"lam_high"`
	}
}

func readNcx2Reference(t *testing.T) ncx2Reference {
	t.Helper()
	b, err := os.ReadFile("../testdata/reference/ncx2_scipy.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref ncx2Reference
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Tails) < 1000 || len(ref.Intervals) < 150 {
		t.Fatalf("reference has %d tails and %d intervals", len(ref.Tails), len(ref.Intervals))
	}
	return ref
}

// TestNoncentralChiSquareReference compares both tails with the reference grid: within
// 1e-12 relative of the mpmath sums (40 digits) wherever they were computed, and within
// 5e-12 of scipy elsewhere. scipy's own error reaches about 4e-12 at nc = 1e5 (see
// TestNoncentralChiSquareSpot), so that is the bound the comparison with it can show.
// Values below 1e-300, where scipy gives 0 or loses digits, are compared with mpmath only.
func TestNoncentralChiSquareReference(t *testing.T) {
	ref := readNcx2Reference(t)
	worstMP, worstScipy := 0.0, 0.0
	for _, c := range ref.Tails {
		lower, upper, err := NoncentralChiSquareTails(c.X, c.DF, c.NC)
		if err != nil {
			t.Errorf("df %v nc %v x %v: %v", c.DF, c.NC, c.X, err)
			continue
		}
		check := func(name string, got, want, tol float64, worst *float64) {
			if want < 1e-300 && got < 1e-300 {
				return
			}
			d := relDiff(got, want)
			*worst = max(*worst, d)
			if d > tol {
				t.Errorf("%s df %v nc %v x %v: got %v, want %v (relative %.2g)", name, c.DF, c.NC, c.X, got, want, d)
			}
		}
		if c.MPLower != nil {
			check("mpmath lower", lower, *c.MPLower, 1e-12, &worstMP)
			check("mpmath upper", upper, *c.MPUpper, 1e-12, &worstMP)
			continue
		}
		check("scipy lower", lower, c.Lower, 5e-12, &worstScipy)
		check("scipy upper", upper, c.Upper, 5e-12, &worstScipy)
	}
	t.Logf("largest relative difference: %.2g from mpmath, %.2g from scipy", worstMP, worstScipy)
}

// TestNoncentralChiSquareSpot: at nc = 1e5, df = 2 and scipy's isf(1e-12), scipy gives
// 9.999999999943466e-13 and the mpmath sum (30 digits, 11000 Poisson terms around the mode;
// ncx2_scipy.py) 9.99999999998064e-13; ours must side with mpmath.
func TestNoncentralChiSquareSpot(t *testing.T) {
	s := readNcx2Reference(t).Spot
	_, upper, err := NoncentralChiSquareTails(s.X, s.DF, s.NC)
	if err != nil {
		t.Fatal(err)
	}
	if d := relDiff(upper, s.MPUpper); d > 1e-12 {
		t.Errorf("upper %v, mpmath %v (relative %.2g); scipy %v", upper, s.MPUpper, d, s.Upper)
	}
}

// TestNoncentralChiSquareCentral: nc = 0 is the central chi-square, whose upper tail
// ChiSquareUpperTail computes by its own finite sums (checked against mpmath in
// chisquare_test.go).
func TestNoncentralChiSquareCentral(t *testing.T) {
	for _, df := range []int{1, 2, 3, 7, 30, 200} {
		for _, x := range []float64{0.001, 0.3, 1, 2.5, 9, 40, 150, 900} {
			want, _, err := ChiSquareUpperTail(x, df)
			if err != nil {
				t.Fatal(err)
			}
			_, got, err := NoncentralChiSquareTails(x, float64(df), 0)
			if err != nil || relDiff(got, want) > 1e-13 && want > 1e-300 {
				t.Errorf("df %d x %v: upper %v %v, chi-square tail %v", df, x, got, err, want)
			}
		}
	}
}

// TestNoncentralChiSquareInputs: every input gives an error or two tails in [0, 1] that add
// to 1, and the invalid ones an error; the extreme ones must come back quickly (the whole
// table runs in well under a second).
func TestNoncentralChiSquareInputs(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	for _, c := range []struct{ x, df, nc float64 }{
		{nan, 2, 1}, {inf, 2, 1}, {-inf, 2, 1}, {-1, 2, 1}, {-5e-324, 2, 1},
		{1, nan, 1}, {1, inf, 1}, {1, 0, 1}, {1, -2, 1}, {1, 0.005, 1}, {1, 2e10, 1},
		{1, 2, nan}, {1, 2, inf}, {1, 2, -1e-300}, {1, 2, 2e10},
	} {
		if _, _, err := NoncentralChiSquareTails(c.x, c.df, c.nc); err == nil {
			t.Errorf("x %v df %v nc %v: no error", c.x, c.df, c.nc)
		}
	}
	xs := []float64{0, math.Copysign(0, -1), 5e-324, 1e-300, 1e-10, 0.5, 3, 1e3, 1e6, 1e9, 2e10, 1e12, 1e300, 1e308, math.MaxFloat64}
	dfs := []float64{NoncentralMinDF, 0.5, 1, 3, 1e3, 1e6, 1e9, NoncentralMaxDF}
	ncs := []float64{0, 5e-324, 1e-300, 1e-3, 1, 1e3, 1e6, 1e9, NoncentralMaxNC}
	for _, x := range xs {
		for _, df := range dfs {
			for _, nc := range ncs {
				lower, upper, err := NoncentralChiSquareTails(x, df, nc)
				if err != nil || !(lower >= 0 && lower <= 1 && upper >= 0 && upper <= 1) || math.Abs(lower+upper-1) > 1e-12 {
					t.Errorf("x %v df %v nc %v: %v, %v, %v", x, df, nc, lower, upper, err)
				}
			}
		}
	}
	// Far in the tails the Chernoff bound decides: exactly 0 and 1.
	if l, u, _ := NoncentralChiSquareTails(1e308, 3, 1e9); l != 1 || u != 0 {
		t.Errorf("x = 1e308: %v, %v", l, u)
	}
	if l, u, _ := NoncentralChiSquareTails(1, 3, 1e9); l != 0 || u != 1 {
		t.Errorf("x = 1, nc = 1e9: %v, %v", l, u)
	}
}

// TestNoncentralChiSquareMonotone: on a seeded grid, the lower tail falls as nc grows and
// rises with x (both by the definition of the distribution, common practice).
func TestNoncentralChiSquareMonotone(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 8))
	for range 300 {
		df := float64(1 + rng.IntN(12))
		nc := float64(rng.Float64() * 60)
		x := float64(rng.Float64()*80) + 0.01
		l0, _, _ := NoncentralChiSquareTails(x, df, nc)
		l1, _, _ := NoncentralChiSquareTails(x, df, float64(nc*1.01)+0.01)
		l2, _, _ := NoncentralChiSquareTails(float64(x*1.01), df, nc)
		if l1 > l0 || l2 < l0 {
			t.Errorf("df %v nc %v x %v: %v, larger nc %v, larger x %v", df, nc, x, l0, l1, l2)
		}
	}
}

// TestNoncentralityIntervalReference compares the bounds with scipy's brentq on its own
// ncx2 tails (ncx2_scipy.py) and checks that the defining equations hold at them.
func TestNoncentralityIntervalReference(t *testing.T) {
	for _, c := range readNcx2Reference(t).Intervals {
		lo, hi, err := NoncentralityInterval(c.X, c.DF, c.Level)
		if err != nil {
			t.Errorf("x %v df %v level %v: %v", c.X, c.DF, c.Level, err)
			continue
		}
		if relDiff(lo, c.LamLow) > 1e-10 || relDiff(hi, c.LamHigh) > 1e-10 {
			t.Errorf("x %v df %v level %v: [%v, %v], scipy [%v, %v]", c.X, c.DF, c.Level, lo, hi, c.LamLow, c.LamHigh)
		}
		half := (1 - c.Level) / 2
		if lo > 0 {
			if _, u, _ := NoncentralChiSquareTails(c.X, c.DF, lo); relDiff(u, half) > 1e-9 {
				t.Errorf("x %v df %v level %v: P(X > x | lo) = %v, want %v", c.X, c.DF, c.Level, u, half)
			}
		}
		if hi > 0 {
			if l, _, _ := NoncentralChiSquareTails(c.X, c.DF, hi); relDiff(l, half) > 1e-9 {
				t.Errorf("x %v df %v level %v: P(X <= x | hi) = %v, want %v", c.X, c.DF, c.Level, l, half)
			}
		}
	}
}

// TestNoncentralityIntervalAgreesWithTest: the lower bound is 0 exactly when the
// chi-square test (ChiSquareUpperTail) does not reject at (1 − level)/2, and the upper
// bound is 0 exactly when x lies below the (1 − level)/2 quantile, on a grid around both
// switch points (the 0.975 and 0.025 quantiles of chi-square(2) are 7.377759 and
// 0.05063562, common practice).
func TestNoncentralityIntervalAgreesWithTest(t *testing.T) {
	for _, x := range []float64{0.01, 0.05, 0.0506, 0.0507, 0.06, 1, 5, 7.3, 7.37, 7.38, 7.4, 8, 20} {
		lo, hi, err := NoncentralityInterval(x, 2, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		p, _, _ := ChiSquareUpperTail(x, 2)
		if (lo == 0) != (p >= 0.025) || (hi == 0) != (p >= 0.975) || lo > hi {
			t.Errorf("x %v (p = %v): [%v, %v]", x, p, lo, hi)
		}
	}
	for _, level := range []float64{0, 1, -0.5, 1.5, math.NaN()} {
		if _, _, err := NoncentralityInterval(3, 2, level); err == nil {
			t.Errorf("level %v: no error", level)
		}
	}
	for _, x := range []float64{-1, math.NaN(), math.Inf(1)} {
		if _, _, err := NoncentralityInterval(x, 2, 0.95); err == nil {
			t.Errorf("x %v: no error", x)
		}
	}
	// An upper bound beyond the largest noncentrality is an error, not a hang.
	if _, _, err := NoncentralityInterval(9e9, 2, 0.95); err == nil {
		t.Error("x = 9e9: no error")
	}
}

// noncentralBitsWant is the SHA-256 of the bits TestNoncentralBits computes, recorded on
// linux/amd64 (GOAMD64=v1); bench/arch-determinism.sh reruns it on other builds. A
// deliberate change of these functions changes it: the test prints the new value.
const noncentralBitsWant = "3549080bb5f9c38c2ca5d4e8d5008e87d2a8cdc822990a89c0ffdf3729969346"

// TestNoncentralBits hashes the float64 bits of the noncentral chi-square tails and the
// intervals built on them on a seeded grid (see TestPortableBits).
func TestNoncentralBits(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 23))
	h := sha256.New()
	put := func(x float64) {
		var b [8]byte
		binary.BigEndian.PutUint64(b[:], math.Float64bits(x))
		h.Write(b[:])
	}
	for range 300 {
		u := rng.Float64()
		df := float64(1 + rng.IntN(20))
		nc := math.Ldexp(0.5+u, rng.IntN(24)-8)
		x := float64(float64(df+nc) * float64(0.2+float64(u*2)))
		l, up, _ := NoncentralChiSquareTails(x, df, nc)
		put(l)
		put(up)
	}
	for range 40 {
		x := math.Ldexp(0.5+rng.Float64(), rng.IntN(14)-2)
		lo, hi, _ := NoncentralityInterval(x, float64(1+rng.IntN(6)), 0.95)
		put(lo)
		put(hi)
	}
	if got := hex.EncodeToString(h.Sum(nil)); got != noncentralBitsWant {
		t.Errorf("bits hash %s, want %s (a deliberate change of these functions updates noncentralBitsWant)", got, noncentralBitsWant)
	}
}

func ExampleNoncentralityInterval() {
	// H* = 7.988 with k = 3 groups (the Dobson (1983) plant weights): the 95% interval of the noncentrality.
	lo, hi, err := NoncentralityInterval(7.988228749443715, 2, 0.95)
	if err != nil {
		panic(err)
	}
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	// Output: [0.1715, 21.6026]
}

// BenchmarkKruskalWallisEffectInterval times the noncentral interval where it costs most,
// at a large H* (work grows with √λ): 10^7 observations in 4 groups with a moderate
// effect, and a small design for comparison.
func BenchmarkKruskalWallisEffectInterval(b *testing.B) {
	for _, c := range []struct {
		name string
		h    float64
		n    int
	}{{"N=30", 7.99, 30}, {"N=1e7", 2.5e6, 10_000_000}} {
		b.Run(c.name, func(b *testing.B) {
			for b.Loop() {
				if _, err := KruskalWallisEffectInterval(c.h, c.n, 4, 0.95); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
