package runner

import (
	"fmt"
	"slices"
	"strings"

	"rankplan/runner/results"
	"rankplan/spec"
	"rankplan/stats"
)

// postHoc runs the pairwise follow-up of an analysis. This switch is the one place where a
// post-hoc method or adjustment named in a plan meets its function in package stats.
func postHoc(p *spec.Plan, in *Input, r *stats.Ranking, omnibus *results.Decision) (*results.PostHoc, error) {
	ph := in.Analysis.PostHoc
	if ph.Method == spec.NoPostHoc {
		return nil, nil
	}
	out := &results.PostHoc{Method: string(ph.Method), Adjust: string(ph.Adjust), Family: "all-pairs", When: ph.When}
	k := len(in.Groups)
	pairs := stats.AllPairs(k)
	if ph.Control != "" {
		out.Family, out.Control = "many-to-one", ph.Control
		pairs = stats.ManyToOne(k, slices.Index(in.Groups, ph.Control))
	}
	switch ph.Method {
	case spec.Nemenyi:
		out.Simultaneous = fmt.Sprintf("simultaneous by construction: each p is P(Q >= q) for the studentized range of k = %d means with infinite degrees of freedom, which holds the family-wise error rate over all pairs at alpha; no adjustment is applied", k)
		out.Note = nemenyiNote(r.Counts)
	case spec.DSCF:
		out.Simultaneous = fmt.Sprintf("simultaneous by construction: each pair is ranked on its own and W* is referred to the studentized range of k = %d means with infinite degrees of freedom, which holds the family-wise error rate over all pairs at alpha (asymptotically); no adjustment is applied", k)
	}
	if out.Simultaneous != "" && out.Family == "many-to-one" {
		out.Note = strings.TrimSpace(out.Note + " Many-to-one comparisons are referred to the all-pairs studentized range, so they are conservative.")
	}
	switch {
	case ph.When == "always":
		out.Ran, out.Why = true, "posthoc.when is always: the comparisons run whatever the omnibus result"
	case omnibus.Reject && omnibus.PAdjusted != nil:
		out.Ran, out.Why = true, "the omnibus test rejected at alpha under the plan's multiplicity rule (posthoc.when: significant)"
	case omnibus.Reject:
		out.Ran, out.Why = true, "the omnibus test rejected at alpha (posthoc.when: significant)"
	case omnibus.PAdjusted != nil:
		out.Why = "not run: the omnibus test did not reject at alpha under the plan's multiplicity rule (posthoc.when: significant)"
		return out, nil
	default:
		out.Why = "not run: the omnibus test did not reject at alpha (posthoc.when: significant)"
		return out, nil
	}

	raw := make([]float64, len(pairs))
	out.Pairs = make([]results.Pair, len(pairs))
	switch ph.Method {
	case spec.Dunn, spec.Conover, spec.Nemenyi, spec.DSCF:
		var cmp []stats.Comparison
		var err error
		pm := "normal"
		switch ph.Method {
		case spec.Dunn:
			out.Statistic = "z"
			cmp, err = stats.DunnTest(r, pairs)
		case spec.Conover:
			out.Statistic, pm = "t", "t"
			cmp, err = stats.ConoverImanTest(r, pairs)
		case spec.Nemenyi:
			out.Statistic, pm = "q", "studentized-range"
			cmp, err = stats.NemenyiTest(r, pairs)
		case spec.DSCF:
			out.Statistic, pm = "W*", "studentized-range"
			cmp, err = stats.DSCFTest(r, pairs)
		}
		if err != nil {
			return nil, err
		}
		for i, c := range cmp {
			out.Pairs[i] = results.Pair{MeanRankDiff: c.MeanDiff, Statistic: c.Statistic, PMethod: pm, P: c.P}
			raw[i] = c.P
		}
	case spec.RankSum:
		out.Statistic = "U"
		for i, pr := range pairs {
			rs, err := stats.RankSumTest(r.Sorted[pr[0]], r.Sorted[pr[1]], true, stats.DefaultExactBudget)
			if err != nil {
				return nil, fmt.Errorf("rank-sum %s vs %s: %w", in.Groups[pr[0]], in.Groups[pr[1]], err)
			}
			m, n := float64(len(r.Sorted[pr[0]])), float64(len(r.Sorted[pr[1]]))
			// The pair's own mean-rank difference: R̄_x − R̄_y = (U − mn/2)(m + n)/(mn).
			pair := results.Pair{Statistic: rs.U, PMethod: "normal-continuity", P: rs.PNorm,
				MeanRankDiff: float64(float64(rs.U-float64(m*n)/2)*float64(m+n)) / float64(m*n)}
			if rs.Exact {
				pair.PMethod, pair.P = "exact", rs.PExact
			}
			out.Pairs[i] = pair
			raw[i] = pair.P
		}
	default:
		return nil, fmt.Errorf("post-hoc method %q has no implementation", ph.Method)
	}
	adj, err := stats.AdjustP(string(ph.Adjust), raw)
	if err != nil {
		return nil, err
	}
	rej := stats.Reject(adj, p.Alpha)
	level := in.Analysis.EffectSize.Level
	for i, pr := range pairs {
		x, y := r.Sorted[pr[0]], r.Sorted[pr[1]]
		e, err := stats.PairEffectSizes(x, y)
		if err != nil {
			return nil, err
		}
		hl, err := stats.HodgesLehmannShift(x, y, level)
		if err != nil {
			return nil, err
		}
		pp := &out.Pairs[i]
		pp.Groups = [2]string{in.Groups[pr[0]], in.Groups[pr[1]]}
		pp.PAdjusted, pp.Reject = adj[i], rej[i]
		pp.CliffsDelta, pp.VarghaDelaneyA = e.CliffsDelta, e.VarghaDelaneyA
		pp.HodgesLehmann = results.HLShift{Shift: hl.Shift, Interval: results.Interval{Level: level, Low: hl.Low, High: hl.High},
			IndexMethod: "normal", LevelAttainable: hl.Attainable, TiedValues: hl.Tied}
		if hl.ExactIndex {
			c := hl.Coverage
			pp.HodgesLehmann.Coverage, pp.HodgesLehmann.IndexMethod = &c, "exact"
		}
	}
	if out.Family == "all-pairs" {
		diff := make([][]bool, k)
		for i := range diff {
			diff[i] = make([]bool, k)
		}
		for i, pr := range pairs {
			diff[pr[0]][pr[1]], diff[pr[1]][pr[0]] = rej[i], rej[i]
		}
		letters, err := stats.CompactLetters(diff)
		if err != nil {
			return nil, err
		}
		for i, g := range in.Groups {
			out.Letters = append(out.Letters, results.GroupLetters{Group: g, Letters: letters[i]})
		}
	}
	return out, nil
}

// nemenyiNote labels a Nemenyi family by its design: the procedure is derived for equal
// group sizes; with unequal sizes the Tukey-Kramer-type form is used, which is conservative.
func nemenyiNote(counts []int) string {
	for _, c := range counts[1:] {
		if c != counts[0] {
			return "unequal group sizes: Nemenyi's procedure is derived for equal sizes; this is its Tukey-Kramer-type extension, which is conservative here"
		}
	}
	return fmt.Sprintf("equal group sizes (n = %d each), as Nemenyi's procedure assumes", counts[0])
}
