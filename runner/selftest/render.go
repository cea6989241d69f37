package selftest

import (
	"bytes"
	"fmt"
	"html/template"
	"io"
	"strings"
	"time"
	"unicode/utf8"

	"rankplan/runner"
)

// Caution is said wherever the selftest's verdict is shown.
const Caution = "The selftest shows that this installation computes the published and library reference values " +
	"on this machine. It supports, and does not replace, the lab's own validation of its use of rankplan under " +
	"its own procedures."

// who writes the actor for people: user on host, with the declared signer and reason.
func (rep *Report) who() string {
	a := rep.Actor
	s := orUnknown(a.User) + " on " + orUnknown(a.Host)
	if a.Signer != "" {
		s += fmt.Sprintf(", signer %q", a.Signer)
	}
	if a.Reason != "" {
		s += fmt.Sprintf(", reason %q", a.Reason)
	}
	return s
}

func (rep *Report) executable() string {
	if rep.Executable == "" {
		return "unknown (the executable could not be read)"
	}
	return fmt.Sprintf("%s (%d bytes)", rep.Executable, rep.ExeBytes)
}

func orUnknown(s string) string {
	if s == "" {
		return "unknown"
	}
	return s
}

// mostShown is how many numbers of a list the text form shows (the first ones and the
// last), and textShown how many characters of a text; validation.json and report.html show
// everything.
const (
	mostShown = 3
	textShown = 24
)

// brief writes v for the text form: lists and long texts shortened (see mostShown).
func brief(v Value) string {
	if v.Text != nil && len([]rune(*v.Text)) > textShown {
		r := []rune(*v.Text)
		return fmt.Sprintf("%s… (%d characters)", string(r[:textShown-4]), len(r))
	}
	return formatValue(v, mostShown)
}

// WriteText writes the validation report for a terminal: a header naming the build, the
// machine's user and host and the time; one row per case (verdict, case, expected,
// obtained, tolerance, source) with the reason under each failed row; the counts, the
// results digest and the verdict.
func (rep *Report) WriteText(w io.Writer) error {
	var ew buf
	t := rep.Tool
	res := rep.Results
	ew.printf("rankplan selftest: installation and operational qualification\n")
	ew.printf("  version     %s\n", t.Version)
	ew.printf("  revision    %s\n", t.RevisionText())
	ew.printf("  executable  %s\n", rep.executable())
	ew.printf("  go          %s %s/%s\n", t.GoVersion, t.GOOS, t.GOARCH)
	ew.printf("  time        %s\n", rep.Time.UTC().Format(time.RFC3339))
	ew.printf("  user        %s\n", rep.who())
	ew.printf("  cases       %d from %s %s (embedded)", res.Summary.Cases-res.Summary.Added, CasesFile, res.CaseFile)
	if res.Summary.Added > 0 {
		ew.printf(", and %d added", res.Summary.Added)
	}
	ew.printf("\n\n")
	rows := [][]string{{"RESULT", "CASE", "EXPECTED", "OBTAINED", "TOLERANCE", "SOURCE"}}
	details := map[int]string{}
	for _, o := range res.Cases {
		got := "(none)"
		if o.Obtained != nil {
			got = brief(*o.Obtained)
		}
		rows = append(rows, []string{strings.ToUpper(string(o.Verdict)), o.ID, brief(o.Expected), got, toleranceText(o.Tolerance), o.Source.Reference})
		if o.Verdict != runner.Pass {
			details[len(rows)-1] = o.Detail
		}
	}
	width := make([]int, len(rows[0]))
	for _, r := range rows {
		for j, cell := range r {
			width[j] = max(width[j], utf8.RuneCountInString(cell))
		}
	}
	for i, r := range rows {
		for j, cell := range r {
			if j == len(r)-1 {
				ew.printf("%s\n", cell)
				break
			}
			ew.printf("%s%s", cell, strings.Repeat(" ", width[j]-utf8.RuneCountInString(cell)+2))
		}
		if d, ok := details[i]; ok {
			ew.printf("%s  %s\n", strings.Repeat(" ", width[0]+2), d)
		}
	}
	s := res.Summary
	ew.printf("\n%d cases: %d passed, %d failed\n", s.Cases, s.Passed, s.Failed)
	ew.printf("results digest: %s\n", rep.Digest)
	if s.Failed == 0 {
		ew.printf("selftest passed: this build reproduces every reference value on this machine\n")
	} else {
		ew.printf("SELFTEST FAILED: %d of %d cases did not reproduce their reference value\n", s.Failed, s.Cases)
	}
	ew.printf("%s\n", Caution)
	_, err := w.Write(ew.Bytes())
	return err
}

