package stats

import (
	"encoding/json"
	"fmt"
	"hash/fnv"
	"math"
	"os"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// refDF decodes a df written as a number or as the string "inf".
type refDF float64

func (d *refDF) UnmarshalJSON(b []byte) error {
	if string(b) == `"inf"` {
		*d = refDF(math.Inf(1))
		return nil
	}
	var f float64
	if err := json.Unmarshal(b, &f); err != nil {
		return fmt.Errorf("df: %w", err)
	}
	*d = refDF(f)
	return nil
}

func readJSON(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("decode %s: %v", path, err)
	}
}

// TestGaussLegendreNodes checks the compiled-in 8-point rule against the values written by
// testdata/reference/srange_gauss_legendre.py (mpmath 1.2.1, 50 digits), to the bit, and
// that it integrates x^14 exactly (degree 2n − 1 = 15).
func TestGaussLegendreNodes(t *testing.T) {
	var ref struct {
		Versions map[string]string `json:"versions"`
		Rules    map[string]struct {
			X, W []string
		} `json:"rules"`
	}
	readJSON(t, "../testdata/reference/srange_gauss_legendre.json", &ref)
	r := ref.Rules["8"]
	if len(r.X) != 4 || len(r.W) != 4 {
		t.Fatalf("rule 8 has %d/%d entries", len(r.X), len(r.W))
	}
	for i := range 4 {
		x, err1 := strconv.ParseFloat(r.X[i], 64)
		w, err2 := strconv.ParseFloat(r.W[i], 64)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		if x != gl8X[i] || w != gl8W[i] {
			t.Errorf("node %d: (%v, %v), reference (%v, %v)", i, gl8X[i], gl8W[i], x, w)
		}
	}
	s := 0.0
	for i := range 4 {
		s += 2 * gl8W[i] * math.Pow(gl8X[i], 14)
	}
	if math.Abs(s-2.0/15) > 1e-15 {
		t.Errorf("∫x^14 = %v, want 2/15", s)
	}
}

// TestNormTail compares the table-and-series Φc and φ with math.Erfc and the density
// formula. Tolerance: relative 3e-14 (the table values come from NormalTwoSided, within
// 3e-14 of math.Erfc at the table points up to 37) plus 4.5e-16·x², the conditioning of
// the references: rounding x/√2 or x²/2 to float64 moves erfc(x/√2) and e^(−x²/2) by about
// x²·1.1e-16 relative, for each of the two computations compared.
func TestNormTail(t *testing.T) {
	tab := srangeInit()
	worst := 0.0
	for i := 0; i <= 37000; i++ { // to x = 37: beyond, Φc(x) nears the subnormal range (< 2.2e-308) and loses digits
		x := float64(i)*1e-3 + 0.000371
		c, d := normTail(tab, x)
		wc := math.Erfc(x/math.Sqrt2) / 2
		wd := math.Exp(-x*x/2) / math.Sqrt(2*math.Pi)
		rc := math.Abs(c-wc) / wc
		rd := math.Abs(d-wd) / wd
		worst = max(worst, rc)
		if rc > 3e-14+4.5e-16*x*x || rd > 1e-14+4.5e-16*x*x {
			t.Fatalf("x = %v: Φc %v (erfc %v, rel %.2g), φ %v (%v, rel %.2g)", x, c, wc, rc, d, wd, rd)
		}
	}
	t.Logf("worst Φc relative difference %.2g", worst)
}

type srangeMpRow struct {
	Q   float64 `json:"q"`
	K   int     `json:"k"`
	DF  refDF   `json:"df"`
	SF  string  `json:"sf"`
	CDF string  `json:"cdf"`
}

