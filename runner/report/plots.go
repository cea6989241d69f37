package report

import (
	"bytes"
	"errors"
	"fmt"
	"hash/fnv"
	"image/color"
	"math"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"rankplan/runner/results"
)

// okabeIto is the colour-blind-safe qualitative palette of Okabe and Ito (2008, "Color
// Universal Design"), used for groups in order; black is left for lines and text.
var okabeIto = []color.NRGBA{
	{0xE6, 0x9F, 0x00, 0xFF}, {0x56, 0xB4, 0xE9, 0xFF}, {0x00, 0x9E, 0x73, 0xFF},
	{0xF0, 0xE4, 0x42, 0xFF}, {0x00, 0x72, 0xB2, 0xFF}, {0xD5, 0x5E, 0x00, 0xFF},
	{0xCC, 0x79, 0xA7, 0xFF},
}

// groupColor is the palette colour of the i-th group (the palette repeats past seven).
func groupColor(i int) color.NRGBA { return okabeIto[i%len(okabeIto)] }

// viridisStops are anchor colours of the viridis sequential scale (van der Walt and
// Smith 2015, matplotlib's default map; the anchors are its values at 0, 0.25, 0.5, 0.75
// and 1, as matplotlib 3.6.3 colormaps["viridis"] gives them), perceptually ordered and readable
// with the common colour-vision deficiencies.
var viridisStops = []color.NRGBA{
	{0x44, 0x01, 0x54, 0xFF}, {0x3B, 0x52, 0x8B, 0xFF}, {0x21, 0x91, 0x8C, 0xFF},
	{0x5E, 0xC9, 0x62, 0xFF}, {0xFD, 0xE7, 0x25, 0xFF},
}

// pScaleDecades is the number of decades of p the heatmap's colour scale spans: p = 1 is
// the lightest colour, p <= 10^-pScaleDecades the darkest.
const pScaleDecades = 3

// pShade returns the position of an adjusted p-value on the heatmap's colour scale,
//
//	t = min(1, -log10(p) / 3),
//
// so 0 for p = 1 and 1 for p <= 0.001.
func pShade(p float64) float64 {
	if !(p > 0) {
		return 1
	}
	t := -math.Log10(p) / pScaleDecades
	return math.Max(0, math.Min(1, t))
}

// pColor is the heatmap colour of an adjusted p-value: viridis read from its light end
// (large p) to its dark end (small p), linearly interpolated between the anchors.
func pColor(p float64) color.NRGBA {
	u := 1 - pShade(p) // 1 = light yellow, 0 = dark purple
	x := u * float64(len(viridisStops)-1)
	i := int(math.Floor(x))
	if i >= len(viridisStops)-1 {
		return viridisStops[len(viridisStops)-1]
	}
	f := x - float64(i)
	a, b := viridisStops[i], viridisStops[i+1]
	mix := func(p, q uint8) uint8 { return uint8(math.Round(float64(p) + f*(float64(q)-float64(p)))) }
	return color.NRGBA{mix(a.R, b.R), mix(a.G, b.G), mix(a.B, b.B), 0xFF}
}

// MaxPointsPerGroup caps the points drawn per group in the box plot, so that the page
// stays small for any N: a larger group shows this many of its order statistics, evenly
// spaced in rank (the caption says so). It is the one cap: the caller thins with [ThinBox].
const MaxPointsPerGroup = 400

// Thin returns at most m order statistics of the ascending s, evenly spaced in rank
// (pointIndex), always including the minimum and the maximum; all of s when it is short
// enough. It is the one thinning step between a run's values and the plots.
func Thin(s []float64, m int) []float64 {
	if len(s) <= m {
		return s
	}
	out := make([]float64, m)
	for j := range out {
		out[j] = s[pointIndex(j, m, len(s))]
	}
	return out
}

// ThinBox is [Thin] that also keeps a group's adjacent values, the most extreme
// observations inside Tukey's fences on its quartiles q1 and q3 from results.json
// ([tukeyFences]), so that the box plot's whiskers end where they would on every
// observation: at most m + 2 values, sorted ascending.
func ThinBox(s []float64, m int, q1, q3 float64) []float64 {
	out := Thin(s, m)
	if len(out) == len(s) {
		return out
	}
	flo, fhi := tukeyFences(q1, q3)
	var keep []float64
	if i := sort.SearchFloat64s(s, flo); i < len(s) && s[i] <= fhi {
		keep = append(keep, s[i])
	}
	if j := sort.Search(len(s), func(j int) bool { return s[j] > fhi }) - 1; j >= 0 && s[j] >= flo {
		keep = append(keep, s[j])
	}
	for _, v := range keep {
		if i := sort.SearchFloat64s(out, v); i == len(out) || out[i] != v {
			out = slices.Insert(out, i, v)
		}
	}
	return out
}

