package report

import (
	"bytes"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"gonum.org/v1/plot/vg"

	"rankplan/runner/results"
	"rankplan/spec"
	"rankplan/stats"
)

// TestLayoutFor checks the layout chosen by the number of groups: side by side up to
// eight groups, 4.2 to 7 in wide and 3.2 in high; one 18 pt row per group from nine on,
// 7 in wide and 0.9 in + k·18 pt high (the sizes worked out from layoutFor's formula).
func TestLayoutFor(t *testing.T) {
	for _, tc := range []struct {
		k          int
		horizontal bool
		w, h       vg.Length // points
	}{
		{1, false, 4.2 * 72, 3.2 * 72},
		{3, false, 4.4 * 72, 3.2 * 72},
		{5, false, 6.4 * 72, 3.2 * 72},
		{8, false, 7 * 72, 3.2 * 72},
		{9, true, 7 * 72, 0.9*72 + 9*18},
		{11, true, 7 * 72, 0.9*72 + 11*18},
		{50, true, 7 * 72, 0.9*72 + 50*18},
	} {
		l := layoutFor(tc.k)
		if l.horizontal != tc.horizontal || math.Abs(float64(l.w-tc.w)) > 1e-9 || math.Abs(float64(l.h-tc.h)) > 1e-9 {
			t.Errorf("k = %d: horizontal %v, %v × %v pt; want %v, %v × %v", tc.k, l.horizontal, l.w, l.h, tc.horizontal, tc.w, tc.h)
		}
		// Neighbouring slots never share a label: side by side, the widest label in the
		// widest substitute typeface takes at most 80% of a slot.
		if !l.horizontal {
			if slot := (l.w - valueAxisSpace) / vg.Length(tc.k); l.labelMax*fontSlack > 0.8*slot+1e-9 {
				t.Errorf("k = %d: labels up to %v pt in slots of %v pt", tc.k, l.labelMax*fontSlack, slot)
			}
		}
		// Slots run 1…k, the first group first in reading order (top in rows).
		first, last := l.slot(0), l.slot(tc.k-1)
		if tc.horizontal && (first != float64(tc.k) || last != 1) || !tc.horizontal && (first != 1 || last != float64(tc.k)) {
			t.Errorf("k = %d: slots from %v to %v", tc.k, first, last)
		}
	}
}

// TestTukeyFences works Tukey's fences and whiskers by hand on 1, 2, …, 9, 30. Type 7
// quartiles (Hyndman and Fan 1996, h = (n − 1)p): Q1 at h = 2.25, 3 + 0.25·(4 − 3) = 3.25;
// Q3 at h = 6.75, 7 + 0.75·(8 − 7) = 7.75; IQR = 4.5; fences 3.25 − 6.75 = −3.5 and
// 7.75 + 6.75 = 14.5. The whiskers end at 1 and 9, the most extreme values inside; 30 is
// an outlier. Without the values they end at the minimum 1 and the fence 14.5.
func TestTukeyFences(t *testing.T) {
	vals := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 30}
	q1, med, q3, err := stats.Quartiles(vals)
	if err != nil || q1 != 3.25 || q3 != 7.75 || med != 5.5 {
		t.Fatalf("stats.Quartiles (the quartiles of results.json) = %v, %v, %v, %v; the hand-worked 3.25, 5.5, 7.75", q1, med, q3, err)
	}
	if lo, hi := tukeyFences(q1, q3); lo != -3.5 || hi != 14.5 {
		t.Errorf("fences %v, %v; want -3.5, 14.5", lo, hi)
	}
	g := results.Group{N: 10, Q1: q1, Median: med, Q3: q3, Min: 1, Max: 30}
	for _, tc := range []struct {
		name   string
		g      results.Group
		vals   []float64
		lo, hi float64
	}{
		{"values", g, vals, 1, 9},
		{"no values", g, nil, 1, 14.5},
		// Thinned to 1, 5, 30: the most extreme values given inside the fences.
		{"thinned", g, []float64{1, 5, 30}, 1, 7.75},
		// All tied: the box, whiskers and fences are one point.
		{"tied", results.Group{N: 3, Q1: 2, Median: 2, Q3: 2, Min: 2, Max: 2}, []float64{2, 2, 2}, 2, 2},
		// Two values 0 and 10: Q1 = 2.5, Q3 = 7.5, fences −5 and 15, whiskers 0 and 10.
		{"two", results.Group{N: 2, Q1: 2.5, Median: 5, Q3: 7.5, Min: 0, Max: 10}, []float64{0, 10}, 0, 10},
		// Both tails beyond: 100 and −100 are outliers around 1…5 (Q1 = 1.5, Q3 = 4.5 by hand
		// for the seven values −100, 1, 2, 3, 4, 5, 100: h = 1.5 and 4.5, fences −3 and 9).
		{"both", results.Group{N: 7, Q1: 1.5, Median: 3, Q3: 4.5, Min: -100, Max: 100}, []float64{-100, 1, 2, 3, 4, 5, 100}, 1, 5},
	} {
		if lo, hi := whiskerEnds(tc.g, tc.vals); lo != tc.lo || hi != tc.hi {
			t.Errorf("%s: whiskers %v, %v; want %v, %v", tc.name, lo, hi, tc.lo, tc.hi)
		}
	}
	if q1, _, q3, _ := stats.Quartiles([]float64{-100, 1, 2, 3, 4, 5, 100}); q1 != 1.5 || q3 != 4.5 {
		t.Errorf("quartiles of the case both: %v, %v", q1, q3)
	}
}