// TestStudentizedRangeMpmath compares with testdata/reference/srange_mpmath.json (mpmath
// 1.2.1, mp.dps = 30, tanh-sinh quadrature of the same integrals on split intervals).
// Tolerances, per row class: survival relative 1e-8 where sf ≥ 1e-12 (the accuracy target)
// and 1e-6 where 1e-15 ≤ sf < 1e-12; CDF absolute 1e-11 everywhere.
func TestStudentizedRangeMpmath(t *testing.T) {
	var ref struct {
		Versions map[string]string `json:"versions"`
		DPS      int               `json:"dps"`
		Rows     []srangeMpRow     `json:"rows"`
	}
	readJSON(t, "../testdata/reference/srange_mpmath.json", &ref)
	if ref.Versions["mpmath"] != "1.2.1" || ref.DPS != 30 || len(ref.Rows) < 20 {
		t.Fatalf("reference: %v, dps %d, %d rows", ref.Versions, ref.DPS, len(ref.Rows))
	}
	tails := 0
	worst := 0.0
	for _, r := range ref.Rows {
		df := float64(r.DF)
		want, _ := strconv.ParseFloat(r.SF, 64)
		wantC, _ := strconv.ParseFloat(r.CDF, 64)
		got, err := StudentizedRangeSurvival(r.Q, r.K, df)
		if err != nil {
			t.Fatal(err)
		}
		c, err := StudentizedRangeCDF(r.Q, r.K, df)
		if err != nil {
			t.Fatal(err)
		}
		tol := 1e-8
		if want < 1e-12 {
			tol = 1e-6
		}
		if want >= 1e-15 && want <= 1e-6 {
			tails++
		}
		rel := math.Abs(got-want) / want
		if want >= 1e-12 {
			worst = max(worst, rel)
		}
		if rel > tol {
			t.Errorf("Survival(%v; %d, %v) = %.15g, mpmath %.15g (rel %.2g > %g)", r.Q, r.K, df, got, want, rel, tol)
		}
		if math.Abs(c-wantC) > 1e-11 {
			t.Errorf("CDF(%v; %d, %v) = %.15g, mpmath %.15g", r.Q, r.K, df, c, wantC)
		}
	}
	if tails < 20 {
		t.Errorf("only %d rows with 1e-15 <= sf <= 1e-6", tails)
	}
	t.Logf("%d rows (%d tail rows); worst survival relative difference where sf >= 1e-12: %.2g", len(ref.Rows), tails, worst)
}

type srangeScipyRef struct {
	Versions map[string]string `json:"versions"`
	Dist     []struct {
		Q   float64  `json:"q"`
		K   int      `json:"k"`
		DF  refDF    `json:"df"`
		CDF *float64 `json:"cdf"`
		SF  *float64 `json:"sf"`
	} `json:"dist"`
	Quantile []struct {
		P  float64 `json:"p"`
		K  int     `json:"k"`
		DF refDF   `json:"df"`
		Q  float64 `json:"q"`
	} `json:"quantile"`
}

func loadSRangeScipy(t *testing.T) *srangeScipyRef {
	t.Helper()
	var ref srangeScipyRef
	readJSON(t, "../testdata/reference/srange_scipy.json", &ref)
	if ref.Versions["scipy"] != "1.10.1" {
		t.Fatalf("reference made with scipy %q, want 1.10.1", ref.Versions["scipy"])
	}
	if len(ref.Dist) != 19*7*12 || len(ref.Quantile) != 19*7*4 {
		t.Fatalf("reference grid has %d/%d rows", len(ref.Dist), len(ref.Quantile))
	}
	return &ref
}

// The strides of the samples of the scipy grids checked by default: prime to the 7 × 4
// (df, p) rows of the quantile grid and to the 7 × 12 (df, q) rows of the distribution
// grid per k.
const srangeQuantileStride, srangeDistStride = 13, 5

