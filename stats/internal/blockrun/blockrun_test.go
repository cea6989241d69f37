package blockrun

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"sync"
	"testing"
)

// TestRunBlocks checks the rules of Run for one to four goroutines: every block is
// done exactly once when nothing stops the work; a stop condition, a failed block or a
// cancelled context leaves the blocks done a prefix 0..m-1; the error is that of the
// lowest failed block, else the context's, else nil.
func TestRunBlocks(t *testing.T) {
	errAt := func(j int64) error { return fmt.Errorf("block %d failed", j) }
	tests := []struct {
		name        string
		n           int64
		stopAfter   int64 // stop holds once this many blocks are done (0: no stop)
		failAt      int64 // this block fails (-1: none)
		cancelAt    int64 // the context is cancelled while this block runs (-1: never, -2: before the start)
		wantErr     error // errors.Is target; nil means no error
		wantAllDone bool
	}{
		{"all blocks", 37, 0, -1, -1, nil, true},
		{"one block", 1, 0, -1, -1, nil, true},
		{"no blocks", 0, 0, -1, -1, nil, true},
		{"stopped", 40, 5, -1, -1, nil, false},
		{"failed block", 40, 0, 7, -1, errAt(7), false},
		{"cancelled before the start", 40, 0, -1, -2, context.Canceled, false},
		{"cancelled during", 40, 0, -1, 3, context.Canceled, false},
		{"failed and cancelled", 40, 0, 2, 2, errAt(2), false},
	}
	for _, tc := range tests {
		for _, workers := range []int{1, 2, 4} {
			t.Run(fmt.Sprintf("%s/%d workers", tc.name, workers), func(t *testing.T) {
				ctx, cancel := context.WithCancel(context.Background())
				defer cancel()
				if tc.cancelAt == -2 {
					cancel()
				}
				var mu sync.Mutex
				var done []int64
				busy := make([]bool, workers)
				stop := func() bool {
					mu.Lock()
					defer mu.Unlock()
					return tc.stopAfter > 0 && int64(len(done)) >= tc.stopAfter
				}
				err := Run(ctx, tc.n, workers, stop, func(w int, j int64) error {
					mu.Lock()
					if busy[w] {
						mu.Unlock()
						return fmt.Errorf("goroutine %d runs two blocks at once", w)
					}
					busy[w] = true
					mu.Unlock()
					defer func() { mu.Lock(); busy[w] = false; mu.Unlock() }()
					if j == tc.cancelAt {
						cancel()
					}
					if j == tc.failAt {
						return errAt(j)
					}
					mu.Lock()
					done = append(done, j)
					mu.Unlock()
					return nil
				})
				switch {
				case tc.wantErr == nil && err != nil:
					t.Fatalf("error %v, want none", err)
				case tc.wantErr != nil && !errors.Is(err, tc.wantErr) && (err == nil || err.Error() != tc.wantErr.Error()):
					t.Fatalf("error %v, want %v", err, tc.wantErr)
				}
				slices.Sort(done)
				for i, j := range done {
					if j != int64(i) && j != int64(i)+1 {
						t.Fatalf("blocks done %v: not a prefix (block %d is missing)", done, i)
					}
				}
				if tc.failAt < 0 {
					for i, j := range done {
						if j != int64(i) {
							t.Fatalf("blocks done %v: not the prefix 0..%d", done, len(done)-1)
						}
					}
				}
				if all := int64(len(done)) == tc.n; all != tc.wantAllDone {
					t.Errorf("%d of %d blocks done", len(done), tc.n)
				}
				if tc.cancelAt == -2 && len(done) > 0 {
					t.Errorf("%d blocks done after the context was cancelled before the start", len(done))
				}
			})
		}
	}
}
