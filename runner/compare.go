package runner

import (
	"encoding/json"
	"slices"
	"strconv"
	"strings"

	"rankplan/runner/report"
	"rankplan/runner/results"
)

// Kinds of conclusion that verify --data compares between the recorded results and a
// rerun on other data.
const (
	// ConclusionOmnibus is an analysis's omnibus decision at alpha on its own p-value.
	ConclusionOmnibus = "omnibus"
	// ConclusionFamily is the decision of an analysis in the plan's multiplicity family,
	// which replaces its omnibus decision: rejected, not rejected, not tested (after a
	// non-rejection in a fixed sequence) or not computable.
	ConclusionFamily = "family"
	// ConclusionPostHoc is whether an analysis's pairwise comparisons ran.
	ConclusionPostHoc = "posthoc"
	// ConclusionPair is one pair's decision at alpha after the adjustment.
	ConclusionPair = "pair"
	// ConclusionLetters is one group's compact letters.
	ConclusionLetters = "letters"
	// ConclusionAnalysis is an analysis present in one of the two results only.
	ConclusionAnalysis = "analysis"
)

// States of a conclusion in a [ConclusionChange]; compact letters are given by their display.
const (
	StateRejected      = "rejected"
	StateNotRejected   = "not rejected"
	StateNotTested     = "not tested"
	StateNotComputable = "not computable"
	StateRan           = "ran"
	StateNotRun        = "not run"
	StatePresent       = "present"
	StateAbsent        = "absent" // on this side only the other side has the item
)

// ConclusionChange is one conclusion at the plan's alpha that differs between the recorded
// results (Before) and the rerun on other data (After), for verify --data.
type ConclusionChange struct {
	Analysis string `json:"analysis"`
	Kind     string `json:"kind"` // one of the Conclusion* kinds
	// Item names what changed within the analysis: the test (omnibus), the multiplicity
	// rule (family), the method and adjustment (posthoc), "G1 vs G2" (pair) or the group
	// (letters), with labels as in the data; empty for a whole analysis.
	Item string `json:"item,omitempty"`
	// Groups are the pair's two groups or the letters' group, exactly as in the data.
	Groups []string `json:"groups,omitempty"`
	Before string   `json:"before"` // a State* value, or the letters display
	After  string   `json:"after"`
	// PName names the p-value the decision rests on: "p" (the analysis's own, or an
	// unadjusted pair) or "p_adj" (adjusted across the family or the comparisons).
	PName string `json:"p_name,omitempty"`
	// PBefore and PAfter are that p-value on each side: null where there is none (absent,
	// not computable, not run) or where it is below the smallest positive normal double
	// (Text then gives its bound from log10 p).
	PBefore *float64 `json:"p_before"`
	PAfter  *float64 `json:"p_after"`
	// Text says it for people on one line, as the text report lists it.
	Text string `json:"text"`
}

// ConclusionCounts sums up a verify --data comparison.
type ConclusionCounts struct {
	Data     string `json:"data"`     // the data file of the rerun
	Compared int    `json:"compared"` // conclusions compared, those on one side only included
	Changed  int    `json:"changed"`
	// PValues counts the p-values that the compared decisions rest on and that both
	// sides hold; PMoved those of them that differ in any bit.
	PValues int `json:"p_values"`
	PMoved  int `json:"p_values_moved"`
}

// conclusionComparison is everything [compareResults] found.
type conclusionComparison struct {
	Changes                   []ConclusionChange
	Compared, PValues, PMoved int
}