// TestStudentizedRangeScipy compares CDF and Survival with scipy 1.10.1
// stats.studentized_range.cdf/.sf (testdata/reference/srange_scipy.py) on k = 2..20,
// df = 2, 5, 10, 20, 60, 120, inf and q = 0.1..25, rows where scipy's value is ≥ 1e-10;
// by default every srangeDistStride-th row (every k, and every df and q at some k), every
// row with RANKPLAN_EXHAUSTIVE=1.
// Tolerances, per row class:
//   - CDF: absolute 1e-10 (scipy's own integration is of that order);
//   - CDF below 1e-3: relative 1e-7 where it is ≥ 1e-6, and 2e-4 below (scipy's lower tail
//     is off there: CDF(0.5; 15, ∞) differs by 1.6e-5 relative from scipy while mpmath at 30
//     digits agrees with rankplan to 3e-8, absolute 2e-17);
//   - survival ≥ 1e-4: relative 1e-7;
//   - survival in [1e-10, 1e-4): relative 2e-4, scipy's own accuracy there: at
//     sf(10; 2, 120) scipy differs by 1e-4 from the exact k = 2 value 2 P(t_120 ≥ 10/√2) =
//     1.103971827570857e-10 (scipy 1.10.1 stats.t.sf), which rankplan matches to 1e-15, and
//     mpmath agrees with rankplan to 1e-12 at sf(10; 11, 120), sf(10; 12, ∞) and
//     sf(10; 15, ∞), where scipy is off by up to 5e-6. Those tails are held to 1e-8 by
//     TestStudentizedRangeMpmath and TestStudentizedRangeK2.
func TestStudentizedRangeScipy(t *testing.T) {
	t.Parallel()
	ref := loadSRangeScipy(t)
	worstAbs, worstRel := 0.0, 0.0
	n := 0
	for i, r := range ref.Dist {
		if !sampled(i, srangeDistStride) {
			continue
		}
		df := float64(r.DF)
		lo, up := srangeTails(r.Q, r.K, df)
		if r.CDF != nil {
			n++
			d := math.Abs(lo - *r.CDF)
			worstAbs = max(worstAbs, d)
			if d > 1e-10 {
				t.Errorf("CDF(%v; %d, %v) = %.15g, scipy %.15g (abs %.2g)", r.Q, r.K, df, lo, *r.CDF, d)
			}
			tol := 1e-7
			if *r.CDF < 1e-6 {
				tol = 2e-4
			}
			if *r.CDF < 1e-3 && !relClose(lo, *r.CDF, tol) {
				t.Errorf("CDF(%v; %d, %v) = %.15g, scipy %.15g (lower tail, rel %.2g)", r.Q, r.K, df, lo, *r.CDF, math.Abs(lo-*r.CDF) / *r.CDF)
			}
		}
		if r.SF != nil {
			n++
			rel := math.Abs(up-*r.SF) / *r.SF
			worstRel = max(worstRel, rel)
			tol := 1e-7
			if *r.SF < 1e-4 {
				tol = 2e-4
			}
			if rel > tol {
				t.Errorf("Survival(%v; %d, %v) = %.15g, scipy %.15g (rel %.2g)", r.Q, r.K, df, up, *r.SF, rel)
			}
		}
	}
	t.Logf("%d values; worst CDF abs diff %.2g, worst sf rel diff %.2g", n, worstAbs, worstRel)
}

// TestStudentizedRangeQuantileScipy compares StudentizedRangeQuantile with scipy 1.10.1
// stats.studentized_range.ppf at p = 0.05, 0.5, 0.95, 0.99 on the same (k, df) grid,
// relative 1e-7 in q, and checks that the CDF at the returned q gives back p (absolute
// 1e-12). Each row takes tens of milliseconds, so by default every
// srangeQuantileStride-th row is checked (every k, and every df and p at some k; see
// TestSampled), and every row with RANKPLAN_EXHAUSTIVE=1.
func TestStudentizedRangeQuantileScipy(t *testing.T) {
	t.Parallel()
	ref := loadSRangeScipy(t)
	worst := 0.0
	for n, r := range ref.Quantile {
		if !sampled(n, srangeQuantileStride) {
			continue
		}
		df := float64(r.DF)
		q, err := StudentizedRangeQuantile(r.P, r.K, df)
		if err != nil {
			t.Fatal(err)
		}
		rel := math.Abs(q-r.Q) / r.Q
		worst = max(worst, rel)
		if rel > 1e-7 {
			t.Errorf("Quantile(%v; %d, %v) = %.15g, scipy %.15g (rel %.2g)", r.P, r.K, df, q, r.Q, rel)
		}
		if c, _ := StudentizedRangeCDF(q, r.K, df); math.Abs(c-r.P) > 1e-12 {
			t.Errorf("CDF(Quantile(%v; %d, %v)) = %.15g", r.P, r.K, df, c)
		}
	}
	t.Logf("worst quantile rel diff %.2g", worst)
}

