package report

import (
	"bytes"
	"errors"
	"fmt"
	"hash/fnv"
	"image/color"
	"math"
	"math/rand/v2"
	"regexp"
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
// spaced in rank (the caption says so). It is the one cap: the caller thins with [Thin].
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

// plotSize is the size of one plot in the page.
func plotSize(k int) (w, h vg.Length) {
	w = vg.Length(math.Max(4.2, math.Min(7.0, 1.4+1.0*float64(k)))) * vg.Inch
	return w, 3.2 * vg.Inch
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
		Handler: plot.DefaultTextHandler,
	}
}

// groupTicks labels the x positions 1…k with the group names and "n = …" beneath.
func groupTicks(groups []results.Group) plot.ConstantTicks {
	ticks := make(plot.ConstantTicks, len(groups))
	for i, g := range groups {
		ticks[i] = plot.Tick{Value: float64(i + 1), Label: g.Name + "\nn = " + strconv.Itoa(g.N)}
	}
	return ticks
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

// plainTicks are gonum/plot's default ticks with each label in its shortest form, the
// same on every axis ("25", never "25.00").
type plainTicks struct{}

func (plainTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = strconv.FormatFloat(ts[i].Value, 'g', 6, 64)
		}
	}
	return ts
}

// newPlot makes a plot with the report's fonts and no title (the figure caption says it).
func newPlot() *plot.Plot {
	p := plot.New()
	p.BackgroundColor = color.White
	p.X.Label.TextStyle.Font = font.From(plotFont, 10)
	p.Y.Label.TextStyle.Font = font.From(plotFont, 10)
	p.X.Tick.Label.Font = font.From(plotFont, 9)
	p.Y.Tick.Label.Font = font.From(plotFont, 9)
	return p
}

// boxPlotter draws, per group, the box from Q1 to Q3 with the median, whiskers to the
// minimum and maximum, all taken from the results, and the jittered observations.
type boxPlotter struct {
	a      *results.Analysis
	values [][]float64 // nil: no points
	seed   uint64
}

func (b boxPlotter) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	rng := rand.New(rand.NewPCG(b.seed, 0x9E3779B97F4A7C15))
	halfBox := 0.28
	thin := draw.LineStyle{Color: color.Black, Width: vg.Points(0.8)}
	thick := draw.LineStyle{Color: color.Black, Width: vg.Points(2)}
	for i, g := range b.a.Groups {
		if g.N == 0 {
			continue
		}
		x := float64(i + 1)
		fill := groupColor(i)
		fill.A = 0x66
		l, r := trX(x-halfBox), trX(x+halfBox)
		q1, q3, med := trY(g.Q1), trY(g.Q3), trY(g.Median)
		box := []vg.Point{{X: l, Y: q1}, {X: r, Y: q1}, {X: r, Y: q3}, {X: l, Y: q3}}
		c.FillPolygon(fill, box)
		c.StrokeLines(thin, append(box, box[0]))
		c.StrokeLine2(thick, l, med, r, med)
		cx := trX(x)
		capW := (r - l) / 4
		c.StrokeLine2(thin, cx, q3, cx, trY(g.Max))
		c.StrokeLine2(thin, cx, q1, cx, trY(g.Min))
		c.StrokeLine2(thin, cx-capW, trY(g.Max), cx+capW, trY(g.Max))
		c.StrokeLine2(thin, cx-capW, trY(g.Min), cx+capW, trY(g.Min))
		if b.values == nil {
			continue
		}
		vals := b.values[i]
		m := min(len(vals), MaxPointsPerGroup)
		dot := draw.GlyphStyle{Color: darker(groupColor(i)), Radius: vg.Points(2), Shape: draw.CircleGlyph{}}
		for j := range m {
			v := vals[pointIndex(j, m, len(vals))]
			jx := x + (rng.Float64()-0.5)*1.6*halfBox
			c.DrawGlyphNoClip(dot, vg.Point{X: trX(jx), Y: trY(v)})
		}
	}
}