// pointIndex is the index into a sorted group of n values of the j-th of m drawn points,
//
//	i_j = round(j·(n − 1)/(m − 1)),  j = 0 … m−1,
//
// which keeps the minimum and the maximum and spaces the rest evenly in rank.
func pointIndex(j, m, n int) int {
	if m <= 1 {
		return 0
	}
	return int(math.Round(float64(j) * float64(n-1) / float64(m-1)))
}

// jitterSeed derives the jitter stream's seed from the analysis id with FNV-1a (64 bit),
// so that the same analysis always gets the same jitter and nothing depends on the clock.
func jitterSeed(id string) uint64 {
	h := fnv.New64a()
	h.Write([]byte("rankplan/report/jitter\x00"))
	h.Write([]byte(id))
	return h.Sum64()
}

// plotFont is the typeface of the plots' text: Liberation Sans, which gonum/plot embeds
// for measuring; the SVG names it and the viewer supplies it or a substitute.
var plotFont = font.Font{Typeface: "Liberation", Variant: "Sans"}

func textStyle(size vg.Length, c color.Color) text.Style {
	return text.Style{
		Color:   c,
		Font:    font.From(plotFont, size),
		XAlign:  draw.XCenter,
		YAlign:  draw.YCenter,
		Handler: textHandler,
	}
}

// axisLabel is the outcome with its unit, e.g. "minutes (min)".
func axisLabel(a *results.Analysis) string { return a.Outcome + unitSuffix(a.Unit) }

// unitSuffix is the unit as it follows an outcome's name: " (min)", or " [points (0-10)]"
// for a unit that has parentheses of its own, and "" without a unit.
func unitSuffix(unit string) string {
	switch {
	case unit == "":
		return ""
	case strings.ContainsAny(unit, "()"):
		return " [" + unit + "]"
	}
	return " (" + unit + ")"
}

// plainTicks are gonum/plot's default ticks (with log, ticks at powers of ten, or at 1, 2
// and 5 times a power of ten when fewer than two powers lie in the range) with each label
// in plain decimals ([plainNumber]), the same on every axis ("25", never "25.00" or
// "2.5e+01").
type plainTicks struct{ log bool }

func (t plainTicks) Ticks(lo, hi float64) []plot.Tick {
	var ts []plot.Tick
	if t.log {
		ts = logTicks(lo, hi)
	} else {
		ts = plot.DefaultTicks{}.Ticks(lo, hi)
	}
	step := math.Inf(1)
	prev := math.NaN()
	for _, tk := range ts {
		if tk.Label == "" {
			continue
		}
		if !math.IsNaN(prev) {
			step = math.Min(step, tk.Value-prev)
		}
		prev = tk.Value
	}
	for i := range ts {
		if ts[i].Label != "" {
			st := step
			if t.log || !(st > 0) || math.IsInf(st, 1) {
				st = math.Abs(ts[i].Value)
			}
			ts[i].Label = plainNumber(ts[i].Value, st)
		}
	}
	return ts
}

// maxLogLabels is the most labels of a log axis.
const maxLogLabels = 10

