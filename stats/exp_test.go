package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestExpPortable compares with math.Exp over the whole range (fixed seed).
func TestExpPortable(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	worst := 0.0
	for i := 0; i < 200000; i++ {
		x := (rng.Float64()*2 - 1) * 700
		if i%2 == 0 {
			x = (rng.Float64()*2 - 1) * 5
		}
		want, got := math.Exp(x), expPortable(x)
		rel := math.Abs(got-want) / want
		worst = max(worst, rel)
		if rel > 4e-16 {
			t.Fatalf("exp(%v) = %v, math.Exp %v (rel %.2g)", x, got, want, rel)
		}
	}
	t.Logf("worst relative difference from math.Exp: %.2g", worst)
	if expPortable(0) != 1 || expPortable(1000) != math.Inf(1) || expPortable(-1000) != 0 || !math.IsNaN(expPortable(math.NaN())) {
		t.Error("edge values")
	}
}
