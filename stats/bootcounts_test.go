package stats

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"rankplan/stats/stream"
)

// binomialCount draws from Binomial(n, a/b) as the stream specification (§6) says.
func binomialCount(s *stream.Stream, n, a, b int64) int64 {
	bp := newBinomialParams(a, b)
	return bp.draw(s, n)
}

// schemeName is the plan's name of a bootstrap scheme, for messages.
func schemeName(s BootstrapScheme) string {
	return map[BootstrapScheme]string{BootstrapIndices: "indices-v1", BootstrapCounts: "counts-v2"}[s]
}

// binomialPMF returns the Binomial(n, p) probabilities of lo..hi, computed in the test
// with math.Lgamma (the exact formula C(n, y) p^y q^(n−y); only the comparison uses it).
func binomialPMF(n int64, p float64, lo, hi int64) []float64 {
	out := make([]float64, hi-lo+1)
	ln, lp, lq := lgammaF(float64(n)+1), math.Log(p), math.Log1p(-p)
	for y := lo; y <= hi; y++ {
		fy := float64(y)
		out[y-lo] = math.Exp(ln - lgammaF(fy+1) - lgammaF(float64(n)-fy+1) + fy*lp + (float64(n)-fy)*lq)
	}
	return out
}

func lgammaF(x float64) float64 { v, _ := math.Lgamma(x); return v }

// chiSquareFit returns Pearson's X² of observed counts against expected ones and its
// degrees of freedom, cells pooled from the left (and the last pooled cell into the one
// before) until each expects at least 5 (common practice).
func chiSquareFit(observed []int64, expected []float64) (x2 float64, df int) {
	var cells [][2]float64
	var o, e float64
	for i := range observed {
		o += float64(observed[i])
		e += expected[i]
		if e >= 5 {
			cells = append(cells, [2]float64{o, e})
			o, e = 0, 0
		}
	}
	if len(cells) == 0 {
		return 0, 0
	}
	cells[len(cells)-1][0] += o
	cells[len(cells)-1][1] += e
	for _, c := range cells {
		x2 += (c[0] - c[1]) * (c[0] - c[1]) / c[1]
	}
	return x2, len(cells) - 1
}

// TestBinomialCount checks the binomial sampler of the stream specification (§6) against
// the exact binomial probabilities: a chi-square goodness-of-fit test of 200,000 draws at
// fixed seeds (the test fails when its p-value is below 1e-4), and the sample mean and
// variance against the exact moments np and npq (within 5 standard errors; the variance of
// the sample variance from the binomial's fourth central moment npq(1 + 3(n − 2)pq),
// common practice). The designs reach both algorithms and every region of BTPE: inversion
// at small means, the symmetric case p > 1/2, BTPE near the mode (k <= 20) and, with
// npq in the hundreds of thousands, its squeeze and Stirling bound.
func TestBinomialCount(t *testing.T) {
	const draws = 200_000
	for _, tc := range []struct {
		n, a, b int64
		algo    string
	}{
		{1, 1, 2, "inversion"},
		{10, 1, 4, "inversion"},
		{1000, 3, 1000, "inversion"},
		{59, 1, 2, "inversion"},
		{60, 1, 2, "btpe"},
		{100, 1, 2, "btpe"},
		{100, 7, 10, "btpe (p > 1/2)"},
		{10, 9, 10, "inversion (p > 1/2)"},
		{5000, 17, 1000, "btpe"},
		{10000, 4, 1000, "btpe (small p)"},
		{1_000_000, 3, 7, "btpe (squeeze)"},
		{10_000_000, 1, 10, "btpe (squeeze)"},
	} {
		t.Run(fmt.Sprintf("n=%d,p=%d/%d", tc.n, tc.a, tc.b), func(t *testing.T) {
			p := float64(tc.a) / float64(tc.b)
			s := stream.New(stream.Key("binomial-test", 1, fmt.Sprint(tc.n, tc.a, tc.b), 0))
			counts := map[int64]int64{}
			var sum, sum2 float64
			for range draws {
				y := binomialCount(s, tc.n, tc.a, tc.b)
				if y < 0 || y > tc.n {
					t.Fatalf("draw %d outside [0, %d]", y, tc.n)
				}
				counts[y]++
				sum += float64(y)
				sum2 += float64(y) * float64(y)
			}
			n, q := float64(tc.n), 1-p
			mean, variance := sum/draws, (sum2-sum*sum/draws)/(draws-1)
			npq := n * p * q
			if se := math.Sqrt(npq / draws); math.Abs(mean-n*p) > 5*se {
				t.Errorf("mean %v, want %v within 5 × %v", mean, n*p, se)
			}
			// Var s² = (μ₄ − σ⁴(d − 3)/(d − 1))/d for d draws (common practice).
			mu4 := npq * (1 + 3*(n-2)*p*q)
			if se := math.Sqrt((mu4 - npq*npq*(draws-3)/(draws-1)) / draws); math.Abs(variance-npq) > 5*se {
				t.Errorf("variance %v, want %v within 5 × %v", variance, npq, se)
			}
			// Goodness of fit over mean ± 12 standard deviations, which hold all but
			// about 1e-20 of the mass (Chernoff), or the whole range.
			lo := max(0, int64(math.Floor(n*p-12*math.Sqrt(npq)-12)))
			hi := min(tc.n, int64(math.Ceil(n*p+12*math.Sqrt(npq)+12)))
			pmf := binomialPMF(tc.n, p, lo, hi)
			obs := make([]int64, hi-lo+1)
			exp := make([]float64, hi-lo+1)
			for y := lo; y <= hi; y++ {
				obs[y-lo], exp[y-lo] = counts[y], pmf[y-lo]*draws
			}
			for y := range counts {
				if y < lo || y > hi {
					t.Errorf("draw %d lies more than 12 standard deviations from the mean", y)
				}
			}
			x2, df := chiSquareFit(obs, exp)
			if df == 0 {
				return
			}
			pv, _, err := ChiSquareUpperTail(x2, df)
			if err != nil {
				t.Fatal(err)
			}
			if pv < 1e-4 {
				t.Errorf("chi-square %v on %d df, p = %g", x2, df, pv)
			}
		})
	}
}

