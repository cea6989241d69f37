package report

import (
	"bytes"
	"errors"
	"fmt"
	"html"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
)

// horizontalFrom is the number of groups from which the box plot and the mean-rank plot
// are drawn horizontally: groups on the y axis, one row each, labels at the left, the plot
// growing in height with the number of groups. Up to eight groups, labels of a usual
// length fit side by side below a plot of the page's width.
const horizontalFrom = 9

// Sizes of the group plots, in inches and points.
const (
	verticalMinWidth = 4.2 // inches
	verticalMaxWidth = 7.0
	horizontalWidth  = 7.0
	plotHeight       = 3.2           // inches, the vertical layout's height
	frameHeight      = 0.9           // inches that a horizontal plot takes beyond its rows
	rowHeight        = vg.Length(18) // points per group row in the horizontal layout
	tickSize         = vg.Length(9)  // points, the tick labels' size
	smallSize        = vg.Length(7)  // points, the marks' labels ("3 beyond")
	labelColumn      = 1.7 * vg.Inch // widest group label of a horizontal plot
	valueAxisSpace   = 0.8 * vg.Inch // what the value axis takes from a vertical plot's width
	fontSlack        = 1.3           // a viewer's substitute typeface may be this much wider
)

// groupLayout is the geometry of a plot with one slot per group (the box plot and the
// mean-rank plot): its orientation, its size and the widest group label that fits.
type groupLayout struct {
	k          int
	horizontal bool
	w, h       vg.Length
	// labelMax is the widest group name, in points of plotFont at tickSize, that keeps
	// neighbouring labels apart even in a typeface fontSlack times wider.
	labelMax vg.Length
}

// layoutFor chooses the layout for k groups. Below horizontalFrom the groups stand side by
// side, the plot
//
//	w = clamp(1.4 + 1.0·k, 4.2, 7) in wide and 3.2 in high,
//
// with each label at most 80% of its slot (w − 0.8 in)/k; from horizontalFrom on, one row
// of 18 pt per group, h = 0.9 in + k·18 pt, w = 7 in, labels at most 1.7 in. Label widths
// are those of plotFont divided by fontSlack, so that a wider substitute still fits.
func layoutFor(k int) groupLayout {
	k = max(k, 1)
	if k >= horizontalFrom {
		return groupLayout{
			k: k, horizontal: true,
			w: horizontalWidth * vg.Inch, h: frameHeight*vg.Inch + vg.Length(k)*rowHeight,
			labelMax: labelColumn / fontSlack,
		}
	}
	w := vg.Length(math.Max(verticalMinWidth, math.Min(verticalMaxWidth, 1.4+1.0*float64(k)))) * vg.Inch
	slot := (w - valueAxisSpace) / vg.Length(k)
	return groupLayout{k: k, w: w, h: plotHeight * vg.Inch, labelMax: 0.8 * slot / fontSlack}
}

// slot is the position of the i-th group (from 0) on the group axis: 1…k from the left,
// or k…1 from the top in the horizontal layout, so that the first group comes first in
// reading order.
func (l groupLayout) slot(i int) float64 {
	if l.horizontal {
		return float64(l.k - i)
	}
	return float64(i + 1)
}

// point maps a position on the group axis and one on the value axis to the canvas.
func (l groupLayout) point(trX, trY func(float64) vg.Length, slot, v float64) vg.Point {
	if l.horizontal {
		return vg.Point{X: trX(v), Y: trY(slot)}
	}
	return vg.Point{X: trX(slot), Y: trY(v)}
}

// axes returns the value axis and the group axis of p.
func (l groupLayout) axes(p *plot.Plot) (value, group *plot.Axis) {
	if l.horizontal {
		return &p.X, &p.Y
	}
	return &p.Y, &p.X
}

// textWidth is the width of s in plotFont at size.
func textWidth(s string, size vg.Length) vg.Length {
	face := font.DefaultCache.Lookup(plotFont, size)
	return face.Width(s)
}

// truncate shortens s with an ellipsis so that it is at most maxW wide in plotFont at
// size: the longest prefix of whole code points that fits with "…" after it (at least
// one code point), or s itself when it fits.
func truncate(s string, maxW, size vg.Length) string {
	if textWidth(s, size) <= maxW {
		return s
	}
	runes := []rune(s)
	lo, hi := 1, len(runes) // the answer: the largest n in [1, len) whose prefix fits
	for lo < hi {
		mid := (lo + hi + 1) / 2
		if textWidth(string(runes[:mid])+"…", size) <= maxW {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return string(runes[:lo]) + "…"
}

// groupTicks labels the group slots with the group names, truncated to the layout's
// widest label, and the group sizes: "name" over "n = 12" side by side, "name (n = 12)"
// in rows. Each truncated name is added to tips with its full text.
func groupTicks(l groupLayout, names []string, sizes []int, tips *svgTips) plot.ConstantTicks {
	ticks := make(plot.ConstantTicks, len(names))
	for i, name := range names {
		n := "n = " + strconv.Itoa(sizes[i])
		var label, shown string
		if l.horizontal {
			shown = truncate(name, l.labelMax-textWidth(" ("+n+")", tickSize), tickSize)
			label = shown + " (" + n + ")"
		} else {
			shown = truncate(name, l.labelMax, tickSize)
			label = shown + "\n" + n
		}
		if shown != name {
			full := name + " (" + n + ")"
			if l.horizontal {
				tips.label(label, full)
			} else {
				tips.label(shown, full)
			}
		}
		ticks[i] = plot.Tick{Value: l.slot(i), Label: label}
	}
	return ticks
}

// svgTips are the tooltips of a plot: a <title> inside the <text> of a truncated label,
// and transparent areas over marks (heat-map cells, forest rows) that carry a <title>.
type svgTips struct {
	labels []labelTip
	areas  []areaTip
}

type labelTip struct{ shown, full string }

type areaTip struct {
	r    vg.Rectangle // canvas coordinates, points, y upwards
	text string
}

func (t *svgTips) label(shown, full string) {
	if t != nil {
		t.labels = append(t.labels, labelTip{shown, full})
	}
}

func (t *svgTips) area(r vg.Rectangle, text string) {
	if t != nil {
		t.areas = append(t.areas, areaTip{r, text})
	}
}

// apply writes the tooltips into the canvas's SVG: each label's <title> as the first child
// of the first <text> showing it after the previous one (searching from the start again
// when none follows), and the areas as transparent rectangles at the end of the drawing's
// group, which maps canvas coordinates to the SVG's.
func (t *svgTips) apply(svg []byte) ([]byte, error) {
	if t == nil || len(t.labels) == 0 && len(t.areas) == 0 {
		return svg, nil
	}
	out := svg
	from := 0
	for _, l := range t.labels {
		needle := []byte(">" + html.EscapeString(l.shown) + "</text>")
		i := bytes.Index(out[from:], needle)
		if i >= 0 {
			i += from
		} else if i = bytes.Index(out, needle); i < 0 {
			return nil, fmt.Errorf("tooltip: no text %q in the plot", l.shown)
		}
		title := []byte("<title>" + html.EscapeString(l.full) + "</title>")
		out = append(out[:i+1:i+1], append(title, out[i+1:]...)...)
		from = i + 1 + len(title)
	}
	if len(t.areas) > 0 {
		end := bytes.LastIndex(out, []byte("</g>"))
		if end < 0 {
			return nil, errors.New("tooltip: the plot has no drawing group")
		}
		var b bytes.Buffer
		for _, a := range t.areas {
			fmt.Fprintf(&b, `<rect x="%.5g" y="%.5g" width="%.5g" height="%.5g" style="fill:none;pointer-events:all"><title>%s</title></rect>`+"\n",
				a.r.Min.X.Points(), a.r.Min.Y.Points(), (a.r.Max.X - a.r.Min.X).Points(), (a.r.Max.Y - a.r.Min.Y).Points(), html.EscapeString(a.text))
		}
		out = append(out[:end:end], append(b.Bytes(), out[end:]...)...)
	}
	return out, nil
}

// textHandler lays out the plots' text: see [roomyText].
var textHandler text.Handler = roomyText{text.Plain{Fonts: font.DefaultCache}}

// roomyText is gonum/plot's plain text handler with room for the viewer's typeface: a
// browser's box of a line is its typeface's ascent plus descent, which for a substitute
// of Liberation Sans (DejaVu Sans: 1.164 em) exceeds Liberation's (1.117 em), and the
// plain handler sets the lines of a label one font size (1 em) apart. Here a line's box
// is textBoxSlack times Liberation's, its width fontSlack times, so that axes keep the
// room, and lines are set one full box apart. The text itself is placed as the plain
// handler places it.
type roomyText struct{ text.Plain }

// textBoxSlack enlarges a line's ascent and descent.
const textBoxSlack = 1.1

func (h roomyText) Box(txt string, fnt font.Font) (width, height, depth vg.Length) {
	w, a, d := h.Plain.Box(txt, fnt)
	return w * fontSlack, a * textBoxSlack, d * textBoxSlack
}

// Draw draws each line of txt, one line box (ascent, descent and line gap, times
// textBoxSlack) below the other, aligned within the whole as sty says.
func (h roomyText) Draw(c vg.Canvas, txt string, sty text.Style, pt vg.Point) {
	lines := h.Lines(txt)
	if len(lines) == 1 && lines[0] == "" {
		return
	}
	face := h.Fonts.Lookup(sty.Font, sty.Font.Size)
	e := face.Extents()
	step := (e.Ascent + e.Descent) * textBoxSlack
	c.SetColor(sty.Color)
	if sty.Rotation != 0 {
		c.Push()
		c.Rotate(sty.Rotation)
	}
	sin64, cos64 := math.Sincos(sty.Rotation)
	sin, cos := vg.Length(sin64), vg.Length(cos64)
	pt.X, pt.Y = pt.Y*sin+pt.X*cos, pt.Y*cos-pt.X*sin
	total := step * vg.Length(len(lines))
	// The bottom of the last line's box, then each baseline a descent above its box's bottom.
	bottom := pt.Y + total*vg.Length(sty.YAlign)
	for i, line := range lines {
		base := bottom + step*vg.Length(len(lines)-1-i) + e.Descent*textBoxSlack
		c.FillString(face, vg.Point{X: pt.X + vg.Length(sty.XAlign)*face.Width(line), Y: base}, line)
	}
	if sty.Rotation != 0 {
		c.Pop()
	}
}
