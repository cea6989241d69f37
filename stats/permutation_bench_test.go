package stats

import (
	"context"
	"fmt"
	"testing"
)

// BenchmarkKruskalWallisPermutation reports Monte Carlo resamples per second on
// invented data (benchData: k = 4, rounded normal values, so with ties), for 1 and 2
// workers. Each iteration is one full call: row ranks, then m resamples, or with a
// sequential rule (stop=h) the resamples up to the h-th exceedance, whose number the
// benchmark reports as drawn/op (the throughput counts the m of the plan).
//
//	go test ./stats -run XXX -bench KruskalWallisPermutation -benchtime=3x
func BenchmarkKruskalWallisPermutation(b *testing.B) {
	cases := []struct {
		n    int
		m    int64
		stop int64
	}{
		{1000, 8 * PermutationBlockSize, 0},
		{1000, 8 * PermutationBlockSize, 10},
		{1_000_000, 1, 0}, // mostly the setup: row ranks by binary search
		{1_000_000, 16, 0},
	}
	for _, c := range cases {
		group, values := benchData(c.n, 4, true)
		r, err := Rank(group, values, 4)
		if err != nil {
			b.Fatal(err)
		}
		for _, workers := range []int{1, 2} {
			name := fmt.Sprintf("N=%d/k=4/m=%d/workers=%d", c.n, c.m, workers)
			if c.stop > 0 {
				name = fmt.Sprintf("N=%d/k=4/m=%d/stop=%d/workers=%d", c.n, c.m, c.stop, workers)
			}
			b.Run(name, func(b *testing.B) {
				opt := PermutationOptions{Seed: 1, AnalysisID: "bench", Resamples: c.m, StopAfter: c.stop, Workers: workers}
				var drawn int64
				b.ReportAllocs()
				b.ResetTimer()
				for b.Loop() {
					p, err := KruskalWallisPermutation(context.Background(), group, values, 4, r, opt)
					if err != nil {
						b.Fatal(err)
					}
					drawn = p.Resamples
				}
				b.ReportMetric(float64(drawn), "drawn/op")
				b.ReportMetric(float64(c.m)*float64(b.N)/b.Elapsed().Seconds(), "resamples/s")
			})
		}
	}
}