// TestValueAxis works the value axis by hand: it reaches an extreme within half the
// whiskers' span, stops 15% of the span past the whisker otherwise, and is padded by 5%.
func TestValueAxis(t *testing.T) {
	for _, tc := range []struct {
		name                 string
		wlo, whi, emin, emax float64
		lo, hi               float64
	}{
		// s = 10; 8 is 2 below (≤ 5): kept; 1e300 is far: 20 + 1.5 = 21.5; pad 0.05·13.5.
		{"one huge value", 10, 20, 8, 1e300, 8 - 0.675, 21.5 + 0.675},
		// Nothing far: the extremes 9 and 21, pad 0.6.
		{"no outliers", 10, 20, 9, 21, 8.4, 21.6},
		// A far low value: 10 − 1.5 = 8.5 to 20, pad 0.575.
		{"far low", 10, 20, -1000, 20, 8.5 - 0.575, 20.575},
		// At the reach, 5 below a span of 10: kept, [5, 21] padded by 0.8.
		{"at the reach", 10, 20, 5, 21, 4.2, 21.8},
		// Just past it, 5.5 below: the axis stops at 8.5, [8.5, 21] padded by 0.625.
		{"past the reach", 10, 20, 4.5, 21, 7.875, 21.625},
		// Every value 5: s taken as max(0.5, 1) = 1; [5, 5] padded by max(1, 0.25).
		{"constant", 5, 5, 5, 5, 4, 6},
	} {
		lo, hi := valueAxis(tc.wlo, tc.whi, tc.emin, tc.emax)
		if math.Abs(lo-tc.lo) > 1e-12 || math.Abs(hi-tc.hi) > 1e-12 {
			t.Errorf("%s: axis [%v, %v], want [%v, %v]", tc.name, lo, hi, tc.lo, tc.hi)
		}
	}
}

// TestMeanRankRange checks that the mean-rank axis spans the mean ranks and their
// intervals, not 1…N: mean ranks 10, 20, 30 with intervals ±5 and N = 39 give [5, 35]
// padded by 1.5.
func TestMeanRankRange(t *testing.T) {
	a := &results.Analysis{N: 39}
	for _, m := range []float64{10, 20, 30} {
		a.Groups = append(a.Groups, results.Group{N: 13, MeanRank: m, MeanRankInterval: &results.RankInterval{Low: m - 5, High: m + 5}})
	}
	a.Groups = append(a.Groups, results.Group{N: 0, MeanRank: 0}) // no observations: left out
	if lo, hi := meanRankRange(a); lo != 3.5 || hi != 36.5 {
		t.Errorf("range [%v, %v], want [3.5, 36.5]", lo, hi)
	}
}

