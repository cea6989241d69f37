package stats

import (
	"context"
	"errors"
	"testing"

	"rankplan/stats/stream"
)

// longCall is one of the functions that can run long, called on a fixed invented data
// set with the given context, progress hook and goroutines; it returns its result as a
// comparable value.
type longCall struct {
	name  string
	total int64 // the progress total of a whole run
	block int64 // the progress units of one block (0: progress comes per layer)
	call  func(ctx context.Context, progress Progress, workers int) (any, error)
}

// longCalls are the long functions of the package on invented data: an exact design of
// 4 × 6 spread values (23 layers), a Monte Carlo test and a bootstrap of 40 blocks each,
// and the rank-sum test's exact branch on 12 against 12 values.
func longCalls(t *testing.T) []longCall {
	spread := [][]float64{{1, 5, 9, 13, 17, 21}, {2, 6, 10, 14, 18, 22}, {3, 7, 11, 15, 19, 23}, {4, 8, 12, 16, 20, 24}}
	rs := mustRank(t, spread)
	groups := [][]float64{{2.9, 3.0, 2.5, 2.6, 3.2}, {3.8, 2.7, 4.0, 2.4}, {2.8, 3.4, 3.7, 2.2, 2.0}}
	g, v := flatten(groups)
	r := mustRank(t, groups)
	x := []float64{1.1, 2.3, 2.3, 4.0, 5.2, 6.1, 7.7, 8.0, 9.4, 10.2, 11.0, 12.5}
	y := []float64{0.5, 2.3, 3.1, 3.3, 4.4, 5.0, 5.9, 7.0, 7.1, 8.8, 9.0, 13.0}
	const mcResamples = 40 * PermutationBlockSize
	const bootResamples = 40 * BootstrapBlockSize
	return []longCall{
		{"exact", DefaultExactBudget.MaxWork, 0, func(ctx context.Context, progress Progress, workers int) (any, error) {
			return KruskalWallisExact(ctx, rs, ExactBudget{Progress: progress, workers: workers})
		}},
		{"permutation", mcResamples, PermutationBlockSize, func(ctx context.Context, progress Progress, workers int) (any, error) {
			return KruskalWallisPermutation(ctx, g, v, 3, r, PermutationOptions{Seed: 11, AnalysisID: "a", Resamples: mcResamples, Workers: workers, Progress: progress})
		}},
		{"bootstrap", bootResamples, BootstrapBlockSize, func(ctx context.Context, progress Progress, workers int) (any, error) {
			return KruskalWallisBootstrap(ctx, r, BootstrapOptions{Seed: 11, AnalysisID: "a", Resamples: bootResamples, Level: 0.95, Workers: workers, Progress: progress})
		}},
		{"rank-sum", DefaultExactBudget.MaxWork, 0, func(ctx context.Context, progress Progress, workers int) (any, error) {
			return RankSumTest(ctx, x, y, true, ExactBudget{Progress: progress, workers: workers})
		}},
	}
}

// TestLongFunctionsCancel checks every function that can run long against its context:
// cancelled before the call, it returns context.Canceled (wrapped) without reporting any
// progress; cancelled from its progress hook after the first block or layer, it returns
// context.Canceled having done at most one more block per goroutine (the exact programme
// and the rank-sum test: no further layer); cancelled after the last layer, the exact
// programme's final evaluation stops too; and with a live context its result is the same
// as with context.Background, for one and for three goroutines.
func TestLongFunctionsCancel(t *testing.T) {
	for _, lc := range longCalls(t) {
		t.Run(lc.name, func(t *testing.T) {
			want, err := lc.call(context.Background(), nil, 1)
			if err != nil {
				t.Fatal(err)
			}
			var whole progressLog
			if _, err := lc.call(context.Background(), whole.f, 1); err != nil {
				t.Fatal(err)
			}

			t.Run("before", func(t *testing.T) {
				ctx, cancel := context.WithCancel(context.Background())
				cancel()
				var log progressLog
				_, err := lc.call(ctx, log.f, 2)
				if !errors.Is(err, context.Canceled) {
					t.Fatalf("error %v, want context.Canceled", err)
				}
				if log.calls > 0 {
					t.Errorf("%d progress calls after the context was cancelled", log.calls)
				}
			})

			t.Run("during", func(t *testing.T) {
				for _, workers := range []int{1, 3} {
					ctx, cancel := context.WithCancel(context.Background())
					var log progressLog
					_, err := lc.call(ctx, func(done, total int64) {
						log.f(done, total)
						cancel()
					}, workers)
					cancel()
					if !errors.Is(err, context.Canceled) {
						t.Fatalf("%d workers: error %v, want context.Canceled", workers, err)
					}
					if lc.block == 0 {
						if log.calls != 1 {
							t.Errorf("%d workers: %d progress calls, want 1: a layer ran after the cancellation", workers, log.calls)
						}
						continue
					}
					if log.max >= lc.total {
						t.Errorf("%d workers: every unit done (%d) although the context ended after the first block", workers, log.max)
					}
					if limit := int64(workers) * lc.block; log.max > limit {
						t.Errorf("%d workers: %d units done, want at most %d (the blocks running when the context ended)", workers, log.max, limit)
					}
				}
			})

			if lc.block == 0 {
				t.Run("final evaluation", func(t *testing.T) {
					// The last progress call comes after the final evaluation; the one
					// before it after the last layer, just before that evaluation.
					layers := whole.calls - 1
					ctx, cancel := context.WithCancel(context.Background())
					defer cancel()
					var log progressLog
					_, err := lc.call(ctx, func(done, total int64) {
						log.f(done, total)
						if log.calls == layers {
							cancel()
						}
					}, 2)
					if !errors.Is(err, context.Canceled) {
						t.Fatalf("error %v, want context.Canceled", err)
					}
					if log.calls != layers {
						t.Errorf("%d progress calls, want %d", log.calls, layers)
					}
				})
			}

			t.Run("live", func(t *testing.T) {
				for _, workers := range []int{1, 3} {
					ctx, cancel := context.WithCancel(context.Background())
					got, err := lc.call(ctx, nil, workers)
					cancel()
					if err != nil {
						t.Fatal(err)
					}
					if got != want {
						t.Errorf("%d workers, live context: %+v; with context.Background and 1 worker: %+v", workers, got, want)
					}
				}
			})
		})
	}
}

