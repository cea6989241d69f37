package report

import (
	"fmt"
	"io"
	"strings"

	"rankplan/runner/results"
	"rankplan/spec"
)

// Markdown writes summary.md: a short summary of a run for CI step summaries and pull
// requests (GitHub-flavoured Markdown tables): one line per analysis with the omnibus
// result and decision, the effect sizes with their interval and its method (and any
// warnings about it), the pairwise decisions with the letter display, the decisions
// across analyses, the fingerprints, and how to verify the run. dir is the run folder as
// the reader should type it in the verify command.
func Markdown(w io.Writer, res *results.Results, meta Meta, dir string) error {
	ew := &errWriter{w: w}
	ew.printf("## rankplan: %s (`%s`)\n\n", mdText(res.Plan.Title), res.Plan.ID)
	for _, la := range res.Data.LookAlikeGroups {
		shown := make([]string, len(la.Shown))
		for i, l := range la.Shown {
			shown[i] = "`" + strings.ReplaceAll(l, "`", "'") + "`"
		}
		ew.printf("> **Warning:** column %s has labels that look alike but are different groups (compared exactly as written): %s; they differ by %s.\n\n",
			mdText(la.Column), strings.Join(shown, ", "), mdText(strings.Join(la.Differences, "; ")))
	}
	ew.printf("| analysis | outcome | N | H | p | method | decision at alpha = %s |\n", Num(res.Plan.Alpha))
	ew.printf("|---|---|---:|---:|---:|---|---|\n")
	for _, a := range res.Analyses {
		outcome := mdText(a.Outcome) + mdText(subsetText(a.Subset))
		if a.Status != "ok" {
			ew.printf("| %s | %s | %d | | | | not computable: %s |\n", mdText(a.ID), outcome, a.N, mdText(a.Reason))
			continue
		}
		d := "not rejected"
		if a.Decision.Reject {
			d = "**rejected**"
		}
		if a.Decision.PAdjusted != nil {
			d += fmt.Sprintf(" (across analyses, adjusted p = %s)", NumP(*a.Decision.PAdjusted))
		}
		pText := FormatP(a.PValue.Value, a.PValue.Log10)
		if mc := a.PValue.MonteCarlo; mc != nil && mc.Exceedances == "0" {
			pText += fmt.Sprintf(" (no resample of %s reached H; p at most %s)", mc.Resamples, NumP(mc.CI.High))
		}
		ew.printf("| %s | %s | %d | %s | %s | %s | %s |\n", mdText(a.ID), outcome, a.N, Num(a.KruskalWallis.H),
			mdText(pText), mdText(methodName(a.PValue.Method)), d)
	}
	writeEffectSizesMarkdown(ew, res.Analyses)
	for _, a := range res.Analyses {
		ph := a.PostHoc
		if ph == nil {
			continue
		}
		how := "adjustment " + string(ph.Adjust)
		if ph.Simultaneous != "" {
			how = "simultaneous"
		}
		ew.printf("\n**%s**: %s, %s.", mdText(a.ID), mdText(postHocNames[ph.Method]), how)
		if ph.NotComputable != "" {
			ew.printf(" Not computable: %s\n", mdText(ph.NotComputable))
			continue
		}
		if !ph.Ran {
			ew.printf(" Not run: %s.\n", mdText(ph.Why))
			continue
		}
		pname := "adjusted p"
		if ph.Simultaneous != "" {
			pname = "simultaneous p"
		}
		var differ, same, none []string
		for _, p := range ph.Pairs {
			pair := mdText(p.Groups[0]) + " vs " + mdText(p.Groups[1])
			switch {
			case p.NotComputable != "":
				none = append(none, fmt.Sprintf("%s (%s)", pair, mdText(p.NotComputable)))
			case p.Reject:
				differ = append(differ, fmt.Sprintf("%s (%s = %s)", pair, pname, NumP(*p.PAdjusted)))
			default:
				same = append(same, fmt.Sprintf("%s (%s = %s)", pair, pname, NumP(*p.PAdjusted)))
			}
		}
		ew.printf("\n\n- differ: %s\n- no difference shown: %s\n", orNone(differ), orNone(same))
		if len(none) > 0 {
			ew.printf("- not computable: %s\n", strings.Join(none, "; "))
		}
		if len(ph.Letters) > 0 {
			ew.printf("- letters: %s (%s)\n", mdText(lettersList(ph.Letters)), mdText(LettersMeaning(ph, res.Plan.Alpha, "alpha")))
		}
	}
	if m := res.Multiplicity; m != nil {
		ew.printf("\n**Across analyses** (%s):\n\n", mdText(string(m.Rule)))
		for _, mem := range m.Members {
			ew.printf("- %s: %s\n", mdText(mem.ID), mdText(mem.Why))
		}
	}
	ew.printf("\n| fingerprint | value |\n|---|---|\n")
	ew.printf("| plan | `%s` %s |\n", meta.PlanSHA256, mdText(meta.PlanFile))
	ew.printf("| data | `%s` %s |\n", meta.DataSHA256, mdText(meta.DataFile))
	ew.printf("| lock | %s |\n", mdText(meta.Lock))
	if len(meta.Deviations) > 0 {
		ew.printf("| deviations | %s |\n", mdText(strings.Join(meta.Deviations, "; ")))
	}
	ew.printf("| tool | %s |\n", mdText(meta.Tool))
	ew.printf("| seed, generator | %s, %s |\n", mdText(meta.Seed), mdText(meta.RNG))
	ew.printf("| audit chain | `%s` at record %d, when this summary was written; the final head is in `audit.head` |\n", meta.AuditHead, meta.AuditSeq)
	ew.printf("\nVerify status: not verified yet; a run cannot vouch for itself. `rankplan verify %s --markdown` checks the folder, reruns the plan and prints its verdicts as Markdown to add below this summary; with `--head` and a copy of the head kept outside the run folder it also proves that the log was not cut short.\n", dir)
	ew.printf("\n_%s_\n", Caution)
	return ew.err
}

