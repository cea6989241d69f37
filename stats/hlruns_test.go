package stats

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"syscall"
	"testing"
)

// hlValueKinds draw the values of the equivalence grid (fixed seeds; the data are invented):
// heavy ties, values rounded to 3 decimals of a skewed distribution, untied normals, signed
// zeros among few values, subnormals, values whose differences overflow, large values 1
// apart (whose differences round), neighbouring doubles, and a mix of all of them.
var hlValueKinds = []struct {
	name string
	draw func(r *rand.Rand) float64
}{
	{"small integers", func(r *rand.Rand) float64 { return float64(r.IntN(6)) }},
	{"3 decimals skewed", func(r *rand.Rand) float64 { return math.Round(math.Exp(r.NormFloat64())*1000) / 1000 }},
	{"normal", func(r *rand.Rand) float64 { return r.NormFloat64() }},
	{"signed zeros", func(r *rand.Rand) float64 {
		return []float64{math.Copysign(0, -1), 0, 1, -1, 0.5, math.Copysign(0, -1)}[r.IntN(6)]
	}},
	{"subnormal", func(r *rand.Rand) float64 {
		return []float64{5e-324, -5e-324, 1e-310, -1e-310, 0, math.Copysign(0, -1), 1e-300, 2.5e-308}[r.IntN(8)]
	}},
	{"huge", func(r *rand.Rand) float64 {
		return []float64{1e308, -1e308, math.MaxFloat64, -math.MaxFloat64, 1e300, -1e300, 1, 0}[r.IntN(8)]
	}},
	{"large, 1 apart", func(r *rand.Rand) float64 { return 1e16 + float64(r.IntN(40)) }},
	{"neighbouring doubles", func(r *rand.Rand) float64 { return math.Float64frombits(math.Float64bits(1) + uint64(r.IntN(9)) - 4) }},
	{"mixed", nil}, // one of the kinds above for each value, see init
}

func init() {
	last := len(hlValueKinds) - 1
	hlValueKinds[last].draw = func(r *rand.Rand) float64 { return hlValueKinds[r.IntN(last)].draw(r) }
}

// oldDomain reports whether the element-wise oracle's bisection is defined for the pair:
// the range of the differences, max − min, is a finite float64. Outside it the oracle's
// midpoint overflows and its answer is not the order statistic (see
// TestRunsOverflowingDifferences); the run-based selection has no such limit.
func oldDomain(x, y []float64) bool {
	lo := slices.Min(x) - slices.Max(y)
	hi := slices.Max(x) - slices.Min(y)
	r := hi - lo
	return !math.IsInf(lo, 0) && !math.IsInf(hi, 0) && !math.IsInf(r, 0)
}

