package stats

import "sync/atomic"

// Progress receives how far a long computation has come: done of total units (resamples
// for [KruskalWallisPermutation] and [KruskalWallisBootstrap], units of work against
// ExactBudget.MaxWork for [KruskalWallisExact]). It is called after each finished block
// of work, so at most about once per block:
//
//	permutation: done = resamples finished, total = Resamples, per block of 4096
//	bootstrap:   done = resamples finished, total = Resamples, per block of 256
//	exact:       done = units of work so far, total = MaxWork, per layer of the programme
//
// The resampling functions call it from their worker goroutines, so calls may come from
// several goroutines at once and out of order (a later call can carry a smaller done):
// an implementation must be safe for concurrent use and should keep the largest done
// it has seen. It must return quickly, since a worker waits for it. done never exceeds
// total; when the computation finishes without error the largest done equals total
// (for exact, the work done, which is at most total). Progress only observes: it is
// given counts and nothing of the data, and the results are the same bits with and
// without it. A nil Progress is never called.
type Progress func(done, total int64)

// progressCounter counts finished units for a Progress shared by several workers.
type progressCounter struct {
	f     Progress
	total int64
	done  atomic.Int64
}

// add records n more finished units and reports the new count.
func (c *progressCounter) add(n int64) {
	if c == nil || c.f == nil {
		return
	}
	c.f(c.done.Add(n), c.total)
}

// newProgressCounter returns a counter for f over total units, or nil when f is nil.
func newProgressCounter(f Progress, total int64) *progressCounter {
	if f == nil {
		return nil
	}
	return &progressCounter{f: f, total: total}
}
