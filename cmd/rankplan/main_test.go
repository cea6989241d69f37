package main

import (
	"bufio"
	"errors"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/rogpeppe/go-internal/testscript"

	"rankplan/internal/audittest"
	"rankplan/runner"
	"rankplan/runner/selftest"
)

var update = flag.Bool("update", false, "rewrite the expected output in testdata/script/*.txtar")

func TestMain(m *testing.M) {
	testscript.Main(withBinaryDir{m}, map[string]func(){
		"rankplan": func() { os.Exit(Main(os.Args[1:], os.Stdout, os.Stderr)) },
		// rankplan with one wrong case added to the selftest's built-in cases, to see the
		// failure path without touching the real cases.
		"rankplan-with-wrong-case": func() {
			selftestAdded = []selftest.Case{wrongSelftestCase()}
			os.Exit(Main(os.Args[1:], os.Stdout, os.Stderr))
		},
	})
}

// withBinaryDir runs the tests of this process with a temporary folder for the rankplan
// binary that rankplanBinary builds, and removes the folder afterwards. The processes
// that testscript starts as commands never come here.
type withBinaryDir struct{ m *testing.M }

func (w withBinaryDir) Run() int {
	dir, err := os.MkdirTemp("", "rankplan-test-bin-")
	if err != nil {
		fmt.Fprintf(os.Stderr, "folder for the test binary: %v\n", err)
		return 1
	}
	defer os.RemoveAll(dir)
	binary.dir = dir
	return w.m.Run()
}

// binary is the rankplan executable shared by the tests that run it as a real process
// (crash, signals, terminal): built once per test process, on first use.
var binary struct {
	dir  string
	once sync.Once
	path string
	err  error
}

// rankplanBinary returns the path of rankplan built from this package, building it on
// the first call. It is built with GOAMD64=v1 so that TestSignals can check that the
// run.started record names the level the binary was built for, not the one in the
// environment of the run (GOAMD64 has no effect on other architectures).
func rankplanBinary(t *testing.T) string {
	t.Helper()
	binary.once.Do(func() {
		if binary.dir == "" {
			binary.err = errors.New("no folder for the binary (TestMain did not run)")
			return
		}
		path := filepath.Join(binary.dir, "rankplan")
		build := exec.Command("go", "build", "-o", path, ".")
		build.Env = append(os.Environ(), "GOAMD64=v1")
		if out, err := build.CombinedOutput(); err != nil {
			binary.err = fmt.Errorf("go build: %v\n%s", err, out)
			return
		}
		binary.path = path
	})
	if binary.err != nil {
		t.Fatal(binary.err)
	}
	return binary.path
}

// exhaustive reports whether the long variants of the tests run (RANKPLAN_EXHAUSTIVE=1,
// as .ci/run sets it); scripts ask with the condition [exhaustive].
func exhaustive() bool { return os.Getenv("RANKPLAN_EXHAUSTIVE") == "1" }

// wrongSelftestCase is H* of the Dobson (1983) plant weights (7.988229, scipy 1.10.1 stats.kruskal on Dobson's
// 1983 data) with a deliberately wrong expected value.
func wrongSelftestCase() selftest.Case {
	return selftest.Case{
		ID: "injected-wrong-h", Checks: "H* of the Dobson (1983) plant weights against a deliberately wrong value",
		Compute: "kw.h", Input: selftest.Input{Dataset: "dobson1983-plant-weights"}, Expected: selftest.NumberValue(7.9),
		Tolerance: selftest.Tolerance{Abs: 5e-7, Why: "half a unit in the 6th decimal"},
		Source:    selftest.Source{Reference: "a wrong value, for the tests of the failure path", Origin: "cmd/rankplan/main_test.go"},
	}
}

