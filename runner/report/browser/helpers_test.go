package browser

import (
	"context"
	"testing"

	"github.com/chromedp/chromedp"
)

// newBrowser starts one headless Chromium (exe) for a test's tabs, with the network
// disabled: every host name fails to resolve and every proxied request goes to a closed
// port. The browser is closed when the test and all its parallel subtests have finished
// (t.Cleanup, not defer).
func newBrowser(t *testing.T, exe string) context.Context {
	t.Helper()
	opts := append(chromedp.DefaultExecAllocatorOptions[:], chromedp.ExecPath(exe),
		chromedp.NoSandbox, chromedp.Flag("disable-gpu", true), chromedp.WindowSize(1100, 1400),
		chromedp.Flag("host-resolver-rules", "MAP * ~NOTFOUND"), chromedp.ProxyServer("127.0.0.1:9"))
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	t.Cleanup(cancelAlloc)
	bctx, cancelBrowser := chromedp.NewContext(actx)
	t.Cleanup(cancelBrowser)
	if err := chromedp.Do(bctx); err != nil {
		t.Fatalf("start %s: %v", exe, err)
	}
	return bctx
}