// TestStudentizedRangePublishedTable checks upper critical values q(α; k, df), the
// (1 − α) quantiles, against printed tables (Harter 1960, Ann. Math. Statist. 31:1122-1147,
// and the Harter-Clemm-Guthrie tables as reproduced in textbooks), to the table's
// precision: |diff| ≤ half a unit in the last printed decimal (+1e-9).
func TestStudentizedRangePublishedTable(t *testing.T) {
	inf := math.Inf(1)
	cases := []struct {
		alpha  float64
		k      int
		df     float64
		q      float64
		digits int
		source string
	}{
		// Published on these web pages:
		{0.05, 4, 30, 3.845, 3, "profscm.com/tools/tukey-calculator (table row df 30)"},
		{0.05, 4, 40, 3.791, 3, "profscm.com/tools/tukey-calculator (table row df 40)"},
		{0.05, 2, 20, 2.95, 2, "davidmlane.com/hyperstat/B99130.html (df 20)"},
		{0.05, 3, 20, 3.58, 2, "davidmlane.com/hyperstat/B99130.html (df 20)"},
		{0.05, 4, 20, 3.96, 2, "davidmlane.com/hyperstat/B99130.html (df 20)"},
		{0.05, 5, 20, 4.23, 2, "davidmlane.com/hyperstat/B99130.html (df 20)"},
		{0.05, 7, 60, 4.31, 2, "coursehero.com/file/6639576 (q(7, 60, .05) quoted from a table)"},
		// Recalled from memory (Biometrika Tables for Statisticians Vol. 1, Table 29 / Harter 1960),
		// not confirmed against the printed page:
		{0.05, 3, 10, 3.877, 3, "recalled from memory"},
		{0.05, 2, 10, 3.151, 3, "recalled from memory"},
		{0.05, 4, 10, 4.327, 3, "recalled from memory"},
		{0.05, 5, 10, 4.654, 3, "recalled from memory"},
		{0.05, 2, inf, 2.772, 3, "recalled from memory"},
		{0.05, 3, inf, 3.314, 3, "recalled from memory"},
		{0.01, 2, inf, 3.643, 3, "recalled from memory"},
	}
	for _, c := range cases {
		q, err := StudentizedRangeQuantile(1-c.alpha, c.k, c.df)
		if err != nil {
			t.Fatal(err)
		}
		tol := 0.5*math.Pow(10, -float64(c.digits)) + 1e-9
		if math.Abs(q-c.q) > tol {
			t.Errorf("q(%v; %d, %v) = %.6f, table %v (%s)", c.alpha, c.k, c.df, q, c.q, c.source)
		}
	}
}

// TestStudentizedRangeMethods checks the values of docs/methods.md §3.5, from scipy 1.10.1:
// q_0.95(k, ∞) = 3.3145, 3.6332, 3.8577 for k = 3, 4, 5 and sf(3.314; 3, ∞) = 0.050044.
func TestStudentizedRangeMethods(t *testing.T) {
	for _, c := range []struct {
		k int
		q float64
	}{{3, 3.3145}, {4, 3.6332}, {5, 3.8577}} {
		q, err := StudentizedRangeQuantile(0.95, c.k, math.Inf(1))
		if err != nil || math.Abs(q-c.q) > 0.00005+1e-9 {
			t.Errorf("q_0.95(%d, ∞) = %v (%v), docs/methods.md §3.5 %v", c.k, q, err, c.q)
		}
	}
	sf, err := StudentizedRangeSurvival(3.314, 3, math.Inf(1))
	if err != nil || math.Abs(sf-0.050044) > 0.0000005 {
		t.Errorf("sf(3.314; 3, ∞) = %v (%v), docs/methods.md §3.5 0.050044", sf, err)
	}
}

