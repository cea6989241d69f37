package main

import (
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/selftest"
)

// selftestAdded are cases run after the built-in ones. Only the tests set it, to see the
// failure path; the command line has no way to.
var selftestAdded []selftest.Case

func newSelftestCmd() *cobra.Command {
	var o selftest.Options
	c := &cobra.Command{
		Use:   "selftest [--out DIR]",
		Short: "Show that this installation computes the published reference values",
		Long: `selftest is rankplan's installation and operational qualification. It computes the
built-in reference cases on this machine, through the same functions a run uses (some cases
run whole plans), and compares each with the value that a publication, a standard or a
general-purpose reference library gives for it, within a stated tolerance: Kruskal-Wallis
H and its p-values (asymptotic, exact, Monte Carlo), chi-square tails, quartiles, effect
sizes and bootstrap intervals, post-hoc comparisons, adjustments, pairwise effect sizes,
the studentized range and Beta quantiles, and the random stream.

It prints a validation report: the build (version, VCS revision, SHA-256 of the
executable, Go release, platform), the time, the user and host, then one row per case
(verdict, case, expected, obtained, tolerance, source) and the counts.

With --out DIR it also creates the folder DIR, as 'run' does (DIR must not exist; the folder
appears only complete): validation.json (described by 'rankplan schema validation'),
report.html, and the hash-chained audit log with its head. 'rankplan verify DIR' checks the
folder and reruns the cases. Keep the folder with the installation's validation records.

The selftest supports, and does not replace, the lab's own validation of its use of
rankplan under its own procedures.

Exit codes:
  0   every case reproduced its reference value
  1   the selftest could not be run (e.g. the folder could not be written)
  2   usage error, or DIR exists
  10  a case did not reproduce its reference value (the report, and the folder, say which)
  130, 143  stopped by SIGINT or SIGTERM before it finished (no verdict)`,
		Args: exactArgs(0, "no arguments"),
		RunE: func(c *cobra.Command, args []string) error {
			o.Args = []string{"rankplan", "selftest"}
			if o.Out != "" {
				o.Args = append(o.Args, "--out", o.Out)
			}
			o.Added = selftestAdded
			rep, err := selftest.Run(c.Context(), o)
			if rep == nil {
				return err
			}
			w := summaryOut(c)
			if werr := rep.WriteText(w); werr != nil {
				return werr
			}
			if rep.Dir != "" {
				fmt.Fprintf(w, "validation record: %s\n", filepath.Join(rep.Dir, runner.ValidationFile))
				fmt.Fprintf(w, "report: %s\n", filepath.Join(rep.Dir, selftest.ReportFile))
				fmt.Fprintf(w, "audit head: %s (record %d; keep a copy outside %s)\n", rep.Head, rep.Seq, rep.Dir)
			}
			return err
		},
	}
	f := c.Flags()
	f.StringVar(&o.Out, "out", "", "a folder to create for the validation record (must not exist)")
	f.StringVar(&o.Signer, "signer", "", "your name, recorded with every audit record")
	f.StringVar(&o.Reason, "reason", "", "why the selftest is run (e.g. installation qualification), recorded in the audit log")
	_ = c.MarkFlagDirname("out")
	return c
}
