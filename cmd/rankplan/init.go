package main

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/spec"
)

// defaultResamples is the Monte Carlo resample count init writes when none is given: the
// Monte Carlo standard error is then at most 0.0016, and about 0.0007 at p = 0.05.
const defaultResamples = 100000

// The choices of init's method flags: the plan vocabulary's lists (package spec).
var (
	pvalueNames  = spec.Names(spec.PValueMethods())
	posthocNames = spec.Names(spec.PostHocs())
	adjustNames  = spec.Names(spec.Adjustments())
)

// maxEffectResamples is the plan schema's maximum of effect_size.resamples.
const maxEffectResamples = 1_000_000

// initLong is the help text of `rankplan init`.
const initLong = `init writes a commented plan that 'rankplan check' accepts, for data in long format (one
row per observation: a group column and a numeric outcome column). It drafts from one of:

  --data FILE         an existing CSV file: init checks that the group and outcome columns
                      exist and hold usable values, lists the groups found and offers the
                      file's SHA-256 as a pin. A file with its header and no rows yet will
                      do: the columns are checked, and the groups come from --groups or,
                      without it, from the data once they arrive.
  --expect-data PATH  no file yet (a preregistration): the plan names PATH, where the data
                      file will be, and follows the layout you declare: --group, --outcome
                      and, optionally, every column with --columns NAME:text|number,...

A plan drafted before the data exist pins no data hash; lock it with 'rankplan lock
PLAN', which needs no data, and run it with --lock once the data exist.

Lists are comma-separated, with spaces around each item dropped: --groups "A,B,C" (the
groups analysed, in report order), --missing "n/a,NA," (cell texts that mean a missing
value; an empty item, here the trailing one, is the empty cell; default "" and "NA").
The missing-value tokens also apply while init reads a data file to tell its decimal
mark, so a cell such as "n/a" does not hide it.

Without -o the plan goes to standard output; with -o it is written to a new file (an
existing file is never overwritten) and one line says which file was written and what to
do next (nothing with --quiet). Without --seed a random seed is drawn and written into
the plan, so that the plan, not the clock, fixes every random stream.`

// initFlags are the flags of `rankplan init` that need parsing beyond their type.
type initFlags struct {
	columns, missing, groups string
	seed                     uint64
	out                      string
}

func newInitCmd() *cobra.Command {
	var (
		o  runner.DraftOptions
		fl initFlags
	)
	c := &cobra.Command{
		Use:   "init (--data FILE | --expect-data PATH) --group COL --outcome COL [-o plan.yaml]",
		Short: "Write a commented plan for a CSV data file, or for data still to come",
		Long:  initLong,
		Args:  exactArgs(0, "no arguments (name the data with --data or --expect-data)"),
		RunE: func(c *cobra.Command, args []string) error {
			if err := fl.apply(c, &o); err != nil {
				return err
			}
			if fl.out != "" {
				if err := runner.CheckNewFile(fl.out); err != nil {
					return err
				}
			}
			d, err := runner.Draft(c.Context(), o)
			if err != nil {
				return err
			}
			if fl.out == "" {
				_, err = c.OutOrStdout().Write(d.Text)
				return err
			}
			if err := runner.WriteNewFile(fl.out, d.Text); err != nil {
				return err
			}
			next := "review it, then run: rankplan check " + shellWord(fl.out)
			if d.Source != spec.DraftFromData {
				next = "review it, then lock it before the data exist: rankplan lock " + shellWord(fl.out)
			}
			_, err = fmt.Fprintf(summaryOut(c), "wrote the plan %s; next: %s\n", fl.out, next)
			return err
		},
	}
	f := c.Flags()
	f.StringVar(&o.DataPath, "data", "", "the CSV data file (long format: one row per observation); a header without rows will do")
	f.StringVar(&o.ExpectPath, "expect-data", "", "where the data file will be, when it does not exist yet")
	f.StringVar(&fl.columns, "columns", "", `with --expect-data: every column of the data to come, as NAME:text or NAME:number, e.g. "dose:text,weight:number"`)
	f.StringVar(&o.Group, "group", "", "the column that holds the group labels")
	f.StringVar(&o.Outcome, "outcome", "", "the column that holds the numeric outcome")
	f.StringVar(&o.Unit, "unit", "", `the outcome's unit, shown in report labels (e.g. "mg")`)
	f.StringVar(&fl.groups, "groups", "", `the groups to analyse, in report order, e.g. "A,B,C" (default: every group found, by label)`)
	f.StringVar(&fl.missing, "missing", "", `cell texts that mean a missing value, e.g. "n/a,NA," (an empty item is the empty cell; default "" and "NA")`)
	f.Float64Var(&o.Alpha, "alpha", 0.05, "the significance level")
	f.Uint64Var(&fl.seed, "seed", 0, "the seed of every random stream (default: a fresh random seed)")
	f.StringVar((*string)(&o.PValue), "pvalue", string(spec.Auto), "p-value method: "+strings.Join(pvalueNames, "|"))
	f.Int64Var(&o.Resamples, "resamples", 0, fmt.Sprintf("Monte Carlo resamples, for --pvalue permutation or auto (default %d)", defaultResamples))
	f.Int64Var(&o.EffectResamples, "effect-resamples", 0, "bootstrap resamples of the effect-size interval (default: no resampling; the noncentral interval)")
	f.StringVar((*string)(&o.PostHoc), "posthoc", string(spec.NoPostHoc), "post-hoc procedure: "+strings.Join(posthocNames, "|"))
	f.StringVar((*string)(&o.Adjust), "adjust", string(spec.NoAdjustment), "multiplicity adjustment: "+strings.Join(adjustNames, "|"))
	f.StringVar(&o.Control, "control", "", "compare every group with this control group only")
	f.StringVar(&o.Delimiter, "delimiter", "auto", `field delimiter: auto, ",", ";" or tab (auto without a file: ",", or ";" with --decimal ",")`)
	f.StringVar(&o.Decimal, "decimal", "auto", `decimal separator: auto, "." or "," (auto without rows to read: ".")`)
	f.StringVarP(&fl.out, "output", "o", "", "write the plan to this new file instead of standard output")
	for _, fc := range []struct {
		flag   string
		values []string
	}{
		{"pvalue", pvalueNames}, {"posthoc", posthocNames}, {"adjust", adjustNames},
		{"delimiter", []string{"auto", ",", ";", "tab"}}, {"decimal", []string{"auto", ".", ","}},
	} {
		_ = c.RegisterFlagCompletionFunc(fc.flag, fixedValues(fc.values))
	}
	_ = c.MarkFlagFilename("data", "csv", "tsv", "txt")
	_ = c.MarkFlagFilename("expect-data", "csv", "tsv", "txt")
	return c
}

