package stats

import (
	"cmp"
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"runtime/debug"
	"slices"
	"testing"
	"time"
)

// FuzzRank ranks four fuzzed float64 values (NaN and ±Inf included) plus up to 256
// small tied values, in fuzzed groups, and checks that Rank and KruskalWallisTest
// either return an error or a consistent result: rank sums equal to the O(N^2)
// definition and a finite H* in [0, N-1]. A panic fails the fuzz target.
//
// layout[j] for j < 4 is the group of x_j (as a signed byte, so it can be out of range);
// every later byte b adds the value float64(b>>3) in group b&7.
func FuzzRank(f *testing.F) {
	f.Add(2, 1.0, 2.0, 2.0, 3.0, []byte{0, 1, 0, 1})
	f.Add(3, 0.5, math.Copysign(0, -1), 0.0, -7.25, []byte{0, 1, 2, 2, 0x11, 0x0a})
	f.Add(2, math.NaN(), 1.0, 2.0, 3.0, []byte{0, 1, 0, 1})
	f.Add(2, math.Inf(1), 1.0, 2.0, 3.0, []byte{0, 1, 0, 1})
	f.Add(4, 1.0, 1.0, 1.0, 1.0, []byte{0, 1, 2, 3, 0x08, 0x09})
	f.Add(1, 1.0, 2.0, 3.0, 4.0, []byte{0, 0, 0, 0})
	f.Add(5, 1e308, -1e308, 5e-324, -5e-324, []byte{0, 1, 2, 3, 0x24})
	f.Fuzz(func(t *testing.T, k int, x0, x1, x2, x3 float64, layout []byte) {
		if len(layout) > 260 {
			layout = layout[:260] // keep the O(N^2) oracle cheap
		}
		values := []float64{x0, x1, x2, x3}
		group := make([]int32, 4, 4+len(layout))
		for j := range group {
			if j < len(layout) {
				group[j] = int32(int8(layout[j]))
			} else {
				group[j] = int32(j % 2)
			}
		}
		for _, b := range layout[min(4, len(layout)):] {
			values = append(values, float64(b>>3))
			group = append(group, int32(b&7))
		}
		v0, g0 := slices.Clone(values), slices.Clone(group)
		r, err := Rank(group, values, k)
		if !slices.Equal(group, g0) || !slices.EqualFunc(values, v0, func(a, b float64) bool {
			return math.Float64bits(a) == math.Float64bits(b)
		}) {
			t.Fatal("Rank modified its inputs")
		}
		if err != nil {
			if r != nil {
				t.Fatal("non-nil Ranking with an error")
			}
			return
		}
		n := len(values)
		if r.N != n || r.K != k {
			t.Fatalf("N, K = %d, %d, want %d, %d", r.N, r.K, n, k)
		}
		want := make([]int64, k)
		for j, d := range naiveRank2(values) {
			want[group[j]] += d
		}
		if !slices.Equal(r.RankSum2, want) {
			t.Fatalf("RankSum2 = %v, naive %v", r.RankSum2, want)
		}
		kw, err := KruskalWallisTest(r)
		if err != nil {
			if !errors.Is(err, ErrAllTied) {
				t.Fatalf("KruskalWallisTest: %v", err)
			}
			if slices.Min(values) != slices.Max(values) {
				t.Fatalf("ErrAllTied for values that are not all equal: %v", values)
			}
			return
		}
		if math.IsNaN(kw.H) || kw.H < 0 || kw.H > float64(n-1) {
			t.Fatalf("H* = %v outside [0, %d]", kw.H, n-1)
		}
		if !(kw.P >= 0 && kw.P <= 1) || math.IsNaN(kw.Log10P) || math.IsInf(kw.Log10P, 0) || kw.Log10P > 0 {
			t.Fatalf("P = %v, Log10P = %v", kw.P, kw.Log10P)
		}
	})
}