// TestBinomialFitDetects shows that the goodness-of-fit check of TestBinomialCount can
// fail: draws from Binomial(1000, 0.3) compared with the probabilities of
// Binomial(1000, 0.31), a shift of under 1.4 standard deviations, give a p-value far below
// its threshold.
func TestBinomialFitDetects(t *testing.T) {
	s := stream.New(stream.Key("binomial-test", 2, "detect", 0))
	pmf := binomialPMF(1000, 0.31, 0, 1000)
	obs := make([]int64, 1001)
	exp := make([]float64, 1001)
	for range 200_000 {
		obs[binomialCount(s, 1000, 3, 10)]++
	}
	for y := range exp {
		exp[y] = pmf[y] * 200_000
	}
	x2, df := chiSquareFit(obs, exp)
	if pv, _, _ := ChiSquareUpperTail(x2, df); !(pv < 1e-10) {
		t.Errorf("a wrong p passed: chi-square %v on %d df, p = %g", x2, df, pv)
	}
}

// TestBinomialCountEdges: the cases without a draw, and inputs at the extremes of a group
// size, each within [0, n].
func TestBinomialCountEdges(t *testing.T) {
	s := stream.New(stream.Key("binomial-test", 3, "edges", 0))
	for _, tc := range []struct{ n, a, b, want int64 }{
		{0, 1, 2, 0}, {5, 0, 3, 0}, {5, 3, 3, 5}, {math.MaxInt32, 0, 1, 0}, {math.MaxInt32, 1, 1, math.MaxInt32},
	} {
		if got := binomialCount(s, tc.n, tc.a, tc.b); got != tc.want {
			t.Errorf("binomialCount(%d, %d, %d) = %d, want %d", tc.n, tc.a, tc.b, got, tc.want)
		}
	}
	for _, tc := range []struct{ n, a, b int64 }{
		{math.MaxInt32, 1, math.MaxInt32}, {math.MaxInt32, math.MaxInt32 - 1, math.MaxInt32},
		{math.MaxInt32, 1, 2}, {1, 1, math.MaxInt32}, {2, 1, 3}, {29, 1, 1},
	} {
		for range 1000 {
			if y := binomialCount(s, tc.n, tc.a, tc.b); y < 0 || y > tc.n {
				t.Fatalf("binomialCount(%d, %d, %d) = %d", tc.n, tc.a, tc.b, y)
			}
		}
	}
}