// TestLongBlockCancel checks that a block of resamples stops within itself when the
// context ends: with two goroutines and one resample more than a block, one goroutine
// draws the single resample of the second block while the other is inside the first
// (a whole block of 20,000 invented observations per resample takes tens of
// milliseconds); the progress call of the short block cancels the context, and the long
// block must then stop without finishing (no progress call for it).
func TestLongBlockCancel(t *testing.T) {
	const n = 20000
	groups := make([][]float64, 3)
	for i := range n {
		groups[i%3] = append(groups[i%3], float64(i*7919%1013))
	}
	g, v := flatten(groups)
	r := mustRank(t, groups)
	for _, tc := range []struct {
		name  string
		block int64
		call  func(ctx context.Context, progress Progress) error
	}{
		{"permutation", PermutationBlockSize, func(ctx context.Context, progress Progress) error {
			_, err := KruskalWallisPermutation(ctx, g, v, 3, r, PermutationOptions{Seed: 5, AnalysisID: "a", Resamples: PermutationBlockSize + 1, Workers: 2, Progress: progress})
			return err
		}},
		{"bootstrap", BootstrapBlockSize, func(ctx context.Context, progress Progress) error {
			_, err := KruskalWallisBootstrap(ctx, r, BootstrapOptions{Seed: 5, AnalysisID: "a", Resamples: BootstrapBlockSize + 1, Level: 0.9, Workers: 2, Progress: progress})
			return err
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			var log progressLog
			err := tc.call(ctx, func(done, total int64) {
				log.f(done, total)
				cancel()
			})
			if !errors.Is(err, context.Canceled) {
				t.Fatalf("error %v, want context.Canceled", err)
			}
			if log.calls != 1 || log.max != 1 {
				t.Errorf("progress %v, want only the short block's 1: the long block of %d ran to its end", log.seq, tc.block)
			}
		})
	}
}

// TestResampleStops checks the context check within one bootstrap resample, on both ways
// of ranking a resample: with its Done channel closed, a resample of 3·cancelEvery
// invented observations is given up (stopped is set) at the first check, after
// cancelEvery − 1 draws from the first group, as the stream's position shows; with no
// channel, the resample is whole and the same as with a channel that is never closed.
func TestResampleStops(t *testing.T) {
	const n = 3 * cancelEvery
	groups := [][]float64{make([]float64, 0, n/2), make([]float64, 0, n/2)}
	for i := range n {
		groups[i%2] = append(groups[i%2], float64(i%97)) // few distinct values
	}
	r := mustRank(t, groups)
	for _, byGroup := range []bool{true, false} {
		bi, err := newBootIndex(r)
		if err == nil {
			err = bi.withIndex(r)
		}
		if err != nil {
			t.Fatal(err)
		}
		bi.byGroup = byGroup
		key := stream.Key(BootstrapPurpose, 3, "a", 0)

		closed := make(chan struct{})
		close(closed)
		w := newBootWorker(r, bi, false)
		w.done = closed
		s := stream.New(key)
		w.resample(s)
		ref := stream.New(key)
		for range cancelEvery - 1 {
			ref.Below(uint64(len(groups[0])))
		}
		if !w.stopped || s.Below(1<<62) != ref.Below(1<<62) {
			t.Errorf("byGroup %v: closed channel: stopped %v, or not after %d draws", byGroup, w.stopped, cancelEvery-1)
		}

		live := make(chan struct{})
		a, b := newBootWorker(r, bi, false), newBootWorker(r, bi, false)
		b.done = live
		ha, da := a.resample(stream.New(key))
		hb, db := b.resample(stream.New(key))
		if a.stopped || b.stopped || ha != hb || da != db {
			t.Errorf("byGroup %v: open channel: H* %v (stopped %v), without one %v (stopped %v)", byGroup, hb, b.stopped, ha, a.stopped)
		}
	}
}
