package report

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"rankplan/runner/results"
)

func TestFormatP(t *testing.T) {
	v := 0.00435881
	for _, tc := range []struct {
		value *float64
		log10 float64
		want  string
	}{
		{&v, -2.36, "0.00435881"},
		{nil, -1762.8086, "< 1e-1762 (log10 p = -1762.8086)"},
		{nil, -308.2, "< 1e-308 (log10 p = -308.2000)"},
	} {
		if got := FormatP(tc.value, tc.log10); got != tc.want {
			t.Errorf("FormatP(%v) = %q, want %q", tc.log10, got, tc.want)
		}
	}
}

// TestNum checks the plain decimals people read, value by value; each expected text is
// worked by hand from the rule in Num's documentation.
func TestNum(t *testing.T) {
	for _, tc := range []struct {
		x    float64
		want string
	}{
		{13.132423784966898, "13.1324"}, {0, "0"}, {math.Copysign(0, -1), "0"}, {17, "17"}, {12.375, "12.375"},
		{0.995779, "0.995779"}, {-0.25, "-0.25"}, {0.0184238, "0.0184238"}, {147.5, "147.5"},
		{1e-4, "0.0001"}, {1e-7, "0.0000001"}, {2.5e-7, "0.00000025"}, {-3.14159265e-9, "-0.00000000314159"},
		{0.000123456789, "0.000123457"}, {9.9999999e-5, "0.0001"}, {1.5e-15, "0.0000000000000015"},
		{123456.7, "123457"}, {999999.4, "999999"}, {999999.7, "999999.7"}, {1234567.891, "1234567.89"},
		{1.5e9, "1500000000"}, {123456789.5, "123456789.5"}, {1.165e8, "116500000"}, {-1.165e8, "-116500000"},
		{9.99e14, "999000000000000"}, {1e15, "1e+15"}, {-2.5e15, "-2.5e+15"}, {1.2345678e20, "1.23457e+20"},
		{9.99e-16, "9.99e-16"}, {5e-324, "4.94066e-324"}, {math.MaxFloat64, "1.79769e+308"},
		{math.NaN(), "NaN"}, {math.Inf(1), "+Inf"}, {math.Inf(-1), "-Inf"},
	} {
		if got := Num(tc.x); got != tc.want {
			t.Errorf("Num(%v) = %q, want %q", tc.x, got, tc.want)
		}
	}
}

// TestNumP checks the p-value rule: exponent form with four significant digits below
// 1e-4, otherwise as Num (worked by hand).
func TestNumP(t *testing.T) {
	for _, tc := range []struct {
		p    float64
		want string
	}{
		{0, "0"}, {1, "1"}, {0.05, "0.05"}, {0.00259997, "0.00259997"}, {1e-4, "0.0001"},
		{9.99e-5, "9.99e-05"}, {1e-7, "1e-07"}, {8.594571080305823e-16, "8.595e-16"}, {5e-324, "4.941e-324"},
		{math.NaN(), "NaN"},
	} {
		if got := NumP(tc.p); got != tc.want {
			t.Errorf("NumP(%v) = %q, want %q", tc.p, got, tc.want)
		}
	}
	v := 3.3e-5
	if got := FormatP(&v, -4.48); got != "3.3e-05" {
		t.Errorf("FormatP(3.3e-5) = %q, want NumP's %q", got, "3.3e-05")
	}
}

// TestFull checks the digits written for programs, value by value (worked by hand), and
// that every one reads back to the same double.
func TestFull(t *testing.T) {
	for _, tc := range []struct {
		x    float64
		want string
	}{
		{0, "0"}, {math.Copysign(0, -1), "-0"}, {1e-7, "0.0000001"}, {123456789.5, "123456789.5"},
		{1.165e8, "116500000"}, {9.99e14, "999000000000000"}, {1e15, "1e+15"}, {0.1, "0.1"},
		{0.018423812345678901, "0.0184238123456789"}, {1.5e-15, "0.0000000000000015"},
		{8.594571080305823e-16, "8.594571080305823e-16"}, {-4.5e17, "-4.5e+17"},
		{math.NaN(), "NaN"}, {math.Inf(1), "+Inf"}, {math.Inf(-1), "-Inf"},
	} {
		got := full(tc.x)
		if got != tc.want {
			t.Errorf("full(%v) = %q, want %q", tc.x, got, tc.want)
		}
		if back, err := strconv.ParseFloat(got, 64); err != nil || !sameFloat(back, tc.x) {
			t.Errorf("full(%v) = %q reads back as %v (%v)", tc.x, got, back, err)
		}
	}
}