// TestMultinomialCounts checks one group's counts under the counts scheme against the
// multinomial (n; t_l/n): each resample's counts sum to n; over 20,000 resamples the
// pooled count of each run, a Multinomial(20000·n, t_l/n) count, fits its expectation
// (chi-square, p >= 1e-4), and each run's count has mean t_l and variance n p_l (1 − p_l)
// within 5 standard errors. The designs mix short and long runs (CountsShortRun), hold
// one long run and two short ones, and short runs alone (indices alone).
func TestMultinomialCounts(t *testing.T) {
	const resamples = 20_000
	runs := func(lengths ...int) []float64 {
		var v []float64
		for l, t := range lengths {
			for range t {
				v = append(v, float64(l))
			}
		}
		return v
	}
	for _, tc := range []struct {
		name    string
		values  []float64
		byIndex bool
	}{
		{"binomials", runs(1, 3, 40, 200, 7, 1, 90, 2, 400, 5), false},
		{"binomials, one long run", runs(1000, 1, 1), false},
		{"indices", runs(1, 3, 4, 2, 7, 1, 6, 2, 4, 5), true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			other := []float64{0.5, 1.5, 2.5}
			r := bootRanking(t, [][]float64{tc.values, other})
			bi, err := newBootIndex(r)
			if err != nil {
				t.Fatal(err)
			}
			bi.prepareCells()
			g := bi.runs[0]
			m, n := len(g.blocks), int64(len(tc.values))
			if got := len(g.cells.long) == 0; got != tc.byIndex {
				t.Fatalf("drawn by indices alone: %v, want %v (long runs %v)", got, tc.byIndex, g.cells.long)
			}
			w := newBootWorker(r, bi, true)
			s := stream.New(stream.Key(CountsPurpose, 4, tc.name, 0))
			pooled := make([]int64, m)
			sum, sum2 := make([]float64, m), make([]float64, m)
			for range resamples {
				if !w.drawCounts(s) {
					t.Fatal("stopped")
				}
				var total int64
				for l, c := range w.runCount[0] {
					pooled[l] += int64(c)
					sum[l] += float64(c)
					sum2[l] += float64(c) * float64(c)
					total += int64(c)
				}
				if total != n {
					t.Fatalf("counts %v sum to %d, want %d", w.runCount[0], total, n)
				}
			}
			exp := make([]float64, m)
			for l := range m {
				tl := float64(g.bounds[l+1] - g.bounds[l])
				exp[l] = tl * resamples
				p := tl / float64(n)
				mean := sum[l] / resamples
				variance := (sum2[l] - sum[l]*sum[l]/resamples) / (resamples - 1)
				v := float64(n) * p * (1 - p)
				if math.Abs(mean-tl) > 5*math.Sqrt(v/resamples) {
					t.Errorf("run %d (t = %v): mean count %v", l, tl, mean)
				}
				mu4 := v * (1 + 3*(float64(n)-2)*p*(1-p))
				if math.Abs(variance-v) > 5*math.Sqrt((mu4-v*v)/resamples) {
					t.Errorf("run %d (t = %v): variance %v, want %v", l, tl, variance, v)
				}
			}
			x2, df := chiSquareFit(pooled, exp)
			if pv, _, _ := ChiSquareUpperTail(x2, df); pv < 1e-4 {
				t.Errorf("pooled counts %v: chi-square %v on %d df, p = %g", pooled, x2, df, pv)
			}
		})
	}
}

