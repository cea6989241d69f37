package main

import (
	"bytes"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"
	"unicode/utf8"

	"github.com/creack/pty"

	"rankplan/runner"
)

func TestColorAllowed(t *testing.T) {
	for _, tc := range []struct {
		noColor, term string
		want          bool
	}{
		{"", "xterm-256color", true},
		{"", "", true},
		{"1", "xterm", false},
		{"0", "xterm", false}, // any non-empty value disables colour (no-color.org)
		{"", "dumb", false},
	} {
		env := map[string]string{"NO_COLOR": tc.noColor, "TERM": tc.term}
		if got := colorAllowed(func(k string) string { return env[k] }); got != tc.want {
			t.Errorf("NO_COLOR=%q TERM=%q: colour %v, want %v", tc.noColor, tc.term, got, tc.want)
		}
	}
}

// TestNewUINotTerminal: buffers and files are not terminals, so there is neither colour
// nor a progress bar whatever the environment.
func TestNewUINotTerminal(t *testing.T) {
	f, err := os.Create(filepath.Join(t.TempDir(), "out"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	env := func(string) string { return "" }
	for _, w := range []io.Writer{&bytes.Buffer{}, f} {
		u := newUI(w, w, env)
		if u.stdoutColor || u.stderrTerminal || u.style().Color || u.progressBar(false, false) != nil {
			t.Errorf("%T: %+v, want no terminal", w, u)
		}
	}
}

// fakeClock is a clock for the progress bar that moves only when told.
type fakeClock struct {
	mu sync.Mutex
	t  time.Time
}

func (c *fakeClock) now() time.Time { c.mu.Lock(); defer c.mu.Unlock(); return c.t }
func (c *fakeClock) add(d time.Duration) {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.t = c.t.Add(d)
}

// redraws counts the lines drawn: each begins with a carriage return and is not blank.
func redraws(s string) []string {
	var out []string
	for _, l := range strings.Split(s, "\r") {
		if strings.TrimSpace(l) != "" {
			out = append(out, l)
		}
	}
	return out
}

func TestProgressBar(t *testing.T) {
	for _, tc := range []struct {
		name  string
		steps func(p *progressBar, c *fakeClock)
		lines []string // substrings of each drawn line, in order
	}{
		{"throttled to ten a second", func(p *progressBar, c *fakeClock) {
			for i := int64(1); i <= 20; i++ { // 20 updates in 190 ms: drawn at 0, 100 ms
				p.update("primary", runner.TaskPermutation, i*4096, 100000)
				c.add(10 * time.Millisecond)
			}
		}, []string{"] 4096/100000 -/s - left", "] 45056/100000 451k/s 0s left"}}, // the bar and the task start together,
		{"rate and time left", func(p *progressBar, c *fakeClock) {
			p.update("a", runner.TaskBootstrap, 0, 2000)
			c.add(2 * time.Second)
			p.update("a", runner.TaskBootstrap, 1000, 2000) // 500/s, 2 s left
		}, []string{"-/s - left", "1000/2000 500/s 2s left"}},
		{"a task starts when the one before it last reported", func(p *progressBar, c *fakeClock) {
			p.update("a", runner.TaskExact, 100, 1000)
			c.add(time.Second)
			p.update("a", runner.TaskPermutation, 4096, 8192) // 4096 in 1 s
		}, []string{"a: exact", "4096/8192 4.1k/s 1s left"}},
		{"exact work is a budget", func(p *progressBar, c *fakeClock) {
			p.update("x", runner.TaskExact, 0, 10_000_000)
			c.add(time.Second)
			p.update("x", runner.TaskExact, 2_500_000, 10_000_000)
		}, []string{"x: exact p-value, work", "2500000/10M 2.5M/s at most 3s left"}},
		{"a new task starts a new line", func(p *progressBar, c *fakeClock) {
			p.update("a", runner.TaskPermutation, 4096, 8192)
			p.update("a", runner.TaskBootstrap, 256, 512) // no throttle across tasks
		}, []string{"a: permutation resamples", "a: bootstrap resamples"}},
		{"out-of-order calls keep the largest done", func(p *progressBar, c *fakeClock) {
			p.update("a", runner.TaskPermutation, 8192, 12288)
			c.add(time.Second)
			p.update("a", runner.TaskPermutation, 4096, 12288)
		}, []string{"8192/12288", "8192/12288"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var b bytes.Buffer
			c := &fakeClock{t: time.Unix(1e9, 0)}
			p := newProgressBar(&b, func() int { return 100 }, c.now)
			tc.steps(p, c)
			p.finish()
			lines := redraws(b.String())
			if len(lines) != len(tc.lines) {
				t.Fatalf("%d lines drawn, want %d: %q", len(lines), len(tc.lines), lines)
			}
			for i, l := range lines {
				if !strings.Contains(l, tc.lines[i]) {
					t.Errorf("line %d = %q, want it to contain %q", i, l, tc.lines[i])
				}
				if n := utf8.RuneCountInString(l); n > 99 {
					t.Errorf("line %d has %d runes, more than the width 100 - 1", i, n)
				}
			}
			// finish leaves the line blank: the output ends with spaces over the last line.
			if s := b.String(); !strings.HasSuffix(s, "\r") || strings.TrimSpace(s[strings.LastIndex(s[:len(s)-1], "\r"):]) != "" {
				t.Errorf("output does not end by clearing the line: %q", s)
			}
		})
	}
}

// TestProgressBarConcurrent calls the bar from several goroutines, as the resampling
// workers do (run with -race), and checks that lines are whole.
func TestProgressBarConcurrent(t *testing.T) {
	var b bytes.Buffer
	p := newProgressBar(&b, func() int { return 60 }, time.Now)
	var wg sync.WaitGroup
	for w := range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range 200 {
				p.update("a", runner.TaskPermutation, int64(w*200+i), 800)
			}
		}()
	}
	wg.Wait()
	p.finish()
	for _, l := range redraws(b.String()) {
		if !strings.HasPrefix(l, "a: permutation resamples") || !strings.Contains(l, "/800 ") || utf8.RuneCountInString(l) > 59 {
			t.Errorf("bad line %q", l)
		}
	}
}