// TestTruncate checks the ellipsis: a label that fits stays, a longer one becomes the
// longest prefix of whole code points that fits with "…", never less than one.
func TestTruncate(t *testing.T) {
	for _, tc := range []struct {
		s    string
		maxW vg.Length
	}{
		{"G01", 100},
		{"Site 02 north annex, evening shift", 60},
		{"Ünïcödé grüppé ñame with accents", 50},
		{"東京都 北区 第二病棟 夜勤", 30},
		{"Long", 1},
	} {
		got := truncate(tc.s, tc.maxW, tickSize)
		if !utf8.ValidString(got) {
			t.Errorf("%q: %q is not valid UTF-8", tc.s, got)
		}
		if textWidth(tc.s, tickSize) <= tc.maxW {
			if got != tc.s {
				t.Errorf("%q fits in %v pt but became %q", tc.s, tc.maxW, got)
			}
			continue
		}
		prefix, ok := strings.CutSuffix(got, "…")
		if !ok || !strings.HasPrefix(tc.s, prefix) || prefix == "" {
			t.Errorf("%q in %v pt: %q, want a prefix with an ellipsis", tc.s, tc.maxW, got)
			continue
		}
		n := utf8.RuneCountInString(prefix)
		if n > 1 && textWidth(got, tickSize) > tc.maxW {
			t.Errorf("%q: %q is %v pt wide, more than %v", tc.s, got, textWidth(got, tickSize), tc.maxW)
		}
		if longer := string([]rune(tc.s)[:n+1]) + "…"; textWidth(longer, tickSize) <= tc.maxW {
			t.Errorf("%q: %q would fit too, longer than %q", tc.s, longer, got)
		}
	}
}

// TestPlainNumber checks tick labels: plain decimals below 1e15 with the decimals the
// step needs, exponent form from 1e15 on.
func TestPlainNumber(t *testing.T) {
	for _, tc := range []struct {
		v, step float64
		want    string
	}{
		{0.1 + 0.2, 0.1, "0.3"},
		{0.25, 0.25, "0.25"},
		{1e-7, 1e-7, "0.0000001"},
		{math.Copysign(0, -1), 1, "0"},
		{-2.5, 0.5, "-2.5"},
		{25, 5, "25"},
		{1200000, 200000, "1200000"},
		{123456789012345, 1e14, "123456789012345"},
		{2e15, 1e15, "2e+15"},
		{1e300, 1e300, "1e+300"},
	} {
		if got := plainNumber(tc.v, tc.step); got != tc.want {
			t.Errorf("plainNumber(%v, %v) = %q, want %q", tc.v, tc.step, got, tc.want)
		}
	}
	exp := regexp.MustCompile(`[0-9]e[-+]`)
	for _, r := range [][2]float64{{0, 1e-6}, {1e-9, 3e-9}, {1e6, 1e14}, {-0.003, 0.002}, {0.5, 800}} {
		for _, log := range []bool{false, true} {
			if log && r[0] <= 0 {
				continue
			}
			labels := 0
			for _, tk := range (plainTicks{log: log}).Ticks(r[0], r[1]) {
				if tk.Label == "" {
					continue
				}
				labels++
				if exp.MatchString(tk.Label) {
					t.Errorf("ticks on [%v, %v] (log %v): label %q in exponent form", r[0], r[1], log, tk.Label)
				}
				if v, err := strconv.ParseFloat(tk.Label, 64); err != nil || math.Abs(v-tk.Value) > 1e-9*math.Max(math.Abs(tk.Value), r[1]-r[0]) {
					t.Errorf("ticks on [%v, %v] (log %v): label %q for %v", r[0], r[1], log, tk.Label, tk.Value)
				}
			}
			if labels < 2 {
				t.Errorf("ticks on [%v, %v] (log %v): %d labels", r[0], r[1], log, labels)
			}
		}
	}
}