// TestBootstrapCountsWorkers: the counts scheme gives the same interval, bit for bit, on
// 1, 2 and 8 workers, with blocks cut short at the end, and another interval under another
// seed; its draws are not those of the indices scheme.
func TestBootstrapCountsWorkers(t *testing.T) {
	groups := make([][]float64, 3)
	for i := range groups {
		for j := range 400 + 50*i {
			groups[i] = append(groups[i], float64((j*7919+i*31)%23+i))
		}
	}
	r := bootRanking(t, groups)
	opt := BootstrapOptions{Seed: 5, AnalysisID: "w", Resamples: 5*CountsBlockSize + 3, Level: 0.9, Scheme: BootstrapCounts}
	var first Bootstrap
	for i, workers := range []int{1, 2, 8} {
		opt.Workers = workers
		got, err := KruskalWallisBootstrap(context.Background(), r, opt)
		if err != nil {
			t.Fatal(err)
		}
		if i == 0 {
			first = got
		} else if got != first {
			t.Errorf("%d workers: %+v, 1 worker: %+v", workers, got, first)
		}
	}
	opt.Seed = 6
	if other, _ := KruskalWallisBootstrap(context.Background(), r, opt); other == first {
		t.Errorf("another seed gave the same interval %+v", other)
	}
	opt.Seed, opt.Scheme = 5, BootstrapIndices
	if old, _ := KruskalWallisBootstrap(context.Background(), r, opt); old == first {
		t.Errorf("the indices scheme gave the same interval %+v", old)
	}
	opt.Scheme = BootstrapScheme(7)
	if _, err := KruskalWallisBootstrap(context.Background(), r, opt); err == nil {
		t.Error("an unknown scheme gave no error")
	}
}

// TestBootstrapCountsReference compares the counts scheme's percentile interval of H* with
// a plain bootstrap in Python (stats/testdata/bootstrap/kw_bootstrap_plain.py: numpy's
// generator, scipy 1.10.1 kruskal, numpy percentile; 10 independent bootstraps of 2000
// resamples per design). A bootstrap of the same size from another stream differs from
// the mean of those by sampling alone, with standard deviation about sd·√(1 + 1/10), sd
// the spread of the ten; each end must lie within 5 such deviations (with sd estimated
// from ten values, a chance of about 1e-3 of a false alarm per end). The indices scheme
// is held to the same check. The designs reach both ways of drawing a run's count.
func TestBootstrapCountsReference(t *testing.T) {
	var ref struct {
		Resamples int64
		Level     float64
		Reps      int
		Designs   []struct {
			Name      string
			Groups    [][]float64
			HStar     float64 `json:"h_star"`
			HLowMean  float64 `json:"h_low_mean"`
			HLowSD    float64 `json:"h_low_sd"`
			HHighMean float64 `json:"h_high_mean"`
			HHighSD   float64 `json:"h_high_sd"`
		}
	}
	readJSON(t, "testdata/bootstrap/kw_bootstrap_plain.json", &ref)
	if len(ref.Designs) != 3 || ref.Resamples != 2000 {
		t.Fatalf("reference file: %d designs, %d resamples", len(ref.Designs), ref.Resamples)
	}
	byIndex, byBinomials := 0, 0
	for _, d := range ref.Designs {
		r := bootRanking(t, d.Groups)
		bi, err := newBootIndex(r)
		if err != nil {
			t.Fatal(err)
		}
		bi.prepareCells()
		for _, g := range bi.runs {
			byIndex += len(g.cells.short.blocks)
			byBinomials += len(g.cells.long)
		}
		kw, err := KruskalWallisTest(r)
		if err != nil || !closeRel(kw.H, d.HStar, 1e-12) {
			t.Fatalf("%s: H* %v %v, scipy %v", d.Name, kw.H, err, d.HStar)
		}
		for _, scheme := range []BootstrapScheme{BootstrapCounts, BootstrapIndices} {
			got, err := KruskalWallisBootstrap(context.Background(), r, BootstrapOptions{Seed: 20261204, AnalysisID: d.Name,
				Resamples: ref.Resamples, Level: ref.Level, Scheme: scheme})
			if err != nil {
				t.Fatal(err)
			}
			inflate := math.Sqrt(1 + 1/float64(ref.Reps))
			for _, e := range []struct {
				end           string
				got, mean, sd float64
			}{{"low", got.HLow, d.HLowMean, d.HLowSD}, {"high", got.HHigh, d.HHighMean, d.HHighSD}} {
				if z := (e.got - e.mean) / (e.sd * inflate); !(math.Abs(z) <= 5) {
					t.Errorf("%s, %s: %s end %v, plain bootstrap %v ± %v (z = %.2f)", d.Name, schemeName(scheme), e.end, e.got, e.mean, e.sd, z)
				} else {
					t.Logf("%s, %s: %s end %v, plain bootstrap %v ± %v (z = %.2f)", d.Name, schemeName(scheme), e.end, e.got, e.mean, e.sd, z)
				}
			}
		}
	}
	if byIndex == 0 || byBinomials == 0 {
		t.Errorf("short runs (drawn by indices): %d, long runs (by binomials): %d; want both", byIndex, byBinomials)
	}
}