// reportConclusions compares the recorded results.json (old) with the rerun on dataPath and
// adds to r one check summing it up and, for each conclusion that changed, one failed
// check saying which, before and after, with its p-values.
func reportConclusions(r *VerifyReport, old []byte, fresh *results.Results, dataPath string) {
	var was results.Results
	if err := json.Unmarshal(old, &was); err != nil {
		r.add("conclusions", Fail, ClassIntegrity, ResultsFile, "cannot read %s: %v", ResultsFile, err)
		return
	}
	c := compareResults(&was, fresh)
	r.ConclusionChanges = c.Changes
	r.Conclusions = &ConclusionCounts{Data: dataPath, Compared: c.Compared, Changed: len(c.Changes), PValues: c.PValues, PMoved: c.PMoved}
	if len(c.Changes) == 0 {
		r.add("conclusions", Pass, "", "", "no conclusion at alpha changed on %s: %d conclusions compared; %d of %d p-values moved",
			dataPath, c.Compared, c.PMoved, c.PValues)
		return
	}
	r.add("conclusions", Fail, ClassConclusion, "", "%d of %d conclusions at alpha changed on %s (%d of %d p-values moved); each one follows",
		len(c.Changes), c.Compared, dataPath, c.PMoved, c.PValues)
	for _, ch := range c.Changes {
		r.add("changed", Fail, ClassConclusion, "", "%s", ch.Text)
	}
}

// verdict is one side of a conclusion: its state, the p-value it rests on and, for a state
// without a p-value, why.
type verdict struct {
	state  string
	p      *float64 // nil: no p-value, or an omnibus one below the smallest normal double
	log10  float64  // log10 of an omnibus p-value (0 for the others, which are never below it)
	hasP   bool
	detail string
}

var absent = verdict{state: StateAbsent}

// compareResults compares every conclusion at alpha of the recorded results was with those
// of the rerun now: per analysis its omnibus decision (or, for a member of the plan's
// multiplicity family, its decision there), whether its comparisons ran, each pair's
// decision and each group's compact letters. Analyses, pairs and groups found on one side
// only count as changed conclusions. Pairs and letters are compared where the comparisons
// ran on both sides; where they ran on one side only, the post-hoc conclusion says so.
func compareResults(was, now *results.Results) conclusionComparison {
	var c conclusionComparison
	old := map[string]*results.Analysis{}
	for i := range was.Analyses {
		old[was.Analyses[i].ID] = &was.Analyses[i]
	}
	fresh := map[string]bool{}
	for i := range now.Analyses {
		b := &now.Analyses[i]
		fresh[b.ID] = true
		a, ok := old[b.ID]
		if !ok {
			c.add(b.ID, ConclusionAnalysis, "", nil, verdict{state: StateAbsent}, verdict{state: StatePresent}, "")
			continue
		}
		c.analysis(a, b, was.Multiplicity, now.Multiplicity)
	}
	for i := range was.Analyses {
		if a := &was.Analyses[i]; !fresh[a.ID] {
			c.add(a.ID, ConclusionAnalysis, "", nil, verdict{state: StatePresent}, verdict{state: StateAbsent}, "")
		}
	}
	return c
}

