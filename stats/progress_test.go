package stats

import (
	"context"
	"errors"
	"sync"
	"sync/atomic"
	"testing"
)

// progressLog records the calls of a Progress; it is safe for concurrent use.
type progressLog struct {
	mu     sync.Mutex
	calls  int
	max    int64
	totals map[int64]bool
	seq    []int64 // every done, in the order the calls arrived
}

func (l *progressLog) f(done, total int64) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.totals == nil {
		l.totals = map[int64]bool{}
	}
	l.calls++
	l.max = max(l.max, done)
	l.totals[total] = true
	l.seq = append(l.seq, done)
}

func (l *progressLog) check(t *testing.T, wantCalls int, total int64) {
	t.Helper()
	if l.calls != wantCalls {
		t.Errorf("%d calls, want %d (one per block)", l.calls, wantCalls)
	}
	if l.max != total {
		t.Errorf("largest done %d, want the total %d", l.max, total)
	}
	if len(l.totals) != 1 || !l.totals[total] {
		t.Errorf("totals %v, want only %d", l.totals, total)
	}
	for _, d := range l.seq {
		if d < 1 || d > total {
			t.Errorf("done %d outside [1, %d]", d, total)
		}
	}
}

// TestPermutationProgress checks that the progress hook sees every block once, ends at
// the resample count, and leaves the result bit-identical, for several worker counts.
func TestPermutationProgress(t *testing.T) {
	for _, tc := range []struct {
		name      string
		resamples int64
		workers   int
		blocks    int
	}{
		{"one partial block", 1000, 4, 1},
		{"whole blocks, 1 worker", 3 * PermutationBlockSize, 1, 3},
		{"partial last block, 3 workers", 5*PermutationBlockSize + 7, 3, 6},
	} {
		t.Run(tc.name, func(t *testing.T) {
			opt := PermutationOptions{Seed: 7, AnalysisID: "progress", Resamples: tc.resamples, Workers: tc.workers}
			want := permRun(t, inventedP03, opt)
			var log progressLog
			opt.Progress = log.f
			if got := permRun(t, inventedP03, opt); got != want {
				t.Errorf("with progress %+v, without %+v", got, want)
			}
			log.check(t, tc.blocks, tc.resamples)
		})
	}
}

// TestBootstrapProgress is TestPermutationProgress for the effect-size bootstrap.
func TestBootstrapProgress(t *testing.T) {
	r := mustRank(t, inventedP03)
	for _, tc := range []struct {
		name      string
		resamples int64
		workers   int
		blocks    int
	}{
		{"one partial block", 100, 2, 1},
		{"partial last block, 2 workers", 4*BootstrapBlockSize + 1, 2, 5},
	} {
		t.Run(tc.name, func(t *testing.T) {
			opt := BootstrapOptions{Seed: 9, AnalysisID: "progress", Resamples: tc.resamples, Level: 0.95, Workers: tc.workers}
			want, err := KruskalWallisBootstrap(context.Background(), r, opt)
			if err != nil {
				t.Fatal(err)
			}
			var log progressLog
			opt.Progress = log.f
			got, err := KruskalWallisBootstrap(context.Background(), r, opt)
			if err != nil {
				t.Fatal(err)
			}
			if got != want {
				t.Errorf("with progress %+v, without %+v", got, want)
			}
			log.check(t, tc.blocks, tc.resamples)
		})
	}
}

// TestExactProgress checks that the exact programme reports its work after each layer,
// never decreasing and never above the budget, ends at the work it reports, and gives
// the same result with and without the hook. The exact p of inventedP03 is 2857/9240
// (enumeration by bruteExactP in this package).
func TestExactProgress(t *testing.T) {
	r := mustRank(t, inventedP03)
	want, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
	if err != nil {
		t.Fatal(err)
	}
	if !relClose(want.P, 2857.0/9240, 1e-12) {
		t.Fatalf("exact p %v, want 2857/9240", want.P)
	}
	var log progressLog
	got, err := KruskalWallisExact(context.Background(), r, ExactBudget{Progress: log.f})
	if err != nil {
		t.Fatal(err)
	}
	if got != want {
		t.Errorf("with progress %+v, without %+v", got, want)
	}
	if log.calls < 2 {
		t.Errorf("%d calls, want one per layer and one at the end", log.calls)
	}
	for i := 1; i < len(log.seq); i++ {
		if log.seq[i] < log.seq[i-1] {
			t.Errorf("done went down: %v", log.seq)
			break
		}
	}
	if last := log.seq[len(log.seq)-1]; last != got.Work {
		t.Errorf("last done %d, want the work %d", last, got.Work)
	}
	if len(log.totals) != 1 || !log.totals[DefaultExactBudget.MaxWork] {
		t.Errorf("totals %v, want the budget's MaxWork %d", log.totals, DefaultExactBudget.MaxWork)
	}

	// A run stopped by the budget reports no more than the budget before it stops.
	var stopped progressLog
	spread := [][]float64{{1, 5, 9, 13, 17, 21}, {2, 6, 10, 14, 18, 22}, {3, 7, 11, 15, 19, 23}, {4, 8, 12, 16, 20, 24}}
	_, err = KruskalWallisExact(context.Background(), mustRank(t, spread), ExactBudget{MaxWork: 2000, Progress: stopped.f})
	if !errors.Is(err, ErrExactBudget) {
		t.Fatalf("a budget of 2000 units: %v, want ErrExactBudget", err)
	}
	if stopped.calls == 0 {
		t.Error("no progress before the budget ran out")
	}
	for _, d := range stopped.seq {
		if d > 2000 {
			t.Errorf("done %d above the budget 2000", d)
		}
	}
}

// BenchmarkPermutationProgress measures the cost of the progress hook: the same
// permutation run (invented benchData, N = 1000, 8 blocks) without and with a callback.
//
//	go test ./stats -run XXX -bench PermutationProgress -benchtime=3x
func BenchmarkPermutationProgress(b *testing.B) {
	group, values := benchData(1000, 4, true)
	r, err := Rank(group, values, 4)
	if err != nil {
		b.Fatal(err)
	}
	var calls atomic.Int64
	for _, tc := range []struct {
		name string
		f    Progress
	}{{"without", nil}, {"with", func(done, total int64) { calls.Add(1) }}} {
		b.Run(tc.name, func(b *testing.B) {
			opt := PermutationOptions{Seed: 1, AnalysisID: "bench", Resamples: 8 * PermutationBlockSize, Workers: 2, Progress: tc.f}
			b.ReportAllocs()
			for b.Loop() {
				if _, err := KruskalWallisPermutation(context.Background(), group, values, 4, r, opt); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(opt.Resamples)*float64(b.N)/b.Elapsed().Seconds(), "resamples/s")
		})
	}
}