// TestHeatLayout checks the heat map's cells: numbers up to 12 groups, sized so that the
// widest cell text fits 85% of a cell in the widest substitute typeface and at least 6 pt;
// colour only from 13 groups on.
func TestHeatLayout(t *testing.T) {
	texts := []string{cellP(0.0001), cellP(0.00123456), cellP(0.0883691), cellP(1)}
	if want := []string{"<0.001", "0.00123", "0.0884", "1"}; strings.Join(texts, " ") != strings.Join(want, " ") {
		t.Errorf("cell texts %q, want %q", texts, want)
	}
	for _, k := range []int{2, 3, 6, 11, 12, 13, 20, 50} {
		names := make([]string, k)
		for i := range names {
			names[i] = "G" + strconv.Itoa(i+1)
		}
		g := heatLayout(k, names, texts)
		if compact := g.numSize == 0; compact != (k >= heatCompactFrom) {
			t.Errorf("k = %d: numbers at %v pt", k, g.numSize)
		}
		if g.numSize > 0 {
			for _, s := range texts {
				if w := textWidth(s, g.numSize) * fontSlack; w > 0.85*g.cell || g.numSize < 6 {
					t.Errorf("k = %d: %q at %v pt is %v pt wide in cells of %v pt", k, s, g.numSize, w, g.cell)
				}
			}
		}
		if g.cell < 11 || g.cell > 0.9*72 {
			t.Errorf("k = %d: cells of %v pt", k, g.cell)
		}
	}
}

// TestSVGTips checks the tooltips written into a canvas's SVG: a label's <title> inside
// the text that shows it, in drawing order, repeated labels each once, and areas as
// transparent rectangles inside the drawing group.
func TestSVGTips(t *testing.T) {
	svg := []byte("<g>\n<text x=\"1\">A…</text>\n<text x=\"2\">A…</text>\n<text>B &amp; C…</text>\n</g>\n")
	tips := &svgTips{}
	tips.label("A…", "Alpha")
	tips.label("A…", "Aleph")
	tips.label("B & C…", "B & Co <1>")
	tips.area(vg.Rectangle{Min: vg.Point{X: 1, Y: 2}, Max: vg.Point{X: 4, Y: 8}}, "cell")
	got, err := tips.apply(svg)
	if err != nil {
		t.Fatal(err)
	}
	want := "<g>\n<text x=\"1\"><title>Alpha</title>A…</text>\n<text x=\"2\"><title>Aleph</title>A…</text>\n" +
		"<text><title>B &amp; Co &lt;1&gt;</title>B &amp; C…</text>\n" +
		"<rect x=\"1\" y=\"2\" width=\"3\" height=\"6\" style=\"fill:none;pointer-events:all\"><title>cell</title></rect>\n</g>\n"
	if string(got) != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
	missing := &svgTips{}
	missing.label("Z…", "Zeta")
	if _, err := missing.apply(svg); err == nil {
		t.Errorf("a label not in the SVG: no error")
	}
}

// hugeAnalysis is an invented analysis of three groups, the second holding one value of
// 1e300 among values near 10.
func hugeAnalysis() (*results.Analysis, [][]float64) {
	vals := [][]float64{{8, 9, 10, 11, 12}, {9, 10, 11, 12, 1e300}, {10, 11, 12, 13, 14}}
	a := &results.Analysis{ID: "huge", Outcome: "weight", Unit: "g", N: 15}
	for i, v := range vals {
		q1, med, q3, _ := stats.Quartiles(v)
		a.Groups = append(a.Groups, results.Group{Name: "G" + strconv.Itoa(i+1), N: len(v), Q1: q1, Median: med, Q3: q3, Min: v[0], Max: v[len(v)-1]})
	}
	return a, vals
}

// TestBoxPlotExtremeValue checks that one value of 1e300 does not stretch the box plot's
// axis: no tick label above 100, and a mark at the edge that says "1 beyond", or without
// the observations "max" with the value.
func TestBoxPlotExtremeValue(t *testing.T) {
	a, vals := hugeAnalysis()
	ticks := regexp.MustCompile(`>(-?[0-9.]+)</text>`)
	for _, tc := range []struct {
		name string
		vals [][]float64
		mark []string
	}{
		{"values", vals, []string{">1 beyond</text>"}},
		{"no values", nil, []string{">max</text>", ">1e+300</text>"}},
	} {
		svg, note, err := boxPlotSVG(a, tc.vals, spec.LinearScale)
		if err != nil || note != "" {
			t.Fatalf("%s: %v %q", tc.name, err, note)
		}
		for _, m := range ticks.FindAllSubmatch(svg, -1) {
			if v, _ := strconv.ParseFloat(string(m[1]), 64); v > 100 {
				t.Errorf("%s: tick label %s", tc.name, m[1])
			}
		}
		for _, m := range tc.mark {
			if !bytes.Contains(svg, []byte(m)) {
				t.Errorf("%s: no %q in the box plot", tc.name, m)
			}
		}
	}
}

