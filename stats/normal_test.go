package stats

import (
	"math"
	"testing"
)

// TestNormalTwoSided compares with the standard library's math.Erfc (which this function
// replaces only for its architecture independence), over the body and far tails.
func TestNormalTwoSided(t *testing.T) {
	worst := 0.0
	for z := 0.0; z <= 37.5; z += 0.0137 { // 37.5: the tail stays a normal double
		want := math.Erfc(z / math.Sqrt2)
		got := NormalTwoSided(z)
		if neg := NormalTwoSided(-z); neg != got {
			t.Fatalf("not symmetric at %v", z)
		}
		rel := math.Abs(got-want) / want
		worst = max(worst, rel)
		// The documented accuracy: 1 − P cancels below the switch at x² = 1.5, and e^{−x²}
		// carries the rounding of x² (a relative error of about x²·2^-53).
		if rel > 1e-14+2e-16*z*z/2 {
			t.Errorf("z = %v: %v, math.Erfc gives %v (rel %.2g)", z, got, want, rel)
		}
	}
	t.Logf("worst relative difference from math.Erfc: %.2g", worst)
	// 2Φ(−1.959963984540054) = 0.05 (common practice).
	if got := NormalTwoSided(1.959963984540054); math.Abs(got-0.05) > 1e-15 {
		t.Errorf("at 1.96: %v", got)
	}
	if NormalTwoSided(0) != 1 || NormalTwoSided(60) != 0 || !math.IsNaN(NormalTwoSided(math.NaN())) || NormalTwoSided(math.Inf(-1)) != 0 {
		t.Error("edge values")
	}
}
