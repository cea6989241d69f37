package selftest

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"
	"time"

	"rankplan/runner"
	"rankplan/runner/audit"
)

// Format names the layout of validation.json; a change of layout changes the name.
const Format = "rankplan-validation/1"

// Results is the part of the validation record that the results digest covers: the
// cases, what each obtained, and the verdicts. It holds no times, hosts, paths or build
// identity, so that the same build computing the same values gives the same digest on any
// machine; who ran the selftest, when and where is in the audit log.
type Results struct {
	// CaseFile is the SHA-256 of the embedded case file that the cases come from.
	CaseFile string     `json:"case_file_sha256"`
	Summary  Summary    `json:"summary"`
	Datasets []DataInfo `json:"datasets"`
	Cases    []Outcome  `json:"cases"`
}

// Summary counts the verdicts.
type Summary struct {
	Cases   int            `json:"cases"`
	Passed  int            `json:"passed"`
	Failed  int            `json:"failed"`
	Outcome runner.Verdict `json:"outcome"` // pass when every case passed, else fail
	// Added counts cases that did not come from the case file (tests of the failure path).
	Added int `json:"added_cases"`
}

// DataInfo describes a data set the cases use.
type DataInfo struct {
	Name   string `json:"name"`
	Source string `json:"source"`
	Origin string `json:"origin"`
	Groups []int  `json:"group_sizes"`
}

// Outcome is one case with what this build obtained.
type Outcome struct {
	Case
	// Obtained is null when the computation failed (Detail says why).
	Obtained *Value `json:"obtained"`
	// Deviation is the largest |obtained − expected| over the numbers, relative to
	// |expected| for a relative tolerance; absent for text and failed computations.
	Deviation *float64       `json:"deviation,omitempty"`
	Verdict   runner.Verdict `json:"verdict"`
	Detail    string         `json:"detail,omitempty"`
}

// FailedError says that some cases did not reproduce their expected values. The report is
// complete, and written to the folder when one was asked for.
type FailedError struct {
	Failed, Cases int
	IDs           []string
}

func (e *FailedError) Error() string {
	return fmt.Sprintf("selftest failed: %d of %d reference cases did not reproduce their expected value (%s); "+
		"do not rely on this installation until the cause is found", e.Failed, e.Cases, strings.Join(e.IDs, ", "))
}

// Evaluate computes every case of set (in order) and judges it against its expected
// value and tolerance; added cases follow the set's and are counted as added. A case whose
// computation fails is a failed case, not an error; the error is only for a cancelled
// context. workers bounds the goroutines of resampling (0: one per core); results do not
// depend on it.
func Evaluate(ctx context.Context, set *CaseSet, caseFile string, added []Case, workers int) (*Results, error) {
	all := &CaseSet{Format: set.Format, Datasets: set.Datasets, Cases: append(slices.Clone(set.Cases), added...)}
	e := newEnv(ctx, all, workers)
	defer e.close()
	res := &Results{CaseFile: caseFile, Cases: make([]Outcome, 0, len(all.Cases))}
	for i := range all.Cases {
		c := &all.Cases[i]
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		var got Value
		f := computations[c.Compute]
		err := fmt.Errorf("unknown computation %q", c.Compute)
		if f != nil {
			got, err = f(e, c)
		}
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		res.Cases = append(res.Cases, judge(*c, got, err))
	}
	// The data sets that were read, by cases or by plans.
	names := make([]string, 0, len(e.groups))
	for name := range e.groups {
		names = append(names, name)
	}
	slices.Sort(names)
	for _, name := range names {
		d := all.Datasets[name]
		info := DataInfo{Name: name, Source: d.Source, Origin: d.Origin}
		groups, err := e.data(name)
		if err != nil {
			return nil, err
		}
		for _, g := range groups {
			info.Groups = append(info.Groups, len(g))
		}
		res.Datasets = append(res.Datasets, info)
	}
	s := &res.Summary
	s.Cases, s.Added = len(res.Cases), len(added)
	for _, o := range res.Cases {
		if o.Verdict == runner.Pass {
			s.Passed++
		} else {
			s.Failed++
		}
	}
	s.Outcome = runner.Pass
	if s.Failed > 0 {
		s.Outcome = runner.Fail
	}
	return res, nil
}

