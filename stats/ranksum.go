package stats

import (
	"context"
	"errors"
	"fmt"
	"math"
)

// RankSum is the two-sample Wilcoxon-Mann-Whitney rank-sum test of x against y.
type RankSum struct {
	U      float64 // U_x = R_x − m(m+1)/2 = #(x > y) + ½ #(x = y)
	Z      float64 // (U − mn/2 ∓ correction) / σ_U, with the tie-corrected σ_U
	PNorm  float64 // two-sided normal-approximation p, 2 Φ(−|Z|)
	PExact float64 // two-sided exact p given the ties; NaN when Exact is false
	Exact  bool    // the exact p fitted the work budget
}

// RankSumTest runs the Wilcoxon-Mann-Whitney rank-sum test (Mann & Whitney 1947; docs/methods.md
// §3.6) of x against y on their pooled midranks:
//
//	U   = R_x − m(m+1)/2
//	σ²_U = (m n / 12) [(N + 1) − Σ(t³ − t) / (N (N − 1))]
//	Z   = (U − m n/2 − c·sign(U − m n/2)) / σ_U,   c = ½ with continuity correction, else 0
//
// The exact p-value is conditional on the observed ties: P(|U* − m n/2| ≥ |U − m n/2|) over
// all equally likely splits of the pooled midranks into samples of sizes m and n, the
// two-sided convention "at least as far from the null mean" (with ties the null
// distribution need not be symmetric, so doubling one tail is not used). It is the exact
// Kruskal-Wallis p-value of the two groups (for k = 2, H is an increasing function of
// |U − mn/2|), computed by [KruskalWallisExact] under budget; when the design exceeds it,
// Exact is false and PExact is NaN. It returns ctx's error (wrapped) when ctx ends the
// exact computation.
func RankSumTest(ctx context.Context, x, y []float64, continuity bool, budget ExactBudget) (RankSum, error) {
	if len(x) == 0 || len(y) == 0 {
		return RankSum{}, fmt.Errorf("rank-sum: both samples must be non-empty")
	}
	g := make([]int32, 0, len(x)+len(y))
	v := make([]float64, 0, len(x)+len(y))
	for _, a := range x {
		g, v = append(g, 0), append(v, a)
	}
	for _, b := range y {
		g, v = append(g, 1), append(v, b)
	}
	r, err := Rank(g, v, 2)
	if err != nil {
		return RankSum{}, fmt.Errorf("rank-sum: %w", err)
	}
	m, n := float64(len(x)), float64(len(y))
	N := m + n
	u := float64(r.RankSum2[0])/2 - float64(m*float64(m+1))/2
	s2 := float64(m*n) / 12 * (float64(N+1) - r.TieSum/float64(N*float64(N-1)))
	out := RankSum{U: u, PExact: math.NaN()}
	if !(s2 > 0) {
		return RankSum{}, fmt.Errorf("rank-sum: %w", ErrAllTied)
	}
	d := u - float64(m*n)/2
	if continuity && d != 0 {
		d -= math.Copysign(math.Min(0.5, math.Abs(d)), d)
	}
	out.Z = d / math.Sqrt(s2)
	out.PNorm = NormalTwoSided(out.Z)
	ex, err := KruskalWallisExact(ctx, r, budget)
	switch {
	case err == nil:
		out.PExact, out.Exact = ex.P, true
	case errors.Is(err, ErrExactBudget):
	default:
		return RankSum{}, fmt.Errorf("rank-sum: %w", err)
	}
	return out, nil
}
