package report

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	"rankplan/runner/results"
	"rankplan/spec"
)

// Caution is printed under every summary and report.
const Caution = "Statistical output supports, and does not replace, qualified judgement; " +
	"regulated use follows the lab's own procedures and software validation."

// FormatP writes a p-value for people as [NumP] does, and for a p-value below the
// smallest normal double (value nil) the bound implied by its log10.
func FormatP(value *float64, log10 float64) string {
	if value == nil {
		return "< 1e" + strconv.Itoa(int(math.Floor(log10))+1) + " (log10 p = " + strconv.FormatFloat(log10, 'f', 4, 64) + ")"
	}
	return NumP(*value)
}

// NumOr is Num(*x), or none when x is nil (a value that is not computable).
func NumOr(x *float64, none string) string {
	if x == nil {
		return none
	}
	return Num(*x)
}

// NumPOr is NumP(*p), or none when p is nil (a p-value that is not computable).
func NumPOr(p *float64, none string) string {
	if p == nil {
		return none
	}
	return NumP(*p)
}

// The magnitudes written as plain decimals: from plainMin up to, not including, plainMax.
// Outside them a plain decimal would run to more than 15 zeros, so exponent form is used.
const (
	plainMin = 1e-15
	plainMax = 1e15
)

// Num writes a number for people to read in tables; results.json keeps every digit.
// Every magnitude from 1e-15 up to 1e15 is a plain decimal, never exponent form:
//
//   - six significant digits without trailing zeros ("0.0184238", "147.5",
//     "0.000000123457") while six digits reach the units;
//   - from 1e6 on (once six digits round to 1e6 or more), every digit of the whole part
//     and at most two decimals, trailing zeros dropped ("1234567.89", "116500000",
//     "123456789.5"), so that no digit of a rank sum is hidden.
//
// Zero and negative zero are "0"; NaN and infinities are "NaN", "+Inf" and "-Inf"; a
// magnitude below 1e-15 or at least 1e15 has six significant digits in exponent form
// ("1e+15", "8.59457e-16"). p-values have their own rule, [NumP].
func Num(x float64) string {
	ax := math.Abs(x)
	switch {
	case x == 0:
		return "0"
	case math.IsNaN(x) || math.IsInf(x, 0):
		return strconv.FormatFloat(x, 'g', -1, 64)
	case ax < plainMin || ax >= plainMax:
		return strconv.FormatFloat(x, 'g', 6, 64)
	}
	// The decimal exponent of x rounded to six significant digits (the rounding can
	// carry into the next power of ten, as 999999.7 does).
	e := decimalExponent(x, 6)
	decimals := 2
	if e < 6 {
		decimals = 5 - e
	}
	return trimZeros(strconv.FormatFloat(x, 'f', decimals, 64))
}

// NumP writes a p-value (or an adjusted p-value, or an end of a p-value's interval) for
// people: below 1e-4 (but not 0) four significant digits in exponent form ("8.595e-16",
// "5e-05"), where a plain decimal would be mostly zeros and the exponent says at a glance
// how small p is; otherwise as [Num] ("0.0184238", "1").
func NumP(p float64) string {
	if p != 0 && math.Abs(p) < 1e-4 {
		return strconv.FormatFloat(p, 'g', 4, 64)
	}
	return Num(p)
}

// decimalExponent is the exponent of x (finite, not 0) in scientific notation after
// rounding to sig significant digits: 2 for 123.4, -7 for 1e-7, 6 for 999999.7 at six.
func decimalExponent(x float64, sig int) int {
	s := strconv.FormatFloat(x, 'e', sig-1, 64)
	e, err := strconv.Atoi(s[strings.IndexByte(s, 'e')+1:])
	if err != nil { // unreachable: 'e' format always ends in a signed exponent
		return 0
	}
	return e
}

// trimZeros drops the trailing zeros of a decimal fraction, and its point when no
// decimal is left: "12.500" is "12.5", "17.00" is "17".
func trimZeros(s string) string {
	if !strings.Contains(s, ".") {
		return s
	}
	return strings.TrimSuffix(strings.TrimRight(s, "0"), ".")
}

