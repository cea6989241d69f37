package main

import (
	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/report"
	"rankplan/spec"
)

func newCheckCmd(u *ui) *cobra.Command {
	var jsonOut bool
	c := &cobra.Command{
		Use:   "check PLAN",
		Short: "Validate a plan and preview its data without running it",
		Long: `check validates PLAN against the plan schema and its rules, reads the data file it
names, and shows the groups, the observations per group and the rows that would be
left out. It applies every limit that run applies (README: Limits), so a plan that check
accepts is not refused by run for its size; for an exact p-value that means computing it
under the work budget, which takes a second at most. Nothing else is computed.

Every problem is reported at once, each as FILE:LINE:COL: KEY: what was expected.

With --json the preview is printed as JSON (plan, data, and for each analysis its
p-value method, for auto the method chosen, groups and exclusions); with --quiet only
problems are printed.`,
		Args: exactArgs(1, "one plan file"),
		RunE: func(c *cobra.Command, args []string) error {
			p, err := spec.Load(args[0])
			if err != nil {
				return err
			}
			prep, err := runner.Prepare(c.Context(), p)
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
	return c
}
