package stats

import (
	"context"
	"fmt"
	"testing"
)

// BenchmarkKruskalWallisPermutation reports Monte Carlo resamples per second on
// invented data (benchData: k = 4, rounded normal values, so with ties), for 1 and 2
// workers. Each iteration is one full call: row ranks, then m resamples.
//
//	go test ./stats -run XXX -bench KruskalWallisPermutation -benchtime=3x
func BenchmarkKruskalWallisPermutation(b *testing.B) {
	cases := []struct {
		n int
		m int64
	}{
		{1000, 8 * PermutationBlockSize},
		{1_000_000, 1}, // mostly the setup: row ranks by binary search
		{1_000_000, 16},
	}
	for _, c := range cases {
		group, values := benchData(c.n, 4, true)
		r, err := Rank(group, values, 4)
		if err != nil {
			b.Fatal(err)
		}
		for _, workers := range []int{1, 2} {
			b.Run(fmt.Sprintf("N=%d/k=4/m=%d/workers=%d", c.n, c.m, workers), func(b *testing.B) {
				opt := PermutationOptions{Seed: 1, AnalysisID: "bench", Resamples: c.m, Workers: workers}
				b.ReportAllocs()
				b.ResetTimer()
				for b.Loop() {
					if _, err := KruskalWallisPermutation(context.Background(), group, values, 4, r, opt); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(c.m)*float64(b.N)/b.Elapsed().Seconds(), "resamples/s")
			})
		}
	}
}