// sameFloat is bit equality, with every NaN equal to every NaN.
func sameFloat(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
}

// TestNumPlainRange checks the rules on seeded values of every magnitude from 1e-15 up to
// 1e15, of both signs: Num and full write no exponent there, full reads back exactly, and
// Num is within half a unit of its last digit: six significant digits below 1e6, two
// decimals from there on.
func TestNumPlainRange(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 15))
	for i := range 20000 {
		x := math.Ldexp(1+rng.Float64(), rng.IntN(100)-50) // 2^-50 ≈ 8.9e-16 up to 2^50 ≈ 1.1e15
		if i%2 == 1 {
			x = -x
		}
		if math.Abs(x) >= plainMax || math.Abs(x) < plainMin {
			continue
		}
		n, f := Num(x), full(x)
		if strings.ContainsAny(n+f, "eE") {
			t.Fatalf("%v: Num %q, full %q: exponent form inside the plain range", x, n, f)
		}
		if back, err := strconv.ParseFloat(f, 64); err != nil || back != x {
			t.Fatalf("full(%v) = %q reads back as %v (%v)", x, f, back, err)
		}
		back, err := strconv.ParseFloat(n, 64)
		tol := 5e-6 * math.Abs(x) // half a unit in the sixth significant digit, at most
		if math.Abs(x) >= 999999.5 {
			tol = 0.005
		}
		// Both the text read back and x are doubles: allow the spacing of doubles near x.
		tol += 2 * (math.Nextafter(math.Abs(x), math.Inf(1)) - math.Abs(x))
		if err != nil || math.Abs(back-x) > tol {
			t.Fatalf("Num(%v) = %q is %v away", x, n, back-x)
		}
	}
}

func TestSummaryNotComputable(t *testing.T) {
	res := &results.Results{
		Plan: results.Plan{ID: "p", Title: "T"},
		Analyses: []results.Analysis{{ID: "a", Test: "kruskal-wallis", Outcome: "y", N: 3, Status: "not-computable",
			Reason: "all observations are tied", Groups: []results.Group{{Name: "A", N: 2}, {Name: "B", N: 1}}}},
	}
	var b strings.Builder
	if err := SummaryWith(&b, res, "d.csv", Style{}); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"not computable: all observations are tied", Caution} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("summary lacks %q:\n%s", want, b.String())
		}
	}
}