// buf collects a rendering, which is written in one piece.
type buf struct{ bytes.Buffer }

func (b *buf) printf(format string, args ...any) { fmt.Fprintf(b, format, args...) }

// htmlPage is what the report template reads.
type htmlPage struct {
	Rep       *Report
	Time      string
	Who       string
	Exe       string
	Revision  string
	AuditHead string
	AuditSeq  int64
	Caution   string
	Rows      []htmlRow
}

type htmlRow struct {
	O        Outcome
	Expected string
	Obtained string
	Tol      string
}

// HTML writes report.html: one self-contained page (inline style, no script, no external
// reference) with the header of the text form, the audit head as it stood after
// validation.json was recorded (head, at record seq), a row per case with every digit and
// every element, the data sets, and the caution. Every text goes through html/template's
// contextual escaping.
func HTML(w io.Writer, rep *Report, head string, seq int64) error {
	page := htmlPage{Rep: rep, Time: rep.Time.UTC().Format(time.RFC3339), Who: rep.who(), Exe: rep.executable(),
		Revision: rep.Tool.RevisionText(), AuditHead: head, AuditSeq: seq, Caution: Caution}
	for _, o := range rep.Results.Cases {
		r := htmlRow{O: o, Expected: o.Expected.String(), Obtained: "(none)", Tol: toleranceText(o.Tolerance)}
		if o.Obtained != nil {
			r.Obtained = o.Obtained.String()
		}
		page.Rows = append(page.Rows, r)
	}
	var b bytes.Buffer
	if err := htmlTemplate.Execute(&b, &page); err != nil {
		return fmt.Errorf("selftest report: %w", err)
	}
	_, err := w.Write(b.Bytes())
	return err
}

