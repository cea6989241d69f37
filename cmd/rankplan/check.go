package main

import (
	"errors"
	"fmt"
	"io/fs"

	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/report"
	"rankplan/runner/results"
	"rankplan/spec"
)

func newCheckCmd(u *ui) *cobra.Command {
	var jsonOut, planOnly bool
	c := &cobra.Command{
		Use:   "check PLAN [--plan-only]",
		Short: "Validate a plan and preview its data without running it",
		Long: `check validates PLAN against the plan schema and its rules, reads the data file it
names, and shows the groups, the observations per group and the rows that would be
left out. It applies every limit that run applies (README: Limits), so a plan that check
accepts is not refused by run for its size; for an exact p-value that means computing it
under the work budget, which takes a second at most. Nothing else is computed.

Every problem is reported at once, each as FILE:LINE:COL: KEY: what was expected.

With --plan-only the data file is not opened: the plan is checked against the schema and
its rules alone, as it is before the data exist (a preregistered plan, drafted with
'rankplan init --expect-data' and locked). The limits that depend on the data (group
sizes, the exact work budget) are checked once the data exist, by check without
--plan-only and by run.

With --json the preview is printed as JSON (plan, data, and for each analysis its
p-value method, for auto the method chosen, groups and exclusions); with --quiet only
problems are printed.`,
		Args: exactArgs(1, "one plan file"),
		RunE: func(c *cobra.Command, args []string) error {
			p, err := spec.Load(args[0])
			if err != nil {
				return err
			}
			if planOnly {
				return planOnlyPreview(c, p, args[0], jsonOut)
			}
			prep, err := runner.Prepare(c.Context(), p)
			if errors.Is(err, fs.ErrNotExist) {
				return fmt.Errorf("%w\n(before the data exist, check the plan alone: rankplan check --plan-only %s)", err, shellWord(args[0]))
			}
			if err != nil {
				return err
			}
			if err := prep.CheckWork(c.Context()); err != nil {
				return err
			}
			if jsonOut {
				return writeJSON(c.OutOrStdout(), prep.Preview())
			}
			return report.PreviewWith(summaryOut(c), prep.Preview(), args[0], prep.DataPath, u.style())
		},
	}
	c.Flags().BoolVar(&jsonOut, "json", false, "print the preview as JSON (or, on failure, a JSON error object)")
	c.Flags().BoolVar(&planOnly, "plan-only", false, "check the plan alone, without opening its data file (before the data exist)")
	return c
}

// planOnlyPreview reports a plan that passed the schema and its rules without reading its
// data: one line of text, or with --json the plan's identity and its analyses' methods, with
// "data": null to say that no data were read.
func planOnlyPreview(c *cobra.Command, p *spec.Plan, path string, jsonOut bool) error {
	if jsonOut {
		type analysis struct {
			ID     string            `json:"id"`
			Test   spec.Test         `json:"test"`
			PValue spec.PValueMethod `json:"p_value_method"`
		}
		out := struct {
			Plan     results.Plan `json:"plan"`
			Data     *struct{}    `json:"data"`
			DataFile string       `json:"data_file"`
			Analyses []analysis   `json:"analyses"`
		}{Plan: results.Plan{ID: p.ID, Title: p.Title, Alpha: p.Alpha, Seed: p.Seed.String()}, DataFile: p.Data.File}
		for _, a := range p.Analyses {
			out.Analyses = append(out.Analyses, analysis{ID: a.ID, Test: a.Test, PValue: a.PValue.Method})
		}
		return writeJSON(c.OutOrStdout(), out)
	}
	_, err := fmt.Fprintf(summaryOut(c), "plan %s (id %s): valid against the plan schema and its rules; the data file %s was not opened (--plan-only), so the limits that depend on the data are checked once it exists\n", path, p.ID, p.Data.File)
	return err
}
