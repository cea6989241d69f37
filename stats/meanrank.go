package stats

import (
	"fmt"
	"math"
)

// MeanRankInterval returns the interval R̄_i ± z·SE_i around the mean joint rank of group i,
// with z the two-sided normal critical value at the level and
//
//	SE_i² = S² (N − n_i) / (N n_i)
//
// the variance of a mean of n_i ranks drawn without replacement from the N pooled midranks,
// whose sample variance (denominator N − 1) is S² = σ²_R ([RankVariance]); the finite
// population correction (N − n_i)/(N − 1) applied to the population variance S²(N − 1)/N
// gives this form (Cochran 1977, Sampling Techniques, §2.5, recalled from memory; the rank
// case is the one Dunn 1964 uses). It is the spread of R̄_i if the group labels carried no
// information, drawn around R̄_i, so that a mean rank whose interval leaves (N + 1)/2 out
// stands apart from the pooled ranks. It is descriptive, for plots, and not a test.
func MeanRankInterval(r *Ranking, i int, level float64) (lo, hi float64, err error) {
	if err := checkRanking(r); err != nil {
		return 0, 0, err
	}
	if i < 0 || i >= r.K {
		return 0, 0, fmt.Errorf("mean rank interval: group %d is not in [0, %d)", i, r.K)
	}
	if !(level > 0 && level < 1) {
		return 0, 0, fmt.Errorf("mean rank interval: level %v is not in (0, 1)", level)
	}
	n, ni := float64(r.N), float64(r.Counts[i])
	se := math.Sqrt(float64(RankVariance(r)*float64(n-ni)) / float64(n*ni))
	half := float64(normalCritical(1-level) * se)
	m := meanRank(r, i)
	return m - half, m + half, nil
}
