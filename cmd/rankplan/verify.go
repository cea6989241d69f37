package main

import (
	"encoding/json"
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
cannot show records removed from its end), every output file matches its recorded SHA-256,
results.json holds the recorded results (the digest of its canonical form equals the
recorded results digest), the plan and data files still match theirs, the tool version is
the same (or the difference is shown), a signature names this log's head and record count
and verifies against a pinned --pubkey (without one it is listed as present, not
verified); then it reruns the plan from the recorded inputs and
seed and compares the results digest, naming the first field that differs.

A folder written by 'rankplan selftest --out' is recognised by its first record: it gets
the same checks of its record and files, and its reference cases are rerun and compared by
their results digest (a build that computes other values, or has other cases, differs).

With --data FILE it reruns the plan on new data instead and says whether any conclusion at
the plan's alpha changed (a drift check for CI).

Each check is reported with its own verdict; a skipped check never counts as passed.

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
				enc := json.NewEncoder(c.OutOrStdout())
				enc.SetIndent("", "  ")
				enc.SetEscapeHTML(false)
				if err := enc.Encode(rep); err != nil {
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
	f.IntVar(&o.Workers, "workers", 0, "goroutines for resampling (0: one per core)")
	f.BoolVar(&jsonOut, "json", false, "print the verdicts as JSON")
	f.BoolVar(&mdOut, "markdown", false, "print the verdicts as a Markdown section (for CI step summaries)")
	return c
}
