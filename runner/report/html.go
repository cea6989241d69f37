package report

import (
	"errors"
	"fmt"
	"html/template"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"rankplan/runner/results"
	"rankplan/spec"
)

// Meta is what the report shows beyond results.json: provenance for the header and footer.
type Meta struct {
	PlanFile, PlanSHA256, PlanCanonicalSHA256 string // as given, and "sha256:<hex>"
	DataFile, DataSHA256                      string
	Lock                                      string   // e.g. "locked: lock sha256:… matches" or "no lock"
	Deviations                                []string // each deviation from the lock, in words; empty: none
	Tool                                      string   // "rankplan 0.2.0-dev (revision …, go1.26)"
	Seed, RNG                                 string
	AuditHead                                 string // "sha256:<hex>", the chain head when the report was written
	AuditSeq                                  int64  // its record number

	// ValueScale is the plan's scale of the box plot's value axis; empty: linear.
	ValueScale spec.ValueScale
}

// AnalysisValues are the observations of one analysis per group (report order), for the plots only.
// A large group may be thinned: Groups[i] then holds evenly spaced order statistics of the
// group, at least two and always its minimum and maximum.
type AnalysisValues struct {
	ID     string
	Groups [][]float64 // Groups[i] sorted ascending, same order as results Analysis.Groups
}

// HTML writes report.html: one self-contained page (inline style and inline SVG plots, no
// script, no external reference) that renders the results of a run for people, on screen
// and on paper. It computes no statistic: every number is read from res (apart from the
// differences and ratios shown beside the numbers they come from: IQR, tie share, the
// ratio of the IQRs), and values (one entry per analysis, by id; an analysis without one
// gets its plots without points) only place the observations in the box plots. Headline numbers carry data-key and
// data-value attributes (every digit, strconv 'g' −1) so that a program can find them.
// It does not change res or values.
func HTML(w io.Writer, res *results.Results, meta Meta, values []AnalysisValues) error {
	if res == nil {
		return errors.New("html report: no results")
	}
	byID, err := checkValues(res, values)
	if err != nil {
		return fmt.Errorf("html report: %w", err)
	}
	page := htmlPage{Res: res, Meta: meta, Caution: Caution}
	if page.Meta.Seed == "" {
		page.Meta.Seed = res.Plan.Seed
	}
	for i := range res.Analyses {
		a := &res.Analyses[i]
		v, err := analysisView(i, a, res.Plan.Alpha, byID[a.ID])
		if err == nil {
			err = v.addPlots(res.Conventions.Quantiles, byID[a.ID], meta.ValueScale)
		}
		if err != nil {
			return fmt.Errorf("html report: analysis %q: %w", a.ID, err)
		}
		page.Analyses = append(page.Analyses, v)
	}
	ew := &errWriter{w: w}
	if err := htmlTemplate.Execute(ew, &page); err != nil {
		return fmt.Errorf("html report: %w", err)
	}
	return ew.err
}

// checkValues matches the plot values to the analyses and checks them against the
// results: one entry per analysis at most, one slice per group of the group's size,
// finite and sorted ascending.
func checkValues(res *results.Results, values []AnalysisValues) (map[string][][]float64, error) {
	analyses := make(map[string]*results.Analysis, len(res.Analyses))
	for i := range res.Analyses {
		analyses[res.Analyses[i].ID] = &res.Analyses[i]
	}
	byID := make(map[string][][]float64, len(values))
	for _, v := range values {
		a, ok := analyses[v.ID]
		if !ok {
			return nil, fmt.Errorf("values for analysis %q, which is not in the results", v.ID)
		}
		if _, dup := byID[v.ID]; dup {
			return nil, fmt.Errorf("values for analysis %q given twice", v.ID)
		}
		if len(v.Groups) != len(a.Groups) {
			return nil, fmt.Errorf("values for analysis %q: %d groups, the results have %d", v.ID, len(v.Groups), len(a.Groups))
		}
		for gi, g := range v.Groups {
			rg := a.Groups[gi]
			if len(g) > rg.N || len(g) < min(rg.N, 2) {
				return nil, fmt.Errorf("values for analysis %q group %q: %d observations, the results have %d", v.ID, rg.Name, len(g), rg.N)
			}
			if len(g) < rg.N && (g[0] != rg.Min || g[len(g)-1] != rg.Max) {
				return nil, fmt.Errorf("values for analysis %q group %q: %d of %d observations that do not include the minimum and the maximum", v.ID, rg.Name, len(g), rg.N)
			}
			for j, x := range g {
				if math.IsNaN(x) || math.IsInf(x, 0) {
					return nil, fmt.Errorf("values for analysis %q group %q: observation %d is %v", v.ID, a.Groups[gi].Name, j+1, x)
				}
				if j > 0 && x < g[j-1] {
					return nil, fmt.Errorf("values for analysis %q group %q: not sorted ascending at observation %d", v.ID, a.Groups[gi].Name, j+1)
				}
			}
		}
		byID[v.ID] = v.Groups
	}
	return byID, nil
}

