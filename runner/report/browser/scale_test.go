package browser

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/chromedp"

	"rankplan/runner"
)

// scaleCase is an invented data set for the plots' layout at a number of groups: k groups
// of n values each, drawn from a seeded stream (PCG, seed k), with a shift per group; long
// names for some groups, so that labels are truncated; extreme values where asked.
type scaleCase struct {
	k, n int
	// huge adds one value of 1e300 to the second group: the box plot's axis must not
	// stretch to it.
	huge bool
	// logScale asks for the log value axis (the values are then all above 0).
	logScale bool
}

// scaleCases are the numbers of groups the report must lay out: 3, 11 and 50, and the
// edges of the layouts: 8 groups, the most side by side, and 12, the most whose heat-map
// cells carry numbers.
var scaleCases = []scaleCase{
	{k: 3, n: 12},
	{k: 8, n: 5, huge: true},
	{k: 11, n: 8, huge: true},
	{k: 12, n: 5},
	{k: 50, n: 6, logScale: true},
}

// groupName is the name of the i-th group: every fourth one long enough to be truncated.
func groupName(i int) string {
	if i%4 == 1 {
		return fmt.Sprintf("Site %02d north annex, evening shift & overflow ward", i+1)
	}
	return fmt.Sprintf("G%02d", i+1)
}