// apply checks init's flags and completes o from them; every problem is a usage error.
func (fl *initFlags) apply(c *cobra.Command, o *runner.DraftOptions) error {
	changed := c.Flags().Changed
	switch {
	case o.DataPath == "" && o.ExpectPath == "":
		return usageErrorf("init: name the data: --data FILE (an existing file; its header alone will do) or --expect-data PATH (where the data file will be)")
	case o.DataPath != "" && o.ExpectPath != "":
		return usageErrorf("init: --data and --expect-data exclude each other: --data reads an existing file, --expect-data names one that does not exist yet")
	}
	for _, f := range []struct{ flag, val string }{{"--group", o.Group}, {"--outcome", o.Outcome}} {
		if f.val == "" {
			return usageErrorf("init: %s is required", f.flag)
		}
	}
	for _, f := range []struct{ flag, val string }{
		{"--group", o.Group}, {"--outcome", o.Outcome}, {"--groups", fl.groups}, {"--missing", fl.missing},
		{"--columns", fl.columns}, {"--unit", o.Unit}, {"--control", o.Control},
	} {
		if !utf8.ValidString(f.val) {
			return usageErrorf("init: %s %q: not valid UTF-8 text", f.flag, f.val)
		}
	}
	if name, ok := spec.RenamedAdjustment(string(o.Adjust)); ok {
		return usageErrorf("init: --adjust %q is no longer a method name; write %s", o.Adjust, name)
	}
	if o.Group == o.Outcome {
		return usageErrorf("init: --group and --outcome both name %q; the outcome must be another column than the group", o.Group)
	}
	for _, f := range []struct {
		flag, val string
		allowed   []string
	}{
		{"--pvalue", string(o.PValue), pvalueNames},
		{"--posthoc", string(o.PostHoc), posthocNames},
		{"--adjust", string(o.Adjust), adjustNames},
		{"--delimiter", o.Delimiter, []string{"auto", ",", ";", "tab"}},
		{"--decimal", o.Decimal, []string{"auto", ".", ","}},
	} {
		if !slices.Contains(f.allowed, f.val) {
			return usageErrorf("init: %s %q: expected one of %s", f.flag, f.val, strings.Join(f.allowed, ", "))
		}
	}
	if o.Decimal == "," && o.Delimiter == "," {
		return usageErrorf(`init: --decimal "," needs a --delimiter other than ","`)
	}
	if !(o.Alpha > 0 && o.Alpha < 1) {
		return usageErrorf("init: --alpha %v: expected a value > 0 and < 1", o.Alpha)
	}
	if o.Resamples < 0 {
		return usageErrorf("init: --resamples %d: expected a positive count", o.Resamples)
	}
	if o.Resamples == 0 && (o.PValue == spec.Permutation || o.PValue == spec.Auto) {
		o.Resamples = defaultResamples
	}
	if changed("effect-resamples") && !(o.EffectResamples >= 1 && o.EffectResamples <= maxEffectResamples) {
		return usageErrorf("init: --effect-resamples %d: expected a count from 1 to %d", o.EffectResamples, maxEffectResamples)
	}
	if changed("unit") {
		if n := utf8.RuneCountInString(o.Unit); n < 1 || n > 40 {
			return usageErrorf("init: --unit %q: expected 1 to 40 characters; found %d", o.Unit, n)
		}
	}
	if changed("columns") {
		cols, err := layoutColumns(fl.columns, o)
		if err != nil {
			return err
		}
		o.Columns = cols
	}
	if changed("missing") {
		o.Missing = listItems(fl.missing)
		for i, m := range o.Missing {
			if slices.Contains(o.Missing[:i], m) {
				return usageErrorf("init: --missing: the token %q is listed twice", m)
			}
		}
	}
	if changed("groups") {
		groups, err := groupList(fl.groups)
		if err != nil {
			return err
		}
		o.Groups = groups
		if o.Control != "" && !slices.Contains(groups, o.Control) {
			return usageErrorf("init: --control %q is not among --groups (%s)", o.Control, strings.Join(quoteAll(groups), ", "))
		}
	}
	if changed("seed") {
		o.Seed = &fl.seed
	}
	o.PlanPath = fl.out
	return nil
}

