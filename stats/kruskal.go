package stats

import (
	"errors"
	"fmt"
	"math"
)

// ErrNotComputable is wrapped by every error that reports a property of the data, not of
// the call, that leaves a statistic undefined (all values tied, no within-group degrees of
// freedom, more groups than a distribution is computed for). Callers test it with
// errors.Is to report the statistic as not computable and go on with the rest.
var ErrNotComputable = errors.New("not computable")

// ErrAllTied is returned (wrapped or bare; test with errors.Is) when every observation
// has the same value, so the tie correction is 0 and H is not computable. It wraps
// [ErrNotComputable].
var ErrAllTied = fmt.Errorf("%w: all observations are tied", ErrNotComputable)

// KruskalWallis is the result of the Kruskal-Wallis H test with midranks and the tie
// correction (Kruskal & Wallis 1952, JASA 47:583-621), with its asymptotic chi-square
// p-value. See [KruskalWallisTest] for the formulas.
type KruskalWallis struct {
	N, K          int
	DF            int       // degrees of freedom, K - 1
	H             float64   // tie-corrected H* = H / C, in [0, N-1]
	HUncorrected  float64   // H, without the tie correction
	TieCorrection float64   // C = 1 - Σ(t^3 - t)/(N^3 - N), in (0, 1]
	MeanRank      []float64 // R_i / n_i, the mean midrank of group i; len K
	P             float64   // chi-square(DF) upper tail at H*; 0 only if it underflows float64
	Log10P        float64   // log10 of that tail, always finite, accurate when P underflows
}

// KruskalWallisTest computes the Kruskal-Wallis test from a [Ranking] (Kruskal & Wallis
// 1952, JASA 47:583-621; centred form and tie correction as in the project's
// docs/methods.md §1.1 and §9.4). With D_i = 2 R_i - n_i (N + 1), an exact integer,
//
//	H  = 12/(N (N+1)) · Σ_i D_i^2 / (4 n_i)
//	C  = 1 - Σ_j (t_j/N) · ((t_j^2 - 1)/(N^2 - 1))
//	H* = H / C
//	p  = Q((K-1)/2, H*/2)   (chi-square upper tail with K-1 df; see [ChiSquareUpperTail])
//
// Each D_i is converted to float64 once; the group terms are summed in group order and
// the tie terms in block order, with explicit float64 conversions so that no fused
// multiply-add changes the result between architectures. H is a sum of squares, so it
// is never negative (the uncentred form Σ R_i^2/n_i - 3(N+1) can round below 0; this
// form cannot). H* cannot exceed N - 1 (equality when every group is internally
// constant); when rounding of H / C lands a few ulps above it, H* is set to N - 1.
//
// It returns [ErrAllTied] when all observations are tied (C = 0), and an error when r
// is nil or not a consistent Ranking.
func KruskalWallisTest(r *Ranking) (KruskalWallis, error) {
	if err := checkRanking(r); err != nil {
		return KruskalWallis{}, fmt.Errorf("kruskal-wallis: %w", err)
	}
	if len(r.Blocks) < 2 {
		return KruskalWallis{}, fmt.Errorf("kruskal-wallis: %w", ErrAllTied)
	}
	h, hStar, c := tieCorrectedH(r.N, r.Counts, r.RankSum2, r.Blocks)
	if !(c > 0) {
		return KruskalWallis{}, fmt.Errorf("kruskal-wallis: %w", ErrAllTied)
	}
	mean := make([]float64, r.K)
	for i, n := range r.Counts {
		mean[i] = float64(r.RankSum2[i]) / float64(2*int64(n))
	}

	df := r.K - 1
	p, lp, err := ChiSquareUpperTail(hStar, df)
	if err != nil {
		return KruskalWallis{}, fmt.Errorf("kruskal-wallis: p-value: %w", err)
	}
	return KruskalWallis{
		N:             r.N,
		K:             r.K,
		DF:            df,
		H:             hStar,
		HUncorrected:  h,
		TieCorrection: c,
		MeanRank:      mean,
		P:             p,
		Log10P:        lp,
	}, nil
}