// layoutResults is an invented run (the numbers are made up and mean nothing: these
// tests check the layout only) with group names of several lengths, one of them
// non-ASCII, a post-hoc table and a multiplicity family.
func layoutResults() *results.Results {
	p, adj, cov := 0.0123, 0.0246, 0.9567
	pair := func(a, b string, reject bool) results.Pair {
		return results.Pair{Groups: [2]string{a, b}, Statistic: ptr(-2.5), P: ptr(0.01), PAdjusted: ptr(0.03), Reject: reject,
			CliffsDelta: -0.5, HodgesLehmann: results.HLShift{Shift: -1, Interval: results.Interval{Level: 0.95, Low: -2, High: 0},
				Coverage: &cov, IndexMethod: "exact", LevelAttainable: true}}
	}
	return &results.Results{
		Plan: results.Plan{ID: "layout", Title: "Invented layout check"},
		Analyses: []results.Analysis{{
			ID: "first", Test: "kruskal-wallis", Outcome: "y", N: 30, Status: "ok",
			Groups: []results.Group{
				{Name: "A", N: 10, Median: 1.5, Q1: 1, Q3: 2, MeanRank: 9.5},
				{Name: "Zürich-Süd", N: 10, Median: 12.25, Q1: 10, Q3: 14, MeanRank: 20.5},
				{Name: "control group", N: 10, Median: 3, Q1: 2.5, Q3: 4, MeanRank: 16.5},
			},
			KruskalWallis: &results.KruskalWallis{H: 7.5, TieCorrection: 1, DF: 2},
			PValue:        &results.PValue{Method: "asymptotic", Reason: "invented", Value: &p, Log10: -1.91},
			AsymptoticP:   &results.Tail{Value: &p, Log10: -1.91},
			Decision:      &results.Decision{Alpha: 0.05, Reject: true, PAdjusted: &adj},
			PostHoc: &results.PostHoc{Method: "dunn", Adjust: "holm", Family: "all-pairs", Ran: true, Statistic: "z",
				Pairs: []results.Pair{pair("A", "Zürich-Süd", true), pair("A", "control group", false), pair("Zürich-Süd", "control group", false)}},
		}},
		Multiplicity: &results.Multiplicity{Rule: "holm", Method: "Holm step-down", Alpha: 0.05,
			Members: []results.Member{{ID: "first", P: &results.Tail{Value: &p}, PAdjusted: adj, Tested: true, Reject: true}, {ID: "second-endpoint", PAdjusted: 1, Tested: true}}},
	}
}

// TestSummaryHodgesLehmann: the summary says in words when an interval's level cannot be
// reached, when its index is approximate and when its coverage is that of continuous data.
func TestSummaryHodgesLehmann(t *testing.T) {
	res := layoutResults()
	a := &res.Analyses[0]
	a.Groups[0].N, a.Groups[1].N = 3, 3
	widest := 0.9
	pairs := a.PostHoc.Pairs
	pairs[0].HodgesLehmann = results.HLShift{Shift: 1, Interval: results.Interval{Level: 0.95, Low: -6, High: 7},
		Coverage: &widest, IndexMethod: "exact", LevelAttainable: false}
	pairs[1].HodgesLehmann.TiedValues = true
	pairs[2].HodgesLehmann.Coverage, pairs[2].HodgesLehmann.IndexMethod = nil, "normal"
	var b strings.Builder
	if err := SummaryWith(&b, res, "d.csv", Style{}); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{
		"A vs Zürich-Süd interval: 95% not attainable with 3 and 3 values; widest interval [-6, 7], 90% coverage\n",
		"A vs control group interval: 95% [-2, 0], coverage 95.67% for continuous data; with tied values the actual coverage is typically higher\n",
		"Zürich-Süd vs control group interval: 95% [-2, 0], index from the normal approximation\n",
	} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("summary lacks %q:\n%s", want, b.String())
		}
	}
	// An untied pair with an exact index needs no words beyond the table.
	if err := SummaryWith(&b, layoutResults(), "d.csv", Style{}); err != nil || strings.Count(b.String(), " interval: ") != 3 {
		t.Errorf("%d interval lines, want 3 (%v)", strings.Count(b.String(), " interval: "), err)
	}
}

// column returns the rune offset at which field starts in line, or -1.
func column(line, field string) int {
	i := strings.Index(line, field)
	if i < 0 {
		return -1
	}
	return utf8.RuneCountInString(line[:i])
}