func sameBits(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

func sameHL(a, b HodgesLehmann) bool {
	return sameBits(a.Shift, b.Shift) && sameBits(a.Low, b.Low) && sameBits(a.High, b.High) && a.C == b.C &&
		sameBits(a.Coverage, b.Coverage) && a.ExactIndex == b.ExactIndex && a.Attainable == b.Attainable && a.Tied == b.Tied
}

// hlWorkConfigs are the ways the selection is driven in the tests: as in use (small pairs are
// gathered at once), never gathering (every step of the selection runs), gathering after a
// few steps, and bisection on the value alone.
var hlWorkConfigs = []struct {
	name string
	work func() *PairWork
}{
	{"default", func() *PairWork { return &PairWork{} }},
	{"no gathering", func() *PairWork { return &PairWork{gatherAt: -1} }},
	{"gather at 8", func() *PairWork { return &PairWork{gatherAt: 8} }},
	{"bisection", func() *PairWork { return &PairWork{gatherAt: -1, bisectOnly: true} }},
}

// TestRunsMatchElementwise: on a seeded grid of sizes and kinds of values, the run-based
// effect sizes, Hodges-Lehmann estimate and interval are bit for bit those of the
// element-wise implementation they replaced (hlruns_oracle_test.go), and on small pairs
// every order statistic is the one of all m·n differences sorted (brute force), whichever
// way the selection is driven. With RANKPLAN_EXHAUSTIVE=1 the grid is five times larger
// and every order statistic of the small pairs is checked.
func TestRunsMatchElementwise(t *testing.T) {
	trials := 40
	if exhaustive() {
		trials = 200
	}
	levels := []float64{0.5, 0.9, 0.95, 0.99}
	shared := &PairWork{} // one work space for every pair, as a family of pairs uses it
	for ki, kind := range hlValueKinds {
		rng := rand.New(rand.NewPCG(15, uint64(ki)))
		for trial := range trials {
			m, n := 1+rng.IntN(25), 1+rng.IntN(25)
			switch trial % 20 {
			case 7:
				m, n = 30+rng.IntN(70), 30+rng.IntN(70) // the exact Moses index, exact data paths
			case 13:
				m, n = 1000+rng.IntN(1500), 800+rng.IntN(1500) // its normal approximation
			}
			x, y := make([]float64, m), make([]float64, n)
			for i := range x {
				x[i] = kind.draw(rng)
			}
			shift := float64(rng.IntN(3)) - 1
			for j := range y {
				y[j] = kind.draw(rng)
				if trial%3 == 0 {
					y[j] = float64(y[j] + shift)
				}
			}
			name := fmt.Sprintf("%s, trial %d (m %d, n %d)", kind.name, trial, m, n)
			e, err := PairEffectSizes(x, y)
			olde, olderr := oldPairEffectSizes(x, y)
			if err != nil || olderr != nil || e != olde {
				t.Fatalf("%s: effect sizes %+v %v, element-wise %+v %v", name, e, err, olde, olderr)
			}
			xr, yr, err := sortedPair(x, y)
			if err != nil {
				t.Fatal(err)
			}
			if e2, err := shared.EffectSizes(xr, yr); err != nil || e2 != e {
				t.Fatalf("%s: shared work: %+v %v, want %+v", name, e2, err, e)
			}
			level := levels[trial%len(levels)]
			hl, err := HodgesLehmannShift(x, y, level)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			if hl2, err := shared.HodgesLehmann(xr, yr, level); err != nil || !sameHL(hl2, hl) {
				t.Fatalf("%s: shared work: %+v %v, want %+v", name, hl2, err, hl)
			}
			inDomain := oldDomain(x, y)
			if inDomain {
				old, err := oldHodgesLehmannShift(x, y, level)
				if err != nil || !sameHL(hl, old) {
					t.Fatalf("%s, level %v: %+v, element-wise %+v %v", name, level, hl, old, err)
				}
			}
			if m*n > 700 {
				continue
			}
			d := allDifferences(x, y)
			mn := int64(m * n)
			if !sameValue(hl.Low, d[hl.C]) || !sameValue(hl.High, d[mn-hl.C-1]) {
				t.Fatalf("%s: interval [%v, %v], sorted differences [%v, %v]", name, hl.Low, hl.High, d[hl.C], d[mn-hl.C-1])
			}
			for _, cfg := range hlWorkConfigs {
				w := cfg.work()
				if hl2, err := w.HodgesLehmann(xr, yr, level); err != nil || !sameHL(hl2, hl) {
					t.Fatalf("%s, %s: %+v %v, want %+v", name, cfg.name, hl2, err, hl)
				}
				dm, err := w.matrix(xr, yr)
				if err != nil {
					t.Fatal(err)
				}
				xs, ys := slices.Sorted(slices.Values(x)), slices.Sorted(slices.Values(y))
				for _, k := range orderStatistics(mn, rng) {
					r, err := w.kth(&dm, k)
					if err != nil || !sameValue(r.v, d[k-1]) {
						t.Fatalf("%s, %s, k = %d: %v %v, sorted differences %v", name, cfg.name, k, r.v, err, d[k-1])
					}
					if want := int64(countSorted(d, r.v)); r.atMost != want {
						t.Fatalf("%s, %s, k = %d: %d differences <= %v, want %d", name, cfg.name, k, r.atMost, r.v, want)
					}
					checkFirst(t, &dm, r)
					var next float64
					if r.atMost < mn {
						if next = dm.nextAbove(r); !sameValue(next, d[r.atMost]) {
							t.Fatalf("%s, %s, k = %d: next above %v is %v, want %v", name, cfg.name, k, r.v, next, d[r.atMost])
						}
					}
					if inDomain {
						if old := oldKthDifference(xs, ys, k); !sameBits(r.v, old) {
							t.Fatalf("%s, %s, k = %d: %v, element-wise %v", name, cfg.name, k, r.v, old)
						}
						if old := oldKthDifference(xs, ys, r.atMost+1); r.atMost < mn && !sameBits(next, old) {
							t.Fatalf("%s, %s, k = %d: next above %v, element-wise %v", name, cfg.name, k, next, old)
						}
					}
				}
			}
		}
	}
}

// checkFirst checks r.first: in each row the first column whose difference is <= r.v.
func checkFirst(t *testing.T, d *diffMatrix, r kthResult) {
	t.Helper()
	for a, xa := range d.xv {
		p := int(r.first[a])
		if p > len(d.yv) || (p < len(d.yv) && !(xa-d.yv[p] <= r.v)) || (p > 0 && !(xa-d.yv[p-1] > r.v)) {
			t.Fatalf("row %d: first column %d at or below %v is wrong", a, p, r.v)
		}
	}
}

// orderStatistics are the k to check among mn differences: every one up to 120 differences
// or with RANKPLAN_EXHAUSTIVE=1, else both ends, the middle and 40 drawn at random.
func orderStatistics(mn int64, rng *rand.Rand) []int64 {
	var ks []int64
	if mn <= 120 || exhaustive() {
		for k := int64(1); k <= mn; k++ {
			ks = append(ks, k)
		}
		return ks
	}
	ks = append(ks, 1, 2, mn/2, mn/2+1, mn-1, mn)
	for range 40 {
		ks = append(ks, 1+rng.Int64N(mn))
	}
	return ks
}

// sameValue compares order statistics by value: −0 and +0 are the same value (their bits
// are checked against the element-wise oracle).
func sameValue(a, b float64) bool { return a == b }

// countSorted is #{d_i <= v} in the ascending d.
func countSorted(d []float64, v float64) int {
	i := 0
	for i < len(d) && d[i] <= v {
		i++
	}
	return i
}

// TestRunsSignedZero: a zero difference is −0 only for x_i = −0 and y_j = +0; which one the
// order statistic is follows the element-wise definition (the first x, in sorted order, of
// the smallest common value, less the last y equal to it). Cases worked by hand, each also
// checked against the oracle.
func TestRunsSignedZero(t *testing.T) {
	negz := math.Copysign(0, -1)
	for _, tc := range []struct {
		x, y  []float64
		k     int64
		wantN bool // the k-th difference is −0
	}{
		{[]float64{negz}, []float64{0}, 1, true},
		{[]float64{0}, []float64{negz}, 1, false},
		{[]float64{negz}, []float64{negz}, 1, false},
		{[]float64{negz, 1}, []float64{0, 5}, 3, true},     // differences −5, −4, −0, 1
		{[]float64{-1, negz}, []float64{-1, 0}, 3, false},  // −1 − (−1) = +0 decides: the smallest common value is −1
		{[]float64{negz, 2}, []float64{negz, 0}, 1, true},  // the last zero of y, +0, decides: −0 − (+0)
		{[]float64{negz, 2}, []float64{0, negz}, 1, false}, // the last zero of y, −0, decides: −0 − (−0)
	} {
		got, err := HodgesLehmannShift(tc.x, tc.y, 0.5)
		if err != nil {
			t.Fatal(err)
		}
		xr, yr, _ := sortedPair(tc.x, tc.y)
		var w PairWork
		dm, _ := w.matrix(xr, yr)
		r, err := w.kth(&dm, tc.k)
		v := r.v
		xs, ys := slices.Sorted(slices.Values(tc.x)), slices.Sorted(slices.Values(tc.y))
		old := oldKthDifference(xs, ys, tc.k)
		if err != nil || v != 0 || math.Signbit(v) != tc.wantN || !sameBits(v, old) {
			t.Errorf("%v vs %v, k = %d: %v (sign %v) %v, element-wise %v, want sign %v", tc.x, tc.y, tc.k, v, math.Signbit(v), err, old, tc.wantN)
		}
		old2, _ := oldHodgesLehmannShift(tc.x, tc.y, 0.5)
		if !sameHL(got, old2) {
			t.Errorf("%v vs %v: %+v, element-wise %+v", tc.x, tc.y, got, old2)
		}
	}
}

// TestRunsOverflowingDifferences: when the range of the differences exceeds MaxFloat64 the
// element-wise bisection's midpoint overflowed and it returned the smallest difference
// above the minimum, whatever k; the run-based selection returns the order statistic of
// the differences as computed (some of them ±Inf). The brute force is all m·n differences
// sorted.
func TestRunsOverflowingDifferences(t *testing.T) {
	for _, tc := range []struct{ x, y []float64 }{
		{[]float64{-1e308, 0, 1e308}, []float64{0}},
		{[]float64{-1e308, -1, 1, 1e308}, []float64{-1, 0, 1}},
		{[]float64{math.MaxFloat64, 1}, []float64{-math.MaxFloat64, 0, 2}},
		{[]float64{-math.MaxFloat64, 3}, []float64{math.MaxFloat64, 1, 2}},
	} {
		d := allDifferences(tc.x, tc.y)
		xr, yr, err := sortedPair(tc.x, tc.y)
		if err != nil {
			t.Fatal(err)
		}
		differs := false
		xs, ys := slices.Sorted(slices.Values(tc.x)), slices.Sorted(slices.Values(tc.y))
		for _, cfg := range hlWorkConfigs {
			w := cfg.work()
			dm, _ := w.matrix(xr, yr)
			for k := int64(1); k <= int64(len(d)); k++ {
				r, err := w.kth(&dm, k)
				if got := r.v; err != nil || got != d[k-1] {
					t.Errorf("%v vs %v, %s, k = %d: %v %v, want %v", tc.x, tc.y, cfg.name, k, r.v, err, d[k-1])
				}
				differs = differs || oldKthDifference(xs, ys, k) != d[k-1]
			}
		}
		if !differs {
			t.Errorf("%v vs %v: the element-wise selection was right everywhere; the case does not show its overflow", tc.x, tc.y)
		}
	}
}

// TestSortedRunsFromRanking: the runner's path, runs built once per group from a Ranking's
// sorted groups and one work space for all pairs, gives what the element-wise functions
// gave on the same sorted groups (which is what the runner passed them).
func TestSortedRunsFromRanking(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 99))
	const k, rows = 4, 3000
	group, values := make([]int32, rows), make([]float64, rows)
	for i := range values {
		group[i] = int32(rng.IntN(k))
		values[i] = math.Round(math.Exp(float64(rng.NormFloat64()+float64(group[i])*0.1))*100) / 100
		if i%97 == 0 {
			values[i] = math.Copysign(0, -1) // the ranking stores it as +0
		}
	}
	r, err := Rank(group, values, k)
	if err != nil {
		t.Fatal(err)
	}
	runs := make([]*SortedRuns, k)
	for g := range runs {
		if runs[g], err = NewSortedRuns(r.Sorted[g]); err != nil {
			t.Fatal(err)
		}
	}
	var w PairWork
	for _, pr := range AllPairs(k) {
		x, y := r.Sorted[pr[0]], r.Sorted[pr[1]]
		e, err := w.EffectSizes(runs[pr[0]], runs[pr[1]])
		olde, _ := oldPairEffectSizes(x, y)
		if err != nil || e != olde {
			t.Errorf("pair %v: %+v %v, element-wise %+v", pr, e, err, olde)
		}
		hl, err := w.HodgesLehmann(runs[pr[0]], runs[pr[1]], 0.95)
		old, _ := oldHodgesLehmannShift(x, y, 0.95)
		if err != nil || !sameHL(hl, old) {
			t.Errorf("pair %v: %+v %v, element-wise %+v", pr, hl, err, old)
		}
	}
}

