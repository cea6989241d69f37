package main

import (
	"fmt"
	"slices"
	"strings"

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

func newInitCmd() *cobra.Command {
	var (
		o    runner.DraftOptions
		seed uint64
		out  string
	)
	c := &cobra.Command{
		Use:   "init --data FILE --group COL --outcome COL [-o plan.yaml]",
		Short: "Write a commented plan for a CSV data file",
		Long: `init reads a CSV data file in long format (one row per observation), checks that the
group and outcome columns exist and hold usable values, and writes a commented plan
that 'rankplan check' accepts. Without -o the plan goes to standard output; with -o
it is written to a new file (an existing file is never overwritten) and one line says
which file was written and what to do next (nothing with --quiet).

Without --seed a random seed is drawn and written into the plan, so that the plan, not
the clock, fixes every random stream.`,
		Args: exactArgs(0, "no arguments (name the data with --data)"),
		RunE: func(c *cobra.Command, args []string) error {
			for _, f := range []struct{ flag, val string }{{"--data", o.DataPath}, {"--group", o.Group}, {"--outcome", o.Outcome}} {
				if f.val == "" {
					return usageErrorf("init: %s is required", f.flag)
				}
			}
			if name, ok := spec.RenamedAdjustment(string(o.Adjust)); ok {
				return usageErrorf("init: --adjust %q is no longer a method name; write %s", o.Adjust, name)
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
			if !(o.Alpha > 0 && o.Alpha < 1) {
				return usageErrorf("init: --alpha %v: expected a value > 0 and < 1", o.Alpha)
			}
			if o.Resamples < 0 {
				return usageErrorf("init: --resamples %d: expected a positive count", o.Resamples)
			}
			if o.Resamples == 0 && (o.PValue == spec.Permutation || o.PValue == spec.Auto) {
				o.Resamples = defaultResamples
			}
			if c.Flags().Changed("seed") {
				o.Seed = &seed
			}
			o.PlanPath = out
			if out != "" {
				if err := runner.CheckNewFile(out); err != nil {
					return err
				}
			}
			text, err := runner.Draft(c.Context(), o)
			if err != nil {
				return err
			}
			if out == "" {
				_, err = c.OutOrStdout().Write(text)
				return err
			}
			if err := runner.WriteNewFile(out, text); err != nil {
				return err
			}
			_, err = fmt.Fprintf(summaryOut(c), "wrote the plan %s; next: review it, then run: rankplan check %s\n", out, shellWord(out))
			return err
		},
	}
	f := c.Flags()
	f.StringVar(&o.DataPath, "data", "", "the CSV data file (long format: one row per observation)")
	f.StringVar(&o.Group, "group", "", "the column that holds the group labels")
	f.StringVar(&o.Outcome, "outcome", "", "the column that holds the numeric outcome")
	f.Float64Var(&o.Alpha, "alpha", 0.05, "the significance level")
	f.Uint64Var(&seed, "seed", 0, "the seed of every random stream (default: a fresh random seed)")
	f.StringVar((*string)(&o.PValue), "pvalue", string(spec.Auto), "p-value method: "+strings.Join(pvalueNames, "|"))
	f.Int64Var(&o.Resamples, "resamples", 0, fmt.Sprintf("Monte Carlo resamples, for --pvalue permutation or auto (default %d)", defaultResamples))
	f.StringVar((*string)(&o.PostHoc), "posthoc", string(spec.NoPostHoc), "post-hoc procedure: "+strings.Join(posthocNames, "|"))
	f.StringVar((*string)(&o.Adjust), "adjust", string(spec.NoAdjustment), "multiplicity adjustment: "+strings.Join(adjustNames, "|"))
	f.StringVar(&o.Control, "control", "", "compare every group with this control group only")
	f.StringVar(&o.Delimiter, "delimiter", "auto", `field delimiter: auto, ",", ";" or tab`)
	f.StringVar(&o.Decimal, "decimal", "auto", `decimal separator: auto, "." or ","`)
	f.StringVarP(&out, "output", "o", "", "write the plan to this new file instead of standard output")
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
	return c
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
