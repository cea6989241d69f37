package main

import (
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/report"
	"rankplan/spec"
)

type runOptions struct {
	out     string
	workers int
}

func newRunCmd() *cobra.Command {
	var o runOptions
	c := &cobra.Command{
		Use:   "run PLAN --out DIR",
		Short: "Run a plan and write its results to a new folder",
		Long: `run validates PLAN, runs every analysis on the plan's data and writes the results to
DIR/results.json (described by 'rankplan schema results'). DIR must not exist: rankplan
never overwrites earlier results. A short summary goes to standard output.

Monte Carlo and bootstrap resamples run on --workers goroutines; the results are the same
bytes for any number of workers, on any machine.`,
		Args: exactArgs(1, "one plan file"),
		RunE: func(c *cobra.Command, args []string) error {
			if o.out == "" {
				return usageErrorf("run: --out DIR is required (a folder that does not exist yet)")
			}
			if o.workers < 0 {
				return usageErrorf("run: --workers %d: expected 0 (one per core) or more", o.workers)
			}
			if err := runner.CheckNewFile(o.out); err != nil {
				return err
			}
			p, err := spec.Load(args[0])
			if err != nil {
				return err
			}
			prep, err := runner.Prepare(p)
			if err != nil {
				return err
			}
			res, err := runner.Execute(c.Context(), prep, runner.Options{Workers: o.workers})
			if err != nil {
				return fmt.Errorf("run %s: %w", args[0], err)
			}
			if err := runner.WriteRun(o.out, res); err != nil {
				return fmt.Errorf("write results: %w", err)
			}
			if err := report.Summary(c.OutOrStdout(), res, prep.DataPath); err != nil {
				return err
			}
			_, err = fmt.Fprintf(c.OutOrStdout(), "results: %s\n", filepath.Join(o.out, "results.json"))
			return err
		},
	}
	c.Flags().StringVar(&o.out, "out", "", "the folder to create for the results (must not exist)")
	c.Flags().IntVar(&o.workers, "workers", 0, "goroutines for resampling (0: one per core); results are identical for any value")
	return c
}