// TestSummaryTables checks the alignment of the summary's tables: names and words
// left-aligned (they start in the same column), numbers right-aligned (they end in the
// same column).
func TestSummaryTables(t *testing.T) {
	var b strings.Builder
	if err := SummaryWith(&b, layoutResults(), "d.csv", Style{}); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(b.String(), "\n")
	find := func(prefix string) string {
		t.Helper()
		for _, l := range lines {
			if strings.HasPrefix(l, prefix) {
				return l
			}
		}
		t.Fatalf("no line starts with %q:\n%s", prefix, b.String())
		return ""
	}
	for _, tc := range []struct {
		name  string
		lines []string // table rows
		left  []string // a field of each row that must start in one column
		right []string // a field of each row that must end in one column
	}{
		{"groups", []string{find("  group "), find("  A "), find("  Zürich-Süd "), find("  control group ")},
			[]string{"group", "A", "Zürich-Süd", "control group"}, []string{"mean rank", "9.5", "20.5", "16.5"}},
		{"pairs", []string{find("    pair "), find("    A vs Zürich-Süd "), find("    A vs control group "), find("    Zürich-Süd vs control group ")},
			[]string{"decision", "differ", "no difference shown", "no difference shown"}, []string{"adjusted p", "0.03", "0.03", "0.03"}},
		{"multiplicity", []string{find("  analysis "), find("  first "), find("  second-endpoint ")},
			[]string{"decision", "rejected", "not rejected"}, []string{"adjusted p", "0.0246", "1"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			for i, l := range tc.lines {
				if got, want := column(l, tc.left[i]), column(tc.lines[0], tc.left[0]); got != want || got < 0 {
					t.Errorf("%q starts at %d, want %d (left-aligned):\n%s", tc.left[i], got, want, strings.Join(tc.lines, "\n"))
				}
				end := func(l, f string) int { return column(l, f) + utf8.RuneCountInString(f) }
				if got, want := end(l, tc.right[i]), end(tc.lines[0], tc.right[0]); got != want {
					t.Errorf("%q ends at %d, want %d (right-aligned):\n%s", tc.right[i], got, want, strings.Join(tc.lines, "\n"))
				}
			}
		})
	}
}

var sgr = regexp.MustCompile("\x1b\\[[0-9;]*m")

// TestSummaryColor checks that colour only adds escape sequences: without them the text
// is the plain text, byte for byte (so the tables stay aligned), and the marks fall on
// the headings and the decisions.
func TestSummaryColor(t *testing.T) {
	var plain, color strings.Builder
	if err := SummaryWith(&plain, layoutResults(), "d.csv", Style{}); err != nil {
		t.Fatal(err)
	}
	if err := SummaryWith(&color, layoutResults(), "d.csv", Style{Color: true}); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(plain.String(), "\x1b") {
		t.Errorf("plain summary has escape sequences:\n%q", plain.String())
	}
	if got := sgr.ReplaceAllString(color.String(), ""); got != plain.String() {
		t.Errorf("coloured summary without its escapes differs from the plain one:\n%s\n---\n%s", got, plain.String())
	}
	for _, want := range []string{
		sgrHeading + "analysis first" + sgrReset,
		sgrHeading + "multiplicity across analyses" + sgrReset,
		sgrDecision + "reject the null hypothesis" + sgrReset,
		sgrDecision + "differ",
		sgrDecision + "rejected",
		sgrNeutral + "no difference shown",
	} {
		if !strings.Contains(color.String(), want) {
			t.Errorf("coloured summary lacks %q:\n%q", want, color.String())
		}
	}
	if len(sgrNeutral) != len(sgrDecision) {
		t.Errorf("neutral and decision sequences differ in length: %q, %q", sgrNeutral, sgrDecision)
	}
}

// TestPreviewColor is TestSummaryColor for the check preview.
func TestPreviewColor(t *testing.T) {
	pv := &results.Preview{
		Plan: results.Plan{ID: "layout", Title: "Invented layout check"},
		Analyses: []results.PreviewAnalysis{{ID: "first", Test: "kruskal-wallis", PValue: "auto", Outcome: "y", N: 3,
			Groups: []results.GroupCount{{Name: "long group name", N: 2}, {Name: "B", N: 1}}}},
		Multiplicity: &results.PreviewMultiplicity{Rule: "holm", Analyses: []string{"first"}},
	}
	var plain, color strings.Builder
	if err := PreviewWith(&plain, pv, "p.yaml", "d.csv", Style{}); err != nil {
		t.Fatal(err)
	}
	if err := PreviewWith(&color, pv, "p.yaml", "d.csv", Style{Color: true}); err != nil {
		t.Fatal(err)
	}
	if got := sgr.ReplaceAllString(color.String(), ""); got != plain.String() {
		t.Errorf("coloured preview without its escapes differs from the plain one:\n%s\n---\n%s", got, plain.String())
	}
	for _, want := range []string{"\n  group            n\n", "\n  long group name  2\n", "\n  B                1\n", sgrHeading + "analysis first" + sgrReset} {
		if !strings.Contains(color.String(), want) {
			t.Errorf("preview lacks %q:\n%s", want, color.String())
		}
	}
}