// full writes every digit of x for programs (report.html's data-value, pairs.csv): the
// shortest decimal that reads back to the same double, as a plain decimal for every
// magnitude from 1e-15 up to 1e15 ("116500000", "0.0000001") and in exponent form outside
// it ("1e+15", "8.594571080305823e-16"). Negative zero is "-0", as results.json writes it.
func full(x float64) string {
	if ax := math.Abs(x); x != 0 && (ax < plainMin || ax >= plainMax) {
		return strconv.FormatFloat(x, 'g', -1, 64)
	}
	return strconv.FormatFloat(x, 'f', -1, 64)
}

// Exclusions writes the exclusion counts of an analysis on one line, or "none".
func Exclusions(ex []results.Exclusion) string {
	if len(ex) == 0 {
		return "none"
	}
	parts := make([]string, len(ex))
	total := 0
	for i, e := range ex {
		g := e.Group
		if g == "" {
			g = "(no group)"
		}
		parts[i] = fmt.Sprintf("%s %s: %d", g, e.Reason, e.Rows)
		total += e.Rows
	}
	return fmt.Sprintf("%d row(s): %s", total, strings.Join(parts, ", "))
}

// Style selects the marks of text meant for a terminal. The zero Style writes plain
// text, as for files, pipes and the golden tests.
type Style struct {
	// Color marks headings in bold and decisions (a rejected null hypothesis, a pair that
	// differs) in bold cyan, with ECMA-48 SGR escape sequences. Set it only for a terminal.
	Color bool
}

// SGR sequences (ECMA-48 §8.3.117). In a table every cell of a marked column carries a
// sequence of the same length, so that tabwriter, which counts the bytes of the
// sequences as text, still aligns the columns.
const (
	sgrHeading  = "\x1b[1m"    // bold
	sgrDecision = "\x1b[1;36m" // bold cyan
	sgrNeutral  = "\x1b[0;39m" // no attributes, default colour: as long as sgrDecision
	sgrReset    = "\x1b[0m"
)

func (st Style) heading(s string) string {
	if !st.Color {
		return s
	}
	return sgrHeading + s + sgrReset
}

func (st Style) decision(s string) string {
	if !st.Color {
		return s
	}
	return sgrDecision + s + sgrReset
}

// cell writes a table cell of a marked column: marked or neutral, the same length.
func (st Style) cell(s string, marked bool) string {
	if !st.Color {
		return s
	}
	if marked {
		return sgrDecision + s + sgrReset
	}
	return sgrNeutral + s + sgrReset
}

// leftColumn pads every string of col with spaces to the widest one, counted in runes
// as tabwriter counts them, so that a column of a right-aligned table is left-aligned.
// It returns a new slice.
func leftColumn(col []string) []string {
	w := 0
	for _, s := range col {
		w = max(w, utf8.RuneCountInString(s))
	}
	out := make([]string, len(col))
	for i, s := range col {
		out[i] = s + strings.Repeat(" ", w-utf8.RuneCountInString(s))
	}
	return out
}