type htmlPage struct {
	Res      *results.Results
	Meta     Meta
	Analyses []htmlAnalysis
	Caution  string
}

type htmlAnalysis struct {
	*results.Analysis
	Anchor     string
	HasValues  bool
	Points     int // most points drawn per group
	Box, Ranks template.HTML
	Heat       template.HTML
	HeatLegend []legendSwatch
	Diag       []diagRow
	Spread     *spreadNote
	TieShare   float64
	RankMid    float64
	PostHocSay string
	FamilySay  string
	// PairPMethods names the distributions the pairs' p-values came from, in words.
	PairPMethods string
	// ClippedRanks names the groups whose mean-rank interval was cut to its range.
	ClippedRanks string
	// LettersSay is [LettersMeaning] of the letter display; LettersNumbered says that the
	// display has more than 52 letters (names with numbers, joined with ".").
	LettersSay      string
	LettersNumbered bool
	// PrintPairs says, for a pairs table longer than printPairsMax rows, which pairs the
	// printed page lists (those that differ or are not computable) and where the rest
	// are; empty for a shorter table, which prints whole.
	PrintPairs string

	// BoxCaption, HeatNote and Forest come with the plots ([htmlAnalysis.addPlots]).
	BoxCaption, HeatNote string
	Forest               template.HTML
}

// printPairsMax is the most pairs a printed page lists in full (all pairs of six groups);
// a longer table prints only its pairs that differ or are not computable, so that the
// pairs of many groups do not fill pages that pairs.csv holds anyway.
const printPairsMax = 15

type diagRow struct {
	Name                  string
	IQR, Min, Max, Median float64
	Skew                  *float64 // results' quartile skewness; nil when Q1 = Q3
}

// spreadNote compares the groups' IQRs: the narrowest and the widest, and their ratio.
type spreadNote struct {
	Narrow, Wide diagRow
	Ratio        float64 // Wide.IQR / Narrow.IQR; 0 when the narrowest IQR is 0
}

type legendSwatch struct {
	Label, Color string
}

// spreadOf finds the narrowest and the widest IQR among the groups (the first one of each
// in group order); it returns nil for fewer than two groups.
func spreadOf(rows []diagRow) *spreadNote {
	if len(rows) < 2 {
		return nil
	}
	n := spreadNote{Narrow: rows[0], Wide: rows[0]}
	for _, r := range rows[1:] {
		if r.IQR < n.Narrow.IQR {
			n.Narrow = r
		}
		if r.IQR > n.Wide.IQR {
			n.Wide = r
		}
	}
	if n.Narrow.IQR > 0 {
		n.Ratio = n.Wide.IQR / n.Narrow.IQR
	}
	return &n
}

// analysisView prepares one analysis for the template: its plots and the arithmetic on
// results that the page shows beside the numbers it comes from (IQR = Q3 − Q1, tie
// share = tied values / N, the ratio of the widest IQR to the narrowest).
func analysisView(i int, a *results.Analysis, alpha float64, vals [][]float64) (htmlAnalysis, error) {
	v := htmlAnalysis{Analysis: a, Anchor: "analysis-" + strconv.Itoa(i+1), HasValues: vals != nil}
	v.RankMid = float64(a.N+1) / 2
	for _, g := range a.Groups {
		v.Diag = append(v.Diag, diagRow{Name: g.Name, IQR: g.Q3 - g.Q1, Min: g.Min, Max: g.Max, Median: g.Median, Skew: g.QuartileSkewness})
		v.Points = max(v.Points, g.N)
	}
	v.Spread = spreadOf(v.Diag)
	var clipped []string
	for _, g := range a.Groups {
		if iv := g.MeanRankInterval; iv != nil && iv.Clipped {
			clipped = append(clipped, g.Name)
		}
	}
	v.ClippedRanks = strings.Join(clipped, ", ")
	if kw := a.KruskalWallis; kw != nil && a.N > 0 {
		v.TieShare = float64(kw.TiedValues) / float64(a.N)
	}
	if ph := a.PostHoc; ph != nil {
		v.PostHocSay = postHocNames[ph.Method]
		if v.PostHocSay == "" {
			v.PostHocSay = string(ph.Method)
		}
		v.FamilySay = "all pairs of groups"
		if ph.Family == "many-to-one" {
			v.FamilySay = "each group against the control " + strconv.Quote(ph.Control)
		}
		var methods []string
		for _, pr := range ph.Pairs {
			if m := pMethodText(pr.PMethod); !slices.Contains(methods, m) {
				methods = append(methods, m)
			}
		}
		v.PairPMethods = strings.Join(methods, " or ")
		v.PrintPairs = printPairsNote(ph.Pairs)
		v.LettersSay = LettersMeaning(ph, alpha, "α")
		for _, l := range ph.Letters {
			v.LettersNumbered = v.LettersNumbered || strings.ContainsAny(l.Display, ".0123456789")
		}
		if ph.Ran && len(ph.Pairs) > 0 {
			for _, p := range []float64{1, 0.1, 0.05, 0.01, 0.001} {
				v.HeatLegend = append(v.HeatLegend, legendSwatch{Label: Num(p), Color: hexColor(pColor(p))})
			}
			v.HeatLegend[len(v.HeatLegend)-1].Label = "≤ 0.001"
		}
	}
	return v, nil
}

