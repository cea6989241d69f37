package report

import (
	"errors"
	"image/color"
	"math"
	"math/rand/v2"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"rankplan/runner/results"
	"rankplan/spec"
)

// tukeyFences returns Tukey's inner fences of a group's quartiles (Tukey 1977,
// Exploratory Data Analysis, ch. 2),
//
//	lower = Q1 − 1.5·(Q3 − Q1),  upper = Q3 + 1.5·(Q3 − Q1),
//
// with the quartiles of results.json (Hyndman and Fan 1996 type 7).
func tukeyFences(q1, q3 float64) (lo, hi float64) {
	iqr := q3 - q1
	return q1 - 1.5*iqr, q3 + 1.5*iqr
}

// whiskerEnds returns where a group's whiskers end. With the observations (sorted
// ascending) they reach the most extreme observation inside Tukey's fences, the
// "adjacent values" of Tukey (1977); without them, the fences, or the minimum and the
// maximum where those lie inside. A whisker never ends inside the box.
func whiskerEnds(g results.Group, vals []float64) (lo, hi float64) {
	flo, fhi := tukeyFences(g.Q1, g.Q3)
	if vals == nil {
		lo, hi = math.Max(g.Min, flo), math.Min(g.Max, fhi)
	} else {
		lo, hi = g.Q1, g.Q3
		if i := sort.SearchFloat64s(vals, flo); i < len(vals) && vals[i] <= fhi {
			lo = vals[i]
		}
		if j := sort.Search(len(vals), func(j int) bool { return vals[j] > fhi }) - 1; j >= 0 && vals[j] >= flo {
			hi = vals[j]
		}
	}
	return math.Min(lo, g.Q1), math.Max(hi, g.Q3)
}

// Reach of the value axis beyond the whiskers, as shares of the whiskers' span s.
const (
	extremeReach = 0.5  // extremes within 0.5·s beyond the whiskers are on the axis
	arrowRoom    = 0.15 // otherwise the axis ends 0.15·s beyond the whiskers
)

// valueAxis returns the range of the box plot's value axis from the span of all whiskers
// [wlo, whi] and of all observations [emin, emax], on the axis's own scale (logarithms for
// a log axis). On each side the axis reaches the extreme when it lies within 0.5·s of the
// whisker, s = whi − wlo; otherwise it ends 0.15·s beyond the whisker, and what lies
// further is drawn as marks at the edge. The range is then padded by 5% of its length
// ([span]). With s = 0 the share is taken of max(|whi|/10, 1).
func valueAxis(wlo, whi, emin, emax float64) (lo, hi float64) {
	s := whi - wlo
	if !(s > 0) {
		s = math.Max(math.Abs(whi)/10, 1)
	}
	lo, hi = emin, emax
	if wlo-emin > extremeReach*s {
		lo = wlo - arrowRoom*s
	}
	if emax-whi > extremeReach*s {
		hi = whi + arrowRoom*s
	}
	return span(lo, hi)
}

// valueScale is a value axis's scale: identity or base-10 logarithm.
type valueScale struct{ log bool }

func (s valueScale) fwd(x float64) float64 {
	if s.log {
		return math.Log10(x)
	}
	return x
}

func (s valueScale) inv(x float64) float64 {
	if s.log {
		return math.Pow(10, x)
	}
	return x
}

// chooseScale is the scale the box plot uses: log when the plan asks for it and every
// group's minimum is above 0, linear otherwise; note says why a log scale was not used.
func chooseScale(a *results.Analysis, want spec.ValueScale) (s valueScale, note string) {
	if want != spec.LogScale {
		return valueScale{}, ""
	}
	for _, g := range a.Groups {
		if g.N > 0 && !(g.Min > 0) {
			return valueScale{}, "The plan asks for a logarithmic value axis, but group " + g.Name + " holds values of 0 or below (minimum " + Num(g.Min) + "), so the axis is linear."
		}
	}
	return valueScale{log: true}, ""
}

// boxPlotter draws, per group, the box from Q1 to Q3 with the median, Tukey's whiskers,
// the minimum and the maximum as short thick bars, the observations as jittered dots
// (outliers beyond the fences as black rings), and at the axis's ends a triangle for the
// observations beyond it, with their count.
type boxPlotter struct {
	a      *results.Analysis
	values [][]float64 // nil: no points
	seed   uint64
	l      groupLayout
	lo, hi float64 // the value axis's range
}