// analysis compares the conclusions of one analysis found on both sides.
func (c *conclusionComparison) analysis(a, b *results.Analysis, ma, mb *results.Multiplicity) {
	fa, fb := member(ma, a.ID), member(mb, b.ID)
	if fa != nil || fb != nil {
		rule := ""
		for _, m := range []*results.Multiplicity{ma, mb} {
			if m != nil && rule == "" {
				rule = string(m.Rule)
			}
		}
		c.add(a.ID, ConclusionFamily, rule, nil, familyVerdict(a, fa), familyVerdict(b, fb), "p_adj")
	} else {
		c.add(a.ID, ConclusionOmnibus, string(a.Test), nil, omnibusVerdict(a), omnibusVerdict(b), "p")
	}
	pa, pb := a.PostHoc, b.PostHoc
	if pa == nil && pb == nil {
		return
	}
	ref := pa
	if ref == nil {
		ref = pb
	}
	item := string(ref.Method)
	if ref.Simultaneous == "" {
		item += ", " + string(ref.Adjust)
	}
	c.add(a.ID, ConclusionPostHoc, item, nil, postHocVerdict(pa), postHocVerdict(pb), "")
	if pa == nil || pb == nil || !pa.Ran || !pb.Ran {
		return
	}
	pname := "p_adj"
	if ref.Adjust == "none" {
		pname = "p"
	}
	pairs := make(map[[2]string]*results.Pair, len(pb.Pairs))
	for i := range pb.Pairs {
		pairs[pairKey(pb.Pairs[i].Groups)] = &pb.Pairs[i]
	}
	seen := make(map[[2]string]bool, len(pa.Pairs))
	for i := range pa.Pairs {
		x := &pa.Pairs[i]
		k := pairKey(x.Groups)
		seen[k] = true
		y, ok := pairs[k]
		vy := absent
		if ok {
			vy = pairVerdict(y)
		}
		c.add(a.ID, ConclusionPair, x.Groups[0]+" vs "+x.Groups[1], x.Groups[:], pairVerdict(x), vy, pname, item)
	}
	for i := range pb.Pairs {
		if y := &pb.Pairs[i]; !seen[pairKey(y.Groups)] {
			c.add(a.ID, ConclusionPair, y.Groups[0]+" vs "+y.Groups[1], y.Groups[:], absent, pairVerdict(y), pname, item)
		}
	}
	if len(pa.Letters) == 0 && len(pb.Letters) == 0 {
		return
	}
	letters := make(map[string]string, len(pb.Letters))
	for _, l := range pb.Letters {
		letters[l.Group] = l.Display
	}
	had := make(map[string]bool, len(pa.Letters))
	for _, l := range pa.Letters {
		had[l.Group] = true
		after, ok := letters[l.Group]
		vy := absent
		if ok {
			vy = verdict{state: after}
		}
		c.add(a.ID, ConclusionLetters, l.Group, []string{l.Group}, verdict{state: l.Display}, vy, "", item)
	}
	for _, l := range pb.Letters {
		if !had[l.Group] {
			c.add(a.ID, ConclusionLetters, l.Group, []string{l.Group}, absent, verdict{state: l.Display}, "", item)
		}
	}
}

// add counts one conclusion, and the p-values it rests on, and records it when it changed.
// context, if given, is the comparisons' method and adjustment, for the text.
func (c *conclusionComparison) add(analysis, kind, item string, groups []string, before, after verdict, pname string, context ...string) {
	c.Compared++
	if before.hasP && after.hasP {
		c.PValues++
		if before.log10 != after.log10 || !samePtr(before.p, after.p) {
			c.PMoved++
		}
	}
	if before.state == after.state {
		return
	}
	ch := ConclusionChange{Analysis: analysis, Kind: kind, Item: item, Groups: groups, Before: before.state, After: after.state}
	if before.hasP || after.hasP {
		ch.PName, ch.PBefore, ch.PAfter = pname, before.p, after.p
	}
	ch.Text = changeText(ch, before, after, context)
	c.Changes = append(c.Changes, ch)
}

// changeText writes a change on one line, e.g.
//
//	analysis primary, pair A vs C (dunn, holm): rejected before (p_adj 0.012), not rejected now (p_adj 0.081)
func changeText(ch ConclusionChange, before, after verdict, context []string) string {
	var b strings.Builder
	b.WriteString("analysis " + ch.Analysis)
	switch ch.Kind {
	case ConclusionOmnibus:
		b.WriteString(", omnibus " + ch.Item)
	case ConclusionFamily:
		b.WriteString(", decision in the multiplicity family (" + ch.Item + ")")
	case ConclusionPostHoc:
		b.WriteString(", comparisons (" + ch.Item + ")")
	case ConclusionPair:
		b.WriteString(", pair " + shownLabel(ch.Groups[0]) + " vs " + shownLabel(ch.Groups[1]))
	case ConclusionLetters:
		b.WriteString(", letters of " + shownLabel(ch.Groups[0]))
	}
	if len(context) > 0 {
		b.WriteString(" (" + strings.Join(context, ", ") + ")")
	}
	b.WriteString(": ")
	b.WriteString(sideText(ch.Kind, ch.PName, before, "before", "in the rerun only"))
	b.WriteString(", ")
	b.WriteString(sideText(ch.Kind, ch.PName, after, "now", "in the recorded results only"))
	return b.String()
}

