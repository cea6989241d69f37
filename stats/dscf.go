package stats

import (
	"fmt"
	"math"
)

// NemenyiTest compares groups pairwise on the joint ranks of the Kruskal-Wallis test with
// the studentized range (Nemenyi 1963, PhD thesis, Princeton, recalled from memory; the
// unequal-n form is the Tukey-Kramer-type extension; docs/methods.md §3.3):
//
//	q_ij = (R̄_i − R̄_j) / sqrt(σ²_R (1/n_i + 1/n_j) / 2) = √2 z_ij   (z_ij of [DunnTest])
//	p    = P(Q_{k,∞} ≥ |q_ij|)                                       ([StudentizedRangeSurvival], df = ∞)
//
// with σ²_R the tie-corrected variance of the pooled midranks ([RankVariance]) and k = r.K,
// the number of groups in the analysis, for every family of pairs. Each Comparison has
// MeanDiff = R̄_I − R̄_J (as in DunnTest), SE = sqrt(σ²_R (1/n_I + 1/n_J)/2) and
// Statistic = MeanDiff/SE, the signed q: positive when group I tends to be larger. The
// p-values are unadjusted: the studentized range already controls the family of all pairs.
// It returns [ErrAllTied] when every value is tied, and an error wrapping
// [ErrNotComputable] for more than 1000 groups.
func NemenyiTest(r *Ranking, pairs [][2]int) ([]Comparison, error) {
	if err := checkPairs(r, pairs); err != nil {
		return nil, fmt.Errorf("nemenyi: %w", err)
	}
	if r.K > srangeMaxK {
		return nil, fmt.Errorf("nemenyi: %w: the studentized range is computed for at most %d groups, the analysis has %d", ErrNotComputable, srangeMaxK, r.K)
	}
	if err := checkSRange(r.K, math.Inf(1)); err != nil {
		return nil, fmt.Errorf("nemenyi: %w", err)
	}
	s2 := RankVariance(r)
	if !(s2 > 0) {
		return nil, fmt.Errorf("nemenyi: %w", ErrAllTied)
	}
	out := make([]Comparison, len(pairs))
	inf := math.Inf(1)
	for k, p := range pairs {
		i, j := p[0], p[1]
		d := meanRank(r, i) - meanRank(r, j)
		se := math.Sqrt(float64(s2*float64(1/float64(r.Counts[i])+1/float64(r.Counts[j]))) / 2)
		q := d / se
		_, sf := srangeTails(math.Abs(q), r.K, inf)
		out[k] = Comparison{I: i, J: j, MeanDiff: d, SE: se, Statistic: q, P: sf}
	}
	return out, nil
}

