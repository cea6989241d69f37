package runner

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"strings"

	"rankplan/runner/results"
	"rankplan/spec"
	"rankplan/stats"
)

// postHoc runs the pairwise follow-up of an analysis. This switch is the one place where a
// post-hoc method or adjustment named in a plan meets its function in package stats. ctx
// is checked before each pair's rank-sum test and effect sizes (each takes at most about
// a second: the exact method's budget, the Moses index's MosesExactWork).
func postHoc(ctx context.Context, p *spec.Plan, in *Input, r *stats.Ranking, omnibus *results.Decision) (*results.PostHoc, error) {
	ph := in.Analysis.PostHoc
	if ph.Method == spec.NoPostHoc {
		return nil, nil
	}
	out := &results.PostHoc{Method: ph.Method, Adjust: ph.Adjust, Family: "all-pairs", When: ph.When}
	k := len(in.Groups)
	pairs := stats.AllPairs(k)
	if ph.Control != "" {
		out.Family, out.Control = "many-to-one", ph.Control
		pairs = stats.ManyToOne(k, slices.Index(in.Groups, ph.Control))
	}
	switch ph.Method {
	case spec.Nemenyi:
		out.Simultaneous = fmt.Sprintf("simultaneous by construction: each p is P(Q >= q) for the studentized range of k = %d means with infinite degrees of freedom, which holds the family-wise error rate over all pairs at alpha asymptotically (large groups); no adjustment is applied", k)
		out.Note = nemenyiNote(r.Counts)
	case spec.DSCF:
		out.Simultaneous = fmt.Sprintf("simultaneous by construction: each pair is ranked on its own and W* is referred to the studentized range of k = %d means with infinite degrees of freedom, which holds the family-wise error rate over all pairs at alpha asymptotically (large groups); no adjustment is applied", k)
		if !equalSizes(r.Counts) {
			out.Note = "unequal group sizes: the pairs' W* are then not equally correlated, and the studentized range reference is an approximation that is least accurate when the groups are small and their sizes very different"
		}
	}
	if out.Simultaneous != "" && out.Family == "many-to-one" {
		out.Note = strings.TrimSpace(out.Note + " Many-to-one comparisons are referred to the all-pairs studentized range, so they are conservative.")
	}
	switch {
	case ph.When == spec.WhenAlways:
		out.Ran, out.Why = true, "posthoc.when is always: the comparisons run whatever the omnibus result"
	case omnibus.Reject && omnibus.PAdjusted != nil:
		out.Ran, out.Why = true, "the omnibus test rejected at alpha under the plan's multiplicity rule (posthoc.when: significant)"
	case omnibus.Reject:
		out.Ran, out.Why = true, "the omnibus test rejected at alpha (posthoc.when: significant)"
	case omnibus.PAdjusted != nil:
		out.Why = "the omnibus test did not reject at alpha under the plan's multiplicity rule (posthoc.when: significant)"
		return out, nil
	default:
		out.Why = "the omnibus test did not reject at alpha (posthoc.when: significant)"
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
			// stats.DSCFTest gives −W* of the cited sources (positive when the first group
			// tends to be larger, as for the other procedures); the name says so.
			out.Statistic, pm = "-W*", "studentized-range"
			cmp, err = stats.DSCFTest(r, pairs)
		}
		if errors.Is(err, stats.ErrNotComputable) {
			// A property of these data, not a failure: say so and go on with the run.
			out.Ran, out.Pairs, out.NotComputable = false, nil, notComputableReason(err)
			return out, nil
		}
		if err != nil {
			return nil, err
		}
		for i, c := range cmp {
			out.Pairs[i] = results.Pair{MeanRankDiff: c.MeanDiff, PMethod: pm}
			if c.NotComputable != "" {
				out.Pairs[i].NotComputable = c.NotComputable
				raw[i] = 1
				continue
			}
			out.Pairs[i].Statistic, out.Pairs[i].P = ptr(c.Statistic), ptr(c.P)
			raw[i] = c.P
		}
	case spec.RankSum:
		out.Statistic = "U"
		for i, pr := range pairs {
			if err := ctx.Err(); err != nil {
				return nil, fmt.Errorf("rank-sum: %w", err)
			}
			rs, err := stats.RankSumTest(ctx, r.Sorted[pr[0]], r.Sorted[pr[1]], true, stats.DefaultExactBudget)
			if errors.Is(err, stats.ErrAllTied) {
				out.Pairs[i] = results.Pair{PMethod: "normal-continuity", NotComputable: stats.PairAllTied}
				raw[i] = 1
				continue
			}
			if err != nil {
				return nil, fmt.Errorf("rank-sum %s vs %s: %w", in.Groups[pr[0]], in.Groups[pr[1]], err)
			}
			m, n := float64(len(r.Sorted[pr[0]])), float64(len(r.Sorted[pr[1]]))
			// The pair's own mean-rank difference: R̄_x − R̄_y = (U − mn/2)(m + n)/(mn).
			pair := results.Pair{Statistic: ptr(rs.U), PMethod: "normal-continuity", P: ptr(rs.PNorm),
				MeanRankDiff: float64(float64(rs.U-float64(m*n)/2)*float64(m+n)) / float64(m*n)}
			if rs.Exact {
				pair.PMethod, pair.P = "exact", ptr(rs.PExact)
			}
			out.Pairs[i] = pair
			raw[i] = *pair.P
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
	// Each group is read as runs of equal values once, from its sorted values, and one work
	// space serves every pair: no pair copies or sorts a group.
	runs := make([]*stats.SortedRuns, k)
	for g := range runs {
		var err error
		if runs[g], err = stats.NewSortedRuns(r.Sorted[g]); err != nil {
			return nil, fmt.Errorf("pairwise effect sizes: group %s: %w", in.Groups[g], err)
		}
	}
	var work stats.PairWork
	for i, pr := range pairs {
		if err := ctx.Err(); err != nil {
			return nil, fmt.Errorf("pairwise effect sizes: %w", err)
		}
		x, y := runs[pr[0]], runs[pr[1]]
		e, err := work.EffectSizes(x, y)
		if err != nil {
			return nil, err
		}
		hl, err := work.HodgesLehmann(x, y, level)
		if err != nil {
			return nil, err
		}
		pp := &out.Pairs[i]
		pp.Groups = [2]string{in.Groups[pr[0]], in.Groups[pr[1]]}
		if pp.NotComputable == "" {
			pp.PAdjusted, pp.Reject = ptr(adj[i]), rej[i]
		}
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
			d := out.Pairs[i].Reject
			diff[pr[0]][pr[1]], diff[pr[1]][pr[0]] = d, d
		}
		letters, err := stats.CompactLetters(diff)
		if err != nil {
			return nil, err
		}
		out.LettersMethod = "insert-absorb-sweep"
		if letters.Greedy {
			out.LettersMethod = "greedy-sweep"
		}
		out.Letters = make([]results.GroupLetters, len(in.Groups))
		for i, g := range in.Groups {
			out.Letters[i] = results.GroupLetters{Group: g, Letters: letters.Names[i], Display: letters.Text(i)}
		}
	}
	return out, nil
}

// nemenyiNote labels a Nemenyi family by its design: the procedure is derived for equal
// group sizes; with unequal sizes the Tukey-Kramer-type form is used, which is conservative.
func nemenyiNote(counts []int) string {
	if !equalSizes(counts) {
		return "unequal group sizes: Nemenyi's procedure is derived for equal sizes; this is its Tukey-Kramer-type extension, which is conservative here"
	}
	return fmt.Sprintf("equal group sizes (n = %d each), as Nemenyi's procedure assumes", counts[0])
}

// equalSizes reports whether every group has the same number of observations.
func equalSizes(counts []int) bool {
	for _, c := range counts[1:] {
		if c != counts[0] {
			return false
		}
	}
	return true
}

// ptr returns a pointer to a copy of v.
func ptr(v float64) *float64 { return &v }

// notComputableReason is the reason of a stats error that wraps stats.ErrNotComputable,
// without the procedure prefix and the words "not computable" (the results say that).
func notComputableReason(err error) string {
	msg := err.Error()
	if _, after, ok := strings.Cut(msg, stats.ErrNotComputable.Error()+": "); ok {
		return after
	}
	return msg
}
