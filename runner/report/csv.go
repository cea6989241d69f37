package report

import (
	"encoding/csv"
	"io"
	"strconv"
	"strings"

	"rankplan/runner/results"
)

// pairsHeader is the header of pairs.csv, one column per field of a pairwise comparison.
var pairsHeader = []string{
	"analysis", "outcome", "method", "adjust", "family", "group1", "group2",
	"mean_rank_diff", "statistic_name", "statistic", "p_method", "p", "p_adjusted", "reject",
	"cliffs_delta", "vargha_delaney_a", "hl_shift", "hl_low", "hl_high", "hl_level",
	"hl_coverage", "hl_index_method", "hl_level_attainable", "hl_tied_values",
	"not_computable",
}

// cellText protects a text cell from being run as a formula by a spreadsheet (CSV
// injection): a cell that begins with =, +, -, @, a tab or a carriage return and does not
// read as a number gets an apostrophe in front, which spreadsheets show as text (the OWASP
// advice on CSV injection; common practice). results.json keeps the exact text.
func cellText(s string) string {
	if s == "" || !strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return s
	}
	if _, err := strconv.ParseFloat(s, 64); err == nil {
		return s
	}
	return "'" + s
}

// PairsCSV writes pairs.csv: the pairwise comparisons of every analysis whose comparisons
// ran, one row per pair, as a tidy RFC 4180 table for spreadsheets. Numbers are written
// with every digit (the shortest text that reads back to the same double, a plain decimal
// from 1e-15 up to 1e15, see [full]), so the table holds exactly what results.json holds; reject and the hl_ flags are true or false, and
// hl_coverage is empty where results.json has null. A pair that is not computable has
// empty statistic, p and p_adjusted cells and its reason in not_computable. Text cells
// (analysis, outcome and group names) go through [cellText]. An analysis without
// comparisons has no rows; a run without any has only the header.
func PairsCSV(w io.Writer, res *results.Results) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(pairsHeader); err != nil {
		return err
	}
	f := full
	fp := func(x *float64) string {
		if x == nil {
			return ""
		}
		return f(*x)
	}
	for _, a := range res.Analyses {
		ph := a.PostHoc
		if ph == nil || !ph.Ran {
			continue
		}
		adjust := string(ph.Adjust)
		if ph.Simultaneous != "" {
			adjust = "simultaneous"
		}
		for _, p := range ph.Pairs {
			hl := p.HodgesLehmann
			row := []string{
				cellText(a.ID), cellText(a.Outcome), string(ph.Method), adjust, ph.Family, cellText(p.Groups[0]), cellText(p.Groups[1]),
				f(p.MeanRankDiff), ph.Statistic, fp(p.Statistic), p.PMethod, fp(p.P), fp(p.PAdjusted), strconv.FormatBool(p.Reject),
				f(p.CliffsDelta), f(p.VarghaDelaneyA), f(hl.Shift), f(hl.Interval.Low), f(hl.Interval.High), f(hl.Interval.Level),
				"", hl.IndexMethod, strconv.FormatBool(hl.LevelAttainable), strconv.FormatBool(hl.TiedValues),
				p.NotComputable,
			}
			if hl.Coverage != nil {
				row[len(row)-5] = f(*hl.Coverage)
			}
			if err := cw.Write(row); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
