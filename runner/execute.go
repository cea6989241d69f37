package runner

import (
	"errors"
	"fmt"

	"rankplan/runner/results"
	"rankplan/spec"
	"rankplan/stats"
)

// smallestNormal is the smallest positive normal float64. A p-value below it is reported
// through its log10 only: subnormal doubles carry too few digits to be worth printing.
const smallestNormal = 0x1p-1022

// Conventions states the definitions every number in the results follows.
var Conventions = results.Conventions{
	Ranks:     "midranks for ties; values are compared as IEEE 754 doubles (-0 ties with 0)",
	Quantiles: "Hyndman & Fan (1996) type 7: linear interpolation between order statistics at h = (n - 1)p",
	Decision:  "reject the null hypothesis when p <= alpha",
}

// Execute runs every analysis of a prepared plan and assembles the results. It reads no
// files and depends on nothing but its input, so the same input gives the same results.
func Execute(prep *Prepared) (*results.Results, error) {
	p := prep.Plan
	res := &results.Results{
		Format:      results.Format,
		Plan:        results.Plan{ID: p.ID, Title: p.Title, Alpha: p.Alpha, Seed: p.Seed.String()},
		Data:        prep.Data,
		Conventions: Conventions,
		Analyses:    make([]results.Analysis, 0, len(prep.Analyses)),
	}
	for i := range prep.Analyses {
		a, err := analyse(p, &prep.Analyses[i])
		if err != nil {
			return nil, fmt.Errorf("analysis %q: %w", prep.Analyses[i].Analysis.ID, err)
		}
		res.Analyses = append(res.Analyses, a)
	}
	return res, nil
}

func analyse(p *spec.Plan, in *Input) (results.Analysis, error) {
	a := in.Analysis
	out := results.Analysis{
		ID:       a.ID,
		Title:    a.Title,
		Test:     string(a.Test),
		Outcome:  a.Outcome,
		N:        len(in.Values),
		Excluded: in.Excluded,
		Groups:   make([]results.Group, len(in.Groups)),
	}
	r, err := stats.Rank(in.Group, in.Values, len(in.Groups))
	if err != nil {
		return out, err
	}
	for j, name := range in.Groups {
		q1, med, q3, err := stats.Quartiles(r.Sorted[j])
		if err != nil {
			return out, fmt.Errorf("group %q: %w", name, err)
		}
		s := r.Sorted[j]
		out.Groups[j] = results.Group{
			Name: name, N: r.Counts[j],
			Median: med, Q1: q1, Q3: q3, Min: s[0], Max: s[len(s)-1],
			RankSum:  float64(r.RankSum2[j]) / 2,
			MeanRank: float64(r.RankSum2[j]) / float64(2*r.Counts[j]),
		}
	}

	kw, err := stats.KruskalWallisTest(r)
	if errors.Is(err, stats.ErrAllTied) {
		out.Status = "not-computable"
		out.Reason = "all observations are tied: every value is the same, so ranks carry no information"
		return out, nil
	}
	if err != nil {
		return out, err
	}
	blocks, tied := 0, 0
	for _, b := range r.Blocks {
		if b.Size > 1 {
			blocks++
			tied += b.Size
		}
	}
	out.Status = "ok"
	out.KruskalWallis = &results.KruskalWallis{
		H: kw.H, HUncorrected: kw.HUncorrected, TieCorrection: kw.TieCorrection, DF: kw.DF,
		TieBlocks: blocks, TiedValues: tied,
	}
	pv := &results.PValue{Method: string(spec.Asymptotic), Log10: kw.Log10P}
	if kw.P >= smallestNormal {
		v := kw.P
		pv.Value = &v
	}
	out.PValue = pv
	out.Decision = &results.Decision{Alpha: p.Alpha, Reject: kw.P <= p.Alpha}
	return out, nil
}
