package stats

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// skewedData returns n invented observations in k groups (fixed seed): log-normal values
// (σ = 1), group i's scaled by 1 + i/50, rounded to 3 decimals, so that they are skewed and
// tied as measurements usually are (about 10^4 distinct values per group at 10^7 rows).
func skewedData(n, k int) ([]int32, []float64) {
	rng := rand.New(rand.NewPCG(15, 3))
	group := make([]int32, n)
	values := make([]float64, n)
	for j := range n {
		i := rng.IntN(k)
		group[j] = int32(i)
		values[j] = math.Round(math.Exp(rng.NormFloat64())*(1+float64(i)/50)*1000) / 1000
	}
	return group, values
}

// BenchmarkBootstrapScheme times one bootstrap of 64 resamples (one block of the counts
// scheme) of 10 groups of skewed, tied data under each scheme, on one worker; the time of
// 2000 resamples is about 31 times the figure. Run with
//
//	go test ./stats -run XXX -bench BootstrapScheme -benchtime=1x
func BenchmarkBootstrapScheme(b *testing.B) {
	for _, n := range []int{1_000_000, 10_000_000} {
		group, values := skewedData(n, 10)
		r, err := Rank(group, values, 10)
		if err != nil {
			b.Fatal(err)
		}
		for _, scheme := range []BootstrapScheme{BootstrapIndices, BootstrapCounts} {
			b.Run(fmt.Sprintf("N=%d/%s", n, schemeName(scheme)), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, err := KruskalWallisBootstrap(context.Background(), r, BootstrapOptions{Seed: 1, AnalysisID: "x",
						Resamples: 64, Level: 0.95, Workers: 1, Scheme: scheme}); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
