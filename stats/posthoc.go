package stats

import (
	"fmt"
	"math"
)

// Comparison is one pairwise comparison of groups I and J (indexes into the Ranking).
type Comparison struct {
	I, J      int
	MeanDiff  float64 // R̄_I − R̄_J, the difference of mean joint ranks
	SE        float64 // its standard error under the procedure's variance
	Statistic float64 // z (Dunn) or t (Conover-Iman): MeanDiff / SE
	P         float64 // two-sided, unadjusted
	// NotComputable, when not empty, says why this pair has no statistic (Statistic, SE
	// and P are then NaN); the other pairs of the family are computed as usual.
	NotComputable string
}

// PairAllTied is the reason a pair compared on its own ranks is not computable.
const PairAllTied = "every observation of the two groups has the same value, so their ranks carry no information"

// AllPairs lists the k(k−1)/2 pairs (i, j), i < j, in order.
func AllPairs(k int) [][2]int {
	var out [][2]int
	for i := 0; i < k; i++ {
		for j := i + 1; j < k; j++ {
			out = append(out, [2]int{i, j})
		}
	}
	return out
}

// ManyToOne lists the k − 1 pairs (i, control), i ≠ control, in group order.
func ManyToOne(k, control int) [][2]int {
	var out [][2]int
	for i := 0; i < k; i++ {
		if i != control {
			out = append(out, [2]int{i, control})
		}
	}
	return out
}

// RankVariance is the variance of the pooled midranks, the tie-corrected variance of
// Dunn's test,
//
//	σ²_R = N(N+1)/12 − Σ(t³ − t) / (12 (N − 1))
//
// (Dunn 1964, Technometrics 6:241-252; docs/methods.md §3, checked there by enumeration). It
// equals the sample variance of all N midranks.
func RankVariance(r *Ranking) float64 {
	n := float64(r.N)
	return float64(n*float64(n+1))/12 - r.TieSum/float64(12*(n-1))
}

func checkPairs(r *Ranking, pairs [][2]int) error {
	if err := checkRanking(r); err != nil {
		return err
	}
	for _, p := range pairs {
		if p[0] < 0 || p[0] >= r.K || p[1] < 0 || p[1] >= r.K || p[0] == p[1] {
			return fmt.Errorf("pair %v: groups must be two different indexes in [0, %d)", p, r.K)
		}
	}
	return nil
}

func meanRank(r *Ranking, i int) float64 {
	return float64(r.RankSum2[i]) / float64(2*int64(r.Counts[i]))
}

// DunnTest compares groups pairwise on the joint ranks of the Kruskal-Wallis test (Dunn
// 1964), with the tie-corrected variance [RankVariance]:
//
//	z_ij = (R̄_i − R̄_j) / sqrt(σ²_R (1/n_i + 1/n_j)),   p = 2 Φ(−|z|) = erfc(|z|/√2)  ([NormalTwoSided])
//
// The p-values are unadjusted. It returns [ErrAllTied] when every value is tied.
func DunnTest(r *Ranking, pairs [][2]int) ([]Comparison, error) {
	if err := checkPairs(r, pairs); err != nil {
		return nil, fmt.Errorf("dunn: %w", err)
	}
	s2 := RankVariance(r)
	if !(s2 > 0) {
		return nil, fmt.Errorf("dunn: %w", ErrAllTied)
	}
	out := make([]Comparison, len(pairs))
	for k, p := range pairs {
		i, j := p[0], p[1]
		d := meanRank(r, i) - meanRank(r, j)
		se := math.Sqrt(float64(s2 * float64(1/float64(r.Counts[i])+1/float64(r.Counts[j]))))
		z := d / se
		out[k] = Comparison{I: i, J: j, MeanDiff: d, SE: se, Statistic: z, P: NormalTwoSided(z)}
	}
	return out, nil
}

// ErrConstantGroups is returned by [ConoverImanTest] when every group is internally
// constant (all values within each group tied), so the within-group rank variance is 0
// and H* = N − 1. The groups may share values or not: only the spread inside them
// matters, and groups whose ranks merely do not overlap have a positive variance.
var ErrConstantGroups = fmt.Errorf("%w: every group is internally constant (all values within each group tied), so the within-group rank variance is 0", ErrNotComputable)

// ConoverImanTest compares groups pairwise with the t-test on the joint ranks of Conover &
// Iman (1979, Los Alamos report LA-7677-MS; Conover, Practical Nonparametric Statistics;
// docs/methods.md §3.2, recalled there from memory and checked through its identity with the
// ANOVA of the ranks), Fisher's least significant difference on the ranks:
//
//	MSE  = S² (N − 1 − H*) / (N − k),   S² = σ²_R   (the within-group mean square of the ranks)
//	t_ij = (R̄_i − R̄_j) / sqrt(MSE (1/n_i + 1/n_j)),   df = N − k,
//	p    = 2 P(T_df ≥ |t|) = I_{df/(df+t²)}(df/2, 1/2)
//
// with H* the tie-corrected Kruskal-Wallis statistic and I the regularized incomplete beta
// function ([RegIncBeta], whose result is the same on every architecture). The p-values are
// unadjusted. It is meant to follow a significant Kruskal-Wallis test. It returns an error
// when N = k (no within-group degrees of freedom), [ErrConstantGroups] when the
// within-group mean square MSE is 0 (H* = N − 1: every group internally constant), and
// [ErrAllTied] when every value is tied.
func ConoverImanTest(r *Ranking, pairs [][2]int) ([]Comparison, error) {
	if err := checkPairs(r, pairs); err != nil {
		return nil, fmt.Errorf("conover-iman: %w", err)
	}
	if r.N <= r.K {
		return nil, fmt.Errorf("conover-iman: %w: N = %d observations in k = %d groups leave no within-group degrees of freedom", ErrNotComputable, r.N, r.K)
	}
	_, hStar, c := tieCorrectedH(r.N, r.Counts, r.RankSum2, r.Blocks)
	if !(c > 0) {
		return nil, fmt.Errorf("conover-iman: %w", ErrAllTied)
	}
	s2 := RankVariance(r)
	df := float64(r.N - r.K)
	mse := float64(s2*float64(float64(r.N-1)-hStar)) / df
	if !(mse > 0) || float64(float64(r.N-1)-hStar) <= float64(1e-12*float64(r.N-1)) {
		return nil, fmt.Errorf("conover-iman: %w", ErrConstantGroups)
	}
	out := make([]Comparison, len(pairs))
	for k, p := range pairs {
		i, j := p[0], p[1]
		d := meanRank(r, i) - meanRank(r, j)
		se := math.Sqrt(float64(mse * float64(1/float64(r.Counts[i])+1/float64(r.Counts[j]))))
		t := d / se
		x := df / float64(df+float64(t*t))
		out[k] = Comparison{I: i, J: j, MeanDiff: d, SE: se, Statistic: t, P: RegIncBeta(x, df/2, 0.5)}
	}
	return out, nil
}
