package browser

import (
	"context"
	"os"
	"path/filepath"
	"strconv"
	"sync"
	"testing"

	"github.com/chromedp/chromedp"

	"rankplan/runner"
)

// newBrowser starts one headless Chromium (exe) for a test's tabs, with the network
// disabled: every host name fails to resolve and every proxied request goes to a closed
// port. The browser is closed when the test and all its parallel subtests have finished
// (t.Cleanup, not defer).
func newBrowser(t *testing.T, exe string) context.Context {
	t.Helper()
	return startBrowser(t, exe, chromedp.WindowSize(1100, 1400))
}

// startBrowser is [newBrowser] with the allocator options extra, and the browser's
// default window size unless extra sets one.
func startBrowser(t *testing.T, exe string, extra ...chromedp.ExecAllocatorOption) context.Context {
	t.Helper()
	opts := append(chromedp.DefaultExecAllocatorOptions[:], chromedp.ExecPath(exe),
		chromedp.NoSandbox, chromedp.Flag("disable-gpu", true),
		chromedp.Flag("host-resolver-rules", "MAP * ~NOTFOUND"), chromedp.ProxyServer("127.0.0.1:9"))
	opts = append(opts, extra...)
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	t.Cleanup(cancelAlloc)
	bctx, cancelBrowser := chromedp.NewContext(actx)
	t.Cleanup(cancelBrowser)
	if err := chromedp.Do(bctx); err != nil {
		t.Fatalf("start %s: %v", exe, err)
	}
	return bctx
}

// exampleRuns holds the run folder of each example, made once for every test of the
// package that opens it (a run of the largest example takes seconds).
var exampleRuns struct {
	sync.Mutex
	base string
	m    map[string]*exampleRun
}

type exampleRun struct {
	once sync.Once
	dir  string
	rec  *runner.RunRecord
	err  error
}

// TestMain removes the shared example runs when every test has finished.
func TestMain(m *testing.M) {
	code := m.Run()
	if exampleRuns.base != "" {
		os.RemoveAll(exampleRuns.base)
	}
	os.Exit(code)
}

// runExample runs the plan once per test binary, into a folder shared by the tests that
// ask for it (they only read it), and returns the folder and the run's record.
func runExample(t *testing.T, plan string) (string, *runner.RunRecord) {
	t.Helper()
	exampleRuns.Lock()
	if exampleRuns.m == nil {
		base, err := os.MkdirTemp("", "rankplan-browser-")
		if err != nil {
			exampleRuns.Unlock()
			t.Fatal(err)
		}
		exampleRuns.base, exampleRuns.m = base, map[string]*exampleRun{}
	}
	r, ok := exampleRuns.m[plan]
	if !ok {
		r = &exampleRun{dir: filepath.Join(exampleRuns.base, strconv.Itoa(len(exampleRuns.m)), "run")}
		exampleRuns.m[plan] = r
	}
	exampleRuns.Unlock()
	r.once.Do(func() {
		r.rec, r.err = runner.Run(context.Background(), plan, runner.RunOptions{Out: r.dir, Workers: 2})
	})
	if r.err != nil {
		t.Fatalf("run %s: %v", plan, r.err)
	}
	return r.dir, r.rec
}

// longMode skips a test unless the long variants run (RANKPLAN_EXHAUSTIVE=1, as .ci/run
// sets it): printing every example to PDF takes seconds of the browser's time.
func longMode(t *testing.T) {
	t.Helper()
	if os.Getenv("RANKPLAN_EXHAUSTIVE") != "1" {
		t.Skip("printed page counts are checked with RANKPLAN_EXHAUSTIVE=1 (CI sets it)")
	}
}