// logTicks are the ticks of a log axis from lo to hi (both above 0): gonum/plot's ticks at
// the powers of ten (over more than maxLogLabels decades, every step-th power alone); when fewer than two of those lie in the range, labels at 1, 2 and 5
// times the powers of ten; when fewer than two of those either, the default linear ticks.
func logTicks(lo, hi float64) []plot.Tick {
	in := func(ts []plot.Tick) int {
		n := 0
		for _, tk := range ts {
			if tk.Label != "" && tk.Value >= lo && tk.Value <= hi {
				n++
			}
		}
		return n
	}
	ts := plot.LogTicks{Prec: -1}.Ticks(lo, hi)
	if n := in(ts); n > maxLogLabels {
		// Many decades: only every step-th power of ten, without the ticks between.
		step := (n + maxLogLabels - 1) / maxLogLabels
		var out []plot.Tick
		for _, tk := range ts {
			if tk.Label == "" {
				continue
			}
			if e := int(math.Round(math.Log10(tk.Value))); e%step != 0 {
				tk.Label = ""
			}
			out = append(out, tk)
		}
		return out
	}
	if in(ts) >= 2 {
		return ts
	}
	for i := range ts {
		m := ts[i].Value / math.Pow(10, math.Floor(math.Log10(ts[i].Value)+1e-9))
		if r := math.Round(m); math.Abs(m-r) < 1e-9 && (r == 1 || r == 2 || r == 5) {
			ts[i].Label = "x"
		}
	}
	if in(ts) >= 2 {
		return ts
	}
	return plot.DefaultTicks{}.Ticks(lo, hi)
}

// plainNumber writes a tick value v in plain decimals, never in exponent form below 1e15:
// the fewest decimals d (0 to 17) with which v rounds to within 10^-9 of the step between
// ticks, so "0.3" for 0.30000000000000004 on a step of 0.1, "0.25" on a step of 0.25,
// "0.0000001" for 1e-7. From 1e15 on, six significant digits in exponent form.
func plainNumber(v, step float64) string {
	if math.Abs(v) >= 1e15 {
		return strconv.FormatFloat(v, 'g', 6, 64)
	}
	s := strconv.FormatFloat(v, 'f', -1, 64)
	for d := 0; d <= 17; d++ {
		t := strconv.FormatFloat(v, 'f', d, 64)
		if r, err := strconv.ParseFloat(t, 64); err == nil && math.Abs(r-v) <= 1e-9*step {
			s = t
			break
		}
	}
	if strings.Trim(s, "-0.") == "" {
		return "0"
	}
	return s
}

// newPlot makes a plot with the report's fonts and no title (the figure caption says it).
func newPlot() *plot.Plot {
	p := plot.New()
	p.BackgroundColor = color.White
	p.X.Label.TextStyle.Font = font.From(plotFont, 10)
	p.Y.Label.TextStyle.Font = font.From(plotFont, 10)
	p.X.Tick.Label.Font = font.From(plotFont, 9)
	p.Y.Tick.Label.Font = font.From(plotFont, 9)
	p.X.Label.TextStyle.Handler, p.Y.Label.TextStyle.Handler = textHandler, textHandler
	p.X.Tick.Label.Handler, p.Y.Tick.Label.Handler = textHandler, textHandler
	return p
}

// darker is a colour at 70% of its brightness, for points over their own box.
func darker(c color.NRGBA) color.NRGBA {
	return color.NRGBA{uint8(float64(c.R) * 0.7), uint8(float64(c.G) * 0.7), uint8(float64(c.B) * 0.7), 0xFF}
}

// axisLimit bounds every axis range, so that its length and its padding stay finite
// (a range of ±MaxFloat64 has no finite length); what lies beyond is drawn at the edge.
const axisLimit = math.MaxFloat64 / 4

// span returns the range from lo to hi, each first cut to ±axisLimit, padded by 5% of its
// length (or by max(1, 5% of |lo|) when lo = hi) so that nothing sits on the frame.
func span(lo, hi float64) (float64, float64) {
	lo = math.Max(-axisLimit, math.Min(axisLimit, lo))
	hi = math.Max(-axisLimit, math.Min(axisLimit, hi))
	pad := 0.05*hi - 0.05*lo
	if !(pad > 0) {
		pad = math.Max(1, math.Abs(lo)*0.05)
	}
	return lo - pad, hi + pad
}

// meanRankPlotter draws each group's mean rank with its interval and the reference line
// at the mean of all ranks.
type meanRankPlotter struct {
	a *results.Analysis
	l groupLayout
}

