package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/creack/pty"
)

// The inputs of the signal tests: invented data, sized so that each run sits in the
// phase under test for a few hundred milliseconds or more, and plans that reach that
// phase quickly.
var signalPlans = map[string]string{
	// 1,500,000 rows (about 12 MB): reading them takes a few tenths of a second.
	"load": `data: {file: big.csv, group: g, outcome: y}
analyses:
  - {id: a, test: kruskal-wallis, pvalue: {method: asymptotic}, effect_size: {interval: none}}
`,
	// Five groups of five tied values: the exact attempt of method auto takes about a
	// second and exceeds the work budget (then Monte Carlo would run).
	"exact": `data: {file: five.csv, group: g, outcome: y}
analyses:
  - {id: a, test: kruskal-wallis, pvalue: {method: auto, resamples: 1000}, effect_size: {interval: none}}
`,
	// 2,000 observations, 2,000,000 Monte Carlo resamples: tens of seconds.
	"montecarlo": `data: {file: mid.csv, group: g, outcome: y}
analyses:
  - {id: a, test: kruskal-wallis, pvalue: {method: permutation, resamples: 2000000}, effect_size: {interval: none}}
`,
	// The same observations, 1,000,000 bootstrap resamples: tens of seconds.
	"bootstrap": `data: {file: mid.csv, group: g, outcome: y}
analyses:
  - {id: a, test: kruskal-wallis, pvalue: {method: asymptotic}, effect_size: {interval: bootstrap, resamples: 1000000}}
`,
	// 60 groups of 30 with Dunn's comparisons of all 1770 pairs: results.json of about
	// 1.5 MB, and renderings that take a few tenths of a second after it is written.
	"writing": `data: {file: many.csv, group: g, outcome: y}
analyses:
  - {id: a, test: kruskal-wallis, pvalue: {method: asymptotic}, effect_size: {interval: none}, posthoc: {method: dunn, adjust: holm}}
`,
	// 2,000 observations, 30,000 Monte Carlo resamples: a run, and its rerun by verify,
	// of a few tenths of a second.
	"rerun": `data: {file: mid.csv, group: g, outcome: y}
analyses:
  - {id: a, test: kruskal-wallis, pvalue: {method: permutation, resamples: 30000}, effect_size: {interval: none}}
`,
}

// writeSignalInputs writes the data files and plans of signalPlans into dir.
func writeSignalInputs(t *testing.T, dir string) {
	t.Helper()
	files := map[string]func(*bytes.Buffer){
		"big.csv": func(b *bytes.Buffer) {
			for i := range 1_500_000 {
				fmt.Fprintf(b, "%c,%d\n", 'A'+i%4, i*7919%100_003)
			}
		},
		"five.csv": func(b *bytes.Buffer) {
			for i := range 25 {
				fmt.Fprintf(b, "G%d,%d\n", i/5, (i+1)*37%101)
			}
		},
		"mid.csv": func(b *bytes.Buffer) {
			for i := range 2000 {
				fmt.Fprintf(b, "%c,%d\n", 'A'+i%4, i*7919%10_007+i%4*300)
			}
		},
		"many.csv": func(b *bytes.Buffer) {
			for i := range 1800 {
				fmt.Fprintf(b, "G%02d,%d\n", i%60, i*7919%100_003+i%60*500)
			}
		},
	}
	for name, rows := range files {
		var b bytes.Buffer
		b.WriteString("g,y\n")
		rows(&b)
		if err := os.WriteFile(filepath.Join(dir, name), b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for name, body := range signalPlans {
		plan := "rankplan: 1\nid: " + name + "\ntitle: Signal test, " + name + " (invented data)\nalpha: 0.05\nseed: 9\n" + body
		if err := os.WriteFile(filepath.Join(dir, name+".yaml"), []byte(plan), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// stopped is a command started with standard error on a pseudo-terminal (so that the
// progress line is drawn, which tells the phase) and standard output on a pipe.
type stopped struct {
	cmd    *exec.Cmd
	tty    *syncBuffer
	stdout bytes.Buffer
	ptmx   *os.File
	pts    *os.File
	copied chan struct{}
	exited chan struct{}
	err    error // of cmd.Wait, once exited is closed
}

// syncBuffer is a bytes.Buffer safe for one writer and concurrent readers.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// startStopped starts bin with args in dir.
func startStopped(t *testing.T, bin, dir string, args ...string) *stopped {
	t.Helper()
	ptmx, pts, err := pty.Open()
	if err != nil {
		t.Skipf("no pseudo-terminal: %v", err)
	}
	if err := pty.Setsize(ptmx, &pty.Winsize{Rows: 24, Cols: 120}); err != nil {
		t.Fatal(err)
	}
	s := &stopped{cmd: exec.Command(bin, args...), tty: &syncBuffer{}, ptmx: ptmx, pts: pts,
		copied: make(chan struct{}), exited: make(chan struct{})}
	s.cmd.Dir, s.cmd.Env = dir, termEnv("TERM=xterm")
	s.cmd.Stdout, s.cmd.Stderr = &s.stdout, pts
	go func() { io.Copy(s.tty, ptmx); close(s.copied) }() // ends with EIO when pts closes
	if err := s.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() { s.err = s.cmd.Wait(); close(s.exited) }()
	t.Cleanup(func() {
		s.cmd.Process.Kill()
		<-s.exited
		pts.Close()
		<-s.copied
		ptmx.Close()
	})
	return s
}

// waitUntil polls reached every 2 ms until it holds; it fails the test when the command
// ends first or after 20 s.
func (s *stopped) waitUntil(t *testing.T, phase string, reached func() bool) {
	t.Helper()
	deadline := time.Now().Add(20 * time.Second)
	for !reached() {
		select {
		case <-s.exited:
			t.Fatalf("the command ended (%v) before it reached %s:\n%s", s.err, phase, s.tty.String())
		case <-time.After(2 * time.Millisecond):
		}
		if time.Now().After(deadline) {
			t.Fatalf("the command did not reach %s within 20 s:\n%s", phase, s.tty.String())
		}
	}
}

// stop sends sig and requires exit code want within 1 s of the signal and nothing on
// standard output; it returns the exit code.
func (s *stopped) stop(t *testing.T, sig syscall.Signal, want int) int {
	t.Helper()
	start := time.Now()
	if err := s.cmd.Process.Signal(sig); err != nil {
		t.Fatal(err)
	}
	select {
	case <-s.exited:
	case <-time.After(20 * time.Second):
		t.Fatalf("still running 20 s after %v", sig)
	}
	took := time.Since(start)
	s.pts.Close()
	<-s.copied
	code := 0
	var ee *exec.ExitError
	switch {
	case errors.As(s.err, &ee):
		code = ee.ExitCode() // -1 when a signal ended the process
	case s.err != nil:
		t.Fatalf("wait: %v", s.err)
	}
	t.Logf("exit %d, %v after %v", code, took, sig)
	if code != want {
		t.Errorf("exit code %d, want %d", code, want)
	}
	if took >= time.Second {
		t.Errorf("exited %v after %v, want less than 1 s", took, sig)
	}
	if s.stdout.Len() > 0 {
		t.Errorf("standard output: %q, want nothing", s.stdout.String())
	}
	return code
}

// visibleLines is what a terminal shows of out: each line as it stands after the
// carriage returns that redraw and clear the progress line, empty ones left out.
func visibleLines(out string) []string {
	var lines []string
	for _, l := range strings.Split(strings.ReplaceAll(out, "\r\n", "\n"), "\n") {
		if i := strings.LastIndexByte(l, '\r'); i >= 0 {
			l = l[i+1:]
		}
		if l = strings.TrimRight(l, " "); l != "" {
			lines = append(lines, l)
		}
	}
	return lines
}

// hasFD reports whether process pid has a file descriptor open on path.
func hasFD(pid int, path string) bool {
	fds, _ := filepath.Glob(fmt.Sprintf("/proc/%d/fd/*", pid))
	for _, fd := range fds {
		if target, err := os.Readlink(fd); err == nil && target == path {
			return true
		}
	}
	return false
}

// logHas reports whether the audit log of the one folder matching pattern holds text.
func logHas(pattern, text string) bool {
	dirs, _ := filepath.Glob(pattern)
	if len(dirs) != 1 {
		return false
	}
	b, _ := os.ReadFile(filepath.Join(dirs[0], "audit.jsonl"))
	return bytes.Contains(b, []byte(text))
}

// lastRecord returns the event and data of the last record of the audit log in dir.
func lastRecord(t *testing.T, dir string) (event string, data map[string]any) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, "audit.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	var rec struct {
		Event string
		Data  map[string]any
	}
	if err := json.Unmarshal([]byte(lines[len(lines)-1]), &rec); err != nil {
		t.Fatal(err)
	}
	return rec.Event, rec.Data
}

// cpuTime returns the user and system time process pid has used so far.
func cpuTime(pid int) time.Duration {
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/stat", pid))
	if err != nil {
		return 0
	}
	// The fields after the command name in parentheses; utime and stime are the 12th
	// and 13th of them (proc(5)), in clock ticks of 1/100 s on Linux.
	s := string(b)
	fields := strings.Fields(s[strings.LastIndexByte(s, ')')+1:])
	if len(fields) < 13 {
		return 0
	}
	u, _ := strconv.ParseInt(fields[11], 10, 64)
	k, _ := strconv.ParseInt(fields[12], 10, 64)
	return time.Duration(u+k) * 10 * time.Millisecond
}

var signals = []struct {
	sig  syscall.Signal
	name string
	code int
}{{syscall.SIGINT, "SIGINT", 130}, {syscall.SIGTERM, "SIGTERM", 143}}

// TestSignals stops `rankplan run` with SIGINT and with SIGTERM in each phase: while it
// reads a large data file, during the exact p-value's attempt, during Monte Carlo
// resampling, during the bootstrap, and while it writes the folder; then `check` while it
// reads a large data file, `verify` during its rerun and `selftest` while it computes its
// cases. Each phase is seen before the signal is sent: the data file open in /proc, the
// task's progress line on the terminal, the first output.written record in the log, or
// (selftest, which shows no progress) a tenth of a second of processor time used, a
// fraction of what its cases take. It requires exit code 130 or 143 within 1 s of the
// signal, one line on standard error and nothing on standard output. A run stopped before
// it created its folder leaves nothing; a later one leaves only DIR.incomplete-XXXX, whose
// log ends with run.failed naming the signal and which `rankplan verify` reports as
// incomplete (exit 5).
//
// The binary is built for GOAMD64=v1, and the run that verify reruns is made with
// GOAMD64=v3 in its environment: its run.started record must say v1, the level the code
// was compiled for (a v1 binary once recorded v3 because the variable was set).
func TestSignals(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary")
	}
	dir, bin := t.TempDir(), rankplanBinary(t)
	writeSignalInputs(t, dir)
	big := filepath.Join(dir, "big.csv")
	done := filepath.Join(dir, "done")
	finished := exec.Command(bin, "run", "rerun.yaml", "--out", done, "-q")
	finished.Dir, finished.Env = dir, append(os.Environ(), "GOAMD64=v3")
	if out, err := finished.CombinedOutput(); err != nil {
		t.Fatalf("run: %v\n%s", err, out)
	}

	t.Run("goamd64", func(t *testing.T) {
		if runtime.GOARCH != "amd64" {
			t.Skip("GOAMD64 applies to amd64 builds")
		}
		log, err := os.ReadFile(filepath.Join(done, "audit.jsonl"))
		if err != nil {
			t.Fatal(err)
		}
		var first struct {
			Event string
			Data  struct{ Tool map[string]any }
		}
		if err := json.Unmarshal([]byte(strings.SplitN(string(log), "\n", 2)[0]), &first); err != nil {
			t.Fatal(err)
		}
		if first.Event != "run.started" || first.Data.Tool["goamd64"] != "v1" {
			t.Errorf("%s records goamd64 %v, want v1 (the build's level, not the environment's v3)", first.Event, first.Data.Tool["goamd64"])
		}
	})

	phases := []struct {
		phase   string
		reached func(s *stopped, out string) bool
		folder  bool // the run has created its folder by then
	}{
		{"load", func(s *stopped, out string) bool { return hasFD(s.cmd.Process.Pid, big) }, false},
		{"exact", func(s *stopped, out string) bool { return strings.Contains(s.tty.String(), "a: exact p-value, work") }, false},
		{"montecarlo", func(s *stopped, out string) bool { return strings.Contains(s.tty.String(), "a: permutation resamples") }, true},
		{"bootstrap", func(s *stopped, out string) bool { return strings.Contains(s.tty.String(), "a: bootstrap resamples") }, true},
		{"writing", func(s *stopped, out string) bool {
			return logHas(out+".incomplete-*", `"file":"results.json"`)
		}, true},
	}
	for _, tc := range phases {
		for _, sg := range signals {
			t.Run("run/"+tc.phase+"/"+sg.name, func(t *testing.T) {
				out := filepath.Join(dir, "out-"+tc.phase+"-"+sg.name)
				s := startStopped(t, bin, dir, "run", tc.phase+".yaml", "--out", out)
				s.waitUntil(t, tc.phase, func() bool { return tc.reached(s, out) })
				code := s.stop(t, sg.sig, sg.code)
				if _, err := os.Stat(out); err == nil {
					t.Fatalf("%s exists: a stopped run must not leave its folder", out)
				}
				tmps, _ := filepath.Glob(out + ".incomplete-*")
				want := regexp.QuoteMeta("rankplan: run stopped by "+sg.name) + " before its folder was created; nothing was written$"
				if tc.folder {
					if len(tmps) != 1 {
						t.Fatalf("%d folders %s.incomplete-*, want 1", len(tmps), out)
					}
					want = regexp.QuoteMeta("rankplan: run stopped by "+sg.name+"; the unfinished folder is "+tmps[0]) + ` \(.*\)$`
				} else if len(tmps) > 0 {
					t.Errorf("the run left %v though it was stopped before it created its folder", tmps)
				}
				if lines := visibleLines(s.tty.String()); len(lines) != 1 || !regexp.MustCompile(want).MatchString(lines[0]) {
					t.Errorf("standard error shows %q, want one line matching %q", lines, want)
				}
				if !tc.folder || code != sg.code {
					return
				}
				event, data := lastRecord(t, tmps[0])
				if event != "run.failed" || data["signal"] != sg.name || !strings.Contains(fmt.Sprint(data["error"]), "context canceled") {
					t.Errorf("the last record is %s %v, want run.failed with signal %s and the error", event, data, sg.name)
				}
				if tc.phase == "writing" && !logHas(tmps[0], `"event":"output.written"`) {
					t.Errorf("the log has no output.written record: the signal did not come while the folder was written")
				}
				if code := verifyExitCode(t, bin, tmps[0]); code != exitIncomplete {
					t.Errorf("verify %s exits %d, want %d (incomplete)", tmps[0], code, exitIncomplete)
				}
			})
		}
	}

	commands := []struct {
		args    []string
		sig     int // index in signals
		reached func(s *stopped) bool
	}{
		{[]string{"check", "load.yaml"}, 0, func(s *stopped) bool { return hasFD(s.cmd.Process.Pid, big) }},
		{[]string{"verify", done}, 1, func(s *stopped) bool { return strings.Contains(s.tty.String(), "a: permutation resamples") }},
		{[]string{"selftest"}, 0, func(s *stopped) bool { return cpuTime(s.cmd.Process.Pid) >= 100*time.Millisecond }},
	}
	for _, tc := range commands {
		sg := signals[tc.sig]
		t.Run(tc.args[0]+"/"+sg.name, func(t *testing.T) {
			s := startStopped(t, bin, dir, tc.args...)
			s.waitUntil(t, "its work", func() bool { return tc.reached(s) })
			s.stop(t, sg.sig, sg.code)
			want := "rankplan: " + tc.args[0] + " stopped by " + sg.name
			if lines := visibleLines(s.tty.String()); len(lines) != 1 || lines[0] != want {
				t.Errorf("standard error shows %q, want the one line %q", lines, want)
			}
		})
	}
}