// writeEffectSizesMarkdown writes the omnibus effect sizes of the computable analyses as a
// table, the interval and its method beside the estimates, and each interval's warnings
// below it.
func writeEffectSizesMarkdown(ew *errWriter, analyses []results.Analysis) {
	var warnings []string
	head := false
	for _, a := range analyses {
		es := a.EffectSizes
		if es == nil {
			continue
		}
		if !head {
			ew.printf("\n| analysis | epsilon-squared | eta-squared(H) | interval | method |\n|---|---:|---:|---|---|\n")
			head = true
		}
		eta := "not defined (N = k)"
		if es.EtaSquaredH != nil {
			eta = Num(*es.EtaSquaredH)
		}
		interval, method := "none", "the plan asks for none"
		if iv := es.Interval; iv != nil {
			method = intervalName(iv)
			switch {
			case iv.Method == spec.BootstrapInterval:
				interval = "epsilon-squared " + bracket(*iv.EpsilonSquared)
				if iv.EtaSquaredH != nil {
					interval += ", eta-squared(H) " + bracket(*iv.EtaSquaredH)
				}
				method += ", " + iv.Resamples + " resamples"
			case iv.NotComputed != "":
				interval = "not computed: " + iv.NotComputed
			case iv.PopulationEffect != nil:
				pe := iv.PopulationEffect
				interval = "population effect xi²: " + bracket(results.Bounds{Low: pe.Low, High: pe.High})
				if pe.Clipped {
					interval += ", cut to [0, 1]"
				}
				method = pct(iv.Level) + " " + method
			}
			for _, w := range iv.Warnings {
				warnings = append(warnings, fmt.Sprintf("- %s: %s", mdText(a.ID), mdText(w)))
			}
		}
		ew.printf("| %s | %s | %s | %s | %s |\n", mdText(a.ID), Num(es.EpsilonSquared), eta, mdText(interval), mdText(method))
	}
	if len(warnings) > 0 {
		ew.printf("\n**Warnings about the effect-size intervals:**\n\n%s\n", strings.Join(warnings, "\n"))
	}
}

func orNone(s []string) string {
	if len(s) == 0 {
		return "none"
	}
	return strings.Join(s, ", ")
}

// MarkdownText makes text safe inside a Markdown table cell or paragraph: the characters
// that would start markup or end a cell are escaped, and line ends become spaces.
func MarkdownText(s string) string { return mdText(s) }

func mdText(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch r {
		case '\\', '`', '*', '_', '[', ']', '<', '>', '|', '#':
			b.WriteByte('\\')
			b.WriteRune(r)
		case '\n', '\r':
			b.WriteByte(' ')
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}
