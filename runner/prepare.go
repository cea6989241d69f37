package runner

import (
	"bytes"
	"cmp"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"rankplan/internal/infile"
	"rankplan/runner/data"
	"rankplan/runner/internal/natsort"
	"rankplan/runner/results"
	"rankplan/spec"
)

// InputError marks a failure caused by the run's inputs (plan, data, options) rather than
// by rankplan or the machine. The command line maps it to the "unusable input" exit code.
type InputError struct{ Err error }

func (e *InputError) Error() string { return e.Err.Error() }
func (e *InputError) Unwrap() error { return e.Err }

func inputErr(err error) error {
	if err == nil {
		return nil
	}
	return &InputError{Err: err}
}

// Prepared is a plan joined with its data: for each analysis, the observations that enter
// it, grouped in report order, and the rows left out.
type Prepared struct {
	Plan     *spec.Plan
	DataPath string
	Data     results.Data
	Analyses []Input
}

// Input is what one analysis computes on.
type Input struct {
	Analysis *spec.Analysis
	Groups   []string  // analysed groups, in report order
	Group    []int32   // per observation: index into Groups
	Values   []float64 // per observation: the outcome
	Counts   []int     // per group: observations
	Excluded []results.Exclusion

	exact *exactOutcome // the exact p-value once computed (see exactP), or nil
}

// Prepare reads the plan's data file and makes every check that needs the data. Problems
// with the plan's meaning come back as a [spec.ErrorList] positioned in the plan file, and
// problems in the data file as a [*data.Error]; both are wrapped in an [InputError].
// Only a regular file of at most data.MaxFileBytes is read: a named pipe, a device (also
// behind a symbolic link) or a directory is refused at data.file before a byte is read.
// The number of groups is checked against [MaxGroups] and [MaxPostHocGroups]. When ctx
// ends, hashing and reading the data file stop within a buffer and Prepare returns its
// error (wrapped).
func Prepare(ctx context.Context, p *spec.Plan) (*Prepared, error) {
	path := p.DataPath()
	src, _, err := infile.Open(path, data.MaxFileBytes)
	if err != nil {
		e := p.Errorf("data.file", "cannot open the data file %s: %v", path, err)
		e.Err = err // callers tell a file that does not exist yet (errors.Is fs.ErrNotExist)
		return nil, inputErr(spec.ErrorList{e})
	}
	defer src.Close()

	opt := data.Options{
		Name:          path,
		Delimiter:     p.Data.DelimiterByte(),
		Decimal:       p.Data.Decimal[0],
		GroupColumn:   p.Data.Group,
		MissingTokens: p.Data.Missing.Tokens,
		FailOnMissing: p.Data.Missing.Policy == spec.FailOnMissing,
	}
	outcomeCol := map[string]int{}
	labelCol := map[string]int{}
	for _, a := range p.Analyses {
		if _, ok := outcomeCol[a.Outcome]; !ok {
			outcomeCol[a.Outcome] = len(opt.OutcomeColumns)
			opt.OutcomeColumns = append(opt.OutcomeColumns, a.Outcome)
		}
	}
	for i, a := range p.Analyses {
		s := a.Subset
		if s == nil {
			continue
		}
		if _, ok := outcomeCol[s.Column]; ok {
			return nil, inputErr(spec.ErrorList{p.Errorf("analyses."+strconv.Itoa(i)+".subset.column",
				"column %q is an outcome of an analysis of this plan; a subset column holds labels", s.Column)})
		}
		if _, ok := labelCol[s.Column]; !ok {
			labelCol[s.Column] = len(opt.LabelColumns)
			opt.LabelColumns = append(opt.LabelColumns, s.Column)
		}
	}

	if p.Data.SHA256 != "" {
		if err := checkPin(ctx, p, path, src); err != nil {
			return nil, err
		}
	}
	header, err := data.Header(src, opt)
	if err != nil {
		return nil, inputErr(err)
	}
	if errs := checkColumns(p, path, header); len(errs) > 0 {
		return nil, inputErr(errs.Err())
	}
	src.Close()
	// LoadFile sizes its columns from the file's length: one allocation per column.
	t, err := data.LoadFile(ctx, path, opt)
	if ctx.Err() != nil {
		return nil, fmt.Errorf("read data file %s: %w", path, ctx.Err())
	}
	if err != nil {
		return nil, inputErr(err)
	}

	prep := &Prepared{
		Plan:     p,
		DataPath: path,
		Data: results.Data{
			SHA256:             hex.EncodeToString(t.SHA256[:]),
			Bytes:              t.Size,
			Rows:               t.Rows,
			HighPrecisionCells: t.HighPrecisionCells,
		},
	}
	groups, errs := groupOrder(p, path, t.Groups)
	if len(errs) == 0 {
		errs = checkGroups(p, path, groups)
	}
	if len(errs) > 0 {
		return nil, inputErr(errs.Err())
	}
	prep.Data.LookAlikeGroups = LookAlikeGroups(p.Data.Group, t.Groups)
	renumberGroups(t, groups)
	for i := range p.Analyses {
		a := &p.Analyses[i]
		if c := a.PostHoc.Control; c != "" && !slices.Contains(groups, c) {
			return nil, inputErr(spec.ErrorList{p.Errorf("analyses."+strconv.Itoa(i)+".posthoc.control",
				"the control group %q is not among the analysed groups (%s)", c, strings.Join(quoteEach(groups), ", "))})
		}
		var subset *data.LabelColumn
		if a.Subset != nil {
			subset = &t.Labels[labelCol[a.Subset.Column]]
		}
		in, err := select_(p, i, t, groups, t.Outcome[outcomeCol[a.Outcome]], subset)
		if err != nil {
			return nil, inputErr(err)
		}
		prep.Analyses = append(prep.Analyses, in)
	}
	return prep, nil
}

