package stats

import (
	"os"
	"testing"
)

// exhaustive reports whether the long variants of the tests run: the whole reference
// grids and the long seeded simulations. Set RANKPLAN_EXHAUSTIVE=1 (.ci/run does);
// without it each such test checks a sample that still reaches every part of its grid.
func exhaustive() bool { return os.Getenv("RANKPLAN_EXHAUSTIVE") == "1" }

// sampled reports whether row i of a reference grid is checked: every row when
// exhaustive, otherwise every stride-th. A stride prime to the grid's inner dimensions
// (their product) makes the sample pass through every combination of them.
func sampled(i, stride int) bool { return exhaustive() || i%stride == 0 }

// TestSampled checks that the default samples of the studentized-range grids reach
// every k and every inner combination while checking at most a quarter of the rows.
func TestSampled(t *testing.T) {
	// The studentized-range grids: 7 df × 4 p per k, and 7 df × 12 q per k.
	for _, g := range []struct{ rows, inner, stride int }{{19 * 7 * 4, 7 * 4, srangeQuantileStride}, {19 * 7 * 12, 7 * 12, srangeDistStride}} {
		seen, outer := map[int]bool{}, map[int]bool{}
		n := 0
		for i := range g.rows {
			if i%g.stride == 0 {
				seen[i%g.inner], outer[i/g.inner] = true, true
				n++
			}
		}
		if len(seen) != g.inner || len(outer) != g.rows/g.inner {
			t.Errorf("stride %d over %d rows reaches %d of %d inner combinations and %d of %d k", g.stride, g.rows, len(seen), g.inner, len(outer), g.rows/g.inner)
		}
		if n == 0 || n > g.rows/4 {
			t.Errorf("stride %d checks %d of %d rows", g.stride, n, g.rows)
		}
	}
}
