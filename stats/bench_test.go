package stats

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// benchData returns n invented observations in k groups (fixed seed). With ties, values
// are normal with sd 100 rounded to 2 decimals (about 10^5 distinct values, so heavy
// ties at large n); without, they are unrounded normal draws.
func benchData(n, k int, ties bool) ([]int32, []float64) {
	rng := rand.New(rand.NewPCG(11, 12))
	group := make([]int32, n)
	values := make([]float64, n)
	for j := range n {
		group[j] = int32(rng.IntN(k))
		v := rng.NormFloat64() * 100
		if ties {
			v = math.Round(v*100) / 100
		}
		values[j] = v
	}
	return group, values
}

var benchSizes = []int{100_000, 10_000_000}

func BenchmarkRank(b *testing.B) {
	for _, n := range benchSizes {
		for _, ties := range []bool{true, false} {
			b.Run(fmt.Sprintf("N=%d/k=4/ties=%v", n, ties), func(b *testing.B) {
				group, values := benchData(n, 4, ties)
				b.ReportAllocs()
				b.ResetTimer()
				for b.Loop() {
					if _, err := Rank(group, values, 4); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// BenchmarkKruskalWallis times the statistic and p-value from an existing Ranking (the
// ranking itself is BenchmarkRank).
func BenchmarkKruskalWallis(b *testing.B) {
	for _, n := range benchSizes {
		for _, ties := range []bool{true, false} {
			b.Run(fmt.Sprintf("N=%d/k=4/ties=%v", n, ties), func(b *testing.B) {
				group, values := benchData(n, 4, ties)
				r, err := Rank(group, values, 4)
				if err != nil {
					b.Fatal(err)
				}
				b.ReportAllocs()
				b.ResetTimer()
				for b.Loop() {
					if _, err := KruskalWallisTest(r); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