// TestStudentizedRangeK2 checks the k = 2 identity (common practice): the range of two
// normals is |Z1 − Z2|, so P(Q ≤ q) = 2 F_t(q/√2; df) − 1, with F_t from gonum v0.17.0
// distuv.StudentsT (its tail from the regularized incomplete beta), and for df = 1 and 2
// the closed forms P(Q ≥ q) = (2/π) atan(√2/q) and 2/(√(2+u²)(√(2+u²)+u)), u = q/√2, and
// for df = ∞ erfc(q/2). Tolerances: survival relative 1e-8 where it is ≥ 1e-12, CDF
// absolute 1e-11.
func TestStudentizedRangeK2(t *testing.T) {
	dfs := []float64{1, 2, 3, 5, 10, 30, 120, 1000, math.Inf(1)}
	qs := []float64{0.01, 0.3, 1, 2, 3, 5, 8, 12, 20, 50, 1e3, 1e6, 1e9}
	worst := 0.0
	for _, df := range dfs {
		for _, q := range qs {
			u := q / math.Sqrt2
			var want float64
			switch {
			case df == 1:
				want = 2 / math.Pi * math.Atan(1/u)
			case df == 2:
				s := math.Sqrt(2 + u*u)
				want = 2 / (s * (s + u))
			case math.IsInf(df, 1):
				want = math.Erfc(q / 2)
			default:
				want = 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Survival(u)
			}
			lo, up := srangeTails(q, 2, df)
			if math.Abs(lo-(1-want)) > 1e-11 {
				t.Errorf("CDF(%v; 2, %v) = %.15g, want %.15g", q, df, lo, 1-want)
			}
			if want < 1e-12 {
				continue
			}
			rel := math.Abs(up-want) / want
			worst = max(worst, rel)
			if rel > 1e-8 {
				t.Errorf("Survival(%v; 2, %v) = %.15g, want %.15g (rel %.2g)", q, df, up, want, rel)
			}
		}
	}
	t.Logf("worst survival relative difference %.2g", worst)
}

// TestStudentizedRangeProperties checks the edges, monotonicity in q and CDF + sf = 1.
func TestStudentizedRangeProperties(t *testing.T) {
	for _, c := range []struct {
		k  int
		df float64
	}{{2, 1}, {3, 7.5}, {10, 40}, {20, math.Inf(1)}, {50, 3}, {1000, math.Inf(1)}} {
		prev := -1.0
		for q := 0.0; q <= 12; q += 0.5 {
			cdf, err1 := StudentizedRangeCDF(q, c.k, c.df)
			sf, err2 := StudentizedRangeSurvival(q, c.k, c.df)
			if err1 != nil || err2 != nil {
				t.Fatal(err1, err2)
			}
			if cdf < prev || cdf < 0 || cdf > 1 || math.Abs(cdf+sf-1) > 1e-15 {
				t.Fatalf("k %d df %v q %v: cdf %v (prev %v), sf %v", c.k, c.df, q, cdf, prev, sf)
			}
			prev = cdf
		}
	}
	if c, _ := StudentizedRangeCDF(-1, 3, 10); c != 0 {
		t.Error("CDF(-1) != 0")
	}
	if s, _ := StudentizedRangeSurvival(0, 3, 10); s != 1 {
		t.Error("sf(0) != 1")
	}
	if c, _ := StudentizedRangeCDF(math.Inf(1), 3, 10); c != 1 {
		t.Error("CDF(+Inf) != 1")
	}
}

