package stats

import (
	"context"
	"runtime"

	"rankplan/stats/internal/blockrun"
)

// resolveWorkers returns the goroutines for blocks blocks: requested, or
// runtime.GOMAXPROCS(0) when requested <= 0, and never more than blocks (at least 1).
func resolveWorkers(requested int, blocks int64) int {
	if requested <= 0 {
		requested = runtime.GOMAXPROCS(0)
	}
	return int(max(1, min(int64(requested), blocks)))
}

// runBlocks is [blockrun.Run]: do(w, j) for the blocks j = 0..n-1 on up to workers
// goroutines, ctx checked and stop polled before each block; see there for the rules
// the callers rely on.
func runBlocks(ctx context.Context, n int64, workers int, stop func() bool, do func(w int, j int64) error) error {
	return blockrun.Run(ctx, n, workers, stop, do)
}

// cancelEvery is how many draws a resample makes between two checks of the context: a
// resample of 10^7 observations takes tenths of a second, too long to wait for after a
// signal. A power of two, so that the check costs a mask and a compare per draw.
const cancelEvery = 1 << 16

// cancelled reports, without waiting, whether done (a context's Done channel; nil for a
// context that is never done) is closed; see [blockrun.Cancelled].
func cancelled(done <-chan struct{}) bool { return blockrun.Cancelled(done) }
