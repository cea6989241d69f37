package report

import (
	"fmt"
	"strings"

	"rankplan/runner/results"
)

// groupSizes maps each group of an analysis to its number of observations.
func groupSizes(a *results.Analysis) map[string]int {
	sizes := make(map[string]int, len(a.Groups))
	for _, g := range a.Groups {
		sizes[g.Name] = g.N
	}
	return sizes
}

// hlIntervalText says a pair's Hodges-Lehmann interval in words, with what its coverage is:
//
//	95% [0.31, 1.5], exact coverage 95.6743%
//	95% [0, 6], coverage 95.0007% for continuous data; with tied values the actual coverage is typically higher
//	95% not attainable with 3 and 3 values; widest interval [-6, 7], 90% coverage
//	95% [-2.1, 3.4], index from the normal approximation
//
// sizes are the two groups' numbers of observations.
func hlIntervalText(hl results.HLShift, n1, n2 int) string {
	iv := hl.Interval
	level := Num(100*iv.Level) + "%"
	ends := fmt.Sprintf("[%s, %s]", Num(iv.Low), Num(iv.High))
	var b strings.Builder
	switch {
	case !hl.LevelAttainable:
		fmt.Fprintf(&b, "%s not attainable with %d and %d values; widest interval %s", level, n1, n2, ends)
		if hl.Coverage != nil {
			fmt.Fprintf(&b, ", %s%% coverage", Num(100**hl.Coverage))
		}
	case hl.Coverage == nil:
		fmt.Fprintf(&b, "%s %s, index from the normal approximation", level, ends)
	case hl.TiedValues:
		fmt.Fprintf(&b, "%s %s, coverage %s%%", level, ends, Num(100**hl.Coverage))
	default:
		fmt.Fprintf(&b, "%s %s, exact coverage %s%%", level, ends, Num(100**hl.Coverage))
	}
	if hl.TiedValues {
		b.WriteString(" for continuous data; with tied values the actual coverage is typically higher")
	}
	return b.String()
}

// hlIntervalCell is the short form for a table cell; hlIntervalNotes says below the table
// what the cells' marks mean:
//
//	95% [0.31, 1.5], coverage 95.6743%
//	95% [0, 6], coverage 95.0007% *          (* tied values)
//	widest [-6, 7], coverage 90% (95% not attainable)
//	95% [-2.1, 3.4], normal approximation
func hlIntervalCell(hl results.HLShift) string {
	iv := hl.Interval
	ends := fmt.Sprintf("[%s, %s]", Num(iv.Low), Num(iv.High))
	var s string
	switch {
	case !hl.LevelAttainable && hl.Coverage != nil:
		s = fmt.Sprintf("widest %s, coverage %s%% (%s%% not attainable)", ends, Num(100**hl.Coverage), Num(100*iv.Level))
	case hl.Coverage == nil:
		s = fmt.Sprintf("%s%% %s, normal approximation", Num(100*iv.Level), ends)
	default:
		s = fmt.Sprintf("%s%% %s, coverage %s%%", Num(100*iv.Level), ends, Num(100**hl.Coverage))
	}
	if hl.TiedValues {
		s += " *"
	}
	return s
}

// hlIntervalNotes are the sentences that go with [hlIntervalCell] for an analysis's pairs.
func hlIntervalNotes(a *results.Analysis) []string {
	if a.PostHoc == nil {
		return nil
	}
	sizes := groupSizes(a)
	var notes []string
	tied, normal := false, false
	for _, p := range a.PostHoc.Pairs {
		hl := p.HodgesLehmann
		tied = tied || hl.TiedValues
		normal = normal || hl.Coverage == nil
		if !hl.LevelAttainable && hl.Coverage != nil {
			notes = append(notes, fmt.Sprintf("%s vs %s: %s%% not attainable with %d and %d values; widest interval, %s%% coverage.",
				p.Groups[0], p.Groups[1], Num(100*hl.Interval.Level), sizes[p.Groups[0]], sizes[p.Groups[1]], Num(100**hl.Coverage)))
		}
	}
	if tied {
		notes = append(notes, "* Tied values: the coverage is computed for continuous data; the actual coverage is typically higher.")
	}
	if normal {
		notes = append(notes, "Normal approximation: the interval's index comes from the normal approximation of the rank-sum statistic (groups too large for the exact computation); its coverage is not computed.")
	}
	return notes
}
