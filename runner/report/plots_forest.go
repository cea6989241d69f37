package report

import (
	"fmt"
	"html"
	"html/template"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"rankplan/runner/results"
)

// maxForestRows is the most pairs a forest plot draws: one row of 18 pt each, so 100 rows
// make a plot of about 26 in; beyond, the page says that the pairs table lists them.
const maxForestRows = 100

// forestRange is the forest plot's axis: from the smallest to the largest interval end
// and shift of the pairs, and 0, padded by [span].
func forestRange(pairs []results.Pair) (lo, hi float64) {
	lo, hi = 0, 0
	for _, p := range pairs {
		hl := p.HodgesLehmann
		lo = math.Min(lo, math.Min(hl.Shift, hl.Interval.Low))
		hi = math.Max(hi, math.Max(hl.Shift, hl.Interval.High))
	}
	return span(lo, hi)
}

// pairLabel is "A vs B" with each name truncated to half of what a row label may take.
func pairLabel(a, b string, maxW vg.Length) string {
	half := (maxW - textWidth(" vs ", tickSize)) / 2
	return truncate(a, half, tickSize) + " vs " + truncate(b, half, tickSize)
}

// forestPlotter draws one row per pair: the Hodges-Lehmann shift as a dot (filled for a
// rejected pair) with its interval, and a dashed line at no shift.
type forestPlotter struct {
	pairs []results.Pair
	l     groupLayout
	tips  *svgTips
}

func (f forestPlotter) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	ref := draw.LineStyle{Color: color.Gray{Y: 0x55}, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(4), vg.Points(3)}}
	c.StrokeLine2(ref, trX(0), c.Min.Y, trX(0), c.Max.Y)
	bar := draw.LineStyle{Color: color.Black, Width: vg.Points(1.2)}
	filled := draw.GlyphStyle{Color: color.Black, Radius: vg.Points(3.5), Shape: draw.CircleGlyph{}}
	open := draw.GlyphStyle{Color: color.White, Radius: vg.Points(3.5), Shape: draw.CircleGlyph{}}
	ring := draw.GlyphStyle{Color: color.Black, Radius: vg.Points(3.5), Shape: draw.RingGlyph{}}
	half := (trY(2) - trY(1)) / 2 // half a row
	for i, p := range f.pairs {
		y := trY(f.l.slot(i))
		hl := p.HodgesLehmann
		x0, x1 := trX(hl.Interval.Low), trX(hl.Interval.High)
		c.StrokeLine2(bar, x0, y, x1, y)
		c.StrokeLine2(bar, x0, y-4, x0, y+4)
		c.StrokeLine2(bar, x1, y-4, x1, y+4)
		at := vg.Point{X: trX(hl.Shift), Y: y}
		if p.Reject {
			c.DrawGlyphNoClip(filled, at)
		} else {
			c.DrawGlyphNoClip(open, at)
			c.DrawGlyphNoClip(ring, at)
		}
		f.tips.area(vg.Rectangle{Min: vg.Point{X: c.Min.X, Y: y - half}, Max: vg.Point{X: c.Max.X, Y: y + half}},
			fmt.Sprintf("%s vs %s: shift %s, %s", p.Groups[0], p.Groups[1], Num(hl.Shift), hlIntervalCell(hl)))
	}
}

// forestSVG draws the forest plot of an analysis's pairs: one row per pair, labels at the
// left, the Hodges-Lehmann shift with its interval, a reference line at 0.
func forestSVG(a *results.Analysis) ([]byte, error) {
	pairs := a.PostHoc.Pairs
	l := groupLayout{k: len(pairs), horizontal: true, w: horizontalWidth * vg.Inch,
		h: frameHeight*vg.Inch + vg.Length(len(pairs))*rowHeight, labelMax: 2.2 * vg.Inch / fontSlack}
	tips := &svgTips{}
	p := newPlot()
	p.X.Min, p.X.Max = forestRange(pairs)
	p.X.Tick.Marker = plainTicks{}
	p.X.Label.Text = "Hodges-Lehmann shift" + unitSuffix(a.Unit)
	p.Y.Min, p.Y.Max = 0.4, float64(len(pairs))+0.6
	ticks := make(plot.ConstantTicks, len(pairs))
	for i, pr := range pairs {
		shown := pairLabel(pr.Groups[0], pr.Groups[1], l.labelMax)
		if full := pr.Groups[0] + " vs " + pr.Groups[1]; shown != full {
			tips.label(shown, full)
		}
		ticks[i] = plot.Tick{Value: l.slot(i), Label: shown}
	}
	p.Y.Tick.Marker = ticks
	p.Add(forestPlotter{pairs: pairs, l: l, tips: tips})
	return renderSVG(p, l.w, l.h, "Forest plot of the pairwise Hodges-Lehmann shifts", tips)
}

// forestFigure is the forest plot of an analysis's pairs as a figure with its caption, or
// a note saying why it is left out; empty without pairs.
func forestFigure(a *results.Analysis) (template.HTML, error) {
	ph := a.PostHoc
	if ph == nil || !ph.Ran || len(ph.Pairs) == 0 {
		return "", nil
	}
	if len(ph.Pairs) > maxForestRows {
		return template.HTML(fmt.Sprintf(`<p class="note">No forest plot: %d pairs are more than the %d rows it draws; the pairs table lists every shift with its interval.</p>`,
			len(ph.Pairs), maxForestRows)), nil
	}
	svg, err := forestSVG(a)
	if err != nil {
		return "", err
	}
	level := pct(ph.Pairs[0].HodgesLehmann.Interval.Level)
	for _, p := range ph.Pairs {
		if pct(p.HodgesLehmann.Interval.Level) != level {
			level = "the pairs table's"
		}
	}
	caption := fmt.Sprintf("Forest plot of the pairwise comparisons: the Hodges-Lehmann shift of each pair (how far the first group's values lie above the second's) as a dot with its %s distribution-free interval; the dashed line marks no shift. Filled dots are the pairs found to differ. The pairs table gives each interval's coverage.",
		html.EscapeString(level))
	return template.HTML("<figure>\n" + string(svg) + "\n<figcaption>" + caption + "</figcaption>\n</figure>"), nil
}