// TestChooseScale checks the log value axis: used when every group's minimum is above 0,
// linear with a note naming the group otherwise, and linear unless asked for.
func TestChooseScale(t *testing.T) {
	a, _ := hugeAnalysis()
	if s, note := chooseScale(a, spec.LogScale); !s.log || note != "" {
		t.Errorf("positive values: log %v, note %q", s.log, note)
	}
	if s, _ := chooseScale(a, spec.LinearScale); s.log {
		t.Errorf("linear asked for, log used")
	}
	a.Groups[2].Min = 0
	if s, note := chooseScale(a, spec.LogScale); s.log || !strings.Contains(note, "group G3") || !strings.Contains(note, "linear") {
		t.Errorf("a value of 0: log %v, note %q", s.log, note)
	}
	a.Groups[2].Min = 10
	svg, _, err := boxPlotSVG(a, nil, spec.LogScale)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(svg, []byte(">10</text>")) {
		t.Errorf("log axis without a label at 10")
	}
}

// TestForestFigure checks the forest plot: one labelled row per pair up to maxForestRows,
// a note pointing to the pairs table beyond.
func TestForestFigure(t *testing.T) {
	res, _ := loadFixture(t, "dissolution")
	a := &res.Analyses[0]
	fig, err := forestFigure(a)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range a.PostHoc.Pairs {
		if !strings.Contains(string(fig), ">"+p.Groups[0]+" vs "+p.Groups[1]+"</text>") {
			t.Errorf("no row labelled %s vs %s", p.Groups[0], p.Groups[1])
		}
	}
	many := *a
	ph := *a.PostHoc
	for len(ph.Pairs) <= maxForestRows {
		ph.Pairs = append(ph.Pairs, ph.Pairs...)
	}
	many.PostHoc = &ph
	if fig, err := forestFigure(&many); err != nil || !strings.Contains(string(fig), "No forest plot") || strings.Contains(string(fig), "<svg") {
		t.Errorf("%d pairs: %v, %.80q", len(ph.Pairs), err, fig)
	}
}

// TestForestRange checks the forest plot's axis: quantile7 agrees with stats.Quartiles
// (type 7) and does not overflow on ±1e308; an interval running out to −1e300 leaves the
// axis at the scale of the other shifts, and without it the axis covers every interval.
func TestForestRange(t *testing.T) {
	v := []float64{-3, -1, 0, 0.5, 2, 2, 7, 11}
	q1, med, q3, err := stats.Quartiles(v)
	if err != nil || quantile7(v, 0.25) != q1 || quantile7(v, 0.5) != med || quantile7(v, 0.75) != q3 {
		t.Errorf("quantile7 %v %v %v, stats.Quartiles %v %v %v (%v)", quantile7(v, 0.25), quantile7(v, 0.5), quantile7(v, 0.75), q1, med, q3, err)
	}
	if q := quantile7([]float64{-1e308, 1e308}, 0.5); q != 0 {
		t.Errorf("quantile7 of ±1e308 = %v", q)
	}
	pair := func(shift, low, high float64) results.Pair {
		return results.Pair{HodgesLehmann: results.HLShift{Shift: shift, Interval: results.Interval{Low: low, High: high}}}
	}
	pairs := []results.Pair{pair(-1, -2, 0), pair(0.5, -0.5, 1.5), pair(1, 0, 2)}
	// Every end inside the fences: the axis is [−2, 2] padded by 0.2.
	if lo, hi := forestRange(pairs); math.Abs(lo+2.2) > 1e-12 || math.Abs(hi-2.2) > 1e-12 {
		t.Errorf("axis [%v, %v], want [-2.2, 2.2]", lo, hi)
	}
	pairs = append(pairs, pair(0.8, -1e300, 3))
	if lo, hi := forestRange(pairs); lo < -10 || hi < 3 || hi > 10 {
		t.Errorf("with an interval to -1e300: axis [%v, %v]", lo, hi)
	}
}

