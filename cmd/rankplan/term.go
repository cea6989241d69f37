package main

import (
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"sync"
	"time"
	"unicode/utf8"

	"golang.org/x/term"

	"rankplan/runner"
	"rankplan/runner/report"
)

// ui is what the commands know about where their output goes: whether standard output
// and standard error are terminals, and whether colour is allowed.
type ui struct {
	stdout, stderr io.Writer
	stdoutColor    bool // stdout is a terminal and colour is allowed: colour the summary
	stderrTerminal bool // stderr is a terminal: progress bars may be drawn
	stderrWidth    func() int
}

// newUI looks at stdout and stderr (a terminal is an *os.File on which
// term.IsTerminal holds) and at the environment through getenv.
func newUI(stdout, stderr io.Writer, getenv func(string) string) *ui {
	u := &ui{stdout: stdout, stderr: stderr, stderrWidth: func() int { return defaultWidth }}
	color := colorAllowed(getenv)
	if _, ok := terminalFd(stdout); ok {
		u.stdoutColor = color
	}
	if fd, ok := terminalFd(stderr); ok {
		u.stderrTerminal = true
		u.stderrWidth = func() int {
			if w, _, err := term.GetSize(fd); err == nil && w > 0 {
				return w
			}
			return defaultWidth
		}
	}
	return u
}

// defaultWidth is the terminal width assumed when the terminal does not tell.
const defaultWidth = 80

// terminalFd returns the file descriptor of w when w is a terminal. A [countingWriter]
// is looked through: the standard output that Main counts is still the terminal.
func terminalFd(w io.Writer) (int, bool) {
	if cw, ok := w.(*countingWriter); ok {
		w = cw.w
	}
	f, ok := w.(*os.File)
	if !ok {
		return 0, false
	}
	fd := int(f.Fd())
	return fd, term.IsTerminal(fd)
}

// colorAllowed applies the conventions on colour: any non-empty NO_COLOR disables it
// (https://no-color.org), and so does TERM=dumb (a terminal without escape sequences).
func colorAllowed(getenv func(string) string) bool {
	return getenv("NO_COLOR") == "" && getenv("TERM") != "dumb"
}

// style is the report style for text on standard output.
func (u *ui) style() report.Style { return report.Style{Color: u.stdoutColor} }

// progressBar returns the progress renderer for a command, or nil when no bar may be
// drawn: stderr is not a terminal, or the command was given --quiet or --json.
func (u *ui) progressBar(quiet, jsonOut bool) *progressBar {
	if !u.stderrTerminal || quiet || jsonOut {
		return nil
	}
	return newProgressBar(u.stderr, u.stderrWidth, time.Now)
}

// progressInterval is the least time between two redraws (at most ten a second).
const progressInterval = 100 * time.Millisecond

// progressBar draws one line on a terminal for the task in progress: its label, a bar,
// done/total, the rate and the time left, redrawn in place with a carriage return and
// cleared (overwritten with spaces) when the task changes or the command ends. Its
// update method may be called from several goroutines at once.
type progressBar struct {
	w     io.Writer
	width func() int
	now   func() time.Time

	mu          sync.Mutex
	key         string // analysis and task of the current line
	label       string
	exact       bool // total is a work budget, not a count to reach
	start, last time.Time
	prev        time.Time // the last call of any task, or the bar's creation: a new task started then
	done, total int64
	shown       int  // runes on the screen (0: nothing to clear)
	finished    bool // finish was called: nothing more is drawn
}

func newProgressBar(w io.Writer, width func() int, now func() time.Time) *progressBar {
	return &progressBar{w: w, width: width, now: now, prev: now()}
}

// update is a runner progress hook (see runner.Options.Progress).
func (p *progressBar) update(analysis, task string, done, total int64) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.finished {
		return
	}
	t := p.now()
	if key := analysis + "\x00" + task; key != p.key {
		p.clearLocked()
		p.key, p.label, p.exact = key, progressLabel(analysis, task), task == runner.TaskExact
		p.start, p.last, p.done = p.prev, time.Time{}, 0
	}
	p.prev = t
	p.done, p.total = max(p.done, done), total
	if !p.last.IsZero() && t.Sub(p.last) < progressInterval {
		return
	}
	p.last = t
	p.drawLocked(t)
}

