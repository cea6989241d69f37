package stats

import (
	"errors"
	"math"
	"slices"
	"testing"
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