func (b boxPlotter) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	pt := func(slot, v float64) vg.Point { return b.l.point(trX, trY, slot, v) }
	rng := rand.New(rand.NewPCG(b.seed, 0x9E3779B97F4A7C15))
	const halfBox = 0.28
	thin := draw.LineStyle{Color: color.Black, Width: vg.Points(0.8)}
	thick := draw.LineStyle{Color: color.Black, Width: vg.Points(2)}
	extreme := draw.LineStyle{Color: color.Gray{Y: 0x33}, Width: vg.Points(2.2)}
	inside := func(v float64) bool { return v >= b.lo && v <= b.hi }
	for i, g := range b.a.Groups {
		if g.N == 0 {
			continue
		}
		x := b.l.slot(i)
		var vals []float64
		if b.values != nil {
			vals = b.values[i]
		}
		wlo, whi := whiskerEnds(g, vals)
		clamp := func(v float64) float64 { return math.Max(b.lo, math.Min(b.hi, v)) }
		fill := groupColor(i)
		fill.A = 0x66
		box := []vg.Point{pt(x-halfBox, clamp(g.Q1)), pt(x+halfBox, clamp(g.Q1)), pt(x+halfBox, clamp(g.Q3)), pt(x-halfBox, clamp(g.Q3))}
		c.FillPolygon(fill, box)
		c.StrokeLines(thin, append(box, box[0]))
		c.StrokeLines(thick, []vg.Point{pt(x-halfBox, clamp(g.Median)), pt(x+halfBox, clamp(g.Median))})
		c.StrokeLines(thin, []vg.Point{pt(x, clamp(g.Q3)), pt(x, clamp(whi))})
		c.StrokeLines(thin, []vg.Point{pt(x, clamp(g.Q1)), pt(x, clamp(wlo))})
		for _, w := range []float64{wlo, whi} {
			if inside(w) {
				c.StrokeLines(thin, []vg.Point{pt(x-halfBox/2, w), pt(x+halfBox/2, w)})
			}
		}
		for _, e := range []float64{g.Min, g.Max} {
			if inside(e) {
				c.StrokeLines(extreme, []vg.Point{pt(x-halfBox/4, e), pt(x+halfBox/4, e)})
			}
		}
		below, above := 0, 0
		if vals != nil {
			flo, fhi := tukeyFences(g.Q1, g.Q3)
			m := min(len(vals), MaxPointsPerGroup)
			dot := draw.GlyphStyle{Color: darker(groupColor(i)), Radius: vg.Points(2), Shape: draw.CircleGlyph{}}
			ring := draw.GlyphStyle{Color: color.Black, Radius: vg.Points(2.4), Shape: draw.RingGlyph{}}
			for j := range m {
				v := vals[pointIndex(j, m, len(vals))]
				jx := x + (rng.Float64()-0.5)*1.6*halfBox
				switch {
				case v < b.lo:
					below++
				case v > b.hi:
					above++
				case v < flo || v > fhi:
					c.DrawGlyphNoClip(ring, pt(jx, v))
				default:
					c.DrawGlyphNoClip(dot, pt(jx, v))
				}
			}
		}
		if g.Min < b.lo {
			b.edgeMark(c, pt(x, b.lo), false, beyondText(below, "min", g.Min, b.l.horizontal))
		}
		if g.Max > b.hi {
			b.edgeMark(c, pt(x, b.hi), true, beyondText(above, "max", g.Max, b.l.horizontal))
		}
	}
}

// beyondText labels an edge mark: the number of drawn observations beyond the axis, or
// without observations the extreme itself ("max" over "1e+300" side by side).
func beyondText(count int, which string, v float64, horizontal bool) string {
	if count > 0 {
		return strconv.Itoa(count) + " beyond"
	}
	if horizontal {
		return which + " " + Num(v)
	}
	return which + "\n" + Num(v)
}

// edgeMark draws a triangle at the end of the value axis (at, on the frame), pointing out
// of the plot, and its label inside the plot next to it.
func (b boxPlotter) edgeMark(c draw.Canvas, at vg.Point, high bool, label string) {
	const size = vg.Length(5)
	out := vg.Length(1)
	if !high {
		out = -1
	}
	var tri []vg.Point
	sty := textStyle(smallSize, color.Black)
	pos := at
	if b.l.horizontal {
		tri = []vg.Point{{X: at.X, Y: at.Y}, {X: at.X - out*size*1.6, Y: at.Y + size}, {X: at.X - out*size*1.6, Y: at.Y - size}}
		pos.X -= out * (size*1.6 + 2)
		sty.XAlign = draw.XRight
		if !high {
			sty.XAlign = draw.XLeft
		}
	} else {
		tri = []vg.Point{{X: at.X, Y: at.Y}, {X: at.X - size, Y: at.Y - out*size*1.6}, {X: at.X + size, Y: at.Y - out*size*1.6}}
		pos.Y -= out * (size*1.6 + 2)
		sty.YAlign = draw.YTop
		if !high {
			sty.YAlign = draw.YBottom
		}
	}
	c.FillPolygon(color.Black, tri)
	c.FillText(sty, pos, label)
}