var htmlTemplate = template.Must(template.New("selftest").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>rankplan selftest: {{.Rep.Results.Summary.Outcome}}</title>
<style>
body { font: 14px/1.45 system-ui, sans-serif; margin: 2em auto; max-width: 84em; padding: 0 1em; color: #1a1a1a; }
h1 { font-size: 1.5em; margin-bottom: 0.2em; }
h2 { font-size: 1.15em; margin-top: 1.6em; }
table { border-collapse: collapse; width: 100%; }
th, td { border-bottom: 1px solid #ccc; padding: 0.3em 0.5em; text-align: left; vertical-align: top; overflow-wrap: anywhere; }
th { background: #f2f2f2; white-space: nowrap; overflow-wrap: normal; }
td.case { min-width: 18ch; }
td.num { font-family: ui-monospace, monospace; overflow-wrap: anywhere; min-width: 14ch; max-width: 24ch; }
.meta th { width: 10em; background: none; }
.verdict { font-weight: bold; overflow-wrap: normal; }
tr.pass .verdict { color: #116611; }
tr.fail { background: #fde8e8; }
tr.fail .verdict { color: #a40000; }
.outcome { font-size: 1.2em; font-weight: bold; padding: 0.4em 0.6em; display: inline-block; }
.outcome.pass { background: #e3f4e3; }
.outcome.fail { background: #fde8e8; }
.small { color: #555; font-size: 0.9em; }
.caution { border-left: 4px solid #999; padding: 0.4em 0.8em; background: #f7f7f7; }
@media print { body { margin: 0; max-width: none; } tr { break-inside: avoid; } }
</style>
</head>
<body>
<h1>rankplan selftest: installation and operational qualification</h1>
<p class="caution">{{.Caution}}</p>
{{with .Rep.Results.Summary}}<p><span class="outcome {{.Outcome}}" data-key="outcome" data-value="{{.Outcome}}">{{if eq .Outcome "pass"}}Passed: all {{.Cases}} cases reproduce their reference values{{else}}FAILED: {{.Failed}} of {{.Cases}} cases did not reproduce their reference values{{end}}</span></p>
<p>{{.Cases}} cases: <span data-key="passed">{{.Passed}}</span> passed, <span data-key="failed">{{.Failed}}</span> failed{{if .Added}} ({{.Added}} added to the built-in cases){{end}}.</p>{{end}}
<h2>Build and machine</h2>
<table class="meta">
<tr><th>version</th><td>rankplan {{.Rep.Tool.Version}}</td></tr>
<tr><th>revision</th><td class="num">{{.Revision}}</td></tr>
<tr><th>executable</th><td class="num">{{.Exe}}</td></tr>
<tr><th>Go</th><td>{{.Rep.Tool.GoVersion}} {{.Rep.Tool.GOOS}}/{{.Rep.Tool.GOARCH}}</td></tr>
<tr><th>time</th><td>{{.Time}}</td></tr>
<tr><th>user</th><td>{{.Who}}</td></tr>
<tr><th>case file</th><td class="num">cases/cases.json {{.Rep.Results.CaseFile}} (embedded in the executable)</td></tr>
<tr><th>results digest</th><td class="num" data-key="results-digest">{{.Rep.Digest}}</td></tr>
<tr><th>audit head</th><td class="num">{{.AuditHead}} at record {{.AuditSeq}}, after validation.json was recorded (the final head is in audit.head)</td></tr>
</table>
<h2>Cases</h2>
<p class="small">Each case computes a quantity through the functions a run uses (or runs a whole plan) and compares it with a value from a source outside rankplan. A list passes when every element is within the tolerance.</p>
<table>
<tr><th>result</th><th>case</th><th>expected</th><th>obtained</th><th>tolerance</th><th>source</th></tr>
{{range .Rows}}<tr class="{{.O.Verdict}}" id="case-{{.O.ID}}" data-key="case" data-value="{{.O.ID}}">
<td class="verdict">{{if eq .O.Verdict "pass"}}PASS{{else}}FAIL{{end}}</td>
<td class="case"><b>{{.O.ID}}</b><br><span class="small">{{.O.Checks}}</span>{{if .O.Detail}}<br><b>{{.O.Detail}}</b>{{end}}</td>
<td class="num">{{.Expected}}</td>
<td class="num">{{.Obtained}}</td>
<td>{{.Tol}}<br><span class="small">{{.O.Tolerance.Why}}</span></td>
<td>{{.O.Source.Reference}}<br><span class="small">{{.O.Source.Origin}}{{if .O.Source.File}}; {{.O.Source.File}}{{range .O.Source.Pointers}} {{.}}{{end}}{{end}}</span></td>
</tr>
{{end}}</table>
<h2>Data sets</h2>
<table>
<tr><th>name</th><th>group sizes</th><th>source</th><th>used by</th></tr>
{{range .Rep.Results.Datasets}}<tr><td>{{.Name}}</td><td>{{range $i, $n := .Groups}}{{if $i}}, {{end}}{{$n}}{{end}}</td><td>{{.Source}}</td><td class="small">{{.Origin}}</td></tr>
{{end}}</table>
<p class="small">Written by rankplan selftest. validation.json holds the same results for programs (schema: rankplan schema validation); audit.jsonl records who ran it, when and where; rankplan verify on this folder checks the record and reruns the cases.</p>
</body>
</html>
`))