// TestNewSortedRuns: the checks of the precondition, the choice between a copy in runs and
// a view of the values, and that the input is not modified.
func TestNewSortedRuns(t *testing.T) {
	negz := math.Copysign(0, -1)
	for _, tc := range []struct {
		name    string
		in      []float64
		ok      bool
		runs    int // len(val)
		copied  bool
		tied    bool
		negZero bool
	}{
		{"empty", nil, false, 0, false, false, false},
		{"NaN", []float64{1, math.NaN()}, false, 0, false, false, false},
		{"+Inf", []float64{1, math.Inf(1)}, false, 0, false, false, false},
		{"-Inf", []float64{math.Inf(-1), 1}, false, 0, false, false, false},
		{"descending", []float64{1, 2, 1.5}, false, 0, false, false, false},
		{"one value", []float64{3}, true, 1, false, false, false},
		{"distinct", []float64{1, 2, 3, 4}, true, 4, false, false, false},
		{"half distinct", []float64{1, 1, 2, 2}, true, 2, true, true, false},
		{"few ties", []float64{1, 1, 2, 3, 4}, true, 5, false, true, false},
		{"signed zeros", []float64{-1, negz, 0, 0, negz, 2}, true, 6, false, true, true},
		{"signed zeros in runs", []float64{negz, negz, negz, 0, 0, 0, 0, 0}, true, 2, true, true, true},
	} {
		in := slices.Clone(tc.in)
		s, err := NewSortedRuns(in)
		if (err == nil) != tc.ok {
			t.Errorf("%s: error %v", tc.name, err)
			continue
		}
		if !slices.EqualFunc(in, tc.in, sameBits) {
			t.Errorf("%s: input modified", tc.name)
		}
		if !tc.ok {
			continue
		}
		if len(s.val) != tc.runs || (s.cum != nil) != tc.copied || s.tied != tc.tied || s.negZero != tc.negZero || s.n != len(tc.in) {
			t.Errorf("%s: %+v", tc.name, s)
		}
		// The runs hold every value in order, with its bits.
		var back []float64
		for r, v := range s.val {
			c := 1
			if s.cum != nil {
				c = int(s.cum[r+1] - s.cum[r])
			}
			for range c {
				back = append(back, v)
			}
		}
		if len(back) != len(tc.in) {
			t.Fatalf("%s: %d values back", tc.name, len(back))
		}
		for i := range back {
			if !sameBits(back[i], tc.in[i]) {
				t.Errorf("%s: value %d is %v, want %v", tc.name, i, back[i], tc.in[i])
			}
		}
	}
	var w PairWork
	if _, err := w.EffectSizes(nil, &SortedRuns{}); err == nil {
		t.Error("EffectSizes took a nil sample")
	}
	one, _ := NewSortedRuns([]float64{1})
	if _, err := w.HodgesLehmann(one, &SortedRuns{}, 0.95); err == nil {
		t.Error("HodgesLehmann took an empty sample")
	}
	if _, err := w.HodgesLehmann(one, one, math.NaN()); err == nil {
		t.Error("HodgesLehmann took a NaN level")
	}
	dm, _ := w.matrix(one, one)
	for _, k := range []int64{0, 2, -1} {
		if _, err := w.kth(&dm, k); err == nil {
			t.Errorf("order statistic %d of 1 accepted", k)
		}
	}
}

