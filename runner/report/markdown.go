package report

import (
	"fmt"
	"io"
	"strings"

	"rankplan/runner/results"
)

// Markdown writes summary.md: a short summary of a run for CI step summaries and pull
// requests (GitHub-flavoured Markdown tables): one line per analysis with the omnibus
// result and decision, the pairwise decisions with the letter display, the decisions
// across analyses, the fingerprints, and how to verify the run. dir is the run folder as
// the reader should type it in the verify command.
func Markdown(w io.Writer, res *results.Results, meta Meta, dir string) error {
	ew := &errWriter{w: w}
	ew.printf("## rankplan: %s (`%s`)\n\n", mdText(res.Plan.Title), res.Plan.ID)
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
			d += fmt.Sprintf(" (across analyses, adjusted p = %s)", Num(*a.Decision.PAdjusted))
		}
		ew.printf("| %s | %s | %d | %s | %s | %s | %s |\n", mdText(a.ID), outcome, a.N, Num(a.KruskalWallis.H),
			mdText(FormatP(a.PValue.Value, a.PValue.Log10)), mdText(methodName(a.PValue.Method)), d)
	}
	for _, a := range res.Analyses {
		ph := a.PostHoc
		if ph == nil {
			continue
		}
		how := "adjustment " + ph.Adjust
		if ph.Simultaneous != "" {
			how = "simultaneous"
		}
		ew.printf("\n**%s**: %s, %s.", mdText(a.ID), mdText(postHocNames[ph.Method]), how)
		if !ph.Ran {
			ew.printf(" %s\n", mdText(ph.Why))
			continue
		}
		var differ, same []string
		for _, p := range ph.Pairs {
			s := fmt.Sprintf("%s vs %s (adjusted p = %s)", mdText(p.Groups[0]), mdText(p.Groups[1]), Num(p.PAdjusted))
			if p.Reject {
				differ = append(differ, s)
			} else {
				same = append(same, s)
			}
		}
		ew.printf("\n\n- differ: %s\n- no difference shown: %s\n", orNone(differ), orNone(same))
		if len(ph.Letters) > 0 {
			ew.printf("- letters: %s (%s)\n", mdText(lettersList(ph.Letters)), mdText(LettersMeaning(ph, res.Plan.Alpha, "alpha")))
		}
	}
	if m := res.Multiplicity; m != nil {
		ew.printf("\n**Across analyses** (%s):\n\n", mdText(m.Rule))
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
