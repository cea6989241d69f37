package report

import (
	"fmt"
	"html"
	"html/template"
	"image/color"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"rankplan/runner/results"
)

// maxForestRows is the most pairs a forest plot draws: one row of 18 pt each, so 100 rows
// make a plot of about 26 in; beyond, the page says that the pairs table lists them.
const maxForestRows = 100

// forestRange is the forest plot's axis: the shifts, the interval ends and 0 taken as one
// sorted list v, Tukey's fences on its type 7 quartiles (Hyndman and Fan 1996), the most
// extreme entries inside them as the core, and [valueAxis] from that core and the
// extremes, so that intervals reaching out to a huge value do not flatten the others.
func forestRange(pairs []results.Pair) (lo, hi float64) {
	v := make([]float64, 0, 3*len(pairs)+1)
	v = append(v, 0)
	for _, p := range pairs {
		hl := p.HodgesLehmann
		v = append(v, hl.Shift, hl.Interval.Low, hl.Interval.High)
	}
	slices.Sort(v)
	flo, fhi := tukeyFences(quantile7(v, 0.25), quantile7(v, 0.75))
	wlo, whi := 0.0, 0.0
	for _, x := range v {
		if x >= flo && x <= fhi {
			wlo, whi = math.Min(wlo, x), math.Max(whi, x)
		}
	}
	return valueAxis(wlo, whi, v[0], v[len(v)-1])
}

// quantile7 is the p-quantile of the sorted, non-empty v by Hyndman and Fan's (1996) type 7,
//
//	h = (n − 1)·p,  Q = (1 − f)·v[⌊h⌋] + f·v[⌊h⌋ + 1],  f = h − ⌊h⌋,
//
// written as a weighted mean so that no difference of two huge values overflows.
func quantile7(v []float64, p float64) float64 {
	h := float64(len(v)-1) * p
	j := int(math.Floor(h))
	if j >= len(v)-1 {
		return v[len(v)-1]
	}
	f := h - float64(j)
	return (1-f)*v[j] + f*v[j+1]
}

// pairLabel is "A vs B" with each name truncated to half of what a row label may take.
func pairLabel(a, b string, maxW vg.Length) string {
	half := (maxW - textWidth(" vs ", tickSize)) / 2
	return truncate(a, half, tickSize) + " vs " + truncate(b, half, tickSize)
}

// forestPlotter draws one row per pair: the Hodges-Lehmann shift as a dot (filled for a
// rejected pair) with its interval, and a dashed line at no shift.
type forestPlotter struct {
	pairs  []results.Pair
	l      groupLayout
	lo, hi float64 // the axis's range
	tips   *svgTips
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
	clip := func(x float64) float64 { return math.Max(f.lo, math.Min(f.hi, x)) }
	for i, p := range f.pairs {
		y := trY(f.l.slot(i))
		hl := p.HodgesLehmann
		x0, x1 := trX(clip(hl.Interval.Low)), trX(clip(hl.Interval.High))
		c.StrokeLine2(bar, x0, y, x1, y)
		for _, end := range []struct {
			x   vg.Length
			out bool // beyond the axis: a triangle pointing out instead of a cap
			dir vg.Length
		}{{x0, hl.Interval.Low < f.lo, -1}, {x1, hl.Interval.High > f.hi, 1}} {
			if end.out {
				c.FillPolygon(color.Black, []vg.Point{{X: end.x, Y: y}, {X: end.x - end.dir*8, Y: y + 4}, {X: end.x - end.dir*8, Y: y - 4}})
			} else {
				c.StrokeLine2(bar, end.x, y-4, end.x, y+4)
			}
		}
		at := vg.Point{X: trX(clip(hl.Shift)), Y: y}
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
func forestSVG(a *results.Analysis, pairs []results.Pair) ([]byte, error) {
	l := groupLayout{k: len(pairs), horizontal: true, w: horizontalWidth * vg.Inch,
		h: frameHeight*vg.Inch + vg.Length(len(pairs))*rowHeight, labelMax: 2.2 * vg.Inch / fontSlack}
	tips := &svgTips{}
	p := newPlot()
	lo, hi := forestRange(pairs)
	p.X.Min, p.X.Max = lo, hi
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
	p.Add(forestPlotter{pairs: pairs, l: l, lo: lo, hi: hi, tips: tips})
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
	svg, err := forestSVG(a, ph.Pairs)
	if err != nil {
		return "", err
	}
	level := pct(ph.Pairs[0].HodgesLehmann.Interval.Level)
	for _, p := range ph.Pairs {
		if pct(p.HodgesLehmann.Interval.Level) != level {
			level = "the pairs table's"
		}
	}
	caption := fmt.Sprintf("Forest plot of the pairwise comparisons: the Hodges-Lehmann shift of each pair (how far the first group's values lie above the second's) as a dot with its %s distribution-free interval; the dashed line marks no shift, and a triangle marks an interval that runs on beyond the axis. Filled dots are the pairs found to differ. The pairs table gives each interval's coverage.",
		html.EscapeString(level))
	if len(ph.Pairs) <= printPairsMax {
		return template.HTML("<figure>\n" + string(svg) + "\n<figcaption>" + caption + "</figcaption>\n</figure>"), nil
	}
	// On paper a long forest plot would take a page of its own: like the pairs table, the
	// printed page draws only the pairs found to differ, and says so.
	out := "<figure class=\"screen-only\">\n" + string(svg) + "\n<figcaption>" + caption + "</figcaption>\n</figure>"
	var differ []results.Pair
	for _, p := range ph.Pairs {
		if p.Reject {
			differ = append(differ, p)
		}
	}
	switch {
	case len(differ) == 0:
		out += fmt.Sprintf("\n<p class=\"note print-only\">On paper the forest plot is left out: none of the %d pairs was found to differ; it is in this report on screen.</p>", len(ph.Pairs))
	case len(differ) > maxForestRows:
		out += fmt.Sprintf("\n<p class=\"note print-only\">On paper the forest plot is left out: %d pairs were found to differ, more than the %d rows it draws; it is in this report on screen, and pairs.csv lists every shift.</p>", len(differ), maxForestRows)
	default:
		psvg, err := forestSVG(a, differ)
		if err != nil {
			return "", err
		}
		out += "\n<figure class=\"print-only\">\n" + string(psvg) + "\n<figcaption>" + caption +
			html.EscapeString(fmt.Sprintf(" On paper it shows only the %d of %d pairs found to differ; every pair is in this report on screen and in pairs.csv.", len(differ), len(ph.Pairs))) + "</figcaption>\n</figure>"
	}
	return template.HTML(out), nil
}