// finish clears the line, and the bar draws nothing after it: a step given up when a
// signal stopped the command may still report progress from the background (see
// runner's await) while the command prints its last line. It is safe on nil.
func (p *progressBar) finish() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.clearLocked()
	p.key = ""
	p.finished = true
}

func (p *progressBar) clearLocked() {
	if p.shown > 0 {
		fmt.Fprintf(p.w, "\r%s\r", strings.Repeat(" ", p.shown))
		p.shown = 0
	}
}

func (p *progressBar) drawLocked(t time.Time) {
	line := progressLine(p.label, p.exact, p.done, p.total, t.Sub(p.start), p.width()-1)
	n := utf8.RuneCountInString(line)
	pad := ""
	if p.shown > n {
		pad = strings.Repeat(" ", p.shown-n)
	}
	fmt.Fprintf(p.w, "\r%s%s", line, pad)
	p.shown = max(n, p.shown)
}

// progressLabel names a task for people.
func progressLabel(analysis, task string) string {
	switch task {
	case runner.TaskExact:
		return analysis + ": exact p-value, work"
	case runner.TaskPermutation:
		return analysis + ": permutation resamples"
	case runner.TaskBootstrap:
		return analysis + ": bootstrap resamples"
	}
	return analysis + ": " + task
}

// progressLine lays out one progress line of at most width runes:
//
//	LABEL [#####.....] DONE/TOTAL RATE/s ETA left
//
// with ETA = (total − done) / rate and rate = done / elapsed. For the exact method total
// is a budget that the work need not reach, so the time is "at most ETA left". The bar
// shrinks first, then the label is cut, when the terminal is narrow.
func progressLine(label string, exact bool, done, total int64, elapsed time.Duration, width int) string {
	counts := countText(done) + "/" + countText(total)
	rate, left := "-/s", "-"
	if s := elapsed.Seconds(); s > 0 && done > 0 {
		r := float64(done) / s
		rate = rateText(r) + "/s"
		left = durationText(float64(total-done) / r)
	}
	tail := fmt.Sprintf(" %s %s %s left", counts, rate, left)
	if exact {
		tail = fmt.Sprintf(" %s %s at most %s left", counts, rate, left)
	}
	if width < 1 {
		width = 1
	}
	room := width - utf8.RuneCountInString(label) - utf8.RuneCountInString(tail) - 3 // " [" and "]"
	if room >= 10 {
		cells := min(room, 40)
		fill := 0
		if total > 0 {
			fill = int(float64(cells) * float64(min(done, total)) / float64(total))
		}
		return label + " [" + strings.Repeat("#", fill) + strings.Repeat(".", cells-fill) + "]" + tail
	}
	line := label + ":" + tail
	if r := []rune(line); len(r) > width {
		line = string(r[len(r)-width:])
	}
	return line
}

// countText writes a count exactly below ten million, else with an SI prefix.
func countText(n int64) string {
	if n < 10_000_000 {
		return strconv.FormatInt(n, 10)
	}
	return rateText(float64(n))
}

// rateText writes x with three significant digits and an SI prefix (k, M, G).
func rateText(x float64) string {
	for _, u := range []struct {
		scale  float64
		suffix string
	}{{1e9, "G"}, {1e6, "M"}, {1e3, "k"}} {
		if x >= u.scale {
			return strconv.FormatFloat(x/u.scale, 'g', 3, 64) + u.suffix
		}
	}
	return strconv.FormatFloat(x, 'g', 3, 64)
}

// durationText writes seconds as 7s, 3m04s or 2h05m.
func durationText(s float64) string {
	switch {
	case !(s < 1e7): // also NaN and +Inf
		return "-"
	case s < 60:
		return strconv.Itoa(int(s+0.5)) + "s"
	case s < 3600:
		m := int(s) / 60
		return fmt.Sprintf("%dm%02ds", m, int(s)-60*m)
	}
	h := int(s) / 3600
	return fmt.Sprintf("%dh%02dm", h, (int(s)-3600*h)/60)
}