// boxPlotSVG draws the box plot of an analysis's groups from the quartiles, median,
// minimum and maximum in the results, with the observations (values, per group, may be
// nil) as deterministically jittered points, on the scale the plan asks for; note says
// why a log scale was not used.
func boxPlotSVG(a *results.Analysis, values [][]float64, want spec.ValueScale) (svg []byte, note string, err error) {
	sc, note := chooseScale(a, want)
	wlo, whi, emin, emax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for i, g := range a.Groups {
		if g.N == 0 {
			continue
		}
		var vals []float64
		if values != nil {
			vals = values[i]
		}
		lo, hi := whiskerEnds(g, vals)
		wlo, whi = math.Min(wlo, lo), math.Max(whi, hi)
		emin, emax = math.Min(emin, g.Min), math.Max(emax, g.Max)
	}
	if math.IsInf(emin, 0) {
		return nil, "", errors.New("box plot: no group has observations")
	}
	if sc.log {
		wlo = math.Max(wlo, emin) // the lower fence may lie at or below 0
	}
	lo, hi := valueAxis(sc.fwd(wlo), sc.fwd(whi), sc.fwd(emin), sc.fwd(emax))
	if sc.log {
		// From 1e-323 (subnormal) to 1e308: powers of ten that are finite and above 0.
		lo, hi = math.Max(lo, -323), math.Min(hi, 308)
	}
	lo, hi = sc.inv(lo), sc.inv(hi)
	l := layoutFor(len(a.Groups))
	p := newPlot()
	tips := &svgTips{}
	va, ga := l.axes(p)
	va.Min, va.Max = lo, hi
	va.Tick.Marker = plainTicks{}
	if sc.log {
		va.Scale = plot.LogScale{}
		va.Tick.Marker = plainTicks{log: true}
	}
	va.Label.Text = axisLabel(a)
	ga.Min, ga.Max = 0.4, float64(len(a.Groups))+0.6
	ga.Tick.Marker = groupTicks(l, groupNames(a), groupNs(a), tips)
	ga.Label.Text = "group"
	p.Add(boxPlotter{a: a, values: values, seed: jitterSeed(a.ID), l: l, lo: lo, hi: hi})
	svg, err = renderSVG(p, l.w, l.h, "Box plot of "+axisLabel(a)+" by group", tips)
	return svg, note, err
}

func groupNames(a *results.Analysis) []string {
	names := make([]string, len(a.Groups))
	for i, g := range a.Groups {
		names[i] = g.Name
	}
	return names
}

func groupNs(a *results.Analysis) []int {
	ns := make([]int, len(a.Groups))
	for i, g := range a.Groups {
		ns[i] = g.N
	}
	return ns
}

// boxCaption says what the box plot shows: the quartile definition of results.json,
// Tukey's whiskers, the marks, the points and the scale.
func boxCaption(a *results.Analysis, quantiles string, hasValues bool, points int, scaleNote string, log bool) string {
	var b strings.Builder
	b.WriteString("Box plot of " + a.Outcome + unitSuffix(a.Unit) + " by group: boxes from Q1 to Q3 with the median as a thick line (quartiles as in results.json: " + quantiles + "). ")
	if hasValues {
		b.WriteString("Whiskers reach the most extreme observation within 1.5 IQR of the box (Tukey's fences, Tukey 1977); observations beyond the fences are black rings. ")
	} else {
		b.WriteString("Whiskers reach Tukey's fences, 1.5 IQR beyond the box (Tukey 1977), or the minimum and the maximum where those lie closer. ")
	}
	b.WriteString("Short thick bars mark each group's minimum and maximum. The value axis covers the whiskers and the extremes near them; a triangle at its end points to values beyond it, with their count or the extreme value. ")
	if hasValues {
		b.WriteString("Dots are the observations, spread sideways by a fixed pseudo-random jitter")
		if points > MaxPointsPerGroup {
			b.WriteString("; groups with more than " + strconv.Itoa(MaxPointsPerGroup) + " observations show " + strconv.Itoa(MaxPointsPerGroup) + " of them, evenly spaced in rank, including the extremes, and the counts beyond the axis are of the points shown")
		}
		b.WriteString(".")
	} else {
		b.WriteString("The observations were not given, so no dots are drawn.")
	}
	if log {
		b.WriteString(" The value axis is logarithmic.")
	}
	if scaleNote != "" {
		b.WriteString(" " + scaleNote)
	}
	return b.String()
}
