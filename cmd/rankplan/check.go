package main

import (
	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/report"
	"rankplan/spec"
)

func newCheckCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "check PLAN",
		Short: "Validate a plan and preview its data without running it",
		Long: `check validates PLAN against the plan schema and its rules, reads the data file it
names, and shows the groups, the observations per group and the rows that would be
left out, without computing anything.

Every problem is reported at once, each as FILE:LINE:COL: KEY: what was expected.`,
		Args: exactArgs(1, "one plan file"),
		RunE: func(c *cobra.Command, args []string) error {
			p, err := spec.Load(args[0])
			if err != nil {
				return err
			}
			prep, err := runner.Prepare(p)
			if err != nil {
				return err
			}
			return report.Preview(c.OutOrStdout(), prep.Preview(), args[0], prep.DataPath)
		},
	}
}