// judge compares what a case obtained with its expected value:
//
//	text:    obtained = expected
//	numbers: for every element, |o − e| ≤ abs, or |o − e| ≤ rel·|e|, or o = e when both
//	         tolerances are 0; a NaN or infinite o fails
func judge(c Case, got Value, err error) Outcome {
	o := Outcome{Case: c, Verdict: runner.Fail}
	if err != nil {
		o.Detail = "the computation failed: " + err.Error()
		return o
	}
	if !got.finite() {
		o.Detail = "the computation gave a value that is not finite: " + got.String()
		return o
	}
	o.Obtained = &got
	if got.kind() != c.Expected.kind() {
		o.Detail = fmt.Sprintf("obtained %s, expected %s", got.kind(), c.Expected.kind())
		return o
	}
	if c.Expected.Text != nil {
		if *got.Text == *c.Expected.Text {
			o.Verdict = runner.Pass
		} else {
			o.Detail = "the text differs"
		}
		return o
	}
	want, have := c.Expected.Numbers, got.Numbers
	if c.Expected.Number != nil {
		want, have = []float64{*c.Expected.Number}, []float64{*got.Number}
	}
	if len(have) != len(want) {
		o.Detail = fmt.Sprintf("obtained %d values, expected %d", len(have), len(want))
		return o
	}
	t := c.Tolerance
	worst, bad := 0.0, -1
	for i := range want {
		d := math.Abs(have[i] - want[i])
		var ok bool
		switch {
		case t.Rel > 0 && want[i] != 0:
			d /= math.Abs(want[i])
			ok = d <= t.Rel
		case t.Abs > 0:
			ok = d <= t.Abs
		default: // exact, or relative to an expected 0
			ok = d == 0
		}
		worst = max(worst, d)
		if !ok && bad < 0 {
			bad = i
		}
	}
	o.Deviation = &worst
	if bad < 0 {
		o.Verdict = runner.Pass
		return o
	}
	where := ""
	if len(want) > 1 {
		where = fmt.Sprintf("element %d: ", bad+1)
	}
	o.Detail = fmt.Sprintf("%sobtained %s, expected %s, outside %s", where, num(have[bad]), num(want[bad]), toleranceText(t))
	return o
}

// toleranceText writes a tolerance for people: "abs 5e-07", "rel 1e-12" or "exact".
func toleranceText(t Tolerance) string {
	switch {
	case t.Abs > 0:
		return "abs " + num(t.Abs)
	case t.Rel > 0:
		return "rel " + num(t.Rel)
	}
	return "exact"
}

// Digest is the results digest: the SHA-256 of the RFC 8785 canonical form of res.
func Digest(res *Results) (string, error) {
	c, err := audit.Canonical(res)
	if err != nil {
		return "", fmt.Errorf("results digest: %w", err)
	}
	return audit.Digest(c), nil
}

// ResultsDigest evaluates the built-in cases and returns their results digest: what
// `rankplan verify` compares with the digest a selftest folder recorded.
func ResultsDigest(ctx context.Context) (string, error) {
	set, caseFile, err := Builtin()
	if err != nil {
		return "", err
	}
	res, err := Evaluate(ctx, set, caseFile, nil, 0)
	if err != nil {
		return "", err
	}
	return Digest(res)
}

// Options configure [Run].
type Options struct {
	Out     string   // a folder to create for the validation record; "" writes none
	Signer  string   // a declared name, recorded with every audit record
	Reason  string   // why the selftest is run, recorded
	Args    []string // the command line, recorded
	Workers int
	// Added are cases run after the built-in ones. Only tests set them, to see the failure
	// path; the command line never does.
	Added  []Case
	Now    func() time.Time    // clock; nil means time.Now
	Getenv func(string) string // environment; nil means os.Getenv
}

// Report is a finished selftest: the build and machine it ran on, and its results.
type Report struct {
	Tool       runner.ToolInfo
	Executable string // SHA-256 of the running executable, "" when unreadable
	ExeBytes   int64
	Time       time.Time
	Actor      audit.Actor
	Results    *Results
	Digest     string
	// Dir, Head and Seq describe the folder written with Options.Out.
	Dir  string
	Head string
	Seq  int64
}

// Run evaluates the built-in reference cases (and opt.Added), and with opt.Out writes the
// validation record folder. It returns a *FailedError, with the complete report, when any
// case failed.
func Run(ctx context.Context, opt Options) (*Report, error) {
	now := opt.Now
	if now == nil {
		now = time.Now
	}
	if opt.Out != "" {
		if err := runner.CheckNewFile(opt.Out); err != nil {
			return nil, err
		}
	}
	set, caseFile, err := Builtin()
	if err != nil {
		return nil, err
	}
	for i := range opt.Added {
		if err := checkCase(set, &opt.Added[i], map[string]bool{}); err != nil {
			return nil, fmt.Errorf("selftest: added case %s: %w", opt.Added[i].ID, err)
		}
	}
	rep := &Report{Tool: runner.Tool(), Time: now(), Actor: audit.CurrentActor(opt.Getenv, opt.Signer, opt.Reason)}
	rep.Executable, rep.ExeBytes = runner.Executable()
	if rep.Results, err = Evaluate(ctx, set, caseFile, opt.Added, opt.Workers); err != nil {
		return nil, err
	}
	if rep.Digest, err = Digest(rep.Results); err != nil {
		return nil, err
	}
	if opt.Out != "" {
		if err := writeFolder(ctx, rep, opt, now); err != nil {
			return nil, err
		}
	}
	if s := rep.Results.Summary; s.Failed > 0 {
		fe := &FailedError{Failed: s.Failed, Cases: s.Cases}
		for _, o := range rep.Results.Cases {
			if o.Verdict != runner.Pass {
				fe.IDs = append(fe.IDs, o.ID)
			}
		}
		return rep, fe
	}
	return rep, nil
}

// Record is validation.json: the build, and the results its digest covers.
type Record struct {
	Format  string   `json:"format"`
	Tool    ToolInfo `json:"tool"`
	Results *Results `json:"results"`
}

// ToolInfo identifies the build in validation.json.
type ToolInfo struct {
	Name       string `json:"name"`
	Version    string `json:"version"`
	Revision   string `json:"revision"`
	Modified   bool   `json:"modified"`
	Go         string `json:"go"`
	Platform   string `json:"platform"`
	Executable string `json:"executable_sha256"`
}
