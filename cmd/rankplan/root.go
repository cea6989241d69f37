package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"syscall"

	"github.com/spf13/cobra"

	"rankplan/runner"
	"rankplan/runner/audit"
	"rankplan/runner/data"
	"rankplan/runner/selftest"
	"rankplan/spec"
)

// Exit codes. They are part of the interface: scripts and CI jobs branch on them.
const (
	exitOK    = 0 // success
	exitError = 1 // the run failed for a reason other than its input (e.g. the output could not be written)
	exitInput = 2 // usage error, invalid plan or unusable data
	// 3 to 6 are verify's; see verify.go. 7 to 9 are reserved.
	exitSelftest = 10 // selftest: a reference case did not reproduce its expected value
	// A command stopped by a signal exits 128 + the signal's number, as POSIX shells
	// report a command ended by a signal (common practice): 130 for SIGINT, 143 for
	// SIGTERM.
	exitSignalBase = 128
)

const exitCodesHelp = `Exit codes:
  0  success
  1  the command failed for a reason other than its input (e.g. writing the output)
  2  usage error (unknown command, help topic or flag), invalid plan or unusable data
  3  verify: results or inputs differ
  4  verify: integrity failure (tampering, broken chain, bad signature)
  5  verify: the run is incomplete
  6  verify --data: a conclusion at alpha changed
  10 selftest: a reference case did not reproduce its expected value
  130 stopped by SIGINT (Ctrl-C); 143 stopped by SIGTERM (128 + the signal's number):
      a stopped run leaves no DIR, only DIR.incomplete-XXXX once it has created it, whose
      log ends with run.failed naming the signal (verify: incomplete)`

// usageError is a mistake in the command line: wrong flags or arguments.
type usageError struct{ err error }

func (e *usageError) Error() string { return e.err.Error() }
func (e *usageError) Unwrap() error { return e.err }

func usageErrorf(format string, args ...any) error {
	return &usageError{fmt.Errorf(format, args...)}
}

// Main runs rankplan with args and returns the exit code. It is the only place that prints
// errors: each line once, as "rankplan: <context>: <cause>".
//
// A command given --json that fails before writing to stdout also prints the error there
// as one JSON object ([errorReport]).
func Main(args []string, stdout, stderr io.Writer) int {
	out := &countingWriter{w: stdout}
	root := newRoot(out, stderr)
	root.SetArgs(args)
	ctx, stop := signalContext()
	defer stop()
	cmd, err := root.ExecuteContextC(ctx)
	if err == nil {
		return exitOK
	}
	if in := runner.InterruptedBy(ctx); in != nil && errors.Is(err, context.Canceled) {
		fmt.Fprintf(stderr, "rankplan: %s\n", stoppedMessage(cmd, in, err))
		return exitSignalBase + int(in.Signal)
	}
	var ve *verifyExit
	if errors.As(err, &ve) {
		return ve.code // verify printed its own report
	}
	printError(stderr, err)
	code := exitCode(err)
	var ue *usageError
	if errors.As(err, &ue) {
		fmt.Fprintf(stderr, "rankplan: see 'rankplan --help' for usage\n")
	}
	if wantsJSON(cmd) && out.n == 0 {
		if werr := writeJSON(stdout, newErrorReport(err, code)); werr != nil {
			fmt.Fprintf(stderr, "rankplan: writing the error as JSON: %v\n", werr)
		}
	}
	return code
}

// printError prints err on w, each line as "rankplan: <line>"; a blank line stays blank
// and a final line break adds no line.
func printError(w io.Writer, err error) {
	for _, line := range strings.Split(strings.TrimRight(err.Error(), "\n"), "\n") {
		if strings.TrimSpace(line) == "" {
			fmt.Fprintln(w)
			continue
		}
		fmt.Fprintf(w, "rankplan: %s\n", line)
	}
}

// signalContext returns a context that SIGINT or SIGTERM cancels with an
// *runner.Interrupted cause, so that every command stops its work, and stop, which
// releases the signals. After the first signal the signals are released at once: a
// second one ends the process by the signal's default action, without waiting.
func signalContext() (ctx context.Context, stop func()) {
	ctx, cancel := context.WithCancelCause(context.Background())
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, os.Interrupt, syscall.SIGTERM)
	go func() {
		select {
		case s := <-ch:
			signal.Stop(ch)
			sig, _ := s.(syscall.Signal)
			cancel(&runner.Interrupted{Signal: sig})
		case <-ctx.Done():
		}
	}()
	return ctx, func() {
		signal.Stop(ch)
		cancel(nil)
	}
}

// stoppedMessage is the one line printed for a command that a signal stopped: which
// command, which signal, and for a run what it leaves behind.
func stoppedMessage(cmd *cobra.Command, in *runner.Interrupted, err error) string {
	name := "rankplan"
	if cmd != nil && cmd != cmd.Root() {
		name = cmd.Name()
	}
	msg := name + " stopped by " + in.Name()
	if name != "run" {
		return msg
	}
	var ue *runner.UnfinishedError
	if errors.As(err, &ue) {
		return msg + "; the unfinished folder is " + ue.Dir + " (its log ends with run.failed; verify reports it as incomplete)"
	}
	return msg + " before its folder was created; nothing was written"
}

// exitCode maps an error to an exit code by its type, never by its text.
func exitCode(err error) int {
	var (
		ue *usageError
		ie *runner.InputError
		de *data.Error
		se *selftest.FailedError
	)
	_, isPlan := spec.AsList(err)
	switch {
	case errors.As(err, &ue), errors.As(err, &ie), errors.As(err, &de), isPlan:
		return exitInput
	case errors.As(err, &se):
		return exitSelftest
	}
	return exitError
}