func (m meanRankPlotter) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	pt := func(slot, v float64) vg.Point { return m.l.point(trX, trY, slot, v) }
	ref := draw.LineStyle{Color: color.Gray{Y: 0x55}, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(4), vg.Points(3)}}
	c.StrokeLines(ref, []vg.Point{pt(0.4, float64(m.a.N+1)/2), pt(float64(len(m.a.Groups))+0.6, float64(m.a.N+1)/2)})
	bar := draw.LineStyle{Color: color.Black, Width: vg.Points(1.2)}
	for i, g := range m.a.Groups {
		if g.N == 0 {
			continue
		}
		x := m.l.slot(i)
		if iv := g.MeanRankInterval; iv != nil {
			c.StrokeLines(bar, []vg.Point{pt(x, iv.Low), pt(x, iv.High)})
			for _, e := range []float64{iv.Low, iv.High} {
				p := pt(x, e)
				if m.l.horizontal {
					c.StrokeLine2(bar, p.X, p.Y-5, p.X, p.Y+5)
				} else {
					c.StrokeLine2(bar, p.X-5, p.Y, p.X+5, p.Y)
				}
			}
		}
		c.DrawGlyphNoClip(draw.GlyphStyle{Color: groupColor(i), Radius: vg.Points(4), Shape: draw.CircleGlyph{}}, pt(x, g.MeanRank))
		c.DrawGlyphNoClip(draw.GlyphStyle{Color: color.Black, Radius: vg.Points(4), Shape: draw.RingGlyph{}}, pt(x, g.MeanRank))
	}
}

// meanRankRange is the mean-rank axis's range: from the smallest to the largest mean rank
// and interval end of the groups with observations, padded by [span]; the reference line
// (N + 1)/2, a weighted mean of the mean ranks, always lies inside.
func meanRankRange(a *results.Analysis) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, g := range a.Groups {
		if g.N == 0 {
			continue
		}
		lo, hi = math.Min(lo, g.MeanRank), math.Max(hi, g.MeanRank)
		if iv := g.MeanRankInterval; iv != nil {
			lo, hi = math.Min(lo, iv.Low), math.Max(hi, iv.High)
		}
	}
	mid := float64(a.N+1) / 2
	lo, hi = math.Min(lo, mid), math.Max(hi, mid)
	return span(lo, hi)
}

// meanRankPlotSVG draws the mean rank of each group with its interval from the results
// (mean rank ± z·SE under random labelling) and a dashed line at (N + 1)/2, the mean of
// all N ranks, on an axis that spans the mean ranks and their intervals.
func meanRankPlotSVG(a *results.Analysis) ([]byte, error) {
	l := layoutFor(len(a.Groups))
	p := newPlot()
	tips := &svgTips{}
	va, ga := l.axes(p)
	va.Min, va.Max = meanRankRange(a)
	va.Tick.Marker = plainTicks{}
	va.Label.Text = "mean rank"
	ga.Min, ga.Max = 0.4, float64(len(a.Groups))+0.6
	ga.Tick.Marker = groupTicks(l, groupNames(a), groupNs(a), tips)
	ga.Label.Text = "group"
	p.Add(meanRankPlotter{a: a, l: l})
	return renderSVG(p, l.w, l.h, "Mean rank by group with intervals", tips)
}

// heatCompactFrom is the number of groups from which the heat map's cells carry no
// numbers: the colour alone gives the p-value, on the legend's scale, and each cell's value
// is in its tooltip and in the pairs table. Below it a cell carries its number when the
// number fits (see [heatLayout]).
const heatCompactFrom = 13

// heatGeometry is the heat map's layout: cell size, the sizes of the labels and of the
// numbers in the cells (0: no numbers), whether the column labels stand upright.
type heatGeometry struct {
	cell, labelSize, numSize vg.Length
	labelMax                 vg.Length
	rotate                   bool
	w, h                     vg.Length
}

// heatLayout lays out the heat map of k groups with the given names and cell texts: cells
//
//	c = clamp(6.5 in / k, 11 pt, 0.9 in)
//
// square; labels at 9 pt (7 pt in cells below 14 pt), truncated so that even a typeface
// fontSlack times wider keeps them within 1.3 in; the numbers at
// the largest size up to 9 pt at which the widest fits 85% of a cell with the typeface
// slack, none below 6 pt or from heatCompactFrom groups on; column labels turned upright
// when the widest does not fit 85% of a cell.
func heatLayout(k int, names, texts []string) heatGeometry {
	k = max(k, 1)
	g := heatGeometry{cell: vg.Length(math.Max(11, math.Min(0.9*72, 6.5*72/float64(k)))), labelSize: tickSize}
	if g.cell < 14 {
		g.labelSize = smallSize
	}
	g.labelMax = 1.3 * vg.Inch / fontSlack
	widest := vg.Length(0)
	for _, n := range names {
		widest = max(widest, textWidth(truncate(n, g.labelMax, g.labelSize), g.labelSize))
	}
	g.rotate = widest*fontSlack > 0.85*g.cell
	if k < heatCompactFrom {
		wn := vg.Length(0)
		for _, t := range texts {
			wn = max(wn, textWidth(t, 1))
		}
		if wn > 0 {
			size := min(9, 0.85*g.cell/(wn*fontSlack))
			if size >= 6 {
				g.numSize = vg.Length(math.Floor(float64(size)*2) / 2)
			}
		}
	}
	side := vg.Length(k) * g.cell
	g.w = side + widest*fontSlack + 0.6*vg.Inch
	g.h = side + 0.6*vg.Inch + vg.Length(textHeight(g.labelSize))
	if g.rotate {
		g.h += widest * fontSlack
	}
	return g
}