// printPairsNote says which pairs a printed page lists when there are more than
// printPairsMax of them, or "" when it lists them all.
func printPairsNote(pairs []results.Pair) string {
	if len(pairs) <= printPairsMax {
		return ""
	}
	differ, none := 0, 0
	for _, p := range pairs {
		switch {
		case p.NotComputable != "":
			none++
		case p.Reject:
			differ++
		}
	}
	const rest = "; every pair is in pairs.csv and in this table on screen."
	if differ == 0 && none == 0 {
		return fmt.Sprintf("On paper this table lists only the pairs found to differ, and none of the %d compared was%s", len(pairs), rest)
	}
	listed := fmt.Sprintf("the pairs found to differ (%d)", differ)
	if none > 0 {
		listed += fmt.Sprintf(" and those not computable (%d)", none)
	}
	return fmt.Sprintf("On paper this table lists only %s, of the %d compared%s", listed, len(pairs), rest)
}

// htmlValue is a number as the page shows it, with its key and every digit for programs.
type htmlValue struct {
	Key, Full, Log10, Text string
}

var htmlFuncs = template.FuncMap{
	"unitSuffix": unitSuffix,
	"key":        func(parts ...string) string { return strings.Join(parts, ".") },
	"pairkey": func(id string, p results.Pair, field string) string {
		return id + ".pair." + p.Groups[0] + "|" + p.Groups[1] + "." + field
	},
	"v": func(key string, x float64) htmlValue { return htmlValue{Key: key, Full: full(x), Text: Num(x)} },
	"vn": func(key string, x *float64) htmlValue {
		if x == nil {
			return htmlValue{Key: key, Text: "—"} // not computable: no data-value
		}
		return htmlValue{Key: key, Full: full(*x), Text: Num(*x)}
	},
	// vq and vnq are v and vn for a p-value, an adjusted p-value or an end of a p-value's
	// interval: the shown text as NumP writes it.
	"vq": func(key string, p float64) htmlValue { return htmlValue{Key: key, Full: full(p), Text: NumP(p)} },
	"vnq": func(key string, p *float64) htmlValue {
		if p == nil {
			return htmlValue{Key: key, Text: "—"} // not computable: no data-value
		}
		return htmlValue{Key: key, Full: full(*p), Text: NumP(*p)}
	},
	"vi": func(key string, n int) htmlValue {
		s := strconv.Itoa(n)
		return htmlValue{Key: key, Full: s, Text: s}
	},
	"vp": func(key string, value *float64, log10 float64) htmlValue {
		v := htmlValue{Key: key, Log10: full(log10), Text: FormatP(value, log10)}
		if value != nil {
			v.Full = full(*value)
		}
		return v
	},
	"hlinterval":  func(p results.Pair) string { return hlIntervalCell(p.HodgesLehmann) },
	"hlnotes":     func(a *htmlAnalysis) []string { return hlIntervalNotes(a.Analysis) },
	"num":         Num,
	"isBootstrap": func(m spec.IntervalMethod) bool { return m == spec.BootstrapInterval },
	"isAlways":    func(w spec.When) bool { return w == spec.WhenAlways },
	"pct":         pct,
	"fmtp":        FormatP,
	"method":      methodName,
	"test":        testName,
	"exclude":     Exclusions,
	"subset":      subsetText,
	"reason":      reasonText,
	"group": func(g string) string {
		if g == "" {
			return "(no group)"
		}
		return g
	},
}

// pMethodText says how a pair's p-value was found, in words.
func pMethodText(m string) string {
	switch m {
	case "normal":
		return "normal distribution"
	case "normal-continuity":
		return "normal distribution with a continuity correction"
	case "t":
		return "t distribution"
	case "studentized-range":
		return "studentized range distribution"
	case "exact":
		return "exact distribution"
	}
	return m
}

// reasonText says an exclusion reason in words.
func reasonText(r string) string {
	switch r {
	case results.ReasonMissingGroup:
		return "group label missing"
	case results.ReasonMissingOutcome:
		return "outcome missing"
	case results.ReasonNotIncluded:
		return "group not in the plan's groups"
	case results.ReasonOutsideSubset:
		return "outside the analysis's subset"
	}
	return r
}

var htmlTemplate = template.Must(template.New("report").Funcs(htmlFuncs).Parse(htmlSource))

