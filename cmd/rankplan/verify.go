package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/selftest"
)

// Exit codes of verify (3 to 9 are reserved for it).
const (
	exitDiffer     = 3 // inputs changed, or the rerun gives other results
	exitIntegrity  = 4 // tampering, broken chain, bad signature, missing files
	exitIncomplete = 5 // the run never finished
	exitConclusion = 6 // verify --data: a conclusion at alpha changed
)

// verifyExit is returned by the verify command to set a non-zero exit code after it
// has printed its own report; Main prints nothing more for it.
type verifyExit struct{ code int }

func (e *verifyExit) Error() string { return "" }

func newVerifyCmd(u *ui) *cobra.Command {
	var (
		o       runner.VerifyOptions
		jsonOut bool
		mdOut   bool
	)
	c := &cobra.Command{
		Use:   "verify DIR",
		Short: "Check a run folder and prove that its results reproduce",
		Long: `verify checks the run folder DIR: every audit record parses and is in canonical form,
the hash chain is unbroken and gap-free, the run finished, the head matches DIR/audit.head
(and --head HASH, a copy kept elsewhere, with or without its sha256: prefix: a chain alone
cannot show records removed from its end), the folder holds the files the log names and
no other (a symbolic link, folder, pipe or device in it, or an extra file, fails
integrity; --allow-extra accepts extra regular files, as warnings), every output file
matches its recorded SHA-256,
results.json holds the recorded results (the digest of its canonical form equals the
recorded results digest), the plan and data files still match theirs, the tool version is
the same (or the difference is shown), a signature names this log's head and record count
and verifies against a pinned --pubkey (without one it is listed as present, not
verified); then it reruns the plan from the recorded inputs and
seed and compares the results digest, naming the first field that differs.

A folder written by 'rankplan selftest --out' is recognised by its first record: it gets
the same checks of its record and files, and its reference cases are rerun and compared by
their results digest (a build that computes other values, or has other cases, differs).

With --data FILE it reruns the plan on new data instead and compares every conclusion at
the plan's alpha with the recorded one (a drift check for CI): each analysis's omnibus
decision (its decision in the multiplicity family, for members), whether its comparisons
ran, every pair's decision after the adjustment (or not computable), and each group's
compact letters. Each changed conclusion is listed on its own line with the p-value it
rests on before and now (the adjusted p for pairs); an analysis, pair or group found on
one side only is a changed conclusion too. Otherwise it says how many conclusions were
compared and how many of their p-values moved.

With --integrity-only it makes every check but the rerun: the log, chain, head, outputs,
results digest, signature, tool, and the plan and data files against their recorded
hashes; the rerun is listed as skipped, so a CI step stays quick on big data. It cannot
be combined with --data.

Each check is reported with its own verdict; a skipped check never counts as passed.
Files in the folder are read only if they are regular files, never through a symbolic
link, and within size limits (README: Limits); the plan and data files the log names are
read only once the record itself has verified, and only if they are regular files. A
--pubkey or --data file that cannot be used is a usage error (exit 2).

Exit codes:
  0  verified (skipped checks are listed)
  2  unusable input (no such folder, bad flags)
  3  results or inputs differ (changed data or plan, or the rerun disagrees)
  4  integrity failure (tampering, broken chain, bad signature, missing files)
  5  the run is incomplete (killed or failed)
  6  with --data: a conclusion at alpha changed
  130, 143  verify itself was stopped by SIGINT or SIGTERM (no verdict)

With --markdown the verdicts are printed as a Markdown section to follow the run's
summary.md in a CI step summary or a pull request, for example
  rankplan verify out/run --markdown >> "$GITHUB_STEP_SUMMARY"

With --quiet nothing is printed when the run verifies; otherwise one line per failed
check goes to standard error. When standard error is a terminal, a progress line shows
the rerun (not with --json or --quiet).`,
		Args: exactArgs(1, "one run folder"),
		RunE: func(c *cobra.Command, args []string) error {
			o.Selftest = selftest.ResultsDigest // for a folder written by selftest --out
			if jsonOut && mdOut {
				return usageErrorf("verify: --json and --markdown cannot be used together")
			}
			if o.IntegrityOnly && o.Data != "" {
				return usageErrorf("verify: --integrity-only and --data cannot be used together: --integrity-only makes no rerun")
			}
			if o.Head != "" {
				head, err := runner.ParseHead(o.Head)
				if err != nil {
					return usageErrorf("verify: --head: %w", err)
				}
				o.Head = head
			}
			ctx := c.Context()
			bar := u.progressBar(quiet(c), jsonOut || mdOut)
			if bar != nil {
				ctx = runner.WithProgress(ctx, bar.update)
				defer bar.finish()
			}
			rep, err := runner.Verify(ctx, args[0], o)
			bar.finish()
			if err != nil {
				return err
			}
			if mdOut {
				if err := rep.WriteMarkdown(c.OutOrStdout()); err != nil {
					return err
				}
			} else if quiet(c) && !jsonOut {
				if rep.Outcome != runner.Verified {
					var failed []string
					for _, ch := range rep.Checks {
						if ch.Verdict == runner.Fail {
							failed = append(failed, ch.Name+" ("+ch.Detail+")")
						}
					}
					fmt.Fprintf(c.ErrOrStderr(), "rankplan: verify %s: not verified: %s; failed: %s\n", args[0], rep.Outcome, strings.Join(failed, "; "))
				}
			} else if jsonOut {
				if err := writeJSON(c.OutOrStdout(), rep); err != nil {
					return err
				}
			} else if err := rep.WriteText(c.OutOrStdout()); err != nil {
				return err
			}
			switch rep.Outcome {
			case runner.ClassIntegrity:
				return &verifyExit{exitIntegrity}
			case runner.ClassIncomplete:
				return &verifyExit{exitIncomplete}
			case runner.ClassDiffer:
				return &verifyExit{exitDiffer}
			case runner.ClassConclusion:
				return &verifyExit{exitConclusion}
			}
			return nil
		},
	}
	f := c.Flags()
	f.StringVar(&o.Head, "head", "", "the audit head kept elsewhere (64 hex digits, sha256: prefix optional), to rule out truncation")
	f.StringVar(&o.PubKey, "pubkey", "", "the pinned Ed25519 public key the signature must verify against")
	f.StringVar(&o.Data, "data", "", "rerun on this data file and report changed conclusions (drift check)")
	f.BoolVar(&o.IntegrityOnly, "integrity-only", false, "every check but the rerun (quick on big data); not with --data")
	f.BoolVar(&o.AllowExtra, "allow-extra", false, "accept regular files the log does not name, as warnings (links and special files still fail)")
	f.IntVar(&o.Workers, "workers", 0, "goroutines for resampling (0: one per core)")
	f.BoolVar(&jsonOut, "json", false, "print the verdicts as JSON")
	f.BoolVar(&mdOut, "markdown", false, "print the verdicts as a Markdown section (for CI step summaries)")
	return c
}
