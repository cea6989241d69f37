// Package blockrun hands numbered blocks of long work to goroutines and meets the
// context before each: the one harness of package stats for the Monte Carlo test, the
// effect-size bootstrap and the chunks and merge partitions of the exact programme
// (see [Run]).
package blockrun

import (
	"context"
	"sync"
	"sync/atomic"
)

// Run calls do(w, j) for the blocks j = 0..n-1 on up to workers goroutines (at
// least one); w in 0..workers-1 names the goroutine, for its scratch space, and one
// goroutine runs one block at a time. It is the one place where work that can run long
// (the Monte Carlo permutation test, the effect-size bootstrap, the chunks and merge
// partitions of each layer of the exact programme) meets its context. The content of a
// block never depends on who computes it: a block's random stream is keyed by its
// index, and its result is stored by index or combined in index order by the caller.
//
// The rules it keeps, which the callers rely on:
//
//   - blocks are taken in increasing index order, and ctx is checked, and stop (nil for
//     none) polled, before each one is taken;
//   - once ctx is done, stop holds or a block fails, no further block is started, while
//     the blocks already taken run to their end; so the blocks done are always 0..m-1
//     for some m (with one gap, at the failed block, when a block fails);
//   - it returns nil when every block was done, else the error of the lowest failed
//     block, else ctx.Err() when the context ended the work, else nil (stop ended it,
//     and the caller knows why): one error, whatever the number of goroutines.
//
// A block that may itself run long checks the context between its items (see
// [Cancelled]); the block sizes are part of the reproducibility contract and are never
// shortened for that.
func Run(ctx context.Context, n int64, workers int, stop func() bool, do func(w int, j int64) error) error {
	done := ctx.Done()
	halt := func() bool { return Cancelled(done) || stop != nil && stop() }
	workers = int(max(1, min(int64(workers), n)))
	if workers == 1 {
		for j := range n {
			if halt() {
				return ctx.Err()
			}
			if err := do(0, j); err != nil {
				return err
			}
		}
		return nil
	}
	var (
		next    atomic.Int64
		nDone   atomic.Int64
		mu      sync.Mutex
		failed  = int64(-1) // the lowest failed block
		failure error
		wg      sync.WaitGroup
	)
	for w := range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				// Check before taking an index, so that every index taken is done:
				// the indices done are then always 0..m-1 for some m.
				if halt() {
					return
				}
				j := next.Add(1) - 1
				if j >= n {
					return
				}
				if err := do(w, j); err != nil {
					mu.Lock()
					if failed < 0 || j < failed {
						failed, failure = j, err
					}
					mu.Unlock()
					next.Store(n) // the others stop at their next block
					return
				}
				nDone.Add(1)
			}
		}()
	}
	wg.Wait()
	if failure != nil {
		return failure
	}
	if nDone.Load() == n {
		return nil
	}
	return ctx.Err()
}

// Cancelled reports, without waiting, whether done (a context's Done channel; nil for a
// context that is never done) is closed. It costs a few nanoseconds, so a long block can
// call it between its items.
func Cancelled(done <-chan struct{}) bool {
	select {
	case <-done:
		return true
	default:
		return false
	}
}
