package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"

	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/report"
)

func newRunCmd(u *ui) *cobra.Command {
	var (
		o        runner.RunOptions
		dataSeen trueOrFalse
		jsonOut  bool
	)
	c := &cobra.Command{
		Use:   "run PLAN --out DIR",
		Short: "Run a plan and write its results and audit trail to a new folder",
		Long: `run validates PLAN, runs every analysis on the plan's data and creates the run folder
DIR with results.json (described by 'rankplan schema results'), a copy of the plan, the
hash-chained audit log audit.jsonl and its head (audit.head, also printed: keep a copy
elsewhere and check it with 'rankplan verify DIR --head HASH'). DIR must not exist:
rankplan never overwrites earlier results. The folder appears only when the run has
finished; a failed or killed run leaves DIR.incomplete-XXXX instead.

With --lock, the plan must match the lock made by 'rankplan lock'; a plan that differs runs
only with --deviation "reason" (repeat for several) and --data-seen true|false (or
--data-seen=true|false: the value is required), and every deviation is recorded. With
--sign KEY the final audit head is signed (Ed25519).

Monte Carlo and bootstrap resamples run on --workers goroutines; the results are the same
bytes for any number of workers, on any machine. When standard error is a terminal, a
progress line shows the exact method's work and the resamples (never with --json or
--quiet); it does not change the results.

With --json, standard output carries results.json exactly as written to DIR and nothing
else, and the other lines go to standard error. With --quiet nothing is printed on
success.`,
		Args: exactArgs(1, "one plan file"),
		RunE: func(c *cobra.Command, args []string) error {
			if o.Out == "" {
				return usageErrorf("run: --out DIR is required (a folder that does not exist yet)")
			}
			if o.Workers < 0 {
				return usageErrorf("run: --workers %d: expected 0 (one per core) or more", o.Workers)
			}
			if dataSeen.set {
				o.DataSeen = &dataSeen.value
			}
			o.Args = append([]string{"rankplan", "run"}, args...)
			q := quiet(c)
			ctx := c.Context()
			bar := u.progressBar(q, jsonOut)
			if bar != nil {
				ctx = runner.WithProgress(ctx, bar.update)
				defer bar.finish()
			}
			rec, err := runner.Run(ctx, args[0], o)
			bar.finish() // before anything else is printed
			if err != nil {
				return err
			}
			// w takes the lines for people: stdout, or stderr when stdout carries JSON.
			var w io.Writer = c.OutOrStdout()
			switch {
			case q:
				w = io.Discard
			case jsonOut:
				w = c.ErrOrStderr()
			}
			if jsonOut {
				b, err := os.ReadFile(filepath.Join(o.Out, runner.ResultsFile))
				if err != nil {
					return fmt.Errorf("run: --json: %w", err)
				}
				if _, err := c.OutOrStdout().Write(b); err != nil {
					return err
				}
			} else if err := report.SummaryWith(w, rec.Results, rec.Prepared.DataPath, u.style()); err != nil {
				return err
			}
			fmt.Fprintf(w, "%s\n", runner.LockText(rec.Lock))
			for _, d := range rec.Deviations {
				fmt.Fprintf(w, "deviation from the locked plan (data seen: %v): %s; changed: %v\n", d.DataSeen, d.Reason, d.Changed)
			}
			fmt.Fprintf(w, "results: %s\n", filepath.Join(o.Out, runner.ResultsFile))
			fmt.Fprintf(w, "report: %s (beside it %s and %s)\n", filepath.Join(o.Out, runner.ReportFile), runner.SummaryFile, runner.PairsFile)
			if rec.Signature != nil {
				fmt.Fprintf(w, "signed: %s by %q (%s)\n", filepath.Join(o.Out, runner.SignatureFile), rec.Signature.Signer, rec.Signature.Meaning)
			}
			_, err = fmt.Fprintf(w, "audit head: %s (record %d; keep a copy outside %s)\n", rec.Head, rec.Seq, o.Out)
			return err
		},
	}
	f := c.Flags()
	f.StringVar(&o.Out, "out", "", "the folder to create for the results (must not exist; missing folders above it are created)")
	f.IntVar(&o.Workers, "workers", 0, "goroutines for resampling (0: one per core); results are identical for any value")
	f.StringVar(&o.Signer, "signer", "", "your name, recorded with every audit record")
	f.StringVar(&o.Reason, "reason", "", "why this run is made, recorded in the audit log")
	f.StringVar(&o.LockPath, "lock", "", "a plan lock (from 'rankplan lock') the plan must match")
	f.StringArrayVar(&o.Deviations, "deviation", nil, "the reason for a difference from the locked plan (repeatable)")
	f.Var(&dataSeen, "data-seen", "with --deviation: whether the data had been seen when the plan was changed (required value: true or false)")
	f.StringVar(&o.SignKey, "sign", "", "an Ed25519 private key (from 'rankplan keygen') to sign the audit head")
	f.StringVar(&o.Meaning, "meaning", "authorship", "with --sign: the meaning of the signature (e.g. authorship, review, approval)")
	f.BoolVar(&jsonOut, "json", false, "print results.json on standard output, exactly as written to DIR (or, on failure, a JSON error object); other lines go to standard error")
	_ = c.MarkFlagDirname("out")
	_ = c.RegisterFlagCompletionFunc("data-seen", fixedValues([]string{"true", "false"}))
	return c
}

// trueOrFalse is a flag whose value, true or false, is required, written after a space or
// an '='. Unlike a bool flag, which takes its value only after '=', it never leaves
// "--data-seen false" to be read as the flag and an argument "false".
type trueOrFalse struct {
	value bool
	set   bool // the flag was given
}

func (b *trueOrFalse) Set(s string) error {
	switch s {
	case "true":
		b.value = true
	case "false":
		b.value = false
	default:
		return errors.New("expected true or false")
	}
	b.set = true
	return nil
}

// String returns the value given, or "" when the flag was not given: it has no default.
func (b *trueOrFalse) String() string {
	if !b.set {
		return ""
	}
	return strconv.FormatBool(b.value)
}

// Type names the values in the help text.
func (b *trueOrFalse) Type() string { return "true|false" }