func unwrapPathError(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// checkPin refuses data whose SHA-256 differs from the plan's pin, before anything else is
// read from it, and leaves the file positioned at its start.
func checkPin(ctx context.Context, p *spec.Plan, path string, f *os.File) error {
	h := sha256.New()
	if _, err := io.Copy(h, infile.ContextReader(ctx, f)); err != nil {
		return fmt.Errorf("hash data file %s: %w", path, err)
	}
	got := hex.EncodeToString(h.Sum(nil))
	if got != p.Data.SHA256 {
		return inputErr(spec.ErrorList{p.Errorf("data.sha256",
			"the data file %s has SHA-256 %s, but the plan pins %s; the data have changed since the plan was written",
			path, got, p.Data.SHA256)})
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		return fmt.Errorf("read data file %s: %w", path, err)
	}
	return nil
}

func checkColumns(p *spec.Plan, path string, header []string) spec.ErrorList {
	have := map[string]bool{}
	for _, h := range header {
		have[h] = true
	}
	list := strings.Join(quoteEach(header), ", ")
	var errs spec.ErrorList
	need := func(keyPath, col string) {
		if !have[col] {
			errs = append(errs, p.Errorf(keyPath, "no column %q in %s (columns: %s)", col, path, list))
		}
	}
	need("data.group", p.Data.Group)
	if p.Has("data.outcome") {
		need("data.outcome", p.Data.Outcome)
	}
	for i, a := range p.Analyses {
		key := "analyses." + strconv.Itoa(i) + ".outcome"
		if p.Has(key) {
			need(key, a.Outcome)
		} else if !p.Has("data.outcome") {
			need(key, a.Outcome)
		}
		if a.Subset != nil {
			need("analyses."+strconv.Itoa(i)+".subset.column", a.Subset.Column)
		}
	}
	return errs
}

func quoteEach(s []string) []string {
	out := make([]string, len(s))
	for i, x := range s {
		out[i] = strconv.Quote(x)
	}
	return out
}

// groupOrder decides which data groups are analysed, in which order, and checks that the
// groups the plan names exist. Without groups.include or groups.order every group found is
// analysed, ordered by label in the natural order of [natsort.Compare] (runs of digits as
// numbers: "L2" before "L10"), so that the order does not depend on row order.
func groupOrder(p *spec.Plan, path string, found []string) ([]string, spec.ErrorList) {
	inData := map[string]bool{}
	for _, g := range found {
		inData[g] = true
	}
	var errs spec.ErrorList
	for _, list := range []struct {
		key   string
		names []string
	}{{"groups.include", p.Groups.Include}, {"groups.order", p.Groups.Order}} {
		for i, g := range list.names {
			if !inData[g] {
				errs = append(errs, p.Errorf(list.key+"."+strconv.Itoa(i),
					"no rows of group %q in column %q of %s (groups found: %s)%s", g, p.Data.Group, path, strings.Join(quoteEach(sortedCopy(found)), ", "), lookAlikeHint(g, found)))
			}
		}
	}
	if len(p.Groups.Order) > 0 && len(p.Groups.Include) == 0 {
		listed := map[string]bool{}
		for _, g := range p.Groups.Order {
			listed[g] = true
		}
		for _, g := range sortedCopy(found) {
			if !listed[g] {
				errs = append(errs, p.Errorf("groups.order",
					"does not list group %q found in %s; add it, or name the groups to analyse in groups.include", g, path))
			}
		}
	}
	if len(errs) > 0 {
		return nil, errs
	}
	if order := p.GroupOrder(); order != nil {
		return order, nil
	}
	if len(found) < 2 {
		return nil, spec.ErrorList{p.Errorf("data.group",
			"column %q of %s holds %d group(s) (%s); at least two are needed", p.Data.Group, path, len(found), strings.Join(quoteEach(found), ", "))}
	}
	return sortedCopy(found), nil
}

// sortedCopy returns the labels in s in the natural order of [natsort.Compare], the
// order in which groups are analysed and labels are listed in messages.
func sortedCopy(s []string) []string {
	c := slices.Clone(s)
	natsort.Sort(c)
	return c
}

// renumberGroups numbers the table's groups in report order when the analysed groups are
// exactly the groups of the table: each row's group index is rewritten in place (a
// missing label stays -1) and t.Groups becomes a copy of groups. The analyses can then
// use the table's group column as it is (see select_), instead of a copy per analysis.
// Otherwise the table is left alone.
func renumberGroups(t *data.Table, groups []string) {
	if len(groups) != len(t.Groups) {
		return
	}
	pos := make(map[string]int32, len(groups))
	for j, g := range groups {
		pos[g] = int32(j)
	}
	remap := make([]int32, len(t.Groups))
	identity := true
	for j, g := range t.Groups {
		k, ok := pos[g]
		if !ok {
			return
		}
		remap[j] = k
		identity = identity && k == int32(j)
	}
	if identity {
		return
	}
	for r, g := range t.Group {
		if g >= 0 {
			t.Group[r] = remap[g]
		}
	}
	t.Groups = slices.Clone(groups)
}

// select_ builds the input of analysis i: each row is either used or counted once as
// excluded, under the first reason that applies in this order: missing-group,
// group-not-included, outside-subset, missing-outcome. subset is the label column of the
// analysis's subset, or nil.
func select_(p *spec.Plan, i int, t *data.Table, groups []string, outcome []float64, subset *data.LabelColumn) (Input, error) {
	a := &p.Analyses[i]
	at := "analyses." + strconv.Itoa(i)
	// Label index → whether the subset takes its rows.
	var keep []bool
	if subset != nil {
		keep = make([]bool, len(subset.Values))
		var errs spec.ErrorList
		for j, v := range a.Subset.Values {
			k := slices.Index(subset.Values, v)
			if k < 0 {
				errs = append(errs, p.Errorf(fmt.Sprintf("%s.subset.values.%d", at, j),
					"no row has %q in column %q of %s (values found: %s)", v, a.Subset.Column, p.DataPath(), strings.Join(quoteEach(sortedCopy(subset.Values)), ", ")))
				continue
			}
			keep[k] = true
		}
		if len(errs) > 0 {
			return Input{}, errs.Err()
		}
	}
	pos := make(map[string]int32, len(groups))
	for j, g := range groups {
		pos[g] = int32(j)
	}
	// Table group index → analysis group index, or -1 when the group is not analysed.
	remap := make([]int32, len(t.Groups))
	for j, g := range t.Groups {
		if k, ok := pos[g]; ok {
			remap[j] = k
		} else {
			remap[j] = -1
		}
	}
	in := Input{
		Analysis: a,
		Groups:   groups,
		Counts:   make([]int, len(groups)),
	}
	// When no row is left out, the analysis takes the table's columns as they are, the
	// group column too when its numbering is the report order (see renumberGroups):
	// nothing downstream modifies an Input's rows, so they may be shared.
	if rowsAllKept(t, remap, keep, subset, outcome, in.Counts) {
		in.Values = outcome[:t.Rows:t.Rows]
		if isIdentity(remap) {
			in.Group = t.Group[:t.Rows:t.Rows]
		} else {
			in.Group = make([]int32, t.Rows)
			for r, g := range t.Group[:t.Rows] {
				in.Group[r] = remap[g]
			}
		}
		in.Excluded = []results.Exclusion{}
		return in, emptyGroups(p, at, a, groups, in)
	}
	clear(in.Counts)
	in.Group = make([]int32, 0, t.Rows)
	in.Values = make([]float64, 0, t.Rows)
	type key struct {
		reason string
		group  int32 // table group index, -1 for a missing label
	}
	excluded := map[key]int{}
	for r := 0; r < t.Rows; r++ {
		g := t.Group[r]
		switch {
		case g < 0:
			excluded[key{results.ReasonMissingGroup, -1}]++
		case remap[g] < 0:
			excluded[key{results.ReasonNotIncluded, g}]++
		case keep != nil && !keep[subset.Row[r]]:
			excluded[key{results.ReasonOutsideSubset, g}]++
		case math.IsNaN(outcome[r]):
			excluded[key{results.ReasonMissingOutcome, g}]++
		default:
			k := remap[g]
			in.Group = append(in.Group, k)
			in.Values = append(in.Values, outcome[r])
			in.Counts[k]++
		}
	}
	reasonRank := map[string]int{results.ReasonMissingGroup: 0, results.ReasonNotIncluded: 1, results.ReasonOutsideSubset: 2, results.ReasonMissingOutcome: 3}
	keys := make([]key, 0, len(excluded))
	for k := range excluded {
		keys = append(keys, k)
	}
	label := func(g int32) string {
		if g < 0 {
			return ""
		}
		return t.Groups[g]
	}
	slices.SortFunc(keys, func(x, y key) int {
		return cmp.Or(cmp.Compare(reasonRank[x.reason], reasonRank[y.reason]), natsort.Compare(label(x.group), label(y.group)))
	})
	in.Excluded = []results.Exclusion{}
	for _, k := range keys {
		in.Excluded = append(in.Excluded, results.Exclusion{Group: label(k.group), Reason: k.reason, Rows: excluded[k]})
	}

	return in, emptyGroups(p, at, a, groups, in)
}

// rowsAllKept reports whether analysis input would keep every row of t (no missing label,
// no group left out, every row in the subset, no missing outcome), counting the rows of
// each analysis group into counts as it goes; it stops at the first row left out.
func rowsAllKept(t *data.Table, remap []int32, keep []bool, subset *data.LabelColumn, outcome []float64, counts []int) bool {
	for r, g := range t.Group[:t.Rows] {
		if g < 0 || remap[g] < 0 || keep != nil && !keep[subset.Row[r]] || math.IsNaN(outcome[r]) {
			return false
		}
		counts[remap[g]]++
	}
	return true
}

func isIdentity(remap []int32) bool {
	for j, k := range remap {
		if k != int32(j) {
			return false
		}
	}
	return true
}

// emptyGroups is the error for the analysed groups that have no observation left, or nil.
func emptyGroups(p *spec.Plan, at string, a *spec.Analysis, groups []string, in Input) error {
	var errs spec.ErrorList
	for j, g := range groups {
		if in.Counts[j] == 0 {
			var why bytes.Buffer
			for _, e := range in.Excluded {
				if e.Group == g {
					fmt.Fprintf(&why, "; %d row(s) excluded as %s", e.Rows, e.Reason)
				}
			}
			errs = append(errs, p.Errorf(at, "group %q has no observations of %q left to analyse%s; every analysed group needs at least one",
				g, a.Outcome, why.String()))
		}
	}
	return errs.Err()
}

// Preview summarises a prepared plan for `rankplan check`.
func (prep *Prepared) Preview() *results.Preview {
	p := prep.Plan
	pv := &results.Preview{
		Plan: results.Plan{ID: p.ID, Title: p.Title, Alpha: p.Alpha, Seed: p.Seed.String()},
		Data: prep.Data,
	}
	for _, in := range prep.Analyses {
		pa := results.PreviewAnalysis{
			ID: in.Analysis.ID, Test: in.Analysis.Test, PValue: in.Analysis.PValue.Method,
			Outcome: in.Analysis.Outcome, Subset: subsetOf(in.Analysis), N: len(in.Values), Excluded: in.Excluded,
		}
		if n := in.Analysis.PValue.Resamples; n > 0 {
			pa.Resamples = strconv.FormatInt(n, 10)
		}
		if in.Analysis.PValue.Method == spec.Auto {
			pa.Chosen = in.autoChoice()
		}
		for j, g := range in.Groups {
			pa.Groups = append(pa.Groups, results.GroupCount{Name: g, N: in.Counts[j]})
		}
		pv.Analyses = append(pv.Analyses, pa)
	}
	if m := p.Multiplicity; m != nil {
		pv.Multiplicity = &results.PreviewMultiplicity{Rule: m.Rule, Analyses: m.Analyses}
	}
	return pv
}

// subsetOf returns the analysis's subset as the results show it, or nil.
func subsetOf(a *spec.Analysis) *results.Subset {
	if a.Subset == nil {
		return nil
	}
	return &results.Subset{Column: a.Subset.Column, Values: a.Subset.Values}
}