// DSCFTest is the Dwass-Steel-Critchlow-Fligner all-pairs test (Steel 1960, Technometrics
// 2:197-207; Dwass 1960; Critchlow & Fligner 1991, Comm. Statist. Theory Methods 20:127-139,
// the last two recalled from memory; Hollander, Wolfe & Chicken 2014, §6.5; docs/methods.md
// §3.4). For each pair only the n_i + n_j observations of the two groups are ranked
// (midranks), and with n = n_i + n_j and t the sizes of the tie blocks within the pair,
//
//	W  = rank sum of group j,   E = n_j (n + 1)/2
//	V* = (n_i n_j / 24) [n + 1 − Σ (t − 1) t (t + 1) / (n (n − 1))]
//	W* = (W − E) / sqrt(V*)  (= √2 × the two-sample Wilcoxon z, no continuity correction)
//	p  = P(Q_{k,∞} ≥ |W*|)   ([StudentizedRangeSurvival], df = ∞, k = r.K)
//
// where k is the number of groups in the analysis, even for a many-to-one family.
//
// Sign convention: Statistic = −W* = (W_I − n_I (n + 1)/2)/sqrt(V*), positive when group I
// tends to be larger (the same direction as [DunnTest]); docs/methods.md §3.4 lists W*, the
// opposite sign. MeanDiff is the difference of the mean pairwise ranks of I and J,
// W_I/n_I − W_J/n_J, and SE = sqrt(V*) (1/n_I + 1/n_J), so Statistic = MeanDiff/SE. The
// p-values are unadjusted.
//
// The pairwise ranks come from a linear merge of r.Sorted[I] and r.Sorted[J], O(n_I + n_J)
// time per pair and no allocation per observation; rank sums are kept doubled in int64
// (exact). A pair whose observations are all tied has no W*: its Comparison has
// NotComputable set and NaN statistic and p. More than 1000 groups give an error wrapping
// [ErrNotComputable] (the studentized range is not computed for more). An inconsistent r
// gives an error (checked in O(N): sizes, rank sums, tie blocks, and sorted values that
// are finite and ascending, since a merge of unordered or NaN values would not advance).
func DSCFTest(r *Ranking, pairs [][2]int) ([]Comparison, error) {
	if err := checkPairs(r, pairs); err != nil {
		return nil, fmt.Errorf("dscf: %w", err)
	}
	if r.K > srangeMaxK {
		return nil, fmt.Errorf("dscf: %w: the studentized range is computed for at most %d groups, the analysis has %d", ErrNotComputable, srangeMaxK, r.K)
	}
	if err := checkSRange(r.K, math.Inf(1)); err != nil {
		return nil, fmt.Errorf("dscf: %w", err)
	}
	if err := checkRankingDeep(r); err != nil {
		return nil, fmt.Errorf("dscf: %w", err)
	}
	out := make([]Comparison, len(pairs))
	inf := math.Inf(1)
	for k, p := range pairs {
		i, j := p[0], p[1]
		xi, xj := r.Sorted[i], r.Sorted[j]
		w2i, tie, blocks := pairRankSum2(xi, xj)
		ni, nj := float64(len(xi)), float64(len(xj))
		n := ni + nj
		v := float64(float64(ni*nj)/24) * (float64(n+1) - tie/float64(n*float64(n-1)))
		if blocks <= 1 || !(v > 0) {
			nan := math.NaN()
			out[k] = Comparison{I: i, J: j, MeanDiff: 0, SE: nan, Statistic: nan, P: nan, NotComputable: PairAllTied}
			continue
		}
		// d = W_I − n_I (n + 1)/2, from doubled ranks: (2W_I − n_I (n + 1))/2, exact in int64.
		nI, nJ := int64(len(xi)), int64(len(xj))
		d2 := w2i - nI*(nI+nJ+1)
		d := float64(d2) / 2
		sv := math.Sqrt(v)
		stat := d / sv
		inv := float64(1/ni + 1/nj)
		w2j := (nI+nJ)*(nI+nJ+1) - w2i
		meanDiff := float64(w2i)/float64(2*nI) - float64(w2j)/float64(2*nJ)
		_, sf := srangeTails(math.Abs(stat), r.K, inf)
		out[k] = Comparison{I: i, J: j, MeanDiff: meanDiff, SE: float64(sv * inv), Statistic: stat, P: sf}
	}
	return out, nil
}

// pairRankSum2 merges two ascending samples and returns twice the rank sum of x in the
// pooled midranking, Σ (t − 1) t (t + 1) over its tie blocks (summed in float64 in value
// order) and the number of tie blocks. A block of size t starting after pos values has
// doubled midrank 2 pos + t + 1.
func pairRankSum2(x, y []float64) (w2x int64, tie float64, blocks int) {
	i, j := 0, 0
	var pos int64
	for i < len(x) || j < len(y) {
		var v float64
		switch {
		case j == len(y):
			v = x[i]
		case i == len(x):
			v = y[j]
		default:
			v = min(x[i], y[j])
		}
		ci, cj := 0, 0
		for i < len(x) && x[i] == v {
			i++
			ci++
		}
		for j < len(y) && y[j] == v {
			j++
			cj++
		}
		t := int64(ci + cj)
		w2x += int64(ci) * (2*pos + t + 1)
		ft := float64(t)
		tie += float64(float64(float64(ft-1)*ft) * float64(ft+1))
		pos += t
		blocks++
	}
	return w2x, tie, blocks
}
