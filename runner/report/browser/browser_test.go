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

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"

	"rankplan/runner/results"
)

var update = flag.Bool("update", false, "rewrite testdata/screenshots/*.png")

// browserNames are the executables looked for on PATH, in this order.
var browserNames = []string{"chromium", "chromium-browser", "google-chrome"}

// chromium finds the browser. Without one the test fails in CI (CI=true), where .ci/run
// installs it, so that a green CI has always opened the reports; elsewhere it is skipped
// with a message naming what to install.
func chromium(t *testing.T) string {
	for _, name := range browserNames {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") == "true" {
		t.Fatalf("CI=true and none of %v is on PATH: the reports were not opened in a browser; .ci/run installs the Debian package chromium", browserNames)
	}
	t.Skipf("the reports were not opened in a browser: none of %v is on PATH; install the Debian package chromium (apt-get install chromium) to run this test", browserNames)
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
	// One browser for all examples, each in its own tab, run in parallel, with the network
	// disabled; the test also fails on any request that is not file: or data:.
	bctx := newBrowser(t, exe)
	for _, plan := range plans {
		name := filepath.Base(filepath.Dir(plan))
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			dir, _ := runExample(t, plan)
			var res results.Results
			b, err := os.ReadFile(filepath.Join(dir, "results.json"))
			if err != nil {
				t.Fatal(err)
			}
			if err := json.Unmarshal(b, &res); err != nil {
				t.Fatal(err)
			}
			ctx, cancel := chromedp.NewContext(bctx)
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
			plots, err := chromedp.Run(ctx, chromedp.Evaluate[int](`Array.from(document.querySelectorAll("svg.plot")).filter(e => { const r = e.getBoundingClientRect(); return r.width > 100 && r.height > 100; }).length`))
			if err != nil {
				t.Fatal(err)
			}
			if want := wantPlots(&res); plots != want {
				t.Errorf("%d plots drawn at a visible size, want %d (box and mean-rank plot per analysis, heatmap and forest plot where pairs ran)", plots, want)
			}
			checkPrint(ctx, t)
			path := filepath.Join("testdata", "screenshots", name+".png")
			if *update {
				os.MkdirAll(filepath.Dir(path), 0o755)
				if err := os.WriteFile(path, shot, 0o644); err != nil {
					t.Fatal(err)
				}
			} else if _, err := os.Stat(path); err != nil {
				t.Errorf("no committed screenshot %s for review (go test ./runner/report/browser -update): %v", path, err)
			}
		})
	}
}

// wantPlots is the number of plots the page must show: a box plot and a mean-rank plot
// per analysis with data, and a heatmap of adjusted p-values and a forest plot of the
// shifts where pairs were compared.
func wantPlots(res *results.Results) int {
	n := 0
	for _, a := range res.Analyses {
		if a.N > 0 {
			n += 2
		}
		if ph := a.PostHoc; ph != nil && ph.Ran && len(ph.Pairs) > 0 {
			n++ // the heat map
			if len(ph.Pairs) <= 100 {
				n++ // the forest plot, drawn for up to 100 pairs
			}
		}
	}
	return n
}

// overflowJS lists the elements (at most 8) whose right edge lies beyond the page width;
// the shapes inside an SVG are left to the SVG element itself.
const overflowJS = `(() => {
  const w = document.documentElement.clientWidth, out = [];
  for (const e of document.querySelectorAll("body *")) {
    if (e.closest("svg") && e.tagName.toLowerCase() !== "svg") continue;
    const r = e.getBoundingClientRect();
    if (r.width > 0 && r.right > w + 0.5) out.push(e.tagName.toLowerCase() + (e.id ? "#" + e.id : "") + ": right edge " + Math.round(r.right) + " px > " + w + " px, text " + JSON.stringify((e.textContent || "").slice(0, 40)));
  }
  return out.slice(0, 8);
})()`

// checkPrint checks that the report prints: in print media at the text width of A4
// (210 mm less the report's 16 mm side margins, 178 mm = 672 CSS px at 96 px per inch, the
// narrower of A4 and Letter) no element sticks out of the page, and Chromium prints the
// page to PDF on A4 (8.27 × 11.69 in) and on Letter (8.5 × 11 in).
func checkPrint(ctx context.Context, t *testing.T) {
	t.Helper()
	if _, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"}); err != nil {
		t.Fatal(err)
	}
	if err := chromedp.Do(ctx, chromedp.EmulateViewport(672, 950)); err != nil {
		t.Fatal(err)
	}
	wide, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](overflowJS))
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range wide {
		t.Errorf("print at A4 width: %s", w)
	}
	for _, paper := range []struct {
		name string
		w, h float64
	}{{"A4", 8.27, 11.69}, {"Letter", 8.5, 11}} {
		pdf, err := chromedp.Call(ctx, page.PrintToPDF, page.PrintToPDFParams{PaperWidth: paper.w, PaperHeight: paper.h})
		if err != nil {
			t.Fatalf("print to PDF on %s: %v", paper.name, err)
		}
		if !strings.HasPrefix(string(pdf.Data), "%PDF-") || len(pdf.Data) < 10000 {
			t.Errorf("print to PDF on %s: %d bytes, not a PDF of the report", paper.name, len(pdf.Data))
		}
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
				if p.PAdjusted != nil {
					m[a.ID+".pair."+p.Groups[0]+"|"+p.Groups[1]+".p_adjusted"] = *p.PAdjusted
				}
			}
		}
	}
	return m
}