// cellP writes a p-value for a heat-map cell: three significant digits, "<0.001" below
// 0.001 (the tooltip and the pairs table give every digit).
func cellP(p float64) string {
	if p < 0.001 {
		return "<0.001"
	}
	return strconv.FormatFloat(p, 'g', 3, 64)
}

// textHeight is the height of a line of plotFont at size.
func textHeight(size vg.Length) float64 {
	face := font.DefaultCache.Lookup(plotFont, size)
	e := face.Extents()
	return (e.Ascent + e.Descent).Points()
}

// heatPlotter draws the k × k matrix of adjusted pairwise p-values.
type heatPlotter struct {
	k       int
	cell    map[[2]int]float64
	numSize vg.Length // 0: colour only
	tip     func(row, col int) string
	tips    *svgTips
}

func (hp heatPlotter) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	grid := draw.LineStyle{Color: color.Gray{Y: 0xCC}, Width: vg.Points(0.5)}
	for row := range hp.k {
		for col := range hp.k {
			// Row 0 is at the top: y = k - row.
			x0, x1 := trX(float64(col)+0.5), trX(float64(col)+1.5)
			y := float64(hp.k - row)
			y0, y1 := trY(y-0.5), trY(y+0.5)
			rect := []vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}}
			p, ok := hp.cell[[2]int{row, col}]
			if !ok {
				c.StrokeLines(grid, append(rect, rect[0]))
				continue
			}
			c.FillPolygon(pColor(p), rect)
			c.StrokeLines(grid, append(rect, rect[0]))
			hp.tips.area(vg.Rectangle{Min: vg.Point{X: x0, Y: y0}, Max: vg.Point{X: x1, Y: y1}}, hp.tip(row, col))
			if hp.numSize == 0 {
				continue
			}
			ink := color.Color(color.Black)
			if pShade(p) > 0.5 {
				ink = color.White
			}
			c.FillText(textStyle(hp.numSize, ink), vg.Point{X: (x0 + x1) / 2, Y: (y0 + y1) / 2}, cellP(p))
		}
	}
}

