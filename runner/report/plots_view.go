package report

import (
	"html/template"
	"strconv"

	"rankplan/spec"
)

// addPlots draws an analysis's plots for the page: the box plot (on the plan's value
// scale) with its caption, the mean-rank plot, and where pairs ran the heat map of their
// p-values, with a note when its cells carry no numbers, and the forest plot. The SVG
// canvas escapes every text it writes.
func (v *htmlAnalysis) addPlots(quantiles string, vals [][]float64, scale spec.ValueScale) error {
	a := v.Analysis
	if a.N > 0 {
		svg, note, err := boxPlotSVG(a, vals, scale)
		if err != nil {
			return err
		}
		v.Box = template.HTML(svg)
		log, _ := chooseScale(a, scale)
		v.BoxCaption = boxCaption(a, quantiles, vals != nil, v.Points, note, log.log)
		if svg, err = meanRankPlotSVG(a); err != nil {
			return err
		}
		v.Ranks = template.HTML(svg)
	}
	if ph := a.PostHoc; ph != nil && ph.Ran && len(ph.Pairs) > 0 {
		svg, compact, err := heatmapSVG(a)
		if err != nil {
			return err
		}
		v.Heat = template.HTML(svg)
		if !compact {
			v.HeatNote = "The cells show the p-values to three significant digits (below 0.001 as “<0.001”); the pairs table gives every digit."
		} else {
			v.HeatNote = "With " + strconv.Itoa(len(a.Groups)) + " groups the cells carry no numbers: the colour gives the p-value on the scale below, each cell names its pair and value when the pointer rests on it, and the pairs table lists every value."
		}
		if v.Forest, err = forestFigure(a); err != nil {
			return err
		}
	}
	return nil
}