// TestStudentizedRangeErrors checks that bad arguments give errors, never panics.
func TestStudentizedRangeErrors(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		q  float64
		k  int
		df float64
	}{{1, 1, 10}, {1, 1001, 10}, {1, 3, 0.5}, {1, 3, nan}, {1, 3, -1}, {nan, 3, 10}} {
		_, e1 := StudentizedRangeCDF(c.q, c.k, c.df)
		_, e2 := StudentizedRangeSurvival(c.q, c.k, c.df)
		if e1 == nil || e2 == nil {
			t.Errorf("%+v: errors %v, %v", c, e1, e2)
		}
		if !math.IsNaN(c.q) {
			if _, e3 := StudentizedRangeQuantile(0.5, c.k, c.df); e3 == nil {
				t.Errorf("quantile %+v: no error", c)
			}
		}
	}
	for _, p := range []float64{0, 1, -0.5, 1.5, nan} {
		if _, err := StudentizedRangeQuantile(p, 3, 10); err == nil {
			t.Errorf("quantile p = %v: no error", p)
		}
	}
	if _, err := StudentizedRangeCDF(1, 3, 10); err != nil {
		t.Errorf("valid call: %v", err)
	}
}

// srangeBitsGrid evaluates CDF, Survival (and a few quantiles) on a fixed grid of about
// 200 values and returns the FNV-1a hash of their bit patterns.
func srangeBitsGrid(t testing.TB) (uint64, int) {
	h := fnv.New64a()
	n := 0
	var buf [8]byte
	put := func(x float64) {
		b := math.Float64bits(x)
		for i := range 8 {
			buf[i] = byte(b >> (8 * i))
		}
		h.Write(buf[:])
		n++
	}
	for _, df := range []float64{1, 2.5, 5, 10, 20, 60, 120, 1e4, math.Inf(1)} {
		for _, k := range []int{2, 3, 5, 10, 20} {
			for _, q := range []float64{0.7, 2.3, 4.1, 9.5} {
				lo, up := srangeTails(q, k, df)
				put(lo)
				put(up)
			}
		}
	}
	for _, p := range []float64{0.05, 0.95} {
		q, err := StudentizedRangeQuantile(p, 4, 12)
		if err != nil {
			t.Fatal(err)
		}
		put(q)
	}
	return h.Sum64(), n
}

// srangeBitsHash is srangeBitsGrid's hash recorded on linux/amd64 (GOAMD64=v1). The same
// test binary built with GOAMD64=v3 and for GOARCH=arm64 (run under qemu-aarch64-static)
// must give it too: that is the check that no fused multiply-add or assembly routine
// changed a bit.
const srangeBitsHash = 0xf1c0f656e1daa43a

// TestStudentizedRangeBits checks srangeBitsGrid's hash against the recorded constant.
func TestStudentizedRangeBits(t *testing.T) {
	got, n := srangeBitsGrid(t)
	if got != srangeBitsHash {
		t.Errorf("hash of %d values = %#x, recorded on amd64 %#x", n, got, uint64(srangeBitsHash))
	}
}

