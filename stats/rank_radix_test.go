package stats

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// radixCases returns value sets for sortFinite: every kind of finite float64 (negative and
// positive, subnormals, ±MaxFloat64, ±SmallestNonzeroFloat64, zero), heavy ties, values
// that differ only in the lowest or only in the highest key digit, already sorted and
// reversed input, at lengths on both sides of radixMinLen.
func radixCases() map[string][]float64 {
	rng := rand.New(rand.NewPCG(11, 12))
	special := []float64{0, math.MaxFloat64, -math.MaxFloat64, math.SmallestNonzeroFloat64,
		-math.SmallestNonzeroFloat64, 0x1p-1022, -0x1p-1022, 0x1p-1023, -0x1p-1060, 1, -1,
		math.Nextafter(1, 2), math.Nextafter(1, 0), math.Nextafter(-1, 0), 1e308, -1e-308}
	gen := func(n int, f func(i int) float64) []float64 {
		s := make([]float64, n)
		for i := range s {
			if s[i] = f(i); s[i] == 0 {
				s[i] = 0 // no -0: Rank stores every zero as +0 before it sorts
			}
		}
		return s
	}
	cases := map[string][]float64{}
	for _, n := range []int{0, 1, 2, 17, radixMinLen - 1, radixMinLen, radixMinLen + 1, 5000, 70_000} {
		name := func(s string) string { return s + "/" + itoa(n) }
		cases[name("random bits")] = gen(n, func(int) float64 {
			for {
				v := math.Float64frombits(rng.Uint64())
				if !math.IsNaN(v) && !math.IsInf(v, 0) && v != 0 {
					return v
				}
			}
		})
		cases[name("special")] = gen(n, func(int) float64 { return special[rng.IntN(len(special))] })
		cases[name("subnormal")] = gen(n, func(int) float64 {
			return float64(int64(rng.Uint64N(1<<52))-1<<51) * math.SmallestNonzeroFloat64
		})
		cases[name("ties at 3 decimals")] = gen(n, func(int) float64 { return math.Round(rng.NormFloat64()*1000) / 1000 })
		cases[name("few levels")] = gen(n, func(int) float64 { return float64(rng.IntN(3)) - 1 })
		cases[name("low digit only")] = gen(n, func(int) float64 { return math.Float64frombits(0x4000000000000000 | rng.Uint64N(1<<11)) })
		cases[name("high digit only")] = gen(n, func(int) float64 { return math.Float64frombits(rng.Uint64N(1<<9)<<54 | 1) })
		cases[name("sorted")] = gen(n, func(i int) float64 { return float64(i) - float64(n)/2 })
		cases[name("reversed")] = gen(n, func(i int) float64 { return float64(n-i) * 0.1 })
	}
	return cases
}

func itoa(n int) string {
	if n == 0 {
		return "0"
	}
	var b []byte
	for ; n > 0; n /= 10 {
		b = append([]byte{byte('0' + n%10)}, b...)
	}
	return string(b)
}

// TestSortFiniteEqualsComparisonSort: the radix sort gives the comparison sort's result bit
// for bit (the ascending order of finite values without -0 is unique).
func TestSortFiniteEqualsComparisonSort(t *testing.T) {
	for name, values := range radixCases() {
		want := slices.Clone(values)
		slices.Sort(want)
		got := slices.Clone(values)
		sortFinite(got, make([]uint64, len(got)))
		for i := range want {
			if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
				t.Fatalf("%s: at %d got %v (%#x), want %v (%#x)", name, i, got[i], math.Float64bits(got[i]), want[i], math.Float64bits(want[i]))
			}
		}
	}
}

// TestRankRadixEqualsComparison: Rank on groups large enough for the radix sort gives the
// same Ranking as ranking the same data with every group sorted by comparison, here by
// feeding Rank the rows of each group in ascending order (sorted input is the sorted
// output) and checking Sorted, rank sums, blocks and tie sum; -0 and +0 stay tied.
func TestRankRadixEqualsComparison(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	for trial := range 6 {
		k := 2 + trial
		n := k * (radixMinLen + 300)
		group := make([]int32, n)
		values := make([]float64, n)
		for j := range n {
			group[j] = int32(j % k)
			switch trial % 3 {
			case 0:
				values[j] = math.Round(rng.NormFloat64()*100) / 100
			case 1:
				values[j] = []float64{0, math.Copysign(0, -1), 1e-310, -1e-310, math.MaxFloat64, -math.MaxFloat64}[rng.IntN(6)]
			default:
				values[j] = math.Float64frombits(rng.Uint64() &^ (0x7ff << 52))
			}
		}
		r, err := Rank(group, values, k)
		if err != nil {
			t.Fatal(err)
		}
		// The same data with each group's values given in ascending order.
		g2 := make([]int32, 0, n)
		v2 := make([]float64, 0, n)
		for i := range k {
			var vs []float64
			for j := range n {
				if group[j] == int32(i) {
					v := values[j]
					if v == 0 {
						v = 0
					}
					vs = append(vs, v)
				}
			}
			slices.Sort(vs)
			for _, v := range vs {
				g2 = append(g2, int32(i))
				v2 = append(v2, v)
			}
		}
		want, err := Rank(g2, v2, k)
		if err != nil {
			t.Fatal(err)
		}
		for i := range k {
			for j := range want.Sorted[i] {
				if math.Float64bits(r.Sorted[i][j]) != math.Float64bits(want.Sorted[i][j]) {
					t.Fatalf("trial %d: Sorted[%d][%d] = %v, want %v", trial, i, j, r.Sorted[i][j], want.Sorted[i][j])
				}
			}
		}
		if !slices.Equal(r.RankSum2, want.RankSum2) || !slices.Equal(r.Blocks, want.Blocks) || r.TieSum != want.TieSum {
			t.Fatalf("trial %d: ranking differs", trial)
		}
	}
}

// FuzzSortFinite compares the radix sort with the comparison sort on fuzzed bytes read as
// float64 values (NaN, ±Inf and -0 mapped away, as Rank does before sorting), repeated up
// to radixMinLen so that the radix path runs.
func FuzzSortFinite(f *testing.F) {
	f.Add([]byte{0, 0, 0, 0, 0, 0, 0xf0, 0x3f, 0, 0, 0, 0, 0, 0, 0xf0, 0xbf}, uint16(3))
	f.Add([]byte{1, 0, 0, 0, 0, 0, 0, 0, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xef, 0x7f}, uint16(0))
	f.Fuzz(func(t *testing.T, b []byte, stride uint16) {
		var vals []float64
		for i := 0; i+8 <= len(b); i += 8 {
			u := uint64(b[i]) | uint64(b[i+1])<<8 | uint64(b[i+2])<<16 | uint64(b[i+3])<<24 |
				uint64(b[i+4])<<32 | uint64(b[i+5])<<40 | uint64(b[i+6])<<48 | uint64(b[i+7])<<56
			v := math.Float64frombits(u)
			if math.IsNaN(v) || math.IsInf(v, 0) || v == 0 {
				v = 0
			}
			vals = append(vals, v)
		}
		if len(vals) == 0 {
			return
		}
		s := make([]float64, radixMinLen+int(stride)%512)
		for i := range s {
			s[i] = vals[(i*int(stride|1))%len(vals)]
		}
		want := slices.Clone(s)
		slices.Sort(want)
		sortFinite(s, make([]uint64, len(s)))
		for i := range s {
			if math.Float64bits(s[i]) != math.Float64bits(want[i]) {
				t.Fatalf("at %d: %v, want %v", i, s[i], want[i])
			}
		}
	})
}
