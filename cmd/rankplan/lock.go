package main

import (
	"fmt"
	"os"
	"time"

	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/audit"
)

func newLockCmd() *cobra.Command {
	var out, signer string
	c := &cobra.Command{
		Use:   "lock PLAN [-o PLAN.lock.json]",
		Short: "Fix a plan before the data exist: write its canonical hash and a timestamp",
		Long: `lock writes a lock file for PLAN: the plan in canonical form (defaults applied), its
SHA-256, the SHA-256 of the file's bytes and the UTC time. Publish it with the
preregistration, before any data exist; 'rankplan run PLAN --lock FILE' then records
whether the plan that ran matches, and refuses a changed plan unless each change is
declared with --deviation. The lock needs no data file and never overwrites a file.`,
		Args: exactArgs(1, "one plan file"),
		RunE: func(c *cobra.Command, args []string) error {
			if out == "" {
				out = args[0] + ".lock.json"
			}
			l, err := runner.LockPlan(args[0], out, audit.CurrentActor(os.Getenv, signer, ""), time.Now())
			if err != nil {
				return err
			}
			_, err = fmt.Fprintf(summaryOut(c), "locked plan %s: %s at %s\nlock: %s\n", l.PlanID, l.PlanSHA256, l.LockedAt, out)
			return err
		},
	}
	c.Flags().StringVarP(&out, "output", "o", "", "the lock file to write (default PLAN.lock.json)")
	c.Flags().StringVar(&signer, "signer", "", "your name, recorded in the lock")
	return c
}

func newKeygenCmd() *cobra.Command {
	var out string
	c := &cobra.Command{
		Use:   "keygen -o NAME",
		Short: "Make an Ed25519 key pair for signing runs",
		Long: `keygen writes a new Ed25519 key pair (RFC 8032): NAME (the private key, PKCS #8 PEM,
file mode 0600) and NAME.pub (the public key, PEM). Keep the private key to yourself; give
the public key to whoever verifies your runs ('rankplan verify DIR --pubkey NAME.pub').
Existing files are never overwritten.`,
		Args: exactArgs(0, "no arguments"),
		RunE: func(c *cobra.Command, args []string) error {
			if out == "" {
				return usageErrorf("keygen: -o NAME is required")
			}
			fp, err := audit.GenerateKey(out, out+".pub")
			if err != nil {
				return &runner.InputError{Err: err}
			}
			_, err = fmt.Fprintf(summaryOut(c), "private key: %s (mode 0600)\npublic key: %s.pub\nfingerprint: %s\n", out, out, fp)
			return err
		},
	}
	c.Flags().StringVarP(&out, "output", "o", "", "the private key file to write; the public key goes to NAME.pub")
	return c
}