// heatmapSVG draws the matrix of adjusted p-values of the pairs that ran; both cells of a
// pair show its value, the diagonal, pairs not compared and pairs not computable stay
// blank. compact says that the cells carry no numbers.
func heatmapSVG(a *results.Analysis) (svg []byte, compact bool, err error) {
	ph := a.PostHoc
	k := len(a.Groups)
	index := make(map[string]int, k)
	for i, g := range a.Groups {
		index[g.Name] = i
	}
	cell := make(map[[2]int]float64, 2*len(ph.Pairs))
	var texts []string
	for _, pr := range ph.Pairs {
		i, ok1 := index[pr.Groups[0]]
		j, ok2 := index[pr.Groups[1]]
		if !ok1 || !ok2 {
			return nil, false, fmt.Errorf("heatmap: pair %q vs %q names a group not in the analysis", pr.Groups[0], pr.Groups[1])
		}
		if pr.PAdjusted == nil {
			continue // not computable: the cells stay blank
		}
		cell[[2]int{i, j}] = *pr.PAdjusted
		cell[[2]int{j, i}] = *pr.PAdjusted
		texts = append(texts, cellP(*pr.PAdjusted))
	}
	names := groupNames(a)
	g := heatLayout(k, names, texts)
	what := "adjusted p"
	if ph.Simultaneous != "" {
		what = "simultaneous p"
	}
	tips := &svgTips{}
	p := newPlot()
	p.X.Min, p.X.Max = 0.5, float64(k)+0.5
	p.Y.Min, p.Y.Max = 0.5, float64(k)+0.5
	p.X.Tick.Label.Font = font.From(plotFont, g.labelSize)
	p.Y.Tick.Label.Font = font.From(plotFont, g.labelSize)
	if g.rotate {
		p.X.Tick.Label.Rotation = math.Pi / 2
		p.X.Tick.Label.XAlign = draw.XRight
		p.X.Tick.Label.YAlign = draw.YCenter
	}
	xt := make(plot.ConstantTicks, k)
	yt := make(plot.ConstantTicks, k)
	for i, name := range names {
		shown := truncate(name, g.labelMax, g.labelSize)
		xt[i] = plot.Tick{Value: float64(i + 1), Label: shown}
		yt[i] = plot.Tick{Value: float64(k - i), Label: shown}
	}
	for range 2 { // the column labels are drawn first, then the rows', each in group order
		for _, name := range names {
			if shown := truncate(name, g.labelMax, g.labelSize); shown != name {
				tips.label(shown, name)
			}
		}
	}
	p.X.Tick.Marker, p.Y.Tick.Marker = xt, yt
	p.X.Label.Text, p.Y.Label.Text = "group", "group"
	p.Add(heatPlotter{k: k, cell: cell, numSize: g.numSize, tips: tips, tip: func(row, col int) string {
		return names[row] + " vs " + names[col] + ": " + what + " = " + Num(cell[[2]int{row, col}])
	}})
	svg, err = renderSVG(p, g.w, g.h, "Adjusted pairwise p-values", tips)
	return svg, g.numSize == 0, err
}

var (
	svgOpen = regexp.MustCompile(`<svg width="([0-9.]+)pt" height="([0-9.]+)pt" viewBox="([0-9. ]+)"[^>]*>`)
	svgID   = regexp.MustCompile(`\sid="`)
)

// wideFrom is the width from which a plot may be drawn wider than the page's usual plot
// width (34rem = 544 px = 408 pt): up to its own width, within the text column.
const wideFrom = vg.Length(408)

// renderSVG draws the plot on an SVG canvas and returns the <svg> element for inline use
// in HTML: the XML prolog, the generator comment and the namespace declarations are
// dropped (HTML parsers place <svg> in the SVG namespace themselves), the tooltips are
// written in (may be nil), and the element gets a role and an accessible name. A plot
// wider than wideFrom may grow to its own width (an inline max-width in CSS px).
func renderSVG(p *plot.Plot, w, h vg.Length, label string, tips *svgTips) ([]byte, error) {
	cv := vgsvg.New(w, h)
	p.Draw(draw.New(cv))
	var buf bytes.Buffer
	if _, err := cv.WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("render svg: %w", err)
	}
	b := buf.Bytes()
	loc := svgOpen.FindSubmatchIndex(b)
	if loc == nil {
		return nil, errors.New("render svg: no <svg> element in the canvas output")
	}
	if svgID.Match(b) {
		// The report relies on plots having no ids that could clash across plots.
		return nil, errors.New("render svg: the canvas output has element ids")
	}
	body, err := tips.apply(b[loc[1]:])
	if err != nil {
		return nil, fmt.Errorf("render svg: %w", err)
	}
	style := ""
	if w > wideFrom {
		style = fmt.Sprintf(` style="max-width: %.0fpx"`, math.Ceil(w.Points()*4/3))
	}
	var out bytes.Buffer
	fmt.Fprintf(&out, `<svg class="plot" width="%spt" height="%spt" viewBox="%s"%s role="img" aria-label="%s">`,
		b[loc[2]:loc[3]], b[loc[4]:loc[5]], b[loc[6]:loc[7]], style, attrEscape(label))
	out.Write(body)
	return out.Bytes(), nil
}

// attrEscape escapes text for a double-quoted attribute.
func attrEscape(s string) string {
	var b bytes.Buffer
	for _, r := range s {
		switch r {
		case '&':
			b.WriteString("&amp;")
		case '<':
			b.WriteString("&lt;")
		case '>':
			b.WriteString("&gt;")
		case '"':
			b.WriteString("&#34;")
		case '\'':
			b.WriteString("&#39;")
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

// hexColor writes a colour as CSS #rrggbb.
func hexColor(c color.NRGBA) string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }
