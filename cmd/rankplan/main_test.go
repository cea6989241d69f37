package main

import (
	"errors"
	"flag"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"testing"

	"github.com/rogpeppe/go-internal/testscript"

	"rankplan/runner"
)

var update = flag.Bool("update", false, "rewrite the expected output in testdata/script/*.txtar")

func TestMain(m *testing.M) {
	testscript.Main(m, map[string]func(){
		"rankplan": func() { os.Exit(Main(os.Args[1:], os.Stdout, os.Stderr)) },
	})
}

// TestScripts runs the command-line scenarios in testdata/script. Each script runs in a
// fresh folder holding a copy of examples/ and the files of the archive.
//
// Extra commands:
//
//	exits CODE PROG ARGS...   run PROG and require exit code CODE (stdout and stderr are kept for cmp)
//	validate-results FILE     require FILE to match the results schema
//	cmp-run FILE              compare the last stdout of `rankplan run` with FILE, the audit
//	                          head (which holds the run's time) masked as sha256:<head>
//	cmp-summary GOT WANT      compare a run's summary.md with WANT, the audit head and the
//	                          build (revision, Go release, platform) masked
//
// summaryHead matches the audit head in summary.md, summaryBuild the build in its tool row.
var (
	summaryHead  = regexp.MustCompile("`sha256:[0-9a-f]{64}` at record")
	summaryBuild = regexp.MustCompile(`(?m)^(\| tool \| rankplan \S+) \([^)]*\) \|$`)
)

func TestScripts(t *testing.T) {
	testscript.Run(t, testscript.Params{
		Dir:                 "testdata/script",
		UpdateScripts:       *update,
		RequireExplicitExec: true,
		Setup: func(env *testscript.Env) error {
			return os.CopyFS(filepath.Join(env.WorkDir, "examples"), os.DirFS("../../examples"))
		},
		Cmds: map[string]func(ts *testscript.TestScript, neg bool, args []string){
			"exits": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) < 2 {
					ts.Fatalf("usage: exits CODE PROG ARGS...")
				}
				want, err := strconv.Atoi(args[0])
				ts.Check(err)
				got := 0
				if err := ts.Exec(args[1], args[2:]...); err != nil {
					var ee *exec.ExitError
					if !errors.As(err, &ee) {
						ts.Fatalf("%v", err)
					}
					got = ee.ExitCode()
				}
				if got != want {
					ts.Fatalf("exit code %d, want %d", got, want)
				}
			},
			"cmp-run": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) != 1 {
					ts.Fatalf("usage: cmp-run FILE")
				}
				got, want := maskHead(ts.ReadFile("stdout")), ts.ReadFile(args[0])
				if got != want {
					ts.Fatalf("stdout and %s differ:\n--- stdout (head masked)\n%s\n--- %s\n%s", args[0], got, args[0], want)
				}
			},
			"cmp-summary": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) != 2 {
					ts.Fatalf("usage: cmp-summary GOT WANT")
				}
				got := summaryHead.ReplaceAllString(ts.ReadFile(args[0]), "`sha256:<head>` at record")
				got = summaryBuild.ReplaceAllString(got, "$1 (<build>) |")
				if want := ts.ReadFile(args[1]); got != want {
					ts.Fatalf("%s and %s differ:\n--- %s (head masked)\n%s\n--- %s\n%s", args[0], args[1], args[0], got, args[1], want)
				}
			},
			"validate-results": func(ts *testscript.TestScript, neg bool, args []string) {
				if len(args) != 1 {
					ts.Fatalf("usage: validate-results FILE")
				}
				err := runner.ValidateResults([]byte(ts.ReadFile(args[0])))
				if neg != (err != nil) {
					ts.Fatalf("validate-results %s: %v", args[0], err)
				}
			},
		},
	})
}

var headLine = regexp.MustCompile(`(?m)^(audit head: )sha256:[0-9a-f]{64}`)

// maskHead replaces the audit head in run output, which depends on the time of the run.
func maskHead(s string) string { return headLine.ReplaceAllString(s, "${1}sha256:<head>") }