// BenchmarkStudentizedRange times one survival call (finite df, k ≤ 20) and one df = ∞
// call (the case DSCF and Nemenyi use once per pair).
func BenchmarkStudentizedRange(b *testing.B) {
	for _, c := range []struct {
		name string
		q    float64
		k    int
		df   float64
	}{
		{"k3-df10-q3.5", 3.5, 3, 10},
		{"k20-df2-q5", 5, 20, 2},
		{"k10-df120-q4", 4, 10, 120},
		{"k20-df20-q8", 8, 20, 20},
		{"k3-df1-q1e9", 1e9, 3, 1},
		{"k20-dfinf-q5", 5, 20, math.Inf(1)},
	} {
		b.Run(c.name, func(b *testing.B) {
			srangeInit()
			b.ReportAllocs()
			for range b.N {
				if _, err := StudentizedRangeSurvival(c.q, c.k, c.df); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func ExampleStudentizedRangeQuantile() {
	q, err := StudentizedRangeQuantile(0.95, 3, 10)
	if err != nil {
		panic(err)
	}
	p, _ := StudentizedRangeSurvival(q, 3, 10)
	fmt.Printf("q = %.3f, P(Q >= q) = %.4f\n", q, p)
	// Output: q = 3.877, P(Q >= q) = 0.0500
}

// TestStudentizedRangeLargeDf: above srangeDfInf the tails are those of df = ∞, which
// the finite-df integral at df = 1e15 agrees with (CDF within 1e-13, upper tail within
// the factor exp(q⁴/(16 df)) of the second-order expansion, plus 1e-11 for the
// quadratures); df up to MaxFloat64 returns at once instead of integrating panels of
// width 0.
func TestStudentizedRangeLargeDf(t *testing.T) {
	for _, k := range []int{2, 5, 20, 100} {
		for _, q := range []float64{0.5, 3, 6, 12, 20} {
			lo, up := srangeTails(q, k, 1e15)
			li, ui := srangeTails(q, k, math.Inf(1))
			bound := math.Expm1(q*q*q*q/(16*1e15)) + 1e-11
			if math.Abs(lo-li) > 1e-13 || math.Abs(up-ui) > bound*ui {
				t.Errorf("k = %d, q = %v: df = 1e15 gives %v, %v; df = ∞ %v, %v", k, q, lo, up, li, ui)
			}
			for _, df := range []float64{1.0000000000000002e15, 1e50, 1e300, math.MaxFloat64} {
				if l, u := srangeTails(q, k, df); l != li || u != ui {
					t.Errorf("k = %d, q = %v, df = %v: %v, %v; want the df = ∞ values %v, %v", k, q, df, l, u, li, ui)
				}
			}
		}
	}
}

// TestStudentizedRangeClosedForms: for k above srangeLoopMaxK, rangeTails takes the
// powers from closed forms; they agree with the recurrence used for smaller k to 1e-12
// relative (8e-14 seen) on a grid of x for k from 21 to 1000.
func TestStudentizedRangeClosedForms(t *testing.T) {
	tab := srangeInit()
	for _, k := range []int{21, 65, 100, 300, 1000} {
		for x := 0.05; x < rangeXMax; x *= 1.25 {
			l1, u1 := rangeTailsWith(tab, x, k, true)
			l0, u0 := rangeTailsWith(tab, x, k, false)
			for _, c := range [][2]float64{{l1, l0}, {u1, u0}} {
				if c[1] > 1e-290 && math.Abs(c[0]-c[1]) > 1e-12*c[1] {
					t.Errorf("k = %d, x = %v: closed forms %v, %v; recurrence %v, %v", k, x, l1, u1, l0, u0)
				}
			}
		}
	}
}

// srangeLargeKBitsHash is the FNV-1a hash of the tails below (closed forms, k > 64),
// recorded on linux/amd64 (GOAMD64=v1); bench/arch-determinism.sh requires it on every
// build.
const srangeLargeKBitsHash = 0x784a1bd71cf9f892

// TestStudentizedRangeLargeKBits hashes the bits of the tails for k above srangeLoopMaxK
// (finite and infinite df), where rangeTails uses its closed forms.
func TestStudentizedRangeLargeKBits(t *testing.T) {
	h := fnv.New64a()
	var buf [8]byte
	for _, df := range []float64{1, 7.5, 120, math.Inf(1)} {
		for _, k := range []int{65, 200, 1000} {
			for _, q := range []float64{2.5, 6.1, 11} {
				lo, up := srangeTails(q, k, df)
				for _, x := range []float64{lo, up} {
					b := math.Float64bits(x)
					for i := range 8 {
						buf[i] = byte(b >> (8 * i))
					}
					h.Write(buf[:])
				}
			}
		}
	}
	if got := h.Sum64(); got != srangeLargeKBitsHash {
		t.Errorf("hash %#x, recorded on amd64 %#x", got, uint64(srangeLargeKBitsHash))
	}
}
