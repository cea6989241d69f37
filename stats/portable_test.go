package stats

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"hash"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// relDiff is |got − want| / |want|, or |got − want| when want is 0.
func relDiff(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// TestPortableMath compares the portable functions with the standard library (Go's math
// package, whose results differ across architectures only in the last bits) on a seeded
// random grid; the bounds are a few ulp (three or so; ulp = 1.1e-16 relative), and the
// worst cases are logged.
func TestPortableMath(t *testing.T) {
	rng := rand.New(rand.NewPCG(20, 26))
	type check struct {
		name  string
		got   func(float64) float64
		want  func(float64) float64
		arg   func() float64
		bound float64
	}
	lg := func(z float64) float64 { v, _ := math.Lgamma(z); return v }
	for _, c := range []check{
		{"log", logPortable, math.Log, func() float64 { return math.Exp((rng.Float64()*2 - 1) * 700) }, 4e-16},
		{"log near 1", logPortable, math.Log, func() float64 { return 1 + (rng.Float64()*2-1)*1e-3 }, 5e-16},
		{"log1p", log1pPortable, math.Log1p, func() float64 { return math.Exp((rng.Float64()*2-1)*40) - 0.5 }, 7e-16},
		{"log1p small", log1pPortable, math.Log1p, func() float64 { return (rng.Float64()*2 - 1) * 1e-6 }, 7e-16},
		{"expm1", expm1Portable, math.Expm1, func() float64 { return (rng.Float64()*2 - 1) * 3 }, 7e-16},
		{"expm1 small", expm1Portable, math.Expm1, func() float64 { return (rng.Float64()*2 - 1) * 1e-5 }, 4e-16},
		{"log10", Log10, math.Log10, func() float64 { return math.Exp((rng.Float64()*2 - 1) * 700) }, 6e-16},
		// ln Γ near its zeros at 1 and 2 is compared in absolute terms below.
		{"lgamma", lgammaPortable, lg, func() float64 { return 2.5 + rng.Float64()*1e6 }, 1e-15},
	} {
		worst := 0.0
		for range 50000 {
			x := c.arg()
			d := relDiff(c.got(x), c.want(x))
			worst = max(worst, d)
			if d > c.bound {
				t.Errorf("%s(%v) = %.17g, math %.17g (relative %.2g, bound %.2g)", c.name, x, c.got(x), c.want(x), d, c.bound)
				break
			}
		}
		t.Logf("%s: worst relative difference %.2g", c.name, worst)
	}
	// Below 2.5 the shift to z >= 10 leaves an absolute error of a few ulp of the Stirling
	// terms (about 22 at z = 10): compared in absolute terms.
	worst := 0.0
	for range 50000 {
		z := 1e-6 + rng.Float64()*2.5
		d := math.Abs(lgammaPortable(z) - lg(z))
		worst = max(worst, d)
		if d > 1.5e-14 {
			t.Fatalf("lgamma(%v): absolute difference %.2g", z, d)
		}
	}
	t.Logf("lgamma below 2.5: worst absolute difference %.2g", worst)
	// Exact values (common practice): ln Γ(1) = ln Γ(2) = 0, ln Γ(1/2) = ln √π, log 1 = 0.
	// ln Γ's absolute error below 2.5 applies at 1 and 2.
	if math.Abs(lgammaPortable(1)) > 1e-14 || math.Abs(lgammaPortable(2)) > 1e-14 ||
		relDiff(lgammaPortable(0.5), 0.5*math.Log(math.Pi)) > 1e-14 || logPortable(1) != 0 || math.Abs(Log10(1000)-3) > 5e-16 {
		t.Errorf("exact values: %v %v %v %v %v", lgammaPortable(1), lgammaPortable(2), lgammaPortable(0.5), logPortable(1), Log10(1000))
	}
	for _, x := range []float64{-1, math.NaN()} {
		if !math.IsNaN(logPortable(x)) || !math.IsNaN(lgammaPortable(x)) || !math.IsNaN(log1pPortable(x-1)) {
			t.Errorf("NaN expected at %v", x)
		}
	}
	if !math.IsInf(logPortable(0), -1) || !math.IsInf(log1pPortable(-1), -1) || !math.IsInf(logPortable(math.Inf(1)), 1) {
		t.Error("infinite edge values")
	}
}

// TestLogGammaDensity compares ln(e^{−z} z^{m−1}/Γ(m)) with the direct formula from Go's
// math.Lgamma and math.Log, where that formula has no large cancellation (small z, m), and
// with the Poisson log-probability at exact points: ln(e^{−1}) = −1 at z = m = 1.
func TestLogGammaDensity(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for range 20000 {
		z, m := rng.Float64()*30+1e-3, rng.Float64()*30+0.5
		lgm, _ := math.Lgamma(m)
		want := -z + (m-1)*math.Log(z) - lgm
		if d := math.Abs(logGammaDensity(z, m) - want); d > 1e-13*(1+math.Abs(want)) {
			t.Fatalf("z = %v, m = %v: %.17g, direct %.17g", z, m, logGammaDensity(z, m), want)
		}
	}
	if d := logGammaDensity(1, 1) + 1; math.Abs(d) > 5e-15 { // δ(1) carries ln Γ's absolute error
		t.Errorf("ln(e^-1) off by %v", d)
	}
}

// TestNormalCritical checks the two-sided normal critical values against gonum v0.17.0
// distuv.UnitNormal.Quantile and the familiar 1.959963984540054 at p = 0.05 (common
// practice, to 16 digits as scipy 1.10.1 norm.ppf(0.975) prints it, recalled from memory).
func TestNormalCritical(t *testing.T) {
	if d := relDiff(normalCritical(0.05), 1.959963984540054); d > 1e-14 {
		t.Errorf("z(0.05) = %.17g", normalCritical(0.05))
	}
	for _, p := range []float64{0.5, 0.2, 0.1, 0.01, 1e-3, 1e-6, 1e-12, 1e-100} {
		want := -distuv.UnitNormal.Quantile(p / 2) // the lower tail: p/2 is exact, 1 − p/2 is not
		if d := relDiff(normalCritical(p), want); d > 1e-13 {
			t.Errorf("p = %v: z = %.17g, gonum %.17g", p, normalCritical(p), want)
		}
	}
}

// portableBitsWant is the SHA-256 of the bits TestPortableBits computes, recorded on
// linux/amd64. bench/arch-determinism.sh runs this test in GOAMD64=v1 and v3 builds and in
// an arm64 build under qemu, so an architecture that computes one bit differently fails.
// A deliberate change to one of these functions changes it: the test prints the new value.
const portableBitsWant = "f8556ed1572d3a7f771e06213d5eb5480bee662d82e097c6c7a071a62fd31fe2"

// TestPortableBits hashes the float64 bits of the functions whose results reach
// results.json on a seeded grid (math/rand/v2's PCG is integer arithmetic, the same on every
// architecture), one hash per function so that a failure names the function.
func TestPortableBits(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 41))
	names := []string{"log", "log1p", "expm1", "exp", "log10", "lgamma", "logGammaDensity", "NormalTwoSided",
		"normalCritical", "ChiSquareUpperTail", "ChiSquareUpperTail large", "RegIncBeta", "BetaQuantile"}
	hs := map[string]hash.Hash{}
	for _, n := range names {
		hs[n] = sha256.New()
	}
	put := func(name string, x float64) {
		var b [8]byte
		binary.BigEndian.PutUint64(b[:], math.Float64bits(x))
		hs[name].Write(b[:])
	}
	for range 2000 {
		u := rng.Float64()
		// Arguments are formed without library functions and with rounding points, so that
		// they are the same bits everywhere (math.Exp is not, and u*30 + 1 may fuse).
		x := math.Ldexp(0.5+u, rng.IntN(1600)-800)
		put("log", logPortable(x))
		put("log1p", log1pPortable(u-0.5))
		put("expm1", expm1Portable(float64(u*2)-1))
		put("exp", expPortable(float64(float64(u*2)-1)*700))
		put("log10", Log10(x))
		put("lgamma", lgammaPortable(float64(u*50)))
		put("logGammaDensity", logGammaDensity(float64(u*40), 1+float64(u*30)))
		put("NormalTwoSided", NormalTwoSided(float64(float64(u*2)-1)*30))
		put("normalCritical", normalCritical(u))
		df := 1 + rng.IntN(60)
		p, lp, _ := ChiSquareUpperTail(float64(u*float64(4*df))+0.01, df)
		put("ChiSquareUpperTail", p)
		put("ChiSquareUpperTail", lp)
		p, lp, _ = ChiSquareUpperTail(1400+float64(u*5000), df*20)
		put("ChiSquareUpperTail large", p)
		put("ChiSquareUpperTail large", lp)
		a, b := 0.5+float64(rng.Float64()*200), 0.5+float64(rng.Float64()*2000)
		put("RegIncBeta", RegIncBeta(u, a, b))
		q, _ := BetaQuantile(u, a, b)
		put("BetaQuantile", q)
	}
	all := sha256.New()
	for _, n := range names {
		sum := hs[n].Sum(nil)
		all.Write(sum)
		t.Logf("%-26s %x", n, sum[:8])
	}
	got := hex.EncodeToString(all.Sum(nil))
	if got != portableBitsWant {
		t.Errorf("bits hash %s, want %s (compare the per-function hashes logged with -v against an amd64 GOAMD64=v1 run; a deliberate change of these functions updates portableBitsWant)", got, portableBitsWant)
	}
}