// darker is a colour at 70% of its brightness, for points over their own box.
func darker(c color.NRGBA) color.NRGBA {
	return color.NRGBA{uint8(float64(c.R) * 0.7), uint8(float64(c.G) * 0.7), uint8(float64(c.B) * 0.7), 0xFF}
}

// span returns the smallest and largest of the results' minima and maxima, padded by 5%
// of the range (or by 1 when all are equal) so that nothing sits on the frame.
func span(lo, hi float64) (float64, float64) {
	pad := 0.05 * (hi - lo)
	if !(pad > 0) {
		pad = math.Max(1, math.Abs(lo)*0.05)
	}
	return lo - pad, hi + pad
}

// boxPlotSVG draws the box plot of an analysis's groups from the quartiles, median,
// minimum and maximum in the results, with the observations (values, per group, may be
// nil) as deterministically jittered points, and returns the SVG element.
func boxPlotSVG(a *results.Analysis, values [][]float64) ([]byte, error) {
	p := newPlot()
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, g := range a.Groups {
		if g.N > 0 {
			lo, hi = math.Min(lo, g.Min), math.Max(hi, g.Max)
		}
	}
	if math.IsInf(lo, 0) {
		return nil, errors.New("box plot: no group has observations")
	}
	p.Y.Min, p.Y.Max = span(lo, hi)
	p.X.Min, p.X.Max = 0.4, float64(len(a.Groups))+0.6
	p.X.Tick.Marker = groupTicks(a.Groups)
	p.Y.Tick.Marker = plainTicks{}
	p.Y.Label.Text = axisLabel(a)
	p.X.Label.Text = "group"
	p.Add(boxPlotter{a: a, values: values, seed: jitterSeed(a.ID)})
	w, h := plotSize(len(a.Groups))
	return renderSVG(p, w, h, "Box plot of "+axisLabel(a)+" by group")
}

// meanRankPlotter draws each group's mean rank with its interval and the reference line
// at the mean of all ranks.
type meanRankPlotter struct {
	a *results.Analysis
}

func (m meanRankPlotter) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	ref := draw.LineStyle{Color: color.Gray{Y: 0x55}, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(4), vg.Points(3)}}
	mid := trY(float64(m.a.N+1) / 2)
	c.StrokeLine2(ref, c.Min.X, mid, c.Max.X, mid)
	bar := draw.LineStyle{Color: color.Black, Width: vg.Points(1.2)}
	for i, g := range m.a.Groups {
		if g.N == 0 {
			continue
		}
		x := trX(float64(i + 1))
		if iv := g.MeanRankInterval; iv != nil {
			capW := vg.Points(5)
			lo, hi := trY(iv.Low), trY(iv.High)
			c.StrokeLine2(bar, x, lo, x, hi)
			c.StrokeLine2(bar, x-capW, lo, x+capW, lo)
			c.StrokeLine2(bar, x-capW, hi, x+capW, hi)
		}
		c.DrawGlyphNoClip(draw.GlyphStyle{Color: groupColor(i), Radius: vg.Points(4), Shape: draw.CircleGlyph{}}, vg.Point{X: x, Y: trY(g.MeanRank)})
		c.DrawGlyphNoClip(draw.GlyphStyle{Color: color.Black, Radius: vg.Points(4), Shape: draw.RingGlyph{}}, vg.Point{X: x, Y: trY(g.MeanRank)})
	}
}

// meanRankPlotSVG draws the mean rank of each group with its interval from the results
// (mean rank ± z·SE under random labelling) and a dashed line at (N + 1)/2, the mean of
// all N ranks.
func meanRankPlotSVG(a *results.Analysis) ([]byte, error) {
	p := newPlot()
	lo, hi := 1.0, math.Max(1, float64(a.N))
	for _, g := range a.Groups {
		if g.N == 0 {
			continue
		}
		lo, hi = math.Min(lo, g.MeanRank), math.Max(hi, g.MeanRank)
		if iv := g.MeanRankInterval; iv != nil {
			lo, hi = math.Min(lo, iv.Low), math.Max(hi, iv.High)
		}
	}
	p.Y.Min, p.Y.Max = span(lo, hi)
	p.X.Min, p.X.Max = 0.4, float64(len(a.Groups))+0.6
	p.X.Tick.Marker = groupTicks(a.Groups)
	p.Y.Tick.Marker = plainTicks{}
	p.Y.Label.Text = "mean rank"
	p.X.Label.Text = "group"
	p.Add(meanRankPlotter{a: a})
	w, h := plotSize(len(a.Groups))
	return renderSVG(p, w, h, "Mean rank by group with intervals")
}