// checkRanking reports whether r is internally consistent: K >= 2 non-empty groups
// whose sizes add up to N, tie blocks whose sizes add up to N, and rank sums adding up
// to N (N + 1). It costs O(K + m).
func checkRanking(r *Ranking) error {
	if r == nil {
		return errors.New("nil ranking")
	}
	if r.K < 2 || len(r.Counts) != r.K || len(r.RankSum2) != r.K {
		return fmt.Errorf("inconsistent ranking: K = %d with %d counts and %d rank sums",
			r.K, len(r.Counts), len(r.RankSum2))
	}
	total := 0
	var rankTotal int64
	for i, n := range r.Counts {
		if n <= 0 {
			return fmt.Errorf("inconsistent ranking: group %d has size %d", i, n)
		}
		total += n
		rankTotal += r.RankSum2[i]
	}
	inBlocks := 0
	for _, b := range r.Blocks {
		if b.Size <= 0 {
			return fmt.Errorf("inconsistent ranking: tie block of size %d", b.Size)
		}
		inBlocks += b.Size
	}
	if total != r.N || inBlocks != r.N {
		return fmt.Errorf("inconsistent ranking: N = %d, group sizes add up to %d, tie blocks to %d",
			r.N, total, inBlocks)
	}
	if want := int64(r.N) * (int64(r.N) + 1); rankTotal != want {
		return fmt.Errorf("inconsistent ranking: doubled rank sums add up to %d, want N(N+1) = %d",
			rankTotal, want)
	}
	if !(r.TieSum >= 0) || math.IsInf(r.TieSum, 1) {
		return fmt.Errorf("inconsistent ranking: tie sum %v", r.TieSum)
	}
	return nil
}

// checkRankingDeep is checkRanking plus the checks that take O(N) time, for the functions
// that read the tie blocks' doubled ranks or the sorted values and take O(N) time or more
// anyway: block j's doubled midrank is 2 T_{j−1} + t_j + 1 (see [Block]), TieSum is the
// sum of t³ − t in block order, and Sorted holds K finite, ascending slices of the group
// sizes.
func checkRankingDeep(r *Ranking) error {
	if err := checkRanking(r); err != nil {
		return err
	}
	var below int64
	tieSum := 0.0
	for j, b := range r.Blocks {
		if want := 2*below + int64(b.Size) + 1; b.Rank2 != want {
			return fmt.Errorf("inconsistent ranking: tie block %d has doubled rank %d, want %d", j, b.Rank2, want)
		}
		below += int64(b.Size)
		t := float64(b.Size)
		tieSum += float64(t * float64(float64(t*t)-1)) // as Rank sums it
	}
	if tieSum != r.TieSum {
		return fmt.Errorf("inconsistent ranking: tie sum %v, the blocks give %v", r.TieSum, tieSum)
	}
	if len(r.Sorted) != r.K {
		return fmt.Errorf("inconsistent ranking: %d sorted groups for K = %d", len(r.Sorted), r.K)
	}
	for i, s := range r.Sorted {
		if len(s) != r.Counts[i] {
			return fmt.Errorf("inconsistent ranking: group %d has %d sorted values and size %d", i, len(s), r.Counts[i])
		}
		for j, v := range s {
			if math.IsNaN(v) || math.IsInf(v, 0) || (j > 0 && v < s[j-1]) {
				return fmt.Errorf("inconsistent ranking: group %d: sorted value %d is %v, not finite and in ascending order", i, j, v)
			}
		}
	}
	return nil
}

// tieCorrectedH is the arithmetic of [KruskalWallisTest], shared with the bootstrap: H,
// H* = H / C (capped at N - 1) and C, from the group sizes, the doubled rank sums and the
// tie blocks. c <= 0 means all observations are tied; h and hStar are then 0.
func tieCorrectedH(n int, counts []int, rankSum2 []int64, blocks []Block) (h, hStar, c float64) {
	fN := float64(n)
	np1 := int64(n) + 1
	sum := 0.0
	for i, ni := range counts {
		dev := float64(rankSum2[i] - int64(ni)*np1)
		sum += float64(dev*dev) / float64(4*int64(ni))
	}
	h = float64(12*sum) / float64(fN*float64(fN+1))
	den := float64(fN*fN) - 1
	ties := 0.0
	for _, b := range blocks {
		if b.Size > 1 {
			ft := float64(b.Size)
			ties += float64(float64(ft/fN) * float64((float64(ft*ft)-1)/den))
		}
	}
	c = 1 - ties
	if !(c > 0) {
		return 0, 0, c
	}
	hStar = h / c
	if maxH := float64(n - 1); hStar > maxH {
		hStar = maxH
	}
	return h, hStar, c
}