// ExamplePreviewWith shows the check preview of an invented plan; with Style{Color: true}
// the same text carries escape sequences on its headings.
func ExamplePreviewWith() {
	pv := &results.Preview{
		Plan: results.Plan{ID: "demo", Title: "Invented demo"},
		Data: results.Data{Rows: 5, SHA256: "0123abcd"},
		Analyses: []results.PreviewAnalysis{{ID: "main", Test: "kruskal-wallis", PValue: "exact", Outcome: "score", N: 5,
			Groups: []results.GroupCount{{Name: "placebo", N: 3}, {Name: "dose", N: 2}}}},
	}
	if err := PreviewWith(os.Stdout, pv, "plan.yaml", "scores.csv", Style{}); err != nil {
		fmt.Println(err)
	}
	// Output:
	// plan plan.yaml is valid: Invented demo
	// data scores.csv: 5 rows, sha256 0123abcd
	//
	// analysis main: Kruskal-Wallis of "score", p-value exact, 2 groups, N = 5
	//   group    n
	//   placebo  3
	//   dose     2
	//   excluded: none
	//
	// nothing was computed; run it with: rankplan run plan.yaml --out DIR
}

func ptr(v float64) *float64 { return &v }

// TestLettersMeaning: the caption of a letter display never says that groups sharing a
// letter are alike, and names an adjustment only when one was applied.
func TestLettersMeaning(t *testing.T) {
	for _, tc := range []struct {
		ph   results.PostHoc
		want string
	}{
		{results.PostHoc{Adjust: "holm"}, "groups sharing a letter were not found to differ at alpha = 0.05 after adjustment by holm; groups with no letter in common differ"},
		{results.PostHoc{Adjust: "none"}, "groups sharing a letter were not found to differ at alpha = 0.05 without adjustment; groups with no letter in common differ"},
		{results.PostHoc{Adjust: "none", Simultaneous: "simultaneous by construction"}, "groups sharing a letter were not found to differ at alpha = 0.05 in simultaneous comparisons, without adjustment; groups with no letter in common differ"},
	} {
		got := LettersMeaning(&tc.ph, 0.05, "alpha")
		if got != tc.want {
			t.Errorf("%+v: %q, want %q", tc.ph, got, tc.want)
		}
		if strings.Contains(got, "do not differ") || strings.Contains(got, "same") {
			t.Errorf("%q reads as accepting the null hypothesis", got)
		}
	}
}

// TestLettersRenderings: every rendering shows the display text of each group, with its
// caption; a display of more than 52 letters shows the "."-joined names as they are.
func TestLettersRenderings(t *testing.T) {
	res := layoutResults()
	ph := res.Analyses[0].PostHoc
	ph.Adjust, ph.Simultaneous = "none", "simultaneous by construction"
	res.Plan.Alpha = 0.05
	ph.Letters = []results.GroupLetters{ // only A and Zürich-Süd differ
		{Group: "A", Letters: []string{"a"}, Display: "a"},
		{Group: "Zürich-Süd", Letters: []string{"b1"}, Display: "b1"},
		{Group: "control group", Letters: []string{"a", "b1"}, Display: "a.b1"},
	}
	want := "A a, Zürich-Süd b1, control group a.b1"
	caption := "not found to differ at alpha = 0.05 in simultaneous comparisons, without adjustment"
	var text, md strings.Builder
	if err := SummaryWith(&text, res, "d.csv", Style{}); err != nil {
		t.Fatal(err)
	}
	if err := Markdown(&md, res, Meta{}, "DIR"); err != nil {
		t.Fatal(err)
	}
	for name, out := range map[string]string{"text": text.String(), "markdown": md.String()} {
		if !strings.Contains(out, want) || !strings.Contains(out, caption) {
			t.Errorf("%s lacks %q or %q:\n%s", name, want, caption, out)
		}
		if strings.Contains(out, "after adjustment") {
			t.Errorf("%s names an adjustment that was not applied:\n%s", name, out)
		}
	}
}