// binomialBitsWant is the SHA-256 of what TestBinomialCountBits draws, recorded on
// linux/amd64. bench/arch-determinism.sh runs it in GOAMD64=v1 and v3 builds and in an
// arm64 build under qemu. It pins the counts scheme: a change of the sampler, the
// multinomial step or their stream use changes it (the test prints the new value), and
// needs a new scheme name, never an edit of counts-v2.
const binomialBitsWant = "a47a6996451ec864d893a66c11a4c03cfadc156e87ad9b09cbf7df9cf3f778cf"

// TestBinomialCountBits hashes binomial counts drawn on a seeded grid of n and p = a/b
// reaching inversion and every region of BTPE, and the bits of counts-scheme intervals of
// H* on tied data drawn both by binomials and by indices.
func TestBinomialCountBits(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	h := sha256.New()
	put := func(x uint64) {
		var b [8]byte
		binary.BigEndian.PutUint64(b[:], x)
		h.Write(b[:])
	}
	s := stream.New(stream.Key(CountsPurpose, 1, "bits", 0))
	for range 3000 {
		n := int64(1) << rng.IntN(31)
		n += rng.Int64N(n)
		b := 1 + rng.Int64N(1<<rng.IntN(31))
		a := rng.Int64N(b + 1)
		put(uint64(binomialCount(s, n, a, b)))
	}
	groups := make([][]float64, 5)
	distinct := []int{100, 32, 52, 72} // runs of 2 in the first group (indices), longer in the others
	for i := range 4 {
		for j := range 200 + 300*i {
			groups[i] = append(groups[i], float64((j*7919+i*31)%distinct[i]))
		}
	}
	for j := range 60 { // short and long runs mixed: 1, 2, ..., 10 times the value j
		for range j%10 + 1 {
			groups[4] = append(groups[4], float64(j))
		}
	}
	r := bootRanking(t, groups)
	for _, level := range []float64{0.5, 0.95} {
		got, err := KruskalWallisBootstrap(context.Background(), r, BootstrapOptions{Seed: 3, AnalysisID: "bits", Resamples: 300, Level: level, Scheme: BootstrapCounts})
		if err != nil {
			t.Fatal(err)
		}
		put(math.Float64bits(got.HLow))
		put(math.Float64bits(got.HHigh))
		put(uint64(got.Degenerate))
	}
	if got := hex.EncodeToString(h.Sum(nil)); got != binomialBitsWant {
		t.Errorf("binomial counts hash %s, recorded %s", got, binomialBitsWant)
	}
}

// TestDrawCountsStops checks the context check within one resample of the counts scheme:
// a group drawn by conditional binomials over more than cancelEvery long runs gives the
// resample up (drawCounts returns false, and resampleCounts sets stopped) once its
// Done channel is closed; with a channel never closed the counts are those drawn without
// one.
func TestDrawCountsStops(t *testing.T) {
	const m = cancelEvery + 10
	groups := [][]float64{make([]float64, 0, CountsShortRun*m), {1, 2, 3}}
	for i := range CountsShortRun * m {
		groups[0] = append(groups[0], float64(i/CountsShortRun)) // m long runs: drawn by binomials
	}
	r := mustRank(t, groups)
	bi, err := newBootIndex(r)
	if err != nil {
		t.Fatal(err)
	}
	bi.prepareCells()
	if len(bi.runs[0].cells.long) != m {
		t.Fatal("the group is not drawn by binomials")
	}
	key := stream.Key(CountsPurpose, 3, "a", 0)
	closed := make(chan struct{})
	close(closed)
	w := newBootWorker(r, bi, true)
	w.done = closed
	if w.resampleCounts(stream.New(key)); !w.stopped {
		t.Error("closed channel: the resample was not given up")
	}
	a, b := newBootWorker(r, bi, true), newBootWorker(r, bi, true)
	b.done = make(chan struct{})
	ha, da := a.resampleCounts(stream.New(key))
	hb, db := b.resampleCounts(stream.New(key))
	if a.stopped || b.stopped || ha != hb || da != db {
		t.Errorf("open channel: H* %v (stopped %v), without one %v (stopped %v)", hb, b.stopped, ha, a.stopped)
	}
}
