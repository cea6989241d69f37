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
//
// A mean of n_i of the ranks 1..N lies in [(n_i + 1)/2, N − (n_i − 1)/2] (the means of the
// n_i smallest and largest ranks; midranks of ties stay in it, since each is the mean of the
// positions its tie block fills). The symmetric interval can reach past that range when
// n_i is small or R̄_i lies near an end (a group of one observation among nine reaches
// 14); its ends are then cut to the range, and clipped is true.
func MeanRankInterval(r *Ranking, i int, level float64) (lo, hi float64, clipped bool, err error) {
	if err := checkRanking(r); err != nil {
		return 0, 0, false, err
	}
	if i < 0 || i >= r.K {
		return 0, 0, false, fmt.Errorf("mean rank interval: group %d is not in [0, %d)", i, r.K)
	}
	if !(level > 0 && level < 1) {
		return 0, 0, false, fmt.Errorf("mean rank interval: level %v is not in (0, 1)", level)
	}
	n, ni := float64(r.N), float64(r.Counts[i])
	se := math.Sqrt(float64(RankVariance(r)*float64(n-ni)) / float64(n*ni))
	half := float64(normalCritical(1-level) * se)
	m := meanRank(r, i)
	lo, hi = m-half, m+half
	if least := (ni + 1) / 2; lo < least {
		lo, clipped = least, true
	}
	if most := n - (ni-1)/2; hi > most {
		hi, clipped = most, true
	}
	return lo, hi, clipped, nil
}