// FuzzNoncentralChiSquare checks that NoncentralChiSquareTails and NoncentralityInterval
// return an error or a valid result for any float64 inputs (NaN, ±Inf, subnormals, -0 and
// 1e308 among the seeds), never a panic: two tails in [0, 1] adding to 1, and an interval
// 0 <= lo <= hi.
func FuzzNoncentralChiSquare(f *testing.F) {
	f.Add(5.0, 3.0, 2.0, 0.95)
	f.Add(0.0, 1.0, 0.0, 0.5)
	f.Add(math.Copysign(0, -1), 2.0, 1.0, 0.9)
	f.Add(math.NaN(), 2.0, 1.0, 0.95)
	f.Add(1.0, math.NaN(), 1.0, 0.95)
	f.Add(1.0, 2.0, math.NaN(), math.NaN())
	f.Add(math.Inf(1), 2.0, 1.0, 0.95)
	f.Add(1e308, 2.0, 1e9, 0.95)
	f.Add(5e-324, 0.01, 5e-324, 1e-300)
	f.Add(2.114325393362999, 2.0, 40.0, 0.95)
	f.Add(1e6, 1e10, 1e10, 0.999999)
	f.Add(-1.0, 2.0, 1.0, 0.95)
	f.Fuzz(func(t *testing.T, x, df, nc, level float64) {
		lower, upper, err := NoncentralChiSquareTails(x, df, nc)
		if err == nil && (!(lower >= 0 && lower <= 1 && upper >= 0 && upper <= 1) || math.Abs(lower+upper-1) > 1e-12) {
			t.Fatalf("tails(%v, %v, %v) = %v, %v", x, df, nc, lower, upper)
		}
		lo, hi, err := NoncentralityInterval(x, df, level)
		if err == nil && !(lo >= 0 && lo <= hi) {
			t.Fatalf("interval(%v, %v, %v) = [%v, %v]", x, df, level, lo, hi)
		}
	})
}

// fuzzCallLimit is how long one call of a stats function may take on a fuzz input before
// the target fails it as a hang. Inputs are small (at most fuzzMaxN observations, tiny
// budgets), so most calls take microseconds to milliseconds; the slowest, the
// studentized range quantile at large k, takes up to about a second on an idle machine.
// The margin tells a hang from a loaded machine.
const fuzzCallLimit = 10 * time.Second

// fuzzMaxN caps the observations decoded from one fuzz input.
const fuzzMaxN = 1 << 15

// within runs f on its own goroutine and fails the test when f panics (with the stack)
// or has not returned within fuzzCallLimit. A call that hangs is left running: the
// target has failed and the fuzzing process ends.
func within(t *testing.T, name string, f func()) {
	t.Helper()
	done := make(chan string, 1)
	go func() {
		defer func() {
			if p := recover(); p != nil {
				done <- fmt.Sprintf("panic: %v\n%s", p, debug.Stack())
				return
			}
			done <- ""
		}()
		f()
	}()
	timer := time.NewTimer(fuzzCallLimit)
	defer timer.Stop()
	select {
	case msg := <-done:
		if msg != "" {
			t.Fatalf("%s: %s", name, msg)
		}
	case <-timer.C:
		t.Fatalf("%s did not return within %v", name, fuzzCallLimit)
	}
}

// fuzzValue decodes one value from data at i by its tag (the low 4 bits of tag):
// 0..7 the small integers 0..7 (so that ties are common), 8 the next 8 bytes as the bits
// of a float64 (any value at all), 9 NaN, 10 +Inf, 11 −Inf, 12 −0, 13 a subnormal
// (1..256 times the smallest), 14 ±1e308 and 15 ±MaxFloat64 (the sign from the next
// byte). It returns the value and the bytes used after the tag.
func fuzzValue(tag byte, data []byte) (float64, int) {
	next := func() (byte, int) {
		if len(data) == 0 {
			return 0, 0
		}
		return data[0], 1
	}
	switch tag & 0x0f {
	case 8:
		if len(data) < 8 {
			return 0.5, len(data)
		}
		return math.Float64frombits(binary.LittleEndian.Uint64(data)), 8
	case 9:
		return math.NaN(), 0
	case 10:
		return math.Inf(1), 0
	case 11:
		return math.Inf(-1), 0
	case 12:
		return math.Copysign(0, -1), 0
	case 13:
		b, n := next()
		return float64(int(b)+1) * math.SmallestNonzeroFloat64, n
	case 14, 15:
		b, n := next()
		v := 1e308
		if tag&0x0f == 15 {
			v = math.MaxFloat64
		}
		if b&1 == 1 {
			v = -v
		}
		return v, n
	default:
		return float64(tag & 7), 0
	}
}

// sampleInput is a data set decoded from fuzz bytes by decodeSample.
type sampleInput struct {
	k       int
	group   []int32
	values  []float64
	byGroup [][]float64 // the values of each group in [0, k), in row order
	budget  ExactBudget
	resamp  int64
	corrupt byte
}

// decodeSample decodes fuzz bytes: byte 0 gives k = b mod 10 (0 and 1 are refused by
// Rank); byte 1 a repetition count 2^(b mod 13) for the whole list of rows (large N from
// a short input); byte 2 the exact-test budget; byte 3 the Monte Carlo resamples (1..64);
// byte 4 a corruption of the Ranking (see corruptRanking). Every later row is a byte whose
// high 4 bits give the group (14 and 15 give −2 and −1, outside every k; others are taken
// mod k) and whose low 4 bits give the value's tag (see fuzzValue).
func decodeSample(data []byte) sampleInput {
	hdr := make([]byte, 5)
	copy(hdr, data)
	data = data[min(len(data), 5):]
	in := sampleInput{
		k:       int(hdr[0] % 10),
		budget:  ExactBudget{MaxStates: 1 + int64(hdr[2])*16, MaxWork: 1 << (hdr[2] % 24)},
		resamp:  1 + int64(hdr[3]%64),
		corrupt: hdr[4],
	}
	for len(data) > 0 && len(in.values) < fuzzMaxN {
		b := data[0]
		g := int32(b >> 4)
		switch {
		case g >= 14:
			g -= 16
		case in.k > 0:
			g %= int32(in.k)
		}
		v, n := fuzzValue(b, data[1:])
		data = data[1+n:]
		in.group, in.values = append(in.group, g), append(in.values, v)
	}
	rows := len(in.values)
	for rep := 1 << (hdr[1] % 13); rep > 1 && len(in.values)+rows <= fuzzMaxN; rep-- {
		in.group = append(in.group, in.group[:rows]...)
		in.values = append(in.values, in.values[:rows]...)
	}
	if in.k > 0 {
		in.byGroup = make([][]float64, in.k)
		for j, g := range in.group {
			if g >= 0 && int(g) < in.k {
				in.byGroup[g] = append(in.byGroup[g], in.values[j])
			}
		}
	}
	return in
}

// corruptRanking changes one field of r as selected by c (0 leaves it), the way a caller
// that builds a Ranking by hand might get it wrong; the functions that take a Ranking
// must refuse it or cope, never panic.
func corruptRanking(r *Ranking, c byte) {
	switch c % 16 {
	case 1:
		r.Counts[0]++
	case 2:
		r.RankSum2[0] += 2
		r.RankSum2[1] -= 2
	case 3:
		r.Blocks = nil
	case 4:
		r.Sorted[0] = nil
	case 5:
		r.Sorted = r.Sorted[:1]
	case 6:
		r.K = 1
	case 7:
		r.N++
	case 8:
		r.Blocks[0].Size = 0
	case 9:
		r.Counts[0], r.Counts[1] = r.Counts[0]+1, r.Counts[1]-1
	case 10:
		r.Sorted[0] = append(slices.Clone(r.Sorted[0]), math.NaN())
	case 11:
		r.TieSum = math.NaN()
	case 12:
		r.Blocks[0].Rank2 = -r.Blocks[0].Rank2
	}
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func unit(x float64) bool { return x >= 0 && x <= 1 }

// small says that every value of x is below MaxFloat64/2 in magnitude, so that no
// difference of two of them overflows.
func small(x []float64) bool {
	for _, v := range x {
		if !(math.Abs(v) < math.MaxFloat64/2) {
			return false
		}
	}
	return true
}

// checkComparisons checks the pairwise results of a post-hoc test: one per pair, with the
// pair's indexes, a finite difference, statistic and standard error, and p in [0, 1].
func checkComparisons(t *testing.T, name string, pairs [][2]int, cmp []Comparison) {
	t.Helper()
	if len(cmp) != len(pairs) {
		t.Fatalf("%s: %d comparisons for %d pairs", name, len(cmp), len(pairs))
	}
	for n, c := range cmp {
		if c.NotComputable != "" {
			// A pair the data leave undefined (DSCF: all its values tied): NaN, with a reason.
			if c.I != pairs[n][0] || c.J != pairs[n][1] || !math.IsNaN(c.Statistic) || !math.IsNaN(c.P) {
				t.Fatalf("%s: pair %v not computable but %+v", name, pairs[n], c)
			}
			continue
		}
		if c.I != pairs[n][0] || c.J != pairs[n][1] || !finite(c.MeanDiff) || !finite(c.Statistic) ||
			!(c.SE > 0) || !finite(c.SE) || !unit(c.P) {
			t.Fatalf("%s: pair %v: %+v", name, pairs[n], c)
		}
	}
}

// FuzzSampleStats decodes fuzz bytes into groups of float64 (decodeSample: NaN, ±Inf,
// −0, subnormals, ±1e308, ±MaxFloat64 and raw bit patterns among small tied integers)
// and calls every stats function that takes data: Rank, KruskalWallisTest, Quartiles,
// QuartileSkewness, EpsilonSquared, EtaSquaredH, MeanRankInterval, the post-hoc tests
// (Dunn, Conover-Iman, Nemenyi, DSCF) on all pairs and against group 0,
// RankSumTest, PairEffectSizes, HodgesLehmannShift, KruskalWallisExact,
// KruskalWallisPermutation and KruskalWallisBootstrap (tiny budgets). Each call must return
// within fuzzCallLimit without panicking, with an error or a result in its documented
// range. With byte 4 of the input set, the Ranking is corrupted before the calls that take
// one, which must then refuse it or cope (no result is checked).
func FuzzSampleStats(f *testing.F) {
	f.Add([]byte{3, 0, 4, 8, 0, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26, 0x07, 0x11, 0x22}, 0.95)
	f.Add([]byte{2, 0, 4, 8, 0, 0x01, 0x02, 0x13, 0x14}, 0.95)                           // separated
	f.Add([]byte{2, 0, 4, 8, 0, 0x01, 0x01, 0x11, 0x11}, 0.95)                           // all tied
	f.Add([]byte{3, 0, 4, 8, 0, 0x01, 0x01, 0x12, 0x12, 0x23, 0x23}, 0.95)               // constant groups
	f.Add([]byte{2, 0, 4, 8, 0, 0x09, 0x11, 0x02}, 0.95)                                 // NaN
	f.Add([]byte{2, 0, 4, 8, 0, 0x0a, 0x1b, 0x02, 0x13}, 0.95)                           // ±Inf
	f.Add([]byte{2, 0, 4, 8, 0, 0x0c, 0x10, 0x01, 0x11}, 0.95)                           // −0 and +0
	f.Add([]byte{2, 0, 4, 8, 0, 0x0d, 0, 0x0d, 2, 0x1d, 1, 0x1d, 3}, 0.95)               // subnormals
	f.Add([]byte{2, 0, 4, 8, 0, 0x0e, 0, 0x0e, 1, 0x1e, 0, 0x1e, 1}, 0.95)               // ±1e308
	f.Add([]byte{2, 0, 4, 8, 0, 0x0f, 0, 0x0f, 1, 0x1f, 0, 0x1f, 1, 0x01}, 0.95)         // ±MaxFloat64
	f.Add([]byte{3, 12, 4, 8, 0, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26}, 0.95)              // 4096 copies
	f.Add([]byte{2, 0, 4, 8, 0}, 0.95)                                                   // no rows
	f.Add([]byte{0, 0, 4, 8, 0, 0x01, 0x02}, 0.95)                                       // k = 0
	f.Add([]byte{2, 0, 4, 8, 0, 0xf1, 0x02, 0x13}, 0.95)                                 // group −1
	f.Add([]byte{3, 0, 4, 8, 0, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26}, math.NaN())         // NaN level
	f.Add([]byte{3, 0, 4, 8, 0, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26}, 1.0)                // level 1
	f.Add([]byte{3, 0, 4, 8, 0, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26}, 5e-324)             // tiny level
	f.Add([]byte{3, 0, 4, 8, 0, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26}, 0.9999999999999999) // level next to 1
	for c := byte(1); c < 13; c++ {
		f.Add([]byte{3, 0, 4, 8, c, 0x01, 0x12, 0x23, 0x04, 0x15, 0x26, 0x07}, 0.95) // corrupted Ranking
	}
	f.Fuzz(func(t *testing.T, data []byte, level float64) {
		in := decodeSample(data)
		for i, g := range in.byGroup {
			raw := g
			within(t, "Quartiles(raw)", func() { _, _, _, _ = Quartiles(raw) })
			if i > 0 {
				x, y := in.byGroup[0], raw
				within(t, "PairEffectSizes", func() {
					e, err := PairEffectSizes(x, y)
					if err == nil && (e.Greater+e.Less+e.Ties != int64(len(x))*int64(len(y)) ||
						!(e.CliffsDelta >= -1 && e.CliffsDelta <= 1) || !unit(e.VarghaDelaneyA)) {
						t.Fatalf("PairEffectSizes: %+v", e)
					}
				})
				within(t, "RankSumTest", func() {
					rs, err := RankSumTest(context.Background(), x, y, level > 0.5, in.budget)
					if err != nil {
						return
					}
					if !(rs.U >= 0 && rs.U <= float64(len(x))*float64(len(y))) || !finite(rs.Z) || !unit(rs.PNorm) ||
						rs.Exact != !math.IsNaN(rs.PExact) || (rs.Exact && !unit(rs.PExact)) {
						t.Fatalf("RankSumTest: %+v", rs)
					}
				})
				within(t, "HodgesLehmannShift", func() {
					hl, err := HodgesLehmannShift(x, y, level)
					// Differences x_i − y_j overflow to ±Inf when the values reach half of
					// MaxFloat64 in magnitude; the runner refuses post-hoc comparisons of
					// such data (runner.spanTooWide), so results are checked below that range.
					if err == nil && small(x) && small(y) &&
						!(finite(hl.Low) && finite(hl.High) && hl.Low <= hl.Shift && hl.Shift <= hl.High) {
						t.Fatalf("HodgesLehmannShift: %+v", hl)
					}
				})
			}
		}
		var r *Ranking
		var err error
		within(t, "Rank", func() { r, err = Rank(in.group, in.values, in.k) })
		if err != nil {
			return
		}
		n, k := r.N, r.K
		for i, s := range r.Sorted {
			within(t, "Quartiles", func() {
				q1, m, q3, err := Quartiles(s)
				if err != nil {
					t.Fatalf("Quartiles of group %d of a Ranking: %v", i, err)
				}
				if !finite(q1) || !finite(m) || !finite(q3) || !(s[0] <= q1 && q1 <= m && m <= q3 && q3 <= s[len(s)-1]) {
					t.Fatalf("Quartiles of %v: %v %v %v", s, q1, m, q3)
				}
				sk, ok := QuartileSkewness(q1, m, q3)
				if ok && !(sk >= -1 && sk <= 1) {
					t.Fatalf("QuartileSkewness(%v, %v, %v) = %v", q1, m, q3, sk)
				}
				if ok != (q3 > q1) {
					t.Fatalf("QuartileSkewness(%v, %v, %v): ok = %v", q1, m, q3, ok)
				}
			})
		}
		var kw KruskalWallis
		within(t, "KruskalWallisTest", func() { kw, err = KruskalWallisTest(r) })
		if err == nil {
			if !(kw.H >= 0 && kw.H <= float64(n-1)) || !unit(kw.P) || !finite(kw.Log10P) || kw.Log10P > 0 {
				t.Fatalf("KruskalWallisTest: %+v", kw)
			}
			within(t, "EpsilonSquared", func() {
				e, err := EpsilonSquared(kw.H, n)
				if err != nil || !unit(e) {
					t.Fatalf("EpsilonSquared(%v, %d) = %v, %v", kw.H, n, e, err)
				}
			})
			within(t, "EtaSquaredH", func() {
				e, err := EtaSquaredH(kw.H, n, k)
				if (err == nil) != (n > k) || (err == nil && !(finite(e) && e <= 1)) {
					t.Fatalf("EtaSquaredH(%v, %d, %d) = %v, %v", kw.H, n, k, e, err)
				}
			})
		} else if !errors.Is(err, ErrAllTied) {
			t.Fatalf("KruskalWallisTest on a Ranking from Rank: %v", err)
		}
		intact := in.corrupt%16 == 0 || in.corrupt%16 > 12
		if !intact {
			corruptRanking(r, in.corrupt)
		}
		for i := -1; i <= r.K; i++ {
			within(t, "MeanRankInterval", func() {
				lo, hi, _, err := MeanRankInterval(r, i, level)
				if err == nil && intact && !(finite(lo) && finite(hi) && lo <= hi) {
					t.Fatalf("MeanRankInterval(%d, %v) = %v, %v", i, level, lo, hi)
				}
			})
		}
		for _, pairs := range [][][2]int{AllPairs(k), ManyToOne(k, 0), {{0, k}}} {
			for _, pt := range []struct {
				name string
				fn   func(*Ranking, [][2]int) ([]Comparison, error)
			}{{"DunnTest", DunnTest}, {"ConoverImanTest", ConoverImanTest}, {"NemenyiTest", NemenyiTest}, {"DSCFTest", DSCFTest}} {
				within(t, pt.name, func() {
					cmp, err := pt.fn(r, pairs)
					if err == nil && intact {
						checkComparisons(t, pt.name, pairs, cmp)
					}
				})
			}
		}
		within(t, "KruskalWallisExact", func() {
			ex, err := KruskalWallisExact(context.Background(), r, in.budget)
			if err == nil && intact && !unit(ex.P) {
				t.Fatalf("KruskalWallisExact: %+v", ex)
			}
		})
		within(t, "KruskalWallisPermutation", func() {
			p, err := KruskalWallisPermutation(context.Background(), in.group, in.values, in.k, r,
				PermutationOptions{Seed: 1, AnalysisID: "fuzz", Resamples: in.resamp, Workers: 1})
			if err == nil && intact && !(p.P > 0 && p.P <= 1 && unit(p.CILow) && unit(p.CIHigh) && p.CILow <= p.CIHigh) {
				t.Fatalf("KruskalWallisPermutation: %+v", p)
			}
		})
		within(t, "KruskalWallisPermutation sequential", func() {
			h := 1 + in.resamp/3
			p, err := KruskalWallisPermutation(context.Background(), in.group, in.values, in.k, r,
				PermutationOptions{Seed: 1, AnalysisID: "fuzz", Resamples: in.resamp, StopAfter: h, Workers: 2})
			if err == nil && intact && !(p.P > 0 && p.P <= 1 && unit(p.CILow) && unit(p.CIHigh) && p.CILow <= p.CIHigh &&
				p.Resamples <= in.resamp && (!p.Stopped || p.Exceed == h)) {
				t.Fatalf("KruskalWallisPermutation with StopAfter %d: %+v", h, p)
			}
		})
		for _, scheme := range []BootstrapScheme{BootstrapIndices, BootstrapCounts} {
			within(t, "KruskalWallisBootstrap", func() {
				b, err := KruskalWallisBootstrap(context.Background(), r, BootstrapOptions{Seed: 1, AnalysisID: "fuzz", Resamples: in.resamp, Level: level, Workers: 1, Scheme: scheme})
				if err == nil && intact && !(b.HLow >= 0 && b.HLow <= b.HHigh && b.HHigh <= float64(n-1)) {
					t.Fatalf("KruskalWallisBootstrap, scheme %d: %+v", scheme, b)
				}
			})
		}
	})
}

// FuzzDistributions calls the distribution functions on arbitrary float arguments: the
// chi-square tail (x, df), the Beta quantile and RegIncBeta (q, a, b), the studentized
// range CDF, survival and quantile (q or p, k, df), the two-sided normal tail, and the
// effect-size and skewness formulas on raw numbers. Each call must return within
// fuzzCallLimit without panicking, with an error or a result in its documented range.
func FuzzDistributions(f *testing.F) {
	nasty := []float64{0, math.Copysign(0, -1), 0.5, 1, -1, 3.5, 1e-300, 5e-324, 1e308, math.MaxFloat64,
		math.Inf(1), math.Inf(-1), math.NaN(), 1 - 0x1p-53, 1e7, 1e15}
	for i, x := range nasty {
		a, b := nasty[(i+3)%len(nasty)], nasty[(i+7)%len(nasty)]
		f.Add(x, a, b, int64(i*3-2), 2.5)
	}
	f.Add(10.0, 2.0, 3.0, int64(4), math.Inf(1))
	f.Add(3.0, 0.5, 0.5, int64(1000), 1.0)
	f.Add(0.975, 1.0, 1.0, int64(1001), 1e308)
	f.Add(1e6, 1.0, 1.0, int64(1)<<62, 1.0)
	f.Add(0.01, 1e-300, 1e-300, int64(math.MinInt64), math.NaN())
	f.Fuzz(func(t *testing.T, x, a, b float64, n int64, df float64) {
		in := int(n)
		within(t, "ChiSquareUpperTail", func() {
			p, lp, err := ChiSquareUpperTail(x, in)
			if err == nil && (!unit(p) || !finite(lp) || lp > 0) {
				t.Fatalf("ChiSquareUpperTail(%v, %d) = %v, %v", x, in, p, lp)
			}
			if (err == nil) != (in >= 1 && finite(x) && x >= 0) {
				t.Fatalf("ChiSquareUpperTail(%v, %d): error %v", x, in, err)
			}
		})
		within(t, "NormalTwoSided", func() {
			if p := NormalTwoSided(x); !unit(p) && !math.IsNaN(x) {
				t.Fatalf("NormalTwoSided(%v) = %v", x, p)
			}
		})
		if a > 0 && b > 0 && a <= 1e7 && b <= 1e7 {
			// Larger shape parameters are left out: BetaQuantile's bisection calls RegIncBeta
			// about 1100 times, each up to 10^6 steps of the continued fraction there.
			within(t, "BetaQuantile", func() {
				// Shapes below 1e-300 are outside BetaQuantile's documented domain: an error.
				q, err := BetaQuantile(x, a, b)
				inDomain := unit(x) && a >= 1e-300 && b >= 1e-300
				if (err == nil) != inDomain || (err == nil && !unit(q)) {
					t.Fatalf("BetaQuantile(%v, %v, %v) = %v, %v", x, a, b, q, err)
				}
			})
		}
		if n >= -1 && n <= 1e7 {
			// Counts above 10^7 trials are left out for the same reason as large shapes above.
			within(t, "ClopperPearson", func() {
				m, cb := n, int64(0)
				if m > 0 && !math.IsNaN(a) {
					cb = int64(float64(m) * min(max(a, 0), 1)) // a share of the trials, 0 <= cb <= m
				}
				lo, hi, err := ClopperPearson(cb, m, x)
				ok := m >= 1 && x > 0 && x < 1
				if (err == nil) != ok || (err == nil && !(unit(lo) && unit(hi) && lo <= hi)) {
					t.Fatalf("ClopperPearson(%d, %d, %v) = %v, %v, %v", cb, m, x, lo, hi, err)
				}
			})
			within(t, "SequentialInterval", func() {
				h, l := n, n+int64(max(min(a, 1e6), 0)) // L - h failures, a share of the range
				if math.IsNaN(a) {
					l = n
				}
				lo, hi, err := SequentialInterval(h, l, x)
				ok := h >= 1 && x > 0 && x < 1
				if (err == nil) != ok || (err == nil && !(unit(lo) && unit(hi) && lo <= hi)) {
					t.Fatalf("SequentialInterval(%d, %d, %v) = %v, %v, %v", h, l, x, lo, hi, err)
				}
			})
		}
		if unit(x) && a > 0 && b > 0 && a <= 1e7 && b <= 1e7 {
			within(t, "RegIncBeta", func() {
				if p := RegIncBeta(x, a, b); !unit(p) {
					t.Fatalf("RegIncBeta(%v, %v, %v) = %v", x, a, b, p)
				}
			})
		}
		k := in
		within(t, "StudentizedRangeCDF", func() {
			p, err := StudentizedRangeCDF(x, k, df)
			if err == nil && !unit(p) {
				t.Fatalf("StudentizedRangeCDF(%v, %d, %v) = %v", x, k, df, p)
			}
		})
		within(t, "StudentizedRangeSurvival", func() {
			p, err := StudentizedRangeSurvival(x, k, df)
			if err == nil && !unit(p) {
				t.Fatalf("StudentizedRangeSurvival(%v, %d, %v) = %v", x, k, df, p)
			}
		})
		within(t, "StudentizedRangeQuantile", func() {
			q, err := StudentizedRangeQuantile(x, k, df)
			if err == nil && !(q >= 0 && finite(q)) {
				t.Fatalf("StudentizedRangeQuantile(%v, %d, %v) = %v", x, k, df, q)
			}
		})
		within(t, "EpsilonSquared", func() {
			e, err := EpsilonSquared(x, in)
			if err == nil && !(e >= 0) {
				t.Fatalf("EpsilonSquared(%v, %d) = %v", x, in, e)
			}
		})
		within(t, "EtaSquaredH", func() {
			e, err := EtaSquaredH(x, in, int(df))
			if err == nil && math.IsNaN(e) {
				t.Fatalf("EtaSquaredH(%v, %d, %d) = %v", x, in, int(df), e)
			}
		})
		within(t, "QuartileSkewness", func() {
			s, ok := QuartileSkewness(x, a, b)
			if ok && !(s >= -1 && s <= 1) && x <= a && a <= b {
				t.Fatalf("QuartileSkewness(%v, %v, %v) = %v", x, a, b, s)
			}
		})
	})
}

// FuzzAdjust decodes fuzz bytes into p-values (fuzzValue's tags, with tags 0..7 giving
// the p-values 0, 1/7, ..., 1) and applies every adjustment of AdjustP and then Reject at
// a fuzzed alpha. It must return an error exactly when some p is NaN or outside [0, 1], and
// otherwise adjusted values in [0, 1], at least the raw ones (up to rounding), in the
// order of the raw ones, within fuzzCallLimit and without a panic.
func FuzzAdjust(f *testing.F) {
	f.Add([]byte{0x01, 0x02, 0x03, 0x07, 0x00}, 0.05)
	f.Add([]byte{0x09, 0x01}, 0.05)                                                            // NaN
	f.Add([]byte{0x0a, 0x0b, 0x0c}, 0.05)                                                      // ±Inf, −0
	f.Add([]byte{0x0d, 0, 0x0d, 255, 0x00, 0x07}, 0.05)                                        // subnormal p-values
	f.Add([]byte{}, 0.05)                                                                      // none
	f.Add([]byte{0x03, 0x03, 0x03, 0x03}, math.NaN())                                          // ties, NaN alpha
	f.Add([]byte{0x08, 0, 0, 0, 0, 0, 0, 0xf0, 0x3f, 0x08, 1, 0, 0, 0, 0, 0, 0xf0, 0x3f}, 1.0) // 1 and the next double
	f.Fuzz(func(t *testing.T, data []byte, alpha float64) {
		var p []float64
		valid := true
		for len(data) > 0 && len(p) < 4096 {
			tag := data[0]
			v, n := fuzzValue(tag, data[1:])
			if tag&0x0f < 8 {
				v = float64(tag&7) / 7
			}
			data = data[1+n:]
			p = append(p, v)
			valid = valid && v >= 0 && v <= 1
		}
		for _, method := range []string{AdjustNone, AdjustBonferroni, AdjustSidak, AdjustHolm, AdjustHochberg, AdjustHommel, AdjustBenjaminiHochberg, AdjustBenjaminiYekutieli} {
			within(t, "AdjustP("+method+")", func() {
				adj, err := AdjustP(method, p)
				if (err == nil) != valid {
					t.Fatalf("AdjustP(%s, %v): error %v", method, p, err)
				}
				if err != nil {
					return
				}
				if len(adj) != len(p) {
					t.Fatalf("AdjustP(%s): %d values for %d", method, len(adj), len(p))
				}
				order := make([]int, len(p))
				for i := range order {
					order[i] = i
				}
				slices.SortFunc(order, func(i, j int) int { return cmp.Compare(p[i], p[j]) })
				for n, i := range order {
					if !unit(adj[i]) || adj[i] < float64(p[i]*(1-0x1p-50)) {
						t.Fatalf("AdjustP(%s): p[%d] = %v adjusted to %v", method, i, p[i], adj[i])
					}
					if n > 0 {
						if h := order[n-1]; p[h] < p[i] && adj[h] > adj[i] {
							t.Fatalf("AdjustP(%s): p %v < %v but adjusted %v > %v", method, p[h], p[i], adj[h], adj[i])
						}
					}
				}
				rej := Reject(adj, alpha)
				for i := range adj {
					if rej[i] != (adj[i] <= alpha) {
						t.Fatalf("Reject(%v, %v) = %v", adj[i], alpha, rej[i])
					}
				}
			})
		}
	})
}