// sideText writes one side of a change: its state with "before" or "now", then the p-value
// or the reason in brackets. An absent item says that only the other side has it.
func sideText(kind, pname string, v verdict, when, otherOnly string) string {
	switch {
	case v.state == StateAbsent && kind == ConclusionAnalysis:
		return "absent " + when
	case v.state == StateAbsent:
		return "absent " + when + " (" + otherOnly + ")"
	case kind == ConclusionAnalysis:
		return "present " + when
	case kind == ConclusionLetters:
		return strconv.Quote(v.state) + " " + when
	}
	s := v.state + " " + when
	switch {
	case v.hasP:
		s += " (" + pname + " " + report.FormatP(v.p, v.log10) + ")"
	case v.detail != "":
		s += " (" + v.detail + ")"
	}
	return s
}

// omnibusVerdict is an analysis's omnibus decision on its own p-value.
func omnibusVerdict(a *results.Analysis) verdict {
	if a.Status != "ok" || a.Decision == nil || a.PValue == nil {
		return verdict{state: StateNotComputable, detail: a.Reason}
	}
	v := verdict{state: StateNotRejected, p: a.PValue.Value, log10: a.PValue.Log10, hasP: true}
	if a.Decision.Reject {
		v.state = StateRejected
	}
	return v
}

// familyVerdict is the decision of analysis a in the multiplicity family, from its member
// record m; an analysis outside the family (m nil) has its omnibus decision.
func familyVerdict(a *results.Analysis, m *results.Member) verdict {
	switch {
	case m == nil:
		return omnibusVerdict(a)
	case a.Status != "ok" || m.P == nil:
		return verdict{state: StateNotComputable, detail: a.Reason}
	}
	p := m.PAdjusted
	v := verdict{state: StateNotRejected, p: &p, hasP: true}
	switch {
	case !m.Tested:
		v.state = StateNotTested
	case m.Reject:
		v.state = StateRejected
	}
	return v
}

// postHocVerdict is whether the comparisons ran, and why not.
func postHocVerdict(ph *results.PostHoc) verdict {
	switch {
	case ph == nil:
		return absent
	case ph.Ran:
		return verdict{state: StateRan}
	case ph.NotComputable != "":
		return verdict{state: StateNotComputable, detail: ph.NotComputable}
	}
	return verdict{state: StateNotRun, detail: ph.Why}
}

// pairVerdict is a pair's decision after the adjustment, on its adjusted p-value.
func pairVerdict(x *results.Pair) verdict {
	if x.NotComputable != "" || x.PAdjusted == nil {
		return verdict{state: StateNotComputable, detail: x.NotComputable}
	}
	v := verdict{state: StateNotRejected, p: x.PAdjusted, hasP: true}
	if x.Reject {
		v.state = StateRejected
	}
	return v
}

// member is the record of analysis id in the family m, or nil.
func member(m *results.Multiplicity, id string) *results.Member {
	if m == nil {
		return nil
	}
	if i := slices.IndexFunc(m.Members, func(x results.Member) bool { return x.ID == id }); i >= 0 {
		return &m.Members[i]
	}
	return nil
}

// pairKey names a pair whatever the order of its groups, since a group added to or missing
// from the new data can change the order of the others.
func pairKey(g [2]string) [2]string {
	if g[1] < g[0] {
		g[0], g[1] = g[1], g[0]
	}
	return g
}

// shownLabel writes a group label as it is when Go would quote it unchanged and it has no
// surrounding spaces; otherwise visibly ([report.VisibleLabel]), so that a label with
// invisible characters cannot pass for another in a change's text.
func shownLabel(s string) string {
	if s != "" && strings.TrimSpace(s) == s && strconv.Quote(s) == `"`+s+`"` {
		return s
	}
	return report.VisibleLabel(s)
}

func samePtr(x, y *float64) bool {
	return x == nil && y == nil || x != nil && y != nil && *x == *y
}