// TestThinBox checks that thinning keeps the adjacent values: on 1, 2, …, 1000 and an
// outlier 5000, ten evenly spaced order statistics miss 1000, the largest value inside the
// upper fence; ThinBox adds it, so the whiskers of the thinned values are those of all.
func TestThinBox(t *testing.T) {
	s := make([]float64, 0, 1001)
	for i := 1; i <= 1000; i++ {
		s = append(s, float64(i))
	}
	s = append(s, 5000)
	q1, med, q3, err := stats.Quartiles(s)
	if err != nil {
		t.Fatal(err)
	}
	g := results.Group{N: len(s), Q1: q1, Median: med, Q3: q3, Min: s[0], Max: s[len(s)-1]}
	thin := Thin(s, 10)
	if slices.Contains(thin, 1000) {
		t.Fatalf("Thin kept 1000 already: %v", thin)
	}
	got := ThinBox(s, 10, q1, q3)
	if len(got) != 11 || !slices.IsSorted(got) || !slices.Contains(got, 1000) || got[0] != 1 || got[len(got)-1] != 5000 {
		t.Errorf("ThinBox = %v", got)
	}
	lo, hi := whiskerEnds(g, got)
	wlo, whi := whiskerEnds(g, s)
	if lo != wlo || hi != whi || hi != 1000 {
		t.Errorf("whiskers of the thinned values %v, %v; of all %v, %v", lo, hi, wlo, whi)
	}
	if short := []float64{1, 2, 3}; !slices.Equal(ThinBox(short, 10, 1.5, 2.5), short) {
		t.Errorf("a short group is not kept whole")
	}
}

// TestPlotsExtremeFloats draws the box plot (linear and log), the mean-rank plot and the
// forest plot of groups holding extreme doubles: ±MaxFloat64, ±1e308, subnormals, −0. No
// plot may fail, panic or write a non-finite coordinate, and a log axis over 600 decades
// keeps its labels apart (at most 12).
func TestPlotsExtremeFloats(t *testing.T) {
	for _, tc := range []struct {
		name   string
		groups [][]float64
	}{
		{"max float", [][]float64{{-math.MaxFloat64, 0, math.MaxFloat64}, {1, 2, 3}}},
		{"1e308", [][]float64{{-1e308, 1e308}, {1e308, 1e308}}},
		{"subnormal", [][]float64{{5e-324, 1e-323, 2e-323}, {1e-310, 1e308, 1e308}}},
		{"zeros", [][]float64{{math.Copysign(0, -1), 0, 0}, {0, 0}}},
	} {
		a := &results.Analysis{ID: "x", Outcome: "y"}
		for i, v := range tc.groups {
			q1, med, q3, err := stats.Quartiles(v)
			if err != nil {
				t.Fatal(err)
			}
			a.N += len(v)
			a.Groups = append(a.Groups, results.Group{Name: "g" + strconv.Itoa(i), N: len(v), Q1: q1, Median: med, Q3: q3, Min: v[0], Max: v[len(v)-1], MeanRank: float64(a.N) / 2})
		}
		a.PostHoc = &results.PostHoc{Ran: true, Pairs: []results.Pair{{Groups: [2]string{"g0", "g1"},
			HodgesLehmann: results.HLShift{Shift: tc.groups[0][0], Interval: results.Interval{Level: 0.95, Low: -math.MaxFloat64, High: math.MaxFloat64}}}}}
		check := func(what string, svg []byte, err error) {
			t.Helper()
			if err != nil {
				t.Errorf("%s, %s: %v", tc.name, what, err)
			}
			if bytes.Contains(svg, []byte("NaN")) || bytes.Contains(svg, []byte("Inf")) {
				t.Errorf("%s, %s: non-finite coordinates", tc.name, what)
			}
			if n := bytes.Count(svg, []byte("</text>")); n > 40 {
				t.Errorf("%s, %s: %d texts", tc.name, what, n)
			}
		}
		for _, scale := range []spec.ValueScale{spec.LinearScale, spec.LogScale} {
			svg, _, err := boxPlotSVG(a, tc.groups, scale)
			check("box plot "+string(scale), svg, err)
			svg, _, err = boxPlotSVG(a, nil, scale)
			check("box plot without values "+string(scale), svg, err)
		}
		svg, err := meanRankPlotSVG(a)
		check("mean-rank plot", svg, err)
		svg, err = forestSVG(a, a.PostHoc.Pairs)
		check("forest plot", svg, err)
	}
}