// listItems splits a comma-separated flag value into its items, each without the ASCII
// spaces around it: cells are compared after trimming those, so they could never match.
// An empty item stays (for --missing it is the empty cell).
func listItems(s string) []string {
	items := strings.Split(s, ",")
	for i, it := range items {
		items[i] = strings.Trim(it, " ")
	}
	return items
}

// groupList reads --groups: at least two distinct, non-empty names, at most
// runner.MaxGroups (the plan schema's limits of groups.include).
func groupList(s string) ([]string, error) {
	groups := listItems(s)
	for i, g := range groups {
		if g == "" {
			return nil, usageErrorf("init: --groups %q: a group name is empty", s)
		}
		if slices.Contains(groups[:i], g) {
			return nil, usageErrorf("init: --groups: the group %q is listed twice", g)
		}
	}
	switch {
	case len(groups) < 2:
		return nil, usageErrorf("init: --groups %q: name at least 2 groups", s)
	case len(groups) > runner.MaxGroups:
		return nil, usageErrorf("init: --groups: %d groups, more than the limit of %d", len(groups), runner.MaxGroups)
	}
	return groups, nil
}

// layoutColumns reads --columns, the declared header of data to come (NAME:text or
// NAME:number, comma-separated), checks that it holds the group column and a number
// column as the outcome, and returns the columns as the plan's comment shows them.
func layoutColumns(s string, o *runner.DraftOptions) ([]string, error) {
	if o.DataPath != "" {
		return nil, usageErrorf("init: --columns declares the columns of data that do not exist yet; with --data they come from the file's header")
	}
	var names, shown []string
	number := map[string]bool{}
	for _, item := range listItems(s) {
		name, kind, ok := strings.Cut(item, ":")
		name, kind = strings.Trim(name, " "), strings.Trim(kind, " ")
		if !ok || name == "" || (kind != "text" && kind != "number") {
			return nil, usageErrorf("init: --columns %q: expected NAME:text or NAME:number, separated by commas", item)
		}
		if slices.Contains(names, name) {
			return nil, usageErrorf("init: --columns: the column %q is declared twice", name)
		}
		names = append(names, name)
		number[name] = kind == "number"
		shown = append(shown, fmt.Sprintf("%s (%s)", strconv.Quote(name), kind))
	}
	for _, f := range []struct{ flag, col string }{{"--group", o.Group}, {"--outcome", o.Outcome}} {
		if !slices.Contains(names, f.col) {
			return nil, usageErrorf("init: %s %q is not among the columns of --columns (%s)", f.flag, f.col, strings.Join(quoteAll(names), ", "))
		}
	}
	if !number[o.Outcome] {
		return nil, usageErrorf("init: --outcome %q is declared text in --columns; the outcome must be a number column", o.Outcome)
	}
	return shown, nil
}

// quoteAll returns each string in Go quotes, as messages show names.
func quoteAll(s []string) []string {
	out := make([]string, len(s))
	for i, x := range s {
		out[i] = strconv.Quote(x)
	}
	return out
}

// shellWord returns s as one word of a POSIX shell command line: unchanged when it holds
// only characters no shell treats specially, otherwise in single quotes, with each
// single quote closed, escaped with a backslash and reopened (common practice).
func shellWord(s string) string {
	if s != "" && strings.Trim(s, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_./+,:@%-") == "" {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// fixedValues completes a flag that takes one of a fixed list of names, with no file
// names offered.
func fixedValues(values []string) cobra.CompletionFunc {
	return func(c *cobra.Command, args []string, toComplete string) ([]cobra.Completion, cobra.ShellCompDirective) {
		var out []cobra.Completion
		for _, v := range values {
			if strings.HasPrefix(v, toComplete) {
				out = append(out, v)
			}
		}
		return out, cobra.ShellCompDirectiveNoFileComp
	}
}