// hlBenchPair returns two invented samples of n values each, sorted: skewed values with ties
// at 3 decimals (lognormal times 10, the second shifted by 0.5), or untied normals.
func hlBenchPair(n int, ties bool) ([]float64, []float64) {
	rng := rand.New(rand.NewPCG(21, 22))
	x, y := make([]float64, n), make([]float64, n)
	for i := range n {
		if ties {
			x[i] = math.Round(math.Exp(rng.NormFloat64())*10*1000) / 1000
			y[i] = math.Round((math.Exp(rng.NormFloat64())*10+0.5)*1000) / 1000
		} else {
			x[i], y[i] = rng.NormFloat64(), rng.NormFloat64()+0.1
		}
	}
	slices.Sort(x)
	slices.Sort(y)
	return x, y
}

// processCPU is the CPU time the process has used in user mode, in nanoseconds: on a
// machine shared with other work it varies less than the wall time, which is inflated by
// waiting for a core.
func processCPU() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return ru.Utime.Nano()
}

// BenchmarkHodgesLehmannPair times the effect sizes and the Hodges-Lehmann estimate with
// its interval of one pair of 10^6 values each, as the runner does it (runs built once per
// group, outside the timing, and one work space) and as the element-wise implementation
// did (clone and sort per pair, bisection on the value). cpu-ns/op is the process's user CPU
// time per pair (GC workers included):
//
//	go test ./stats -run XXX -bench HodgesLehmannPair -benchtime 3x -benchmem
func BenchmarkHodgesLehmannPair(b *testing.B) {
	const n = 1_000_000
	for _, ties := range []bool{true, false} {
		x, y := hlBenchPair(n, ties)
		b.Run(fmt.Sprintf("n=%d/ties=%v/runs", n, ties), func(b *testing.B) {
			xr, err := NewSortedRuns(x)
			if err != nil {
				b.Fatal(err)
			}
			yr, err := NewSortedRuns(y)
			if err != nil {
				b.Fatal(err)
			}
			var w PairWork
			b.ReportAllocs()
			b.ResetTimer()
			cpu := processCPU()
			for b.Loop() {
				if _, err := w.EffectSizes(xr, yr); err != nil {
					b.Fatal(err)
				}
				if _, err := w.HodgesLehmann(xr, yr, 0.95); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(processCPU()-cpu)/float64(b.N), "cpu-ns/op")
		})
		b.Run(fmt.Sprintf("n=%d/ties=%v/elementwise", n, ties), func(b *testing.B) {
			b.ReportAllocs()
			cpu := processCPU()
			for b.Loop() {
				if _, err := oldPairEffectSizes(x, y); err != nil {
					b.Fatal(err)
				}
				if _, err := oldHodgesLehmannShift(x, y, 0.95); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(processCPU()-cpu)/float64(b.N), "cpu-ns/op")
		})
	}
	b.Run(fmt.Sprintf("n=%d/NewSortedRuns", n), func(b *testing.B) {
		x, _ := hlBenchPair(n, true)
		b.ReportAllocs()
		for b.Loop() {
			if _, err := NewSortedRuns(x); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// FuzzRunsMatchElementwise decodes fuzz bytes into groups (decodeSample: NaN, ±Inf, −0,
// subnormals, ±1e308, ±MaxFloat64 and raw bit patterns among small tied integers) and
// compares group 0 against each other group: the run-based effect sizes and Hodges-Lehmann
// results must be bit for bit the element-wise ones, errors included, wherever the latter
// are defined (oldDomain); on pairs of at most 400 differences every order statistic must be
// that of the sorted differences, however the selection is driven. Run it with e.g.
//
//	go test ./stats -run XXX -fuzz '^FuzzRunsMatchElementwise$' -fuzztime 5000x -parallel=1
func FuzzRunsMatchElementwise(f *testing.F) {
	f.Add([]byte{3, 0, 4, 8, 0, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26, 0x07, 0x11, 0x22}, 0.95)
	f.Add([]byte{2, 0, 4, 8, 0, 0x01, 0x01, 0x11, 0x11}, 0.95)                   // all tied
	f.Add([]byte{2, 0, 4, 8, 0, 0x0c, 0x10, 0x01, 0x11, 0x0c, 0x1c}, 0.5)        // −0 and +0
	f.Add([]byte{2, 0, 4, 8, 0, 0x0d, 0, 0x0d, 2, 0x1d, 1, 0x1d, 3}, 0.95)       // subnormals
	f.Add([]byte{2, 0, 4, 8, 0, 0x0e, 0, 0x0e, 1, 0x1e, 0, 0x1e, 1}, 0.9)        // ±1e308
	f.Add([]byte{2, 0, 4, 8, 0, 0x0f, 0, 0x0f, 1, 0x1f, 0, 0x1f, 1, 0x01}, 0.95) // ±MaxFloat64
	f.Add([]byte{3, 9, 4, 8, 0, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26}, 0.99)       // 512 copies
	f.Fuzz(func(t *testing.T, data []byte, level float64) {
		in := decodeSample(data)
		for i := 1; i < len(in.byGroup); i++ {
			x, y := in.byGroup[0], in.byGroup[i]
			var e, olde PairEffect
			var err, olderr error
			within(t, "PairEffectSizes", func() { e, err = PairEffectSizes(x, y) })
			within(t, "element-wise PairEffectSizes", func() { olde, olderr = oldPairEffectSizes(x, y) })
			if (err == nil) != (olderr == nil) || e != olde {
				t.Fatalf("effect sizes %+v %v, element-wise %+v %v", e, err, olde, olderr)
			}
			if err != nil || !oldDomain(x, y) {
				continue
			}
			var hl, old HodgesLehmann
			within(t, "HodgesLehmannShift", func() { hl, err = HodgesLehmannShift(x, y, level) })
			within(t, "element-wise HodgesLehmannShift", func() { old, olderr = oldHodgesLehmannShift(x, y, level) })
			if (err == nil) != (olderr == nil) || (err == nil && !sameHL(hl, old)) {
				t.Fatalf("level %v: %+v %v, element-wise %+v %v", level, hl, err, old, olderr)
			}
			mn := len(x) * len(y)
			if mn > 400 {
				continue
			}
			d := allDifferences(x, y)
			xr, yr, _ := sortedPair(x, y)
			for _, cfg := range hlWorkConfigs {
				w := cfg.work()
				dm, _ := w.matrix(xr, yr)
				for k := 1; k <= mn; k++ {
					r, err := w.kth(&dm, int64(k))
					if err != nil || r.v != d[k-1] {
						t.Fatalf("%s, k = %d: %v %v, sorted differences %v", cfg.name, k, r.v, err, d[k-1])
					}
				}
			}
		}
	})
}