func TestProgressLineNarrow(t *testing.T) {
	for _, width := range []int{1, 10, 30, 45, 200} {
		l := progressLine("primary: permutation resamples", false, 4096, 100000, time.Second, width)
		if n := utf8.RuneCountInString(l); n > width {
			t.Errorf("width %d: %q has %d runes", width, l, n)
		}
		if width >= 30 && !strings.Contains(l, "/s") {
			t.Errorf("width %d: %q lacks the rate", width, l)
		}
	}
}

func TestDurationText(t *testing.T) {
	for _, tc := range []struct {
		s    float64
		want string
	}{{0.2, "0s"}, {7.4, "7s"}, {184, "3m04s"}, {7500, "2h05m"}, {1e300, "-"}} {
		if got := durationText(tc.s); got != tc.want {
			t.Errorf("durationText(%v) = %q, want %q", tc.s, got, tc.want)
		}
	}
}

// runWithPTY runs the built rankplan in dir with args, stdout and/or stderr attached to a
// pseudo-terminal of 100 columns, and returns what the terminal and the pipe received.
func runWithPTY(t *testing.T, bin, dir string, env []string, stdoutTTY, stderrTTY bool, args ...string) (tty, pipe string) {
	t.Helper()
	ptmx, pts, err := pty.Open()
	if err != nil {
		t.Skipf("no pseudo-terminal: %v", err)
	}
	defer ptmx.Close()
	if err := pty.Setsize(ptmx, &pty.Winsize{Rows: 24, Cols: 100}); err != nil {
		t.Fatal(err)
	}
	var pipeBuf bytes.Buffer
	cmd := exec.Command(bin, args...)
	cmd.Dir, cmd.Env = dir, env
	cmd.Stdout, cmd.Stderr = &pipeBuf, &pipeBuf
	if stdoutTTY {
		cmd.Stdout = pts
	}
	if stderrTTY {
		cmd.Stderr = pts
	}
	var ttyBuf bytes.Buffer
	done := make(chan struct{})
	go func() { io.Copy(&ttyBuf, ptmx); close(done) }() // ends with EIO when pts closes
	err = cmd.Run()
	pts.Close()
	<-done
	if err != nil {
		t.Fatalf("rankplan %v: %v\n%s%s", args, err, ttyBuf.String(), pipeBuf.String())
	}
	return ttyBuf.String(), pipeBuf.String()
}

// termEnv is the environment without NO_COLOR and TERM, plus extra.
func termEnv(extra ...string) []string {
	var env []string
	for _, kv := range os.Environ() {
		if !strings.HasPrefix(kv, "NO_COLOR=") && !strings.HasPrefix(kv, "TERM=") {
			env = append(env, kv)
		}
	}
	return append(env, extra...)
}

func copyExamples(t *testing.T) string {
	dir := t.TempDir()
	if err := os.CopyFS(filepath.Join(dir, "examples"), os.DirFS("../../examples")); err != nil {
		t.Fatal(err)
	}
	return dir
}