const htmlSource = `{{define "val"}}<span class="num" data-key="{{.Key}}"{{if .Full}} data-value="{{.Full}}"{{end}}{{if .Log10}} data-log10="{{.Log10}}"{{end}}>{{.Text}}</span>{{end -}}
<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Res.Plan.Title}} ({{.Res.Plan.ID}}): rankplan report</title>
<style>
:root { color-scheme: light; }
body { font-family: "Liberation Sans", Arial, Helvetica, sans-serif; font-size: 11pt; line-height: 1.45;
  color: #111; background: #fff; max-width: 60rem; margin: 0 auto; padding: 1.5rem; }
h1 { font-size: 1.6em; margin: 0 0 .2em; }
h2 { font-size: 1.3em; border-bottom: 2px solid #0072B2; padding-bottom: .15em; margin-top: 2em; }
h3 { font-size: 1.05em; margin: 1.4em 0 .4em; }
.planid { color: #444; margin: 0 0 1.5em; }
code, .hash { font-family: "Liberation Mono", "Courier New", monospace; font-size: .9em; word-break: break-all; }
table { border-collapse: collapse; margin: .4em 0 1em; }
th, td { border: 1px solid #bbb; padding: .2em .55em; text-align: left; vertical-align: top; }
th { background: #eef3f8; }
td.r, th.r { text-align: right; }
td.r { white-space: nowrap; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: .2em 1em; margin: .4em 0 1em; }
dl.facts dt { font-weight: bold; }
dl.facts dd { margin: 0; }
.decision { border-left: 4px solid #0072B2; padding: .3em .8em; background: #f4f8fb; }
.note { color: #333; font-size: .95em; }
.caution { border: 1px solid #D55E00; padding: .5em 1em; }
figure { margin: 1em 0; }
nav.contents ol { margin: .3em 0 1em; padding-left: 1.6em; }
nav.contents a { color: #005a8c; }
figcaption { font-size: .92em; color: #333; max-width: 44rem; }
svg.plot { display: block; width: 100%; max-width: 34rem; height: auto; }
.swatch { display: inline-block; width: 1.1em; height: .9em; border: 1px solid #999; vertical-align: middle;
  margin: 0 .25em 0 .6em; -webkit-print-color-adjust: exact; print-color-adjust: exact; }
footer { margin-top: 2.5em; border-top: 1px solid #bbb; padding-top: .6em; font-size: .9em; color: #333; }
@page { size: auto; margin: 12mm 16mm; }
.print-only { display: none; }
@media print {
  /* Paper: A4 or Letter, 178 mm of text width on A4 (672 CSS px). Small type, tight
     spacing, the plots of an analysis side by side, a new page for each analysis after
     the first, nothing that only works on screen. */
  body { max-width: none; margin: 0; padding: 0; font-size: 8pt; line-height: 1.3; background: #fff; color: #000; }
  h1 { font-size: 13pt; }
  h2 { font-size: 10.5pt; margin: .9em 0 .3em; padding-bottom: .1em; border-bottom-width: 1.5px; }
  h3 { font-size: 8.5pt; margin: .6em 0 .2em; }
  p { margin: .25em 0; }
  .planid { margin: 0 0 .4em; }
  nav.contents { display: none; }
  .print-only { display: block; }
  .screen-only { display: none; }
  /* The printed forest plot, of the pairs that differ, has its caption beside it. */
  section.figures > figure.print-only { display: flex; flex: 1 1 100%; max-width: none; gap: 4mm; align-items: center; }
  section.figures > figure.print-only > svg { flex: 0 1 50%; }
  section.figures > figure.print-only > figcaption { flex: 1 1 50%; }
  td.repeat, th.repeat { display: none; }
  code, .hash { font-size: .92em; }
  table { margin: .2em 0 .4em; font-size: 7.5pt; line-height: 1.2; }
  th, td { padding: .08em .4em; }
  th, .decision { background: #fff; }
  dl.facts { gap: 0 .8em; margin: .2em 0 .4em; }
  .decision { padding: .15em .6em; }
  .note, figcaption, #reading, footer, .conventions { font-size: 7pt; line-height: 1.25; }
  .caution { padding: .2em .6em; }
  footer { margin-top: .8em; padding-top: .2em; }
  footer p { margin: .1em 0; }
  section.analysis + section.analysis { break-before: page; }
  /* Within an analysis the data and the diagnostics, both about the groups, sit side by
     side when their tables fit in the width; each item keeps its order otherwise. */
  section.analysis { display: flex; flex-wrap: wrap; gap: 0 5mm; align-items: flex-start; }
  section.analysis > h2 { flex: 1 1 100%; order: 0; }
  section.analysis > :not(h2) { flex: 1 1 100%; order: 5; }
  section.analysis > section.data { order: 1; flex: 1 1 45%; }
  section.analysis > section.diagnostics { order: 2; flex: 1 1 45%; }
  section.analysis > section.omnibus { order: 3; }
  section.analysis > section.effects { order: 4; }
  section.analysis > section.figures { order: 6; }
  /* Each pair on one line: only the group names and the decision may wrap. */
  section.pairs table { font-size: 7pt; }
  section.pairs td { white-space: nowrap; }
  section.pairs td:first-child, section.pairs td:last-child { white-space: normal; }
  section.pairs th:nth-child(2) { width: 3em; } /* the shift's long name wraps, not the pairs */
  /* The letter display as one line: each group with its letters. */
  table.letters, table.letters tbody { display: block; border: 0; }
  table.letters thead { display: none; }
  table.letters tr { display: inline-block; margin-right: 1.2em; }
  table.letters td { display: inline; border: 0; padding: 0 .25em 0 0; }
  /* The plots of an analysis in one row: two or three side by side, scaled to share the
     text width; a fourth wraps to a second row. */
  section.figures { display: flex; flex-wrap: wrap; gap: 0 4mm; align-items: flex-start; }
  section.figures > h3 { flex: 0 0 100%; }
  section.figures > figure { flex: 1 1 30%; max-width: 50%; min-width: 0; margin: .2em 0; }
  svg.plot { max-width: 100%; }
  figcaption { max-width: none; }
  /* Small sections, tables and figures stay whole; an analysis as a whole may span pages,
     and so may its omnibus test and effect sizes, between their tables and notes. */
  section.data, section.diagnostics, section#multiplicity, section#reading,
  table, tr, figure, .decision, .caution, dl.facts, footer { page-break-inside: avoid; break-inside: avoid; }
  table.long { break-inside: auto; }
  table.long tr.quiet { display: none; }
  h2, h3 { page-break-after: avoid; break-after: avoid; }
}
</style>
</head>
<body>
<header>
<h1>{{.Res.Plan.Title}}</h1>
<p class="planid">Plan <code>{{.Res.Plan.ID}}</code> · significance level α = {{num .Res.Plan.Alpha}} · {{len .Analyses}} analys{{if eq (len .Analyses) 1}}is{{else}}es{{end}}</p>
</header>
{{if gt (len .Analyses) 1}}<nav class="contents" aria-label="Contents">
<h2>Contents</h2>
<ol>
<li><a href="#provenance">Plan, data and lock</a></li>
{{range .Analyses}}<li><a href="#{{.Anchor}}">Analysis <code>{{.ID}}</code>{{if .Title}}: {{.Title}}{{end}}</a></li>
{{end}}{{if .Res.Multiplicity}}<li><a href="#multiplicity">Multiplicity across analyses</a></li>
{{end}}<li><a href="#reading">Reading these results</a></li>
</ol>
</nav>
{{end}}<main>
<section id="provenance">
<h2>Plan, data and lock</h2>
<dl class="facts">
<dt>Plan file</dt><dd><code>{{.Meta.PlanFile}}</code></dd>
<dt>Plan file SHA-256</dt><dd class="hash">{{.Meta.PlanSHA256}}</dd>
<dt>Canonical plan SHA-256</dt><dd class="hash">{{.Meta.PlanCanonicalSHA256}}</dd>
<dt>Data file</dt><dd><code>{{.Meta.DataFile}}</code></dd>
<dt>Data SHA-256</dt><dd class="hash">{{if .Meta.DataSHA256}}{{.Meta.DataSHA256}}{{else}}sha256:{{.Res.Data.SHA256}}{{end}}</dd>
<dt>Data read</dt><dd>{{.Res.Data.Rows}} data rows, {{.Res.Data.Bytes}} bytes{{if .Res.Data.HighPrecisionCells}}; {{.Res.Data.HighPrecisionCells}} cell(s) carry more than 15 significant digits and are compared as doubles, so such cells may tie{{end}}</dd>
{{with .Res.Data.LookAlikeGroups}}<dt>Look-alike group labels</dt><dd class="warning">{{range .}}<p>Column <code>{{.Column}}</code> has labels that look alike but are different groups (labels are compared exactly as written): {{range $i, $l := .Shown}}{{if $i}}, {{end}}<code>{{$l}}</code>{{end}}; they differ by {{range $i, $d := .Differences}}{{if $i}}; {{end}}{{$d}}{{end}}. Check the data entry.</p>{{end}}</dd>
{{end}}<dt>Lock</dt><dd>{{if .Meta.Lock}}{{.Meta.Lock}}{{else}}not stated{{end}}</dd>
<dt>Deviations from the lock</dt><dd>{{if .Meta.Deviations}}<ul>{{range .Meta.Deviations}}<li>{{.}}</li>{{end}}</ul>{{else}}none{{end}}</dd>
</dl>
<h3>Conventions behind the numbers</h3>
<dl class="facts conventions">
<dt>Ranks</dt><dd>{{.Res.Conventions.Ranks}}</dd>
<dt>Quantiles</dt><dd>{{.Res.Conventions.Quantiles}}</dd>
<dt>Decisions</dt><dd>{{.Res.Conventions.Decision}}</dd>
<dt>Random numbers</dt><dd>{{.Res.Conventions.RandomStream}}</dd>
</dl>
</section>
{{range .Analyses}}{{$id := .ID}}{{$a := .}}
<section class="analysis" id="{{.Anchor}}">
<h2>Analysis <code>{{.ID}}</code>{{if .Title}}: {{.Title}}{{end}}</h2>
<section class="data">
<h3>Data</h3>
<p>{{test .Test}} test of <code>{{.Outcome}}</code>{{unitSuffix .Unit}} across {{len .Groups}} groups, N = {{template "val" (vi (key $id "n") .N)}}.{{with .Subset}} Rows restricted to those where <code>{{.Column}}</code> is {{range $i, $s := .Values}}{{if $i}} or {{end}}“{{$s}}”{{end}}.{{end}}</p>
<table>
<thead><tr><th>group</th><th class="r">n</th><th class="r">median</th><th class="r">Q1</th><th class="r">Q3</th><th class="r">rank sum</th><th class="r">mean rank</th></tr></thead>
<tbody>
{{range .Groups}}<tr><td>{{.Name}}</td><td class="r">{{template "val" (vi (key $id "group" .Name "n") .N)}}</td><td class="r">{{num .Median}}</td><td class="r">{{num .Q1}}</td><td class="r">{{num .Q3}}</td><td class="r">{{num .RankSum}}</td><td class="r">{{template "val" (v (key $id "group" .Name "mean_rank") .MeanRank)}}</td></tr>
{{end}}</tbody>
</table>
{{if .Excluded}}<p>Rows left out:</p>
<table>
<thead><tr><th>group</th><th>reason</th><th class="r">rows</th></tr></thead>
<tbody>
{{range .Excluded}}<tr><td>{{group .Group}}</td><td>{{reason .Reason}}</td><td class="r">{{.Rows}}</td></tr>
{{end}}</tbody>
</table>{{else}}<p>No rows were left out.</p>{{end}}
</section>
<section class="omnibus">
<h3>Omnibus test</h3>
{{if ne .Status "ok"}}<p class="decision">Not computable: {{.Reason}}</p>{{else}}{{with .KruskalWallis}}
<dl class="facts">
<dt>H (tie-corrected)</dt><dd>{{template "val" (v (key $id "h") .H)}}, df = {{template "val" (vi (key $id "df") .DF)}}</dd>
<dt>Tie correction</dt><dd>C = {{template "val" (v (key $id "tie_correction") .TieCorrection)}}; H before correction = {{num .HUncorrected}}</dd>
{{end}}{{with .PValue}}
<dt>p-value</dt><dd>p = {{template "val" (vp (key $id "p") .Value .Log10)}}, {{method .Method}}{{if ne .Requested .Method}} (plan asked for {{.Requested}}){{end}}</dd>
<dt>Why this method</dt><dd>{{.Reason}}</dd>
{{with .MonteCarlo}}<dt>Monte Carlo</dt><dd>{{if eq .Exceedances "0"}}No resample of {{.Resamples}} reached the observed H, so the p-value shown is the smallest these resamples can give, not an estimate (its standard error {{template "val" (v (key $id "mc_se") .SE)}} says nothing here); an exact p-value or more resamples would narrow the interval; estimator {{.Estimator}};{{else}}{{.Exceedances}} of {{.Resamples}} resamples reached the observed H; estimator {{.Estimator}}; standard error {{template "val" (v (key $id "mc_se") .SE)}};{{end}} {{pct .CI.Level}} {{if and .Sequential .Sequential.Stopped}}interval for sampling until the h-th exceedance{{else}}Clopper-Pearson interval{{end}} [{{template "val" (vq (key $id "mc_ci_low") .CI.Low)}}, {{template "val" (vq (key $id "mc_ci_high") .CI.High)}}]; statistic compared as {{.Comparison}}; random stream {{.Stream}}{{with .Sequential}}; sequential rule with h = {{.StopAtExceedances}} and at most {{.MaxResamples}} resamples: {{if .Stopped}}stopped at the h-th exceedance{{else}}did not stop, so every resample was drawn{{end}}{{end}}</dd>
{{end}}{{with .Exact}}<dt>Exact distribution work</dt><dd>peak {{.PeakStates}} states (budget {{.BudgetStates}}), {{.Work}} units of work (budget {{.BudgetWork}})</dd>
{{end}}{{end}}{{with .AsymptoticP}}<dt>Asymptotic p</dt><dd>{{template "val" (vp (key $id "p_asymptotic") .Value .Log10)}} (chi-square approximation{{with $a.KruskalWallis}} with {{.DF}} df{{end}}, always shown beside the p-value used){{end}}</dd>
</dl>
{{with .Decision}}
<h3>Decision</h3>
<p class="decision">At α = {{num .Alpha}}: {{if .Reject}}<strong>the null hypothesis of identical distributions is rejected</strong>{{else}}<strong>the null hypothesis of identical distributions is not rejected</strong>{{end}}{{with .PAdjusted}} (adjusted p = {{template "val" (vq (key $id "p_adjusted") .)}}){{end}}. Rule: {{.Rule}}.</p>
{{end}}{{end}}
</section>
{{with .EffectSizes}}<section class="effects">
<h3>Effect sizes</h3>
{{$boot := and .Interval (isBootstrap .Interval.Method)}}<table>
<thead><tr><th>measure</th><th class="r">estimate</th>{{if $boot}}<th>{{pct .Interval.Level}} interval</th>{{end}}</tr></thead>
<tbody>
<tr><td>epsilon-squared, H / ((N² − 1)/(N + 1))</td><td class="r">{{template "val" (v (key $id "epsilon_squared") .EpsilonSquared)}}</td>{{if $boot}}{{with .Interval.EpsilonSquared}}<td>[{{template "val" (v (key $id "epsilon_squared_low") .Low)}}, {{template "val" (v (key $id "epsilon_squared_high") .High)}}]</td>{{end}}{{end}}</tr>
<tr><td>eta-squared(H), (H − k + 1)/(N − k)</td><td class="r">{{with .EtaSquaredH}}{{template "val" (v (key $id "eta_squared_h") .)}}{{else}}not defined (N = k){{end}}</td>{{if $boot}}<td>{{with .Interval.EtaSquaredH}}[{{num .Low}}, {{num .High}}]{{else}}not defined{{end}}</td>{{end}}</tr>
</tbody>
</table>
{{with .Interval}}{{if $boot}}<p class="note">Intervals: {{.Description}}; {{.Resamples}} resamples ({{.Degenerate}} with every value tied, counted as H = 0); random stream {{.Stream}}.</p>
{{else}}<p class="decision">{{pct .Level}} interval of the population effect ξ², the share of the rank variance between groups that both measures estimate: {{with .PopulationEffect}}<strong>[{{template "val" (v (key $id "population_effect_low") .Low)}}, {{template "val" (v (key $id "population_effect_high") .High)}}]</strong>{{if .Clipped}}, cut to [0, 1], the range of ξ²{{end}}{{else}}not computed: {{.NotComputed}}{{end}}.</p>
<p class="note">Method: noncentral chi-square inversion. It {{.Description}}.{{with .Noncentrality}} Noncentrality λ from {{num .Low}} to {{num .High}}.{{end}}</p>
{{end}}{{range .Warnings}}<p class="caution">Warning: {{.}}.</p>
{{end}}{{else}}<p class="note">No interval: the plan asks for the estimates alone.</p>
{{end}}</section>{{end}}
{{with .PostHoc}}<section class="pairs">
<h3>Pairwise comparisons</h3>
<p>Planned: {{$a.PostHocSay}}, {{$a.FamilySay}}; {{if .Simultaneous}}{{.Simultaneous}}{{else}}adjustment of the p-values: <code>{{.Adjust}}</code>{{end}}; run {{if isAlways .When}}whatever the omnibus result{{else}}only if the omnibus test rejects{{end}}.</p>
{{if .Note}}<p class="note">Note: {{.Note}}</p>{{end}}
{{if .NotComputable}}<p class="decision">Not computable on these data: {{.NotComputable}}.</p>
{{else if .Ran}}{{$ph := .}}
{{with $a.PrintPairs}}<p class="print-only">{{.}}</p>
{{end}}<table{{if $a.PrintPairs}} class="long"{{end}}>
<thead><tr><th>groups</th><th class="r">Hodges-Lehmann shift</th><th>interval</th><th class="r">Cliff's δ</th><th class="r">{{.Statistic}}</th><th class="r">p</th><th class="r">{{if .Simultaneous}}simultaneous p{{else}}adjusted p{{end}}</th><th>decision</th></tr></thead>
<tbody>
{{range .Pairs}}<tr{{if and $a.PrintPairs (not (or .Reject .NotComputable))}} class="quiet"{{end}}><td>{{index .Groups 0}} vs {{index .Groups 1}}</td><td class="r">{{template "val" (v (pairkey $id . "hl_shift") .HodgesLehmann.Shift)}}</td><td>{{hlinterval .}}</td><td class="r">{{template "val" (v (pairkey $id . "cliffs_delta") .CliffsDelta)}}</td><td class="r">{{template "val" (vn (pairkey $id . "statistic") .Statistic)}}</td><td class="r">{{template "val" (vnq (pairkey $id . "p") .P)}}</td><td class="r">{{template "val" (vnq (pairkey $id . "p_adjusted") .PAdjusted)}}</td><td>{{if .NotComputable}}not computable: {{.NotComputable}}{{else if .Reject}}differ{{else}}no difference shown{{end}}</td></tr>
{{end}}</tbody>
</table>
<p class="note">The shift estimates how far the first group's values lie above the second's (median of all pairwise differences, with its distribution-free interval); Cliff's δ is P(first &gt; second) − P(first &lt; second). p-values of the pairs from the {{$a.PairPMethods}}.</p>
{{range hlnotes $a}}<p class="note">{{.}}</p>
{{end}}{{if .Letters}}<p>Compact letter display: {{$a.LettersSay}}.{{if $a.LettersNumbered}} With more than 52 letters, names carry a number (a1, b1, …) and a group's names are joined with “.”.{{end}}</p>
<table class="letters">
<thead><tr><th>group</th><th>letters</th></tr></thead>
<tbody>
{{range .Letters}}<tr><td>{{.Group}}</td><td><code>{{.Display}}</code></td></tr>
{{end}}</tbody>
</table>{{end}}
{{else}}<p class="decision">Not run: {{.Why}}.</p>{{end}}
</section>{{end}}
<section class="diagnostics">
<h3>Diagnostics</h3>
<table>
<thead><tr><th>group</th><th class="r repeat">median</th><th class="r">IQR (Q3 − Q1)</th><th class="r">quartile skewness</th><th>min – max</th></tr></thead>
<tbody>
{{range .Diag}}<tr><td>{{.Name}}</td><td class="r repeat">{{num .Median}}</td><td class="r">{{num .IQR}}</td><td class="r">{{with .Skew}}{{num .}}{{else}}—{{end}}</td><td>{{num .Min}} – {{num .Max}}</td></tr>
{{end}}</tbody>
</table>
<p class="note">Quartile skewness is (Q3 + Q1 − 2·median)/(Q3 − Q1), from −1 to 1: 0 when the median sits midway between the quartiles, positive when the upper part of the middle half is longer; “—” when Q1 = Q3.</p>
{{with .Spread}}<p>Spread: the IQR runs from {{num .Narrow.IQR}} ({{.Narrow.Name}}) to {{num .Wide.IQR}} ({{.Wide.Name}}){{if gt .Ratio 0.0}}, a ratio of {{num .Ratio}}{{else}}; in a group with IQR 0 the middle half of the values share one value{{end}}.</p>{{end}}
{{with .KruskalWallis}}<p>Ties: {{.TiedValues}} of {{$a.N}} observations share their value with another (tie share {{num $a.TieShare}}), in {{.TieBlocks}} tie block{{if ne .TieBlocks 1}}s{{end}}.</p>{{end}}
<p class="note">Compare the spreads and shapes above and in the box plot before reading a difference as a difference in medians (see “Reading these results”).</p>
</section>
<section class="figures">
<h3>Figures</h3>
{{if .Box}}<figure>
{{.Box}}
<figcaption>{{.BoxCaption}}</figcaption>
</figure>
<figure>
{{.Ranks}}
<figcaption>Mean rank by group (dots) with {{with (index .Groups 0).MeanRankInterval}}{{pct .Level}} {{end}}intervals: mean rank ± z·SE under random labelling, a descriptive yardstick rather than a test.{{with .ClippedRanks}} The intervals of {{.}} are cut at the range a mean of n of the ranks can take, from (n + 1)/2 to N − (n − 1)/2.{{end}} The dashed line is (N + 1)/2 = {{num .RankMid}}, where every mean rank would sit if the groups did not differ at all.</figcaption>
</figure>{{end}}
{{if .Heat}}<figure>
{{.Heat}}
<figcaption>{{if .PostHoc.Simultaneous}}Simultaneous{{else}}Adjusted{{end}} p-values of the pairwise comparisons; {{if eq .PostHoc.Family "many-to-one"}}the diagonal and the pairs not compared stay blank{{else}}the diagonal stays blank{{end}}. Colour: darker is smaller.{{with .HeatNote}} {{.}}{{end}}{{range .HeatLegend}}<span class="swatch" style="background-color: {{.Color}}"></span>{{.Label}}{{end}}</figcaption>
</figure>{{end}}
{{.Forest}}
</section>
</section>
{{end}}
{{with .Res.Multiplicity}}<section id="multiplicity">
<h2>Multiplicity across analyses</h2>
<p>{{.Method}} (rule {{.Rule}}) at α = {{num .Alpha}}.</p>
<table>
<thead><tr><th>analysis</th><th class="r">p</th><th class="r">adjusted p</th><th>tested</th><th>decision</th><th>why</th></tr></thead>
<tbody>
{{range .Members}}<tr><td><code>{{.ID}}</code></td><td class="r">{{with .P}}{{fmtp .Value .Log10}}{{else}}not computable{{end}}</td><td class="r">{{template "val" (vq (key "multiplicity" .ID "p_adjusted") .PAdjusted)}}</td><td>{{if .Tested}}yes{{else}}no{{end}}</td><td>{{if .Reject}}rejected{{else if .Tested}}not rejected{{else}}not tested{{end}}</td><td>{{.Why}}</td></tr>
{{end}}</tbody>
</table>
</section>{{end}}
<section id="reading">
<h2>Reading these results</h2>
<p>The Kruskal-Wallis test asks whether the groups could all have come from one and the same distribution. A rejection says they did not: the distributions are not all the same. The test is built to detect values in some group tending to run higher or lower than in another (a probability other than ½ that a value from one group exceeds a value from another), and it is weak against differences in spread alone. It does not say which groups differ — that is what the pairwise comparisons are for — nor by how much; the effect sizes and shifts speak to that. It reads as a difference in medians only when the groups' distributions have much the same shape and spread; the box plot and the diagnostics show whether that is plausible here. A p-value above α is not evidence that the groups are alike.</p>
<p class="caution">{{.Caution}}</p>
</section>
</main>
<footer>
<p>Written by {{if .Meta.Tool}}{{.Meta.Tool}}{{else}}rankplan{{end}}. Seed {{.Meta.Seed}}{{if .Meta.RNG}}; random numbers: {{.Meta.RNG}}{{end}}.</p>
<p>Head of the audit chain when this report was written: <span class="hash">{{if .Meta.AuditHead}}{{.Meta.AuditHead}}{{else}}not given{{end}}</span>{{if .Meta.AuditHead}} (record {{.Meta.AuditSeq}}){{end}}. Writing the report adds records to the chain, so the final head is the one in <code>audit.head</code>.</p>
</footer>
</body>
</html>
`