// heatPlotter draws the k × k matrix of adjusted pairwise p-values.
type heatPlotter struct {
	k    int
	cell map[[2]int]float64
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
			ink := color.Color(color.Black)
			if pShade(p) > 0.5 {
				ink = color.White
			}
			c.FillText(textStyle(9, ink), vg.Point{X: (x0 + x1) / 2, Y: (y0 + y1) / 2}, Num(p))
		}
	}
}

// heatmapSVG draws the matrix of adjusted p-values of the pairs that ran; both cells of a
// pair show its value, the diagonal, pairs not compared and pairs not computable stay blank.
func heatmapSVG(a *results.Analysis) ([]byte, error) {
	ph := a.PostHoc
	k := len(a.Groups)
	index := make(map[string]int, k)
	for i, g := range a.Groups {
		index[g.Name] = i
	}
	cell := make(map[[2]int]float64, 2*len(ph.Pairs))
	for _, pr := range ph.Pairs {
		i, ok1 := index[pr.Groups[0]]
		j, ok2 := index[pr.Groups[1]]
		if !ok1 || !ok2 {
			return nil, fmt.Errorf("heatmap: pair %q vs %q names a group not in the analysis", pr.Groups[0], pr.Groups[1])
		}
		if pr.PAdjusted == nil {
			continue // not computable: the cells stay blank
		}
		cell[[2]int{i, j}] = *pr.PAdjusted
		cell[[2]int{j, i}] = *pr.PAdjusted
	}
	p := newPlot()
	p.X.Min, p.X.Max = 0.5, float64(k)+0.5
	p.Y.Min, p.Y.Max = 0.5, float64(k)+0.5
	xt := make(plot.ConstantTicks, k)
	yt := make(plot.ConstantTicks, k)
	for i, g := range a.Groups {
		xt[i] = plot.Tick{Value: float64(i + 1), Label: g.Name}
		yt[i] = plot.Tick{Value: float64(k - i), Label: g.Name}
	}
	p.X.Tick.Marker, p.Y.Tick.Marker = xt, yt
	p.X.Label.Text, p.Y.Label.Text = "group", "group"
	p.Add(heatPlotter{k: k, cell: cell})
	side := vg.Length(math.Max(3.0, math.Min(6.5, 1.2+0.8*float64(k)))) * vg.Inch
	return renderSVG(p, side+0.4*vg.Inch, side, "Adjusted pairwise p-values")
}

var (
	svgOpen = regexp.MustCompile(`<svg width="([0-9.]+)pt" height="([0-9.]+)pt" viewBox="([0-9. ]+)"[^>]*>`)
	svgID   = regexp.MustCompile(`\sid="`)
)

// renderSVG draws the plot on an SVG canvas and returns the <svg> element for inline use
// in HTML: the XML prolog, the generator comment and the namespace declarations are
// dropped (HTML parsers place <svg> in the SVG namespace themselves), and the element
// gets a role and an accessible name.
func renderSVG(p *plot.Plot, w, h vg.Length, label string) ([]byte, error) {
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
	var out bytes.Buffer
	fmt.Fprintf(&out, `<svg class="plot" width="%spt" height="%spt" viewBox="%s" role="img" aria-label="%s">`,
		b[loc[2]:loc[3]], b[loc[4]:loc[5]], b[loc[6]:loc[7]], attrEscape(label))
	out.Write(b[loc[1]:])
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