// SummaryWith writes the short terminal summary of a run in style st. Tables have their
// first column (and columns of words) left-aligned and their numbers right-aligned.
func SummaryWith(w io.Writer, res *results.Results, dataPath string, st Style) error {
	ew := &errWriter{w: w}
	ew.printf("plan %s: %s\n", res.Plan.ID, res.Plan.Title)
	ew.printf("data %s: %d rows, sha256 %s\n", dataPath, res.Data.Rows, res.Data.SHA256)
	if res.Data.HighPrecisionCells > 0 {
		ew.printf("note: %d cell(s) have more than 15 significant digits; values are compared as doubles, so such cells may tie\n", res.Data.HighPrecisionCells)
	}
	writeLookAlikes(ew, res.Data)
	show := labelShower(res.Data)
	for _, a := range res.Analyses {
		ew.printf("\n%s: %s of %q%s, %d groups, N = %d\n", st.heading("analysis "+a.ID), testName(a.Test), a.Outcome, subsetText(a.Subset), len(a.Groups), a.N)
		ew.printf("  excluded: %s\n", Exclusions(a.Excluded))
		names := make([]string, 0, len(a.Groups)+1)
		names = append(names, "group")
		for _, g := range a.Groups {
			names = append(names, show(g.Name))
		}
		names = leftColumn(names)
		tw := tabwriter.NewWriter(ew, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintf(tw, "%s\tn\tmedian\tQ1\tQ3\tmean rank\t\n", names[0])
		for i, g := range a.Groups {
			fmt.Fprintf(tw, "%s\t%d\t%s\t%s\t%s\t%s\t\n", names[i+1], g.N, Num(g.Median), Num(g.Q1), Num(g.Q3), Num(g.MeanRank))
		}
		tw.Flush()
		if a.Status != "ok" {
			ew.printf("  not computable: %s\n", a.Reason)
			continue
		}
		kw := a.KruskalWallis
		ew.printf("  H = %s (tie-corrected; C = %s), df = %d\n", Num(kw.H), Num(kw.TieCorrection), kw.DF)
		pv := a.PValue
		ew.printf("  p = %s (%s; %s)\n", FormatP(pv.Value, pv.Log10), methodName(pv.Method), pv.Reason)
		if mc := pv.MonteCarlo; mc != nil && mc.Exceedances == "0" {
			ew.printf("      no resample of %s reached H: p = %s is the smallest value these resamples can give, not an estimate; the true p lies in [0, %s] (%s%% Clopper-Pearson); an exact p-value or more resamples would narrow it\n",
				mc.Resamples, FormatP(pv.Value, pv.Log10), NumP(mc.CI.High), Num(100*mc.CI.Level))
		} else if mc != nil {
			ew.printf("      %s of %s resamples reached H; Monte Carlo SE %s, %s%% interval [%s, %s]\n",
				mc.Exceedances, mc.Resamples, Num(mc.SE), Num(100*mc.CI.Level), NumP(mc.CI.Low), NumP(mc.CI.High))
		}
		if mc := pv.MonteCarlo; mc != nil && mc.Sequential != nil {
			sq := mc.Sequential
			what := "did not stop: fewer than h of the resamples reached H, so all were drawn"
			if sq.Stopped {
				what = "stopped at the h-th exceedance, p = h/L"
			}
			ew.printf("      sequential rule with h = %s and at most %s resamples: %s\n", sq.StopAtExceedances, sq.MaxResamples, what)
		}
		if pv.Method != spec.Asymptotic {
			ew.printf("      asymptotic chi-square p = %s\n", FormatP(a.AsymptoticP.Value, a.AsymptoticP.Log10))
		}
		if es := a.EffectSizes; es != nil {
			for i, line := range effectSizeLines(es) {
				if i == 0 {
					ew.printf("  effect size: %s\n", line)
				} else {
					ew.printf("      %s\n", line)
				}
			}
		}
		d := a.Decision
		switch {
		case d.PAdjusted != nil && d.Reject:
			ew.printf("  at alpha = %s: %s of identical distributions (adjusted p = %s <= alpha, plan's multiplicity rule)\n", Num(d.Alpha), st.decision("reject the null hypothesis"), NumP(*d.PAdjusted))
		case d.PAdjusted != nil:
			ew.printf("  at alpha = %s: do not reject the null hypothesis of identical distributions under the plan's multiplicity rule (adjusted p = %s)\n", Num(d.Alpha), NumP(*d.PAdjusted))
		case d.Reject:
			ew.printf("  at alpha = %s: %s of identical distributions (p <= alpha)\n", Num(d.Alpha), st.decision("reject the null hypothesis"))
		default:
			ew.printf("  at alpha = %s: do not reject the null hypothesis of identical distributions (p > alpha)\n", Num(d.Alpha))
		}
		if ph := a.PostHoc; ph != nil {
			writePostHoc(ew, &a, res.Plan.Alpha, st)
		}
	}
	if m := res.Multiplicity; m != nil {
		writeMultiplicity(ew, m, st)
	}
	ew.printf("\n%s\n", Caution)
	return ew.err
}

// subsetText describes an analysis's subset for a heading, e.g. ` where site is "north"`.
func subsetText(s *results.Subset) string {
	if s == nil {
		return ""
	}
	return fmt.Sprintf(" where %s is %s", s.Column, strings.Join(quoteAll(s.Values), " or "))
}

func quoteAll(s []string) []string {
	out := make([]string, len(s))
	for i, x := range s {
		out[i] = strconv.Quote(x)
	}
	return out
}

func writeMultiplicity(ew *errWriter, m *results.Multiplicity, st Style) {
	ew.printf("\n%s: %s\n", st.heading("multiplicity across analyses"), m.Method)
	ids := make([]string, 0, len(m.Members)+1)
	ids = append(ids, "analysis")
	for _, mem := range m.Members {
		ids = append(ids, mem.ID)
	}
	ids = leftColumn(ids)
	tw := tabwriter.NewWriter(ew, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "%s\tp\tadjusted p\t  decision\n", ids[0]) // the last column is left-aligned text
	for i, mem := range m.Members {
		p := "not computable"
		if mem.P != nil {
			p = FormatP(mem.P.Value, mem.P.Log10)
		}
		d := "not rejected"
		switch {
		case mem.Reject:
			d = st.decision("rejected")
		case !mem.Tested:
			d = "not tested"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t  %s\n", ids[i+1], p, NumP(mem.PAdjusted), d)
	}
	tw.Flush()
	for _, mem := range m.Members {
		ew.printf("  %s: %s\n", mem.ID, mem.Why)
	}
}

func testName(t spec.Test) string {
	if t == spec.KruskalWallis {
		return "Kruskal-Wallis"
	}
	return string(t)
}

func methodName(m spec.PValueMethod) string {
	switch m {
	case spec.Asymptotic:
		return "asymptotic chi-square"
	case spec.Exact:
		return "exact, given the ties"
	case spec.Permutation:
		return "Monte Carlo permutation"
	}
	return string(m)
}

type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) Write(b []byte) (int, error) {
	if e.err != nil {
		return 0, e.err
	}
	n, err := e.w.Write(b)
	e.err = err
	return n, err
}

func (e *errWriter) printf(format string, args ...any) { fmt.Fprintf(e, format, args...) }

// PreviewWith writes what `rankplan check` found, in style st: the groups and their
// sizes, and the rows that would be left out, for each analysis.
func PreviewWith(w io.Writer, pv *results.Preview, planPath, dataPath string, st Style) error {
	ew := &errWriter{w: w}
	ew.printf("plan %s is valid: %s\n", planPath, pv.Plan.Title)
	ew.printf("data %s: %d rows, sha256 %s\n", dataPath, pv.Data.Rows, pv.Data.SHA256)
	if pv.Data.HighPrecisionCells > 0 {
		ew.printf("note: %d cell(s) have more than 15 significant digits; values are compared as doubles, so such cells may tie\n", pv.Data.HighPrecisionCells)
	}
	writeLookAlikes(ew, pv.Data)
	show := labelShower(pv.Data)
	for _, a := range pv.Analyses {
		method := previewMethod(a)
		ew.printf("\n%s: %s of %q%s, p-value %s, %d groups, N = %d\n", st.heading("analysis "+a.ID), testName(a.Test), a.Outcome, subsetText(a.Subset), method, len(a.Groups), a.N)
		names := make([]string, 0, len(a.Groups)+1)
		names = append(names, "group")
		for _, g := range a.Groups {
			names = append(names, show(g.Name))
		}
		names = leftColumn(names)
		tw := tabwriter.NewWriter(ew, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintf(tw, "%s\tn\t\n", names[0])
		for i, g := range a.Groups {
			fmt.Fprintf(tw, "%s\t%d\t\n", names[i+1], g.N)
		}
		tw.Flush()
		ew.printf("  excluded: %s\n", Exclusions(a.Excluded))
	}
	if m := pv.Multiplicity; m != nil {
		order := "adjusted together"
		if m.Rule == spec.FixedSequence {
			order = "tested in this order, each only if every earlier one rejects"
		}
		ew.printf("\n%s: %s over %s (%s)\n", st.heading("multiplicity across analyses"), m.Rule, strings.Join(m.Analyses, ", "), order)
	}
	ew.printf("\nnothing was computed; run it with: rankplan run %s --out DIR\n", planPath)
	return ew.err
}

// previewMethod says which p-value method an analysis will use: for auto, the method
// chosen (exact when it fits the work budget, otherwise Monte Carlo with the plan's
// resamples, or the asymptotic p-value under asymptotic_when_large).
func previewMethod(a results.PreviewAnalysis) string {
	switch {
	case a.PValue == spec.Auto && a.Chosen == spec.Exact:
		return "auto: exact (the exact distribution fits the work budget)"
	case a.PValue == spec.Auto && a.Chosen == spec.Permutation:
		return "auto: Monte Carlo with " + a.Resamples + " resamples (the exact distribution does not fit the work budget)"
	case a.PValue == spec.Auto && a.Chosen == spec.Asymptotic:
		return "auto: asymptotic chi-square (the exact distribution does not fit the work budget, and asymptotic_when_large applies: every group is large)"
	case a.Resamples != "":
		return string(a.PValue) + " (" + a.Resamples + " Monte Carlo resamples)"
	}
	return string(a.PValue)
}

// postHocNames says each post-hoc procedure in words.
var postHocNames = map[spec.PostHoc]string{
	spec.Dunn:    "Dunn z-tests on the joint ranks",
	spec.Conover: "Conover-Iman t-tests on the joint ranks",
	spec.RankSum: "pairwise Wilcoxon-Mann-Whitney rank-sum tests",
	spec.Nemenyi: "Nemenyi comparisons of mean joint ranks (studentized range)",
	spec.DSCF:    "Dwass-Steel-Critchlow-Fligner comparisons with pairwise ranking (studentized range)",
}

func writePostHoc(ew *errWriter, a *results.Analysis, alpha float64, st Style) {
	ph := a.PostHoc
	family := "all pairs"
	if ph.Family == "many-to-one" {
		family = "each group against " + strconv.Quote(ph.Control)
	}
	if ph.Simultaneous != "" {
		ew.printf("  post-hoc: %s, %s, simultaneous (no adjustment needed)\n", postHocNames[ph.Method], family)
	} else {
		ew.printf("  post-hoc: %s, %s, adjustment %s\n", postHocNames[ph.Method], family, ph.Adjust)
	}
	if ph.Note != "" {
		ew.printf("    note: %s\n", ph.Note)
	}
	if ph.NotComputable != "" {
		ew.printf("    not computable: %s\n", ph.NotComputable)
		return
	}
	if !ph.Ran {
		ew.printf("    not run: %s\n", ph.Why)
		return
	}
	pairs := make([]string, 0, len(ph.Pairs)+1)
	decisions := make([]string, 0, len(ph.Pairs)+1)
	pairs, decisions = append(pairs, "pair"), append(decisions, "decision")
	for _, p := range ph.Pairs {
		d := "no difference shown"
		switch {
		case p.NotComputable != "":
			d = "not computable"
		case p.Reject:
			d = "differ"
		}
		pairs, decisions = append(pairs, p.Groups[0]+" vs "+p.Groups[1]), append(decisions, d)
	}
	pairs, decisions = leftColumn(pairs), leftColumn(decisions)
	tw := tabwriter.NewWriter(ew, 0, 0, 2, ' ', tabwriter.AlignRight)
	pname := "adjusted p"
	if ph.Simultaneous != "" {
		pname = "simultaneous p"
	}
	fmt.Fprintf(tw, "  %s\t%s\tp\t%s\t%s\tCliff's delta\tHL shift\tinterval\t\n", pairs[0], ph.Statistic, pname, st.cell(decisions[0], false))
	for i, p := range ph.Pairs {
		iv := p.HodgesLehmann.Interval
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\t%s\t%s\t[%s, %s]\t\n", pairs[i+1], NumOr(p.Statistic, "-"), NumPOr(p.P, "-"),
			NumPOr(p.PAdjusted, "-"), st.cell(decisions[i+1], p.Reject), Num(p.CliffsDelta), Num(p.HodgesLehmann.Shift), Num(iv.Low), Num(iv.High))
	}
	tw.Flush()
	for _, p := range ph.Pairs {
		if p.NotComputable != "" {
			ew.printf("    %s vs %s not computable: %s\n", p.Groups[0], p.Groups[1], p.NotComputable)
		}
	}
	// The intervals in words where the table's two ends do not say it all: a level that
	// cannot be reached, an index from the normal approximation, tied values.
	sizes := groupSizes(a)
	for i, p := range ph.Pairs {
		hl := p.HodgesLehmann
		if !hl.LevelAttainable || hl.Coverage == nil || hl.TiedValues {
			ew.printf("    %s interval: %s\n", strings.TrimSpace(pairs[i+1]), hlIntervalText(hl, sizes[p.Groups[0]], sizes[p.Groups[1]]))
		}
	}
	if len(ph.Letters) > 0 {
		ew.printf("    letters (%s): %s\n", LettersMeaning(ph, alpha, "alpha"), lettersList(ph.Letters))
	}
}

// effectSizeLines writes the omnibus effect sizes for people: the estimates (with their
// bootstrap intervals, where the plan asked for those), then the noncentral interval of the
// population effect, then any warnings, one line each.
func effectSizeLines(es *results.EffectSizes) []string {
	iv := es.Interval
	boot := iv != nil && iv.Method == spec.BootstrapInterval
	line := "epsilon-squared = " + Num(es.EpsilonSquared)
	if boot && iv.EpsilonSquared != nil {
		line += " " + bracket(*iv.EpsilonSquared)
	}
	if es.EtaSquaredH != nil {
		line += ", eta-squared(H) = " + Num(*es.EtaSquaredH)
		if boot && iv.EtaSquaredH != nil {
			line += " " + bracket(*iv.EtaSquaredH)
		}
	}
	if iv == nil {
		return []string{line + " (no interval: the plan asks for none)"}
	}
	lines := []string{line}
	switch {
	case boot:
		lines[0] += fmt.Sprintf(" (%s, %s resamples)", intervalName(iv), iv.Resamples)
	case iv.NotComputed != "":
		lines = append(lines, fmt.Sprintf("%s interval of the population effect: not computed: %s", pct(iv.Level), iv.NotComputed))
	case iv.PopulationEffect != nil:
		pe := iv.PopulationEffect
		l := fmt.Sprintf("%s interval of the population effect xi² both estimate: [%s, %s] (%s", pct(iv.Level), Num(pe.Low), Num(pe.High), intervalName(iv))
		if pe.Clipped {
			l += "; cut to [0, 1], the range of xi²"
		}
		lines = append(lines, l+")")
	}
	for _, w := range iv.Warnings {
		lines = append(lines, "warning: "+w)
	}
	return lines
}

// intervalName names the method of an effect-size interval in a few words.
func intervalName(iv *results.EffectInterval) string {
	switch iv.Method {
	case spec.NoncentralInterval:
		return "noncentral chi-square inversion of H"
	case spec.BootstrapInterval:
		return pct(iv.Level) + " percentile bootstrap"
	}
	return string(iv.Method)
}

func bracket(b results.Bounds) string { return "[" + Num(b.Low) + ", " + Num(b.High) + "]" }

func pct(level float64) string { return Num(100*level) + "%" }

// LettersMeaning says what the compact letter display of ph shows at alpha (named
// alphaName: "alpha" or "α"): groups sharing a letter were not found to differ, which is
// not a finding that they are alike; groups with no letter in common were found to differ.
// It names the adjustment only when one was applied: Nemenyi and DSCF p-values are
// simultaneous and take none, and "none" applies none.
func LettersMeaning(ph *results.PostHoc, alpha float64, alphaName string) string {
	basis := "after adjustment by " + ph.Adjust
	switch {
	case ph.Simultaneous != "":
		basis = "in simultaneous comparisons, without adjustment"
	case ph.Adjust == "none":
		basis = "without adjustment"
	}
	return fmt.Sprintf("groups sharing a letter were not found to differ at %s = %s %s; groups with no letter in common differ",
		alphaName, Num(alpha), basis)
}

// lettersList writes a display as "group letters, ...", with each group's display text.
func lettersList(ls []results.GroupLetters) string {
	parts := make([]string, len(ls))
	for i, l := range ls {
		parts[i] = l.Group + " " + l.Display
	}
	return strings.Join(parts, ", ")
}