// eNumber finds numbers in exponent form as strconv writes them, such as 1.165e+08 or
// 5e-05, standing alone (not inside a hash or a colour).
var eNumber = regexp.MustCompile(`(?:^|[^0-9A-Za-z_.])([-+]?[0-9]+(?:\.[0-9]+)?e[-+][0-9]+)(?:[^0-9A-Za-z_]|$)`)

// svgElement matches an inline SVG plot, whose axis labels plots.go writes.
var svgElement = regexp.MustCompile(`(?s)<svg.*?</svg>`)

// TestRenderingsPlainNumbers gives one analysis numbers of every size (a rank sum of
// 1.165e8, a median of 123456789.5, quartiles of 9.99e14 and 1e15, a shift of 1e-7, a
// Cliff's delta of -0, a pair's p of 2.5e-7, an epsilon-squared of 3e-9) and renders the terminal summary, summary.md,
// pairs.csv and report.html (its plots aside): each shows the plain decimals, and exponent
// form appears only at 1e15 and above or for a p-value below 1e-4.
func TestRenderingsPlainNumbers(t *testing.T) {
	res, vals := loadFixture(t, "dissolution")
	a := &res.Analyses[0]
	a.Groups[0].RankSum, a.Groups[0].Median = 1.165e8, 123456789.5
	a.Groups[1].Q1, a.Groups[1].Q3 = 9.99e14, 1e15
	pr := &a.PostHoc.Pairs[0]
	pr.HodgesLehmann.Shift, pr.CliffsDelta, pr.P = 1e-7, math.Copysign(0, -1), ptr(2.5e-7)
	pr.Statistic = ptr(123456789.5)
	a.EffectSizes.EpsilonSquared = 3e-9

	var text, md, pairs bytes.Buffer
	if err := SummaryWith(&text, res, "data.csv", Style{}); err != nil {
		t.Fatal(err)
	}
	if err := Markdown(&md, res, goldenMeta, "run"); err != nil {
		t.Fatal(err)
	}
	if err := PairsCSV(&pairs, res); err != nil {
		t.Fatal(err)
	}
	page := svgElement.ReplaceAllString(string(render(t, res, goldenMeta, vals)), "<svg/>")
	for _, tc := range []struct {
		name, out string
		want      []string // plain decimals the rendering must show
		allowed   []string // the exponent forms it may show
	}{
		{"summary", text.String(), []string{"123456789.5", "999000000000000", "0.0000001", "   0  "}, []string{"1e+15", "2.5e-07"}},
		{"summary.md", md.String(), []string{"| 0.000000003 |"}, nil},
		{"pairs.csv", pairs.String(), []string{",123456789.5,", ",0.00000025,", ",-0,", ",0.0000001,"}, nil},
		{"report.html", page, []string{">116500000<", ">123456789.5<", ">999000000000000<", ">0.0000001<",
			`data-value="123456789.5"`, `data-value="0.00000025"`}, []string{"1e+15", "2.5e-07"}},
	} {
		for _, w := range tc.want {
			if !strings.Contains(tc.out, w) {
				t.Errorf("%s: no %q", tc.name, w)
			}
		}
		for _, m := range eNumber.FindAllStringSubmatch(tc.out, -1) {
			if e := m[1]; !slices.Contains(tc.allowed, e) {
				t.Errorf("%s: exponent form %q", tc.name, e)
			}
		}
	}
}