func newRoot(stdout, stderr io.Writer) *cobra.Command {
	root := &cobra.Command{
		Use:   "rankplan",
		Short: "Run preregistered rank-based analysis plans reproducibly",
		Long: `rankplan runs a declarative analysis plan (YAML) that compares several groups with
rank-based tests, validates the plan against a JSON Schema, and writes results that
reproduce byte for byte.

A typical session:
  rankplan init --data lines.csv --group line --outcome minutes -o plan.yaml
  rankplan lock plan.yaml                      (before the data exist)
  rankplan check plan.yaml
  rankplan run plan.yaml --lock plan.yaml.lock.json --out runs/2026-12-01
  rankplan verify runs/2026-12-01 --head sha256:...

Statistical output supports, and does not replace, qualified judgement; regulated use
follows the lab's own procedures and software validation.

` + exitCodesHelp,
		SilenceErrors: true,
		SilenceUsage:  true,
		// The root's own arguments can only be a command that does not exist: a usage
		// error (exit 2), with the commands of a similar name. Without arguments it
		// prints the help, as before.
		Args:                       unknownCommand,
		SuggestionsMinimumDistance: 2,
		RunE:                       func(c *cobra.Command, args []string) error { return c.Help() },
	}
	root.SetOut(stdout)
	root.SetErr(stderr)
	// --version prints what the version command prints. The flag is declared here so that
	// cobra adds no -v shorthand for it.
	root.Version = versionText()
	root.SetVersionTemplate("{{.Version}}")
	root.Flags().Bool("version", false, "print the version, as 'rankplan version' does")
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		if c == c.Root() {
			return &usageError{err}
		}
		return &usageError{fmt.Errorf("%s: %w", strings.TrimPrefix(c.CommandPath(), "rankplan "), err)}
	})
	root.SetHelpCommand(newHelpCmd())
	u := newUI(stdout, stderr, os.Getenv)
	root.PersistentFlags().BoolP("quiet", "q", false, "print no summary on standard output (errors still go to standard error; exit codes are the same)")
	root.AddCommand(newInitCmd(), newCheckCmd(u), newRunCmd(u), newVerifyCmd(u), newLockCmd(), newKeygenCmd(), newSchemaCmd(), newSelftestCmd(), newVersionCmd())
	// Cobra's completion command (bash, zsh, fish, powershell) stays enabled and listed.
	return root
}

// quiet reports whether --quiet was given.
func quiet(c *cobra.Command) bool {
	q, _ := c.Flags().GetBool("quiet")
	return q
}

// summaryOut is where a command's summary goes: stdout, or nowhere with --quiet.
func summaryOut(c *cobra.Command) io.Writer {
	if quiet(c) {
		return io.Discard
	}
	return c.OutOrStdout()
}

// writeJSON writes v to w as the --json outputs show it ([audit.Indented]).
func writeJSON(w io.Writer, v any) error {
	b, err := audit.Indented(v)
	if err != nil {
		return err
	}
	_, err = w.Write(b)
	return err
}

// unknownCommand refuses any argument of the root command: it names no command.
func unknownCommand(c *cobra.Command, args []string) error {
	if len(args) == 0 {
		return nil
	}
	msg := fmt.Sprintf("unknown command %q", args[0])
	if near := c.SuggestionsFor(args[0]); len(near) > 0 {
		msg += "; did you mean " + strings.Join(near, " or ") + "?"
	}
	return usageErrorf("%s", msg)
}

// newHelpCmd is 'rankplan help [command]', which prints what 'rankplan [command] --help'
// prints. A topic that names no command is a usage error (exit 2), as an unknown command
// is, with the commands of a similar name and the list of commands.
func newHelpCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "help [command]",
		Short: "Print the help of rankplan or of one of its commands",
		Long: `help prints the help of rankplan, or with a command (e.g. 'rankplan help run') the
help of that command, as --help does.`,
		ValidArgsFunction: func(c *cobra.Command, args []string, toComplete string) ([]cobra.Completion, cobra.ShellCompDirective) {
			target, rest, err := c.Root().Find(args)
			if err != nil || len(rest) > 0 {
				return nil, cobra.ShellCompDirectiveNoFileComp
			}
			var out []cobra.Completion
			for _, name := range helpTopics(target) {
				if strings.HasPrefix(name, toComplete) {
					out = append(out, name)
				}
			}
			return out, cobra.ShellCompDirectiveNoFileComp
		},
		RunE: func(c *cobra.Command, args []string) error {
			root := c.Root()
			target, rest, err := root.Find(args)
			if err != nil || len(rest) > 0 {
				msg := fmt.Sprintf("help: unknown help topic %q", strings.Join(args, " "))
				if len(args) == 1 {
					if near := root.SuggestionsFor(args[0]); len(near) > 0 {
						msg += " (did you mean " + strings.Join(near, " or ") + "?)"
					}
				}
				return usageErrorf("%s; expected one of the commands: %s", msg, strings.Join(helpTopics(root), ", "))
			}
			target.InitDefaultHelpFlag()
			target.InitDefaultVersionFlag()
			return target.Help()
		},
	}
}

// helpTopics lists the commands under c that 'help' takes, in the order --help lists
// them: the listed commands and help itself.
func helpTopics(c *cobra.Command) []string {
	var names []string
	for _, sub := range c.Commands() {
		if sub.IsAvailableCommand() || sub.Name() == "help" {
			names = append(names, sub.Name())
		}
	}
	return names
}

// exactArgs is cobra.ExactArgs with our usage error type and wording.
func exactArgs(n int, what string) cobra.PositionalArgs {
	return func(c *cobra.Command, args []string) error {
		if len(args) != n {
			return usageErrorf("%s: expected %s, got %d argument(s)", strings.TrimPrefix(c.CommandPath(), "rankplan "), what, len(args))
		}
		return nil
	}
}
