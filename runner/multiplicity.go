package runner

import (
	"fmt"
	"math"
	"slices"

	"rankplan/runner/results"
	"rankplan/spec"
	"rankplan/stats"
)

// multiplicityMethods describes each rule of the plan's multiplicity section, with its
// source. The adjustments are those of the post-hoc comparisons ([stats.AdjustP]).
// Every rule of [spec.MultiplicityRules] has an entry (TestVocabularyImplemented).
var multiplicityMethods = map[spec.MultiplicityRule]string{
	rule(spec.Bonferroni):         "Bonferroni: each omnibus p-value times the family size m, capped at 1",
	rule(spec.Sidak):              "Šidák (1967): 1 − (1 − p)^m",
	rule(spec.Holm):               "Holm (1979) step-down over the family's omnibus p-values",
	rule(spec.Hochberg):           "Hochberg (1988) step-up over the family's omnibus p-values",
	rule(spec.Hommel):             "Hommel (1988) closed Simes tests over the family's omnibus p-values",
	rule(spec.BenjaminiHochberg):  "Benjamini & Hochberg (1995) false discovery rate step-up",
	rule(spec.BenjaminiYekutieli): "Benjamini & Yekutieli (2001) false discovery rate step-up under arbitrary dependence",
	spec.FixedSequence: "fixed sequence (hierarchical testing; Maurer, Hothorn & Lehmacher 1995; Westfall & Krishen 2001): " +
		"each analysis in the order listed is tested at the full alpha only if every earlier one rejected; " +
		"adjusted p = the largest p-value so far in the sequence",
}

// rule names the multiplicity rule that adjusts the family's p-values by a.
func rule(a spec.Adjustment) spec.MultiplicityRule { return spec.MultiplicityRule(a) }

// multiplicity decides the analyses of the plan's family together and rewrites their
// decisions. A family member whose test was not computable counts with p = 1: it takes
// its place in the family (m does not shrink) and never rejects.
//
// For an adjustment, the adjusted p-values come from [stats.AdjustP] on the members' p in
// listed order, and a member rejects when its adjusted p <= alpha. For the fixed sequence,
// p̃_i = max_{j<=i} p_j and member i rejects when p̃_i <= alpha, which is the same as
// testing each in turn at alpha until the first non-rejection (common practice; the fixed
// sequence procedure of Maurer, Hothorn & Lehmacher 1995 and Westfall & Krishen 2001, J.
// Stat. Plan. Inference 99:25-40, both recalled from memory).
func multiplicity(p *spec.Plan, as []results.Analysis) (*results.Multiplicity, error) {
	m := p.Multiplicity
	out := &results.Multiplicity{Rule: m.Rule, Method: multiplicityMethods[m.Rule], Alpha: p.Alpha}
	if out.Method == "" {
		return nil, fmt.Errorf("multiplicity rule %q has no implementation", m.Rule)
	}
	idx := make([]int, len(m.Analyses))
	raw := make([]float64, len(m.Analyses))
	for k, id := range m.Analyses {
		idx[k] = slices.IndexFunc(as, func(a results.Analysis) bool { return a.ID == id })
		a := &as[idx[k]]
		raw[k] = 1
		if a.Status == "ok" {
			raw[k] = 0 // below the smallest normal double, where only log10 is kept
			if v := a.PValue.Value; v != nil {
				raw[k] = *v
			}
		}
	}
	adj := make([]float64, len(raw))
	if m.Rule == spec.FixedSequence {
		run := 0.0
		for k, v := range raw {
			run = math.Max(run, v)
			adj[k] = run
		}
	} else {
		var err error
		if adj, err = stats.AdjustP(string(m.Rule), raw); err != nil {
			return nil, fmt.Errorf("multiplicity: %w", err)
		}
	}
	stopped := "" // the fixed sequence's first analysis that did not reject
	for k, id := range m.Analyses {
		a := &as[idx[k]]
		mem := results.Member{ID: id, PAdjusted: adj[k], Tested: stopped == "", Reject: adj[k] <= p.Alpha}
		if a.Status == "ok" {
			mem.P = &results.Tail{Value: a.PValue.Value, Log10: a.PValue.Log10}
		}
		switch {
		case a.Status != "ok":
			mem.Reject = false
			mem.Why = "the test is not computable (" + a.Reason + "); it counts in the family with p = 1 and does not reject"
		case m.Rule == spec.FixedSequence && stopped != "":
			mem.Reject = false
			mem.Why = fmt.Sprintf("not tested: %q, earlier in the fixed sequence, did not reject", stopped)
		case m.Rule == spec.FixedSequence && mem.Reject:
			mem.Why = fmt.Sprintf("rejected: p = %s <= alpha = %s, and every earlier analysis in the sequence rejected", num(raw[k]), num(p.Alpha))
		case m.Rule == spec.FixedSequence && k+1 < len(raw):
			mem.Why = fmt.Sprintf("not rejected: p = %s > alpha = %s; the analyses after it in the sequence are not tested", num(raw[k]), num(p.Alpha))
		case m.Rule == spec.FixedSequence:
			mem.Why = fmt.Sprintf("not rejected: p = %s > alpha = %s", num(raw[k]), num(p.Alpha))
		case mem.Reject:
			mem.Why = fmt.Sprintf("rejected: adjusted p = %s <= alpha = %s (%s, m = %d)", num(adj[k]), num(p.Alpha), m.Rule, len(raw))
		default:
			mem.Why = fmt.Sprintf("not rejected: adjusted p = %s > alpha = %s (%s, m = %d)", num(adj[k]), num(p.Alpha), m.Rule, len(raw))
		}
		if m.Rule == spec.FixedSequence && !mem.Reject && stopped == "" {
			stopped = id
		}
		out.Members = append(out.Members, mem)
		if a.Decision != nil {
			v := adj[k]
			a.Decision.Reject = mem.Reject
			a.Decision.PAdjusted = &v
			a.Decision.Rule = fmt.Sprintf("multiplicity rule %s across %d analyses: %s", m.Rule, len(raw), mem.Why)
		}
	}
	return out, nil
}

// num formats a number for the decision texts: up to 6 significant digits.
func num(x float64) string { return fmt.Sprintf("%.6g", x) }
