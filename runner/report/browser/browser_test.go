// Package browser holds the browser test of report.html: headless Chromium (Debian package
// chromium) opens each example's report from a file URL with the network disabled.
package browser

import (
	"context"
	"encoding/json"
	"flag"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/chromedp"

	"rankplan/runner"
	"rankplan/runner/results"
)

var updateShots = flag.Bool("update-screenshots", false, "rewrite testdata/screenshots/*.png")

// chromium finds the browser; without one the test is skipped, except in CI (CI=true),
// where .ci/run installs it and a missing browser is a failure.
func chromium(t *testing.T) string {
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") == "true" {
		t.Fatal("no chromium on PATH; .ci/run installs the Debian package chromium")
	}
	t.Skip("no chromium on PATH (apt-get install chromium)")
	return ""
}

// TestReportInChromium runs every example, opens its report.html offline, and checks that
// the page loads with no failed or non-file requests, that every headline number marked
// with data-key and data-value equals results.json, and that a screenshot can be taken
// (a PNG per example under testdata/screenshots for review; pixels are not asserted).
func TestReportInChromium(t *testing.T) {
	exe := chromium(t)
	plans, err := filepath.Glob("../../../examples/*/plan.yaml")
	if err != nil || len(plans) == 0 {
		t.Fatalf("no example plans: %v", err)
	}
	// The network is disabled: every host name fails to resolve and every proxied request
	// goes to a closed port; the test also fails on any request that is not file: or data:.
	opts := append(chromedp.DefaultExecAllocatorOptions[:], chromedp.ExecPath(exe),
		chromedp.NoSandbox, chromedp.Flag("disable-gpu", true), chromedp.WindowSize(1100, 1400),
		chromedp.Flag("host-resolver-rules", "MAP * ~NOTFOUND"), chromedp.ProxyServer("127.0.0.1:9"))
	actx, cancel := chromedp.NewExecAllocator(context.Background(), opts...)
	defer cancel()
	for _, plan := range plans {
		name := filepath.Base(filepath.Dir(plan))
		t.Run(name, func(t *testing.T) {
			dir := filepath.Join(t.TempDir(), "run")
			if _, err := runner.Run(context.Background(), plan, runner.RunOptions{Out: dir, Workers: 2}); err != nil {
				t.Fatal(err)
			}
			var res results.Results
			b, err := os.ReadFile(filepath.Join(dir, "results.json"))
			if err != nil {
				t.Fatal(err)
			}
			if err := json.Unmarshal(b, &res); err != nil {
				t.Fatal(err)
			}
			ctx, cancel := chromedp.NewContext(actx)
			defer cancel()
			ctx, cancel = context.WithTimeout(ctx, 60*time.Second)
			defer cancel()
			var mu sync.Mutex
			var requests, failed []string
			if _, err := chromedp.Call(ctx, network.Enable, network.EnableParams{}); err != nil {
				t.Fatal(err)
			}
			if err := chromedp.Listen(ctx, func(ev any) {
				mu.Lock()
				defer mu.Unlock()
				switch e := ev.(type) {
				case *network.EventRequestWillBeSent:
					requests = append(requests, e.Request.URL)
				case *network.EventLoadingFailed:
					failed = append(failed, e.ErrorText)
				}
			}); err != nil {
				t.Fatal(err)
			}
			abs, _ := filepath.Abs(filepath.Join(dir, "report.html"))
			if err := chromedp.Do(ctx, chromedp.Navigate("file://"+abs), chromedp.WaitReady("body")); err != nil {
				t.Fatal(err)
			}
			title, err := chromedp.Run(ctx, chromedp.Title())
			if err != nil {
				t.Fatal(err)
			}
			keys, err := chromedp.Run(ctx, chromedp.Evaluate[[]map[string]string](`Array.from(document.querySelectorAll("[data-key][data-value]")).map(e => ({key: e.dataset.key, value: e.dataset.value}))`))
			if err != nil {
				t.Fatal(err)
			}
			shot, err := chromedp.Run(ctx, chromedp.FullScreenshot(100))
			if err != nil {
				t.Fatal(err)
			}
			mu.Lock()
			for _, u := range requests {
				if !strings.HasPrefix(u, "file://") && !strings.HasPrefix(u, "data:") {
					t.Errorf("request to %s", u)
				}
			}
			if len(failed) > 0 {
				t.Errorf("failed requests: %v", failed)
			}
			mu.Unlock()
			if !strings.Contains(title, res.Plan.Title) {
				t.Errorf("title %q", title)
			}
			want := headline(&res)
			seen := 0
			for _, kv := range keys {
				w, ok := want[kv["key"]]
				if !ok {
					continue
				}
				seen++
				got, err := strconv.ParseFloat(kv["value"], 64)
				if err != nil || got != w {
					t.Errorf("%s: page %q, results.json %v", kv["key"], kv["value"], w)
				}
			}
			if seen != len(want) {
				t.Errorf("%d of %d headline numbers found in the page", seen, len(want))
			}
			if len(shot) < 1000 {
				t.Fatalf("screenshot of %d bytes", len(shot))
			}
			path := filepath.Join("testdata", "screenshots", name+".png")
			if *updateShots {
				os.MkdirAll(filepath.Dir(path), 0o755)
				if err := os.WriteFile(path, shot, 0o644); err != nil {
					t.Fatal(err)
				}
			} else if _, err := os.Stat(path); err != nil {
				t.Errorf("no committed screenshot %s for review (go test ./runner/report/browser -update-screenshots): %v", path, err)
			}
		})
	}
}

// headline returns the numbers the page must show exactly: per analysis N, H and the
// p-value, and each pair's adjusted p.
func headline(res *results.Results) map[string]float64 {
	m := map[string]float64{}
	for _, a := range res.Analyses {
		m[a.ID+".n"] = float64(a.N)
		if a.Status != "ok" {
			continue
		}
		m[a.ID+".h"] = a.KruskalWallis.H
		if a.PValue.Value != nil {
			m[a.ID+".p"] = *a.PValue.Value
		}
		if ph := a.PostHoc; ph != nil && ph.Ran {
			for _, p := range ph.Pairs {
				m[a.ID+".pair."+p.Groups[0]+"|"+p.Groups[1]+".p_adjusted"] = p.PAdjusted
			}
		}
	}
	return m
}