// TestScripts runs the command-line scenarios in testdata/script. Each script runs in a
// fresh folder holding a copy of examples/ and the files of the archive.
//
// Extra commands:
//
//	exits CODE PROG ARGS...   run PROG and require exit code CODE (stdout and stderr are kept for cmp)
//	validate-results FILE     require FILE to match the results schema
//	mask SRC DST              copy SRC (a file, or stdout) to DST with what changes from run
//	                          to run or build to build masked: the audit head (it holds the
//	                          run's time) as sha256:<head>, the build (revision, Go
//	                          release, platform) in summary.md's tool row and in the
//	                          selftest header (with the executable's hash) as <build>, and
//	                          the selftest header's time and user as <time> and <user>; then
//	                          the builtin cmp compares DST, and -update rewrites the archive
//	absent PATTERN...         require that no file matches any of the glob patterns (e.g.
//	                          out*: a refused run leaves neither out nor out.incomplete-*)
//	gen FILE COUNT TEXT       append TEXT to FILE COUNT times (creating it), with Go escapes
//	                          such as \n read in TEXT and {i} replaced by the repetition
//	                          number from 1: large or repetitive input without large archives
//	headenv DIR NAME          set $NAME to the head in DIR/audit.head and $NAME_HEX to its
//	                          64 hex digits without the sha256: prefix
//	cutlog DIR N              keep only the first N records of DIR's audit log, as a run
//	                          stopped after its N-th record leaves it
//	forge DIR FILE OLD NEW    replace OLD with NEW in DIR/FILE, write the file's new SHA-256
//	                          into its output.written record and re-chain DIR's log and
//	                          audit.head, as a forger with write access to DIR would
func TestScripts(t *testing.T) {
	testscript.Run(t, testscript.Params{
		Dir:                 "testdata/script",
		UpdateScripts:       *update,
		RequireExplicitExec: true,
		Condition: func(cond string) (bool, error) {
			if cond == "exhaustive" {
				return exhaustive(), nil
			}
			return false, fmt.Errorf("unknown condition %q", cond)
		},
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
			"mask": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) != 2 {
					ts.Fatalf("usage: mask SRC DST")
				}
				ts.Check(os.WriteFile(ts.MkAbs(args[1]), []byte(mask(ts.ReadFile(args[0]))), 0o644))
			},
			"absent": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) == 0 {
					ts.Fatalf("usage: absent PATTERN...")
				}
				for _, pat := range args {
					m, err := filepath.Glob(ts.MkAbs(pat))
					ts.Check(err)
					if len(m) > 0 {
						ts.Fatalf("%s matches %v", pat, m)
					}
				}
			},
			"headenv": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) != 2 {
					ts.Fatalf("usage: headenv DIR NAME")
				}
				head := strings.TrimSpace(ts.ReadFile(filepath.Join(args[0], runner.HeadFile)))
				ts.Setenv(args[1], head)
				ts.Setenv(args[1]+"_HEX", strings.TrimPrefix(head, "sha256:"))
			},
			"cutlog": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) != 2 {
					ts.Fatalf("usage: cutlog DIR N")
				}
				n, err := strconv.Atoi(args[1])
				ts.Check(err)
				path := filepath.Join(ts.MkAbs(args[0]), runner.AuditFile)
				lines := strings.SplitAfter(ts.ReadFile(path), "\n")
				if n < 0 || n >= len(lines) {
					ts.Fatalf("cutlog: the log has %d records", len(lines)-1)
				}
				ts.Check(os.WriteFile(path, []byte(strings.Join(lines[:n], "")), 0o644))
			},
			"forge": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) != 4 {
					ts.Fatalf("usage: forge DIR FILE OLD NEW")
				}
				dir := ts.MkAbs(args[0])
				ts.Check(audittest.ForgeFile(filepath.Join(dir, runner.AuditFile), filepath.Join(dir, runner.HeadFile),
					filepath.Join(dir, args[1]), args[1], args[2], args[3]))
			},
			"gen": func(ts *testscript.TestScript, neg bool, args []string) {
				if neg || len(args) != 3 {
					ts.Fatalf("usage: gen FILE COUNT TEXT")
				}
				n, err := strconv.Atoi(args[1])
				ts.Check(err)
				text, err := strconv.Unquote(`"` + strings.ReplaceAll(args[2], `"`, `\"`) + `"`)
				ts.Check(err)
				f, err := os.OpenFile(ts.MkAbs(args[0]), os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o644)
				ts.Check(err)
				w := bufio.NewWriter(f)
				numbered := strings.Contains(text, "{i}")
				for i := 1; i <= n; i++ {
					if numbered {
						w.WriteString(strings.ReplaceAll(text, "{i}", strconv.Itoa(i)))
					} else {
						w.WriteString(text)
					}
				}
				ts.Check(w.Flush())
				ts.Check(f.Close())
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

var (
	headLine     = regexp.MustCompile(`(?m)^(audit head: )sha256:[0-9a-f]{64}`)
	summaryHead  = regexp.MustCompile("`sha256:[0-9a-f]{64}` at record")
	summaryBuild = regexp.MustCompile(`(?m)^(\| tool \| rankplan \S+) \([^)]*\) \|$`)
	// The header of `rankplan selftest`: two-space indented labels, then the value.
	selftestBuild = regexp.MustCompile(`(?m)^(  (?:revision|executable|go) +)\S.*$`)
	selftestTime  = regexp.MustCompile(`(?m)^(  time +)\S+$`)
	selftestUser  = regexp.MustCompile(`(?m)^(  user +)\S.*$`)
)

// mask replaces in run output, summary.md and the selftest report what depends on the time
// of the run (the audit head; the selftest's time), on the build (the tool row's revision,
// Go release and platform; the selftest's revision, executable and Go release) or on the
// machine (the selftest's user and host).
func mask(s string) string {
	s = headLine.ReplaceAllString(s, "${1}sha256:<head>")
	s = summaryHead.ReplaceAllString(s, "`sha256:<head>` at record")
	s = selftestBuild.ReplaceAllString(s, "${1}<build>")
	s = selftestTime.ReplaceAllString(s, "${1}<time>")
	s = selftestUser.ReplaceAllString(s, "${1}<user>")
	return summaryBuild.ReplaceAllString(s, "$1 (<build>) |")
}