// writeScaleCase writes the invented data and a plan for c into dir and returns the plan.
func writeScaleCase(t *testing.T, dir string, c scaleCase) string {
	t.Helper()
	rng := rand.New(rand.NewPCG(uint64(c.k), 20261204))
	var csv strings.Builder
	csv.WriteString("group,value\n")
	for i := range c.k {
		for j := range c.n {
			v := 10 + 0.3*float64(i%7) + rng.NormFloat64()
			if c.logScale {
				v = math.Exp(float64(i%5)*0.4 + 0.6*rng.NormFloat64())
			}
			if c.huge && i == 1 && j == 0 {
				v = 1e300
			}
			fmt.Fprintf(&csv, "%q,%s\n", groupName(i), strconv.FormatFloat(v, 'g', 8, 64))
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "data.csv"), []byte(csv.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	report := ""
	if c.logScale {
		report = "report:\n  value_scale: log\n"
	}
	plan := fmt.Sprintf(`rankplan: 1
id: "layout-k%d"
title: "Plot layout with %d groups (invented data)"
data:
  file: "data.csv"
  group: "group"
  outcome: "value"
  unit: "mg"
alpha: 0.05
seed: 1
%sanalyses:
  - id: "main"
    test: kruskal-wallis
    pvalue:
      method: asymptotic
    posthoc:
      method: dunn
      adjust: holm
      when: always
`, c.k, c.k, report)
	path := filepath.Join(dir, "plan.yaml")
	if err := os.WriteFile(path, []byte(plan), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// textsJS lists, per plot, the boxes of its <text> elements (the text's own words, not
// its tooltip) and the areas that carry a tooltip (heat-map cells, forest rows), of the
// plots shown on screen (a plot drawn for paper only has no boxes there).
const textsJS = `Array.from(document.querySelectorAll("svg.plot")).filter(svg => svg.getClientRects().length > 0).map(svg => ({
  label: svg.getAttribute("aria-label"),
  texts: Array.from(svg.querySelectorAll("text")).map(e => {
    const r = e.getBoundingClientRect();
    const words = Array.from(e.childNodes).filter(n => n.nodeType === 3).map(n => n.textContent).join("");
    return {text: words, x: r.left, y: r.top, w: r.width, h: r.height};
  }),
  cells: Array.from(svg.querySelectorAll("rect")).filter(e => e.querySelector("title")).map(e => {
    const r = e.getBoundingClientRect();
    return {text: e.querySelector("title").textContent, x: r.left, y: r.top, w: r.width, h: r.height};
  }),
}))`

type box struct {
	Text       string
	X, Y, W, H float64
}

// overlap says whether two boxes share more than a hairline (0.5 px each way).
func overlap(a, b box) bool {
	const eps = 0.5
	return a.X+eps < b.X+b.W && b.X+eps < a.X+a.W && a.Y+eps < b.Y+b.H && b.Y+eps < a.Y+a.H
}

func inside(in, out box) bool {
	const eps = 0.5
	return in.X >= out.X-eps && in.Y >= out.Y-eps && in.X+in.W <= out.X+out.W+eps && in.Y+in.H <= out.Y+out.H+eps
}

type plotBoxes struct {
	Label string
	Texts []box
	Cells []box
}

// TestPlotLabelsDoNotOverlap runs plans on invented data with 3, 11 and 50 groups, opens
// each report.html in one headless Chromium (a tab per case, in parallel), and fails when
// two <text> elements of one plot intersect, naming both, or when a number in a heat-map
// cell sticks out of its cell. It also requires the compact heat map (no numbers) from 13
// groups on, the horizontal layout from 9 groups on (group labels left of the plot), box
// plot and forest plot axes at the scale of the data despite a value of 1e300, tick labels
// in plain decimals, and tooltips for truncated labels; in print at the width of A4 no
// plot may stick out of the page.
// Screenshots of the figures go to testdata/screenshots/scale-k*.png with -update.
func TestPlotLabelsDoNotOverlap(t *testing.T) {
	exe := chromium(t)
	bctx := newBrowser(t, exe)
	for _, c := range scaleCases {
		t.Run("k="+strconv.Itoa(c.k), func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			plan := writeScaleCase(t, dir, c)
			out := filepath.Join(dir, "run")
			if _, err := runner.Run(context.Background(), plan, runner.RunOptions{Out: out, Workers: 1}); err != nil {
				t.Fatal(err)
			}
			page, err := os.ReadFile(filepath.Join(out, "report.html"))
			if err != nil {
				t.Fatal(err)
			}
			ctx, cancel := chromedp.NewContext(bctx)
			defer cancel()
			ctx, cancel = context.WithTimeout(ctx, 60*time.Second)
			defer cancel()
			abs, _ := filepath.Abs(filepath.Join(out, "report.html"))
			if err := chromedp.Do(ctx, chromedp.Navigate("file://"+abs), chromedp.WaitReady("body")); err != nil {
				t.Fatal(err)
			}
			plots, err := chromedp.Run(ctx, chromedp.Evaluate[[]plotBoxes](textsJS))
			if err != nil {
				t.Fatal(err)
			}
			checkPlots(t, c, plots, string(page))
			path := filepath.Join("testdata", "screenshots", fmt.Sprintf("scale-k%d.png", c.k))
			if *update {
				// Taken only to be written: a screenshot of the largest case takes seconds.
				shot, err := chromedp.Run(ctx, chromedp.Screenshot("section.figures"))
				if err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(path, shot, 0o644); err != nil {
					t.Fatal(err)
				}
			} else if _, err := os.Stat(path); err != nil {
				t.Errorf("no committed screenshot %s for review (go test ./runner/report/browser -run PlotLabels -update): %v", path, err)
			}
			checkPlotsPrint(ctx, t) // last: it leaves the tab in print media
		})
	}
}

// plotsOverflowJS lists the plots whose right edge lies beyond the page width.
const plotsOverflowJS = `(() => {
  const w = document.documentElement.clientWidth;
  return Array.from(document.querySelectorAll("svg.plot")).filter(e => e.getBoundingClientRect().right > w + 0.5)
    .map(e => e.getAttribute("aria-label") + ": right edge " + Math.round(e.getBoundingClientRect().right) + " px > " + w + " px");
})()`

// checkPlotsPrint checks that in print media at the text width of A4 (672 CSS px, as in
// checkPrint) every plot fits the page, the wide ones too.
func checkPlotsPrint(ctx context.Context, t *testing.T) {
	t.Helper()
	if _, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"}); err != nil {
		t.Fatal(err)
	}
	if err := chromedp.Do(ctx, chromedp.EmulateViewport(672, 950)); err != nil {
		t.Fatal(err)
	}
	wide, err := chromedp.Run(ctx, chromedp.Evaluate[[]string](plotsOverflowJS))
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range wide {
		t.Errorf("print at A4 width: %s", w)
	}
}

// checkPlots applies the checks of TestPlotLabelsDoNotOverlap to one report.
func checkPlots(t *testing.T, c scaleCase, plots []plotBoxes, page string) {
	t.Helper()
	want := 3 // box, mean rank, heat map
	if c.k*(c.k-1)/2 <= 100 {
		want++ // forest plot
	}
	if len(plots) != want {
		t.Errorf("%d plots, want %d", len(plots), want)
	}
	for _, p := range plots {
		for i := range p.Texts {
			for j := i + 1; j < len(p.Texts); j++ {
				if a, b := p.Texts[i], p.Texts[j]; overlap(a, b) {
					t.Errorf("%s: texts %q at (%.1f, %.1f, %.1f × %.1f) and %q at (%.1f, %.1f, %.1f × %.1f) intersect",
						p.Label, a.Text, a.X, a.Y, a.W, a.H, b.Text, b.X, b.Y, b.W, b.H)
				}
			}
		}
		if p.Label != "Adjusted pairwise p-values" {
			continue
		}
		numbers := 0
		for _, tx := range p.Texts {
			for _, cell := range p.Cells {
				if cx, cy := tx.X+tx.W/2, tx.Y+tx.H/2; cx > cell.X && cx < cell.X+cell.W && cy > cell.Y && cy < cell.Y+cell.H {
					numbers++
					if !inside(tx, cell) {
						t.Errorf("heat map: number %q (%.1f × %.1f px) sticks out of its cell %q (%.1f × %.1f px)", tx.Text, tx.W, tx.H, cell.Text, cell.W, cell.H)
					}
				}
			}
		}
		cells := c.k * (c.k - 1)
		if len(p.Cells) != cells {
			t.Errorf("heat map: %d cells with a tooltip, want %d", len(p.Cells), cells)
		}
		if compact := c.k >= 13; compact && numbers > 0 || !compact && numbers != cells {
			t.Errorf("heat map with %d groups: %d numbers in %d cells", c.k, numbers, cells)
		}
	}
	for _, p := range plots {
		box := strings.HasPrefix(p.Label, "Box plot")
		if !box && !strings.HasPrefix(p.Label, "Forest plot") {
			continue
		}
		var axis []float64
		for _, tx := range p.Texts {
			if v, err := strconv.ParseFloat(tx.Text, 64); err == nil {
				axis = append(axis, v)
			}
			if strings.ContainsAny(tx.Text, "e") && strings.ContainsAny(tx.Text, "0123456789") && !strings.Contains(tx.Text, " ") {
				t.Errorf("%s: tick label %q in exponent form", p.Label, tx.Text)
			}
		}
		for _, v := range axis {
			if math.Abs(v) > 1e6 {
				t.Errorf("%s: the axis reaches %v: an extreme value stretched it", p.Label, v)
			}
		}
		if !box {
			continue
		}
		if c.huge && !strings.Contains(page, "1 beyond") {
			t.Errorf("box plot: no mark of the value beyond the axis")
		}
		horizontal := false
		for _, tx := range p.Texts {
			horizontal = horizontal || strings.HasSuffix(tx.Text, ")") && strings.Contains(tx.Text, "(n = ")
		}
		if horizontal != (c.k >= 9) {
			t.Errorf("box plot with %d groups: horizontal layout %v", c.k, horizontal)
		}
	}
	if full := groupName(1); !strings.Contains(page, "<title>"+strings.ReplaceAll(full, "&", "&amp;")) {
		t.Errorf("no tooltip with the full name %q", full)
	}
	if c.logScale && !strings.Contains(page, "The value axis is logarithmic.") {
		t.Errorf("the plan asks for a log value axis; the caption does not say it is one")
	}
}