// TestProgressOnTerminal runs the dissolution example (exact attempt, 100000 Monte
// Carlo resamples, 2000 bootstrap resamples) with stderr on a pseudo-terminal: progress
// lines appear there, stdout (a pipe) has none, and results.json is byte-identical to
// that of a run without a terminal.
func TestProgressOnTerminal(t *testing.T) {
	t.Parallel()
	dir, bin := copyExamples(t), rankplanBinary(t)
	tty, stdout := runWithPTY(t, bin, dir, termEnv("TERM=xterm"), false, true, "run", "examples/dissolution/plan.yaml", "--out", "tty")
	for _, want := range []string{"primary: permutation resamples [", "/100000 ", "/s ", " left"} {
		if !strings.Contains(tty, want) {
			t.Errorf("terminal output lacks %q:\n%q", want, tty)
		}
	}
	if !strings.Contains(tty, "\r") {
		t.Errorf("no carriage return on the terminal: %q", tty)
	}
	if strings.ContainsAny(stdout, "\r\x1b") || !strings.Contains(stdout, "audit head: ") {
		t.Errorf("stdout (a pipe) has progress or escapes, or lacks the summary:\n%q", stdout)
	}
	// The same run without any terminal, with other workers.
	_, _ = runWithPTY(t, bin, dir, termEnv("TERM=xterm"), false, false, "run", "examples/dissolution/plan.yaml", "--out", "pipe", "--workers", "1")
	a, errA := os.ReadFile(filepath.Join(dir, "tty", runner.ResultsFile))
	b, errB := os.ReadFile(filepath.Join(dir, "pipe", runner.ResultsFile))
	if errA != nil || errB != nil || !bytes.Equal(a, b) {
		t.Errorf("results.json differs with and without progress (%v, %v)", errA, errB)
	}

	// --json and --quiet draw no progress even on a terminal; --json's stdout is results.json.
	tty, stdout = runWithPTY(t, bin, dir, termEnv("TERM=xterm"), false, true, "run", "examples/dissolution/plan.yaml", "--out", "json", "--json")
	if strings.Contains(tty, "resamples") || strings.Contains(tty, "\r\x1b") {
		t.Errorf("--json: progress on the terminal:\n%q", tty)
	}
	if j, _ := os.ReadFile(filepath.Join(dir, "json", runner.ResultsFile)); stdout != string(j) {
		t.Errorf("--json: stdout is not results.json:\n%s", stdout)
	}
	tty, stdout = runWithPTY(t, bin, dir, termEnv("TERM=xterm"), false, true, "run", "examples/dissolution/plan.yaml", "--out", "quiet", "--quiet")
	if tty != "" || stdout != "" {
		t.Errorf("--quiet printed %q on the terminal and %q on stdout", tty, stdout)
	}
}

var escape = regexp.MustCompile("\x1b\\[[0-9;]*m")

// TestColorOnTerminal: the check preview on a terminal has bold headings, unless
// NO_COLOR is set (to anything) or TERM is dumb; a pipe never gets colour.
func TestColorOnTerminal(t *testing.T) {
	t.Parallel()
	dir, bin := copyExamples(t), rankplanBinary(t)
	args := []string{"check", "examples/dissolution/plan.yaml"}
	for _, tc := range []struct {
		name      string
		env       []string
		stdoutTTY bool
		color     bool
	}{
		{"terminal", termEnv("TERM=xterm"), true, true},
		{"NO_COLOR", termEnv("TERM=xterm", "NO_COLOR=1"), true, false},
		{"dumb", termEnv("TERM=dumb"), true, false},
		{"pipe", termEnv("TERM=xterm"), false, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			tty, pipe := runWithPTY(t, bin, dir, tc.env, tc.stdoutTTY, false, args...)
			out := pipe
			if tc.stdoutTTY {
				out = tty
			}
			if got := strings.Contains(out, "\x1b[1manalysis primary\x1b[0m"); got != tc.color {
				t.Errorf("bold heading %v, want %v:\n%q", got, tc.color, out)
			}
			if !tc.color && escape.MatchString(out) {
				t.Errorf("escape sequences without colour:\n%q", out)
			}
			if !strings.Contains(out, "nothing was computed") {
				t.Errorf("no preview:\n%q", out)
			}
		})
	}
}

// TestProgressBarAfterFinish: once finished, the bar draws nothing more, so that progress
// reported late from the background cannot land after a command's last line.
func TestProgressBarAfterFinish(t *testing.T) {
	var b bytes.Buffer
	p := newProgressBar(&b, func() int { return 80 }, time.Now)
	p.update("a", runner.TaskBootstrap, 256, 1024)
	p.finish()
	n := b.Len()
	p.update("a", runner.TaskBootstrap, 512, 1024)
	p.update("a", runner.TaskPermutation, 4096, 8192)
	if b.Len() != n {
		t.Errorf("drawn after finish: %q", b.String()[n:])
	}
}
