package runner

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"

	"rankplan/runner/results"
	"rankplan/spec"
	"rankplan/stats"
	"rankplan/stats/stream"
)

// smallestNormal is the smallest positive normal float64. A p-value below it is reported
// through its log10 only: subnormal doubles carry too few digits to be worth printing.
const smallestNormal = 0x1p-1022

// Conventions states the definitions every number in the results follows.
var Conventions = results.Conventions{
	Ranks:     "midranks for ties; values are compared as IEEE 754 doubles (-0 ties with 0)",
	Quantiles: "Hyndman & Fan (1996) type 7: linear interpolation between order statistics at h = (n - 1)p",
	Decision:  "reject the null hypothesis when p <= alpha; an analysis in the plan's multiplicity family rejects when its adjusted p <= alpha (for a fixed sequence, the largest p so far in the sequence)",
	RandomStream: "ChaCha8Rand (C2SP chacha8rand) per block; block key = SHA-256(" + stream.Label +
		" || 0x00 || purpose || 0x00 || seed as 8 bytes big-endian || analysis id length as 4 bytes big-endian || analysis id || block index as 8 bytes big-endian); " +
		"bounded integers by Lemire's method, shuffles by Fisher-Yates, resampling by uniform indices (specified step by step in rankplan's stats/stream package documentation)",
}

// Options are the settings of a run that do not change its results.
type Options struct {
	// Workers is the number of goroutines for resampling; 0 or less means one per core.
	// Results are identical for every value.
	Workers int
	// Progress, if not nil, is told how far the long steps of each analysis have come:
	// task is TaskExact (done and total are units of work against the exact method's
	// budget; the step may stop early when the design does not fit), TaskPermutation or
	// TaskBootstrap (resamples). It may be called from several goroutines at once and
	// out of order (see stats.Progress); it must be safe for concurrent use and return
	// quickly. Results are identical with and without it. When nil, the Progress
	// attached to the context by [WithProgress], if any, is used.
	Progress func(analysis, task string, done, total int64)
}

// Tasks reported to Options.Progress.
const (
	TaskExact       = "exact"       // the exact p-value's dynamic programme; units of work
	TaskPermutation = "permutation" // Monte Carlo permutation resamples
	TaskBootstrap   = "bootstrap"   // effect-size bootstrap resamples
)

type progressKey struct{}

// WithProgress returns a copy of ctx that carries f as the progress hook of every
// [Execute] under it whose Options.Progress is nil (for callers such as [Run] and
// [Verify], whose options do not carry one). f follows the rules of Options.Progress.
func WithProgress(ctx context.Context, f func(analysis, task string, done, total int64)) context.Context {
	return context.WithValue(ctx, progressKey{}, f)
}

// progress returns the stats hook for one task of one analysis, or nil.
func (o Options) progress(analysis, task string) stats.Progress {
	if o.Progress == nil {
		return nil
	}
	f := o.Progress
	return func(done, total int64) { f(analysis, task, done, total) }
}

// Execute runs every analysis of a prepared plan and assembles the results. It reads no
// files, leaves prep as it was, and depends on nothing but its input, so the same input
// gives the same results, whatever opt holds. When ctx ends, the long steps (the exact
// p-value, the resampling, the post-hoc pairs) stop and Execute returns ctx's error
// (wrapped).
func Execute(ctx context.Context, prep *Prepared, opt Options) (*results.Results, error) {
	ex, err := execute(ctx, prep, opt)
	if err != nil {
		return nil, err
	}
	return ex.results, nil
}

// execution is what [execute] computes: the results, and for the renderings' plots each
// analysis's groups sorted ascending (nil for an analysis that was not ranked).
type execution struct {
	results *results.Results
	sorted  [][][]float64
	// valueScale is the plan's scale of the box plot's value axis, for report.html.
	valueScale spec.ValueScale
}

func execute(ctx context.Context, prep *Prepared, opt Options) (*execution, error) {
	if opt.Progress == nil {
		opt.Progress, _ = ctx.Value(progressKey{}).(func(analysis, task string, done, total int64))
	}
	p := prep.Plan
	res := &results.Results{
		Format:      results.Format,
		Plan:        results.Plan{ID: p.ID, Title: p.Title, Alpha: p.Alpha, Seed: p.Seed.String()},
		Data:        prep.Data,
		Conventions: Conventions,
		Analyses:    make([]results.Analysis, 0, len(prep.Analyses)),
	}
	wrap := func(i int, err error) error {
		var ie *InputError
		if errors.As(err, &ie) {
			return err
		}
		return fmt.Errorf("analysis %q: %w", prep.Analyses[i].Analysis.ID, err)
	}
	// The omnibus tests first: decisions across analyses need every omnibus p-value,
	// and post-hoc gating needs the decisions.
	ranks := make([]*stats.Ranking, len(prep.Analyses))
	sorted := make([][][]float64, len(prep.Analyses))
	for i := range prep.Analyses {
		a, r, err := analyse(ctx, p, i, &prep.Analyses[i], opt)
		if err != nil {
			return nil, wrap(i, err)
		}
		res.Analyses = append(res.Analyses, a)
		ranks[i] = r
		if r != nil {
			sorted[i] = r.Sorted
		}
	}
	if p.Multiplicity != nil {
		m, err := multiplicity(p, res.Analyses)
		if err != nil {
			return nil, err
		}
		res.Multiplicity = m
	}
	for i := range res.Analyses {
		a := &res.Analyses[i]
		if a.Status != "ok" {
			continue
		}
		ph, err := await(ctx, "post-hoc comparisons", func() (*results.PostHoc, error) {
			return postHoc(ctx, p, &prep.Analyses[i], ranks[i], a.Decision)
		})
		if err != nil {
			return nil, wrap(i, err)
		}
		a.PostHoc = ph
		ranks[i] = nil
	}
	return &execution{results: res, sorted: sorted, valueScale: p.BoxValueScale()}, nil
}

// analyse runs the omnibus test of one analysis and its effect sizes, and returns the
// ranking for the post-hoc comparisons and the plots (also when the test is not
// computable; Execute runs post-hoc comparisons only for analyses whose status is ok).
func analyse(ctx context.Context, p *spec.Plan, index int, in *Input, opt Options) (results.Analysis, *stats.Ranking, error) {
	a := in.Analysis
	out := results.Analysis{
		ID:       a.ID,
		Title:    a.Title,
		Test:     a.Test,
		Outcome:  a.Outcome,
		Unit:     a.Unit,
		Subset:   subsetOf(a),
		N:        len(in.Values),
		Excluded: in.Excluded,
		Groups:   make([]results.Group, len(in.Groups)),
	}
	r, err := rank(ctx, in)
	if err != nil {
		return out, nil, err
	}
	for j, name := range in.Groups {
		q1, med, q3, err := stats.Quartiles(r.Sorted[j])
		if err != nil {
			return out, nil, fmt.Errorf("group %q: %w", name, err)
		}
		s := r.Sorted[j]
		out.Groups[j] = results.Group{
			Name: name, N: r.Counts[j],
			Median: med, Q1: q1, Q3: q3, Min: s[0], Max: s[len(s)-1],
			RankSum:  float64(r.RankSum2[j]) / 2,
			MeanRank: float64(r.RankSum2[j]) / float64(2*r.Counts[j]),
		}
		if sk, ok := stats.QuartileSkewness(q1, med, q3); ok {
			out.Groups[j].QuartileSkewness = &sk
		}
		if lo, hi, clipped, err := stats.MeanRankInterval(r, j, a.EffectSize.Level); err == nil {
			out.Groups[j].MeanRankInterval = &results.RankInterval{Level: a.EffectSize.Level, Low: lo, High: hi, Clipped: clipped}
		}
	}

	kw, err := stats.KruskalWallisTest(r)
	if errors.Is(err, stats.ErrAllTied) {
		out.Status = "not-computable"
		out.Reason = "all observations are tied: every value is the same, so ranks carry no information"
		// The ranking still holds the groups' values, which the report's plots show.
		return out, r, nil
	}
	if err != nil {
		return out, nil, err
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
	out.AsymptoticP = tail(kw.P, kw.Log10P)
	pv, err := pValue(ctx, p, index, in, r, kw, opt)
	if err != nil {
		return out, nil, err
	}
	out.PValue = pv
	reject := pv.Log10 <= stats.Log10(p.Alpha)
	if pv.Value != nil {
		reject = *pv.Value <= p.Alpha
	}
	out.Decision = &results.Decision{Alpha: p.Alpha, Reject: reject, Rule: "own p-value: reject when p <= alpha"}
	es, err := effectSizes(ctx, p, in, r, kw, opt)
	if err != nil {
		return out, nil, err
	}
	out.EffectSizes = es
	return out, r, nil
}

// await runs step on its own goroutine and returns its result, or ctx's error (wrapped
// with what) as soon as ctx ends, whichever comes first. The long computations of package
// stats check the context themselves, but parts of them cannot be interrupted and take a
// second or more on 10^7 observations: sorting (stats.Rank, the bootstrap's distinct
// values), the Monte Carlo test's row ranks, a Hodges-Lehmann estimate of two groups of
// millions. await keeps the promise that a signal stops a run within a second: a step
// given up goes on in the background until it next checks the context or ends, and its
// result is dropped. step must only read what outlives it.
func await[T any](ctx context.Context, what string, step func() (T, error)) (T, error) {
	if ctx.Done() == nil {
		return step()
	}
	type outcome struct {
		v   T
		err error
	}
	ch := make(chan outcome, 1)
	go func() {
		v, err := step()
		ch <- outcome{v, err}
	}()
	select {
	case out := <-ch:
		return out.v, out.err
	case <-ctx.Done():
		var zero T
		return zero, fmt.Errorf("%s: %w", what, ctx.Err())
	}
}

// rank is stats.Rank of the input's observations, given up when ctx ends (see await).
func rank(ctx context.Context, in *Input) (*stats.Ranking, error) {
	return await(ctx, "rank", func() (*stats.Ranking, error) {
		return stats.Rank(in.Group, in.Values, len(in.Groups))
	})
}

// tail writes a p-value and its log10; the value is left out (null) below the smallest
// normal double, where only the log10 keeps its digits.
func tail(p, log10p float64) *results.Tail {
	t := &results.Tail{Log10: log10p}
	if p >= smallestNormal {
		v := p
		t.Value = &v
	}
	return t
}

// pValue computes the p-value of the plan's method. This switch is the one place where a
// p-value method named in a plan meets its function in package stats.
func pValue(ctx context.Context, p *spec.Plan, index int, in *Input, r *stats.Ranking, kw stats.KruskalWallis, opt Options) (*results.PValue, error) {
	a := in.Analysis
	pv := &results.PValue{Requested: a.PValue.Method}
	budget := stats.DefaultExactBudget
	exact := func() error {
		ex, err := in.exactP(ctx, r, opt.progress(a.ID, TaskExact))
		if err != nil {
			return err
		}
		t := tail(ex.P, stats.Log10(ex.P))
		pv.Method, pv.Value, pv.Log10 = spec.Exact, t.Value, t.Log10
		pv.Exact = &results.ExactWork{PeakStates: ex.States, Work: ex.Work, BudgetStates: budget.MaxStates, BudgetWork: budget.MaxWork}
		return nil
	}
	switch a.PValue.Method {
	case spec.Asymptotic:
		pv.Method, pv.Reason = spec.Asymptotic, "the plan asks for the asymptotic chi-square reference distribution"
		pv.Value, pv.Log10 = tail(kw.P, kw.Log10P).Value, kw.Log10P
		return pv, nil
	case spec.Exact:
		if err := exact(); err != nil {
			if errors.Is(err, stats.ErrExactBudget) {
				return nil, &InputError{Err: spec.ErrorList{exactRefused(p, index, err)}}
			}
			return nil, err
		}
		pv.Reason = "the plan asks for the exact permutation distribution given the ties"
		return pv, nil
	case spec.Auto:
		err := exact()
		if err == nil {
			pv.Reason = fmt.Sprintf("auto: the exact distribution fits the work budget (peak %d of %d states, %d of %d units of work)",
				pv.Exact.PeakStates, budget.MaxStates, pv.Exact.Work, budget.MaxWork)
			return pv, nil
		}
		if !errors.Is(err, stats.ErrExactBudget) {
			return nil, err
		}
		why := strings.TrimPrefix(err.Error(), stats.ErrExactBudget.Error()+": ")
		large, smallest := in.largeGroups()
		if large {
			pv.Method, pv.Value, pv.Log10 = spec.Asymptotic, tail(kw.P, kw.Log10P).Value, kw.Log10P
			pv.Reason = fmt.Sprintf("auto with asymptotic_when_large: the asymptotic chi-square p-value, since the exact distribution does not fit the work budget (%s) "+
				"and every group holds at least %d observations (the smallest %d), where the chi-square test keeps its level and rejects at least 90%% as often as the permutation test at alpha 0.05 and 80%% at 0.01 (conservative by up to 40%% at 0.001; docs/methods.md §1.8)",
				why, LargeGroupSize, smallest)
			return pv, nil
		}
		pv.Reason = fmt.Sprintf("auto: Monte Carlo with the plan's %d resamples, since the exact distribution does not fit the work budget (%s)",
			a.PValue.Resamples, why)
		if a.PValue.AsymptoticWhenLarge {
			pv.Reason += fmt.Sprintf("; asymptotic_when_large does not apply, since the smallest group holds %d observations, fewer than %d", smallest, LargeGroupSize)
		}
	case spec.Permutation:
		pv.Reason = "the plan asks for a Monte Carlo permutation p-value"
	default:
		return nil, fmt.Errorf("p-value method %q has no implementation", a.PValue.Method)
	}
	mc, err := await(ctx, "kw permutation", func() (stats.Permutation, error) {
		return stats.KruskalWallisPermutation(ctx, in.Group, in.Values, len(in.Groups), r, stats.PermutationOptions{
			Seed: uint64(p.Seed), AnalysisID: a.ID, Resamples: a.PValue.Resamples, Level: a.PValue.IntervalLevel,
			StopAfter: a.PValue.StopAtExceedances, Workers: opt.Workers, Progress: opt.progress(a.ID, TaskPermutation),
		})
	})
	if err != nil {
		return nil, err
	}
	pv.Method = spec.Permutation
	pv.Value, pv.Log10 = tail(mc.P, stats.Log10(mc.P)).Value, stats.Log10(mc.P)
	estimator := "(b + 1) / (m + 1), b exceedances in m resamples (Phipson & Smyth 2010)"
	if mc.Stopped {
		estimator = "h / L, stopped at the h-th exceedance after L resamples (Besag & Clifford 1991)"
	}
	pv.MonteCarlo = &results.MonteCarlo{
		Resamples:   strconv.FormatInt(mc.Resamples, 10),
		Exceedances: strconv.FormatInt(mc.Exceed, 10),
		Estimator:   estimator,
		SE:          mc.SE,
		CI:          results.Interval{Level: mc.Level, Low: mc.CILow, High: mc.CIHigh},
		Comparison:  mc.Comparison,
		Stream:      fmt.Sprintf("purpose %q, blocks of %d resamples", stats.PermutationPurpose, stats.PermutationBlockSize),
	}
	if mc.StopAfter > 0 {
		pv.MonteCarlo.Sequential = sequentialRecord(mc)
	}
	return pv, nil
}

// sequentialRecord describes the sequential rule of a Monte Carlo p-value for the
// results, and when it stopped, its estimator and interval.
func sequentialRecord(mc stats.Permutation) *results.Sequential {
	sq := &results.Sequential{
		Rule: "Besag & Clifford (1991): stop at the resample that brings the h-th exceedance and report h / L, L the resamples drawn; " +
			"when fewer than h of the m resamples exceed, draw all m and report (b + 1) / (m + 1); resamples are taken in block order, so the stop is the same for any number of workers",
		StopAtExceedances: strconv.FormatInt(mc.StopAfter, 10),
		MaxResamples:      strconv.FormatInt(mc.MaxResamples, 10),
		Stopped:           mc.Stopped,
		Interval:          "Clopper-Pearson: the rule did not stop, so the count of exceedances in m resamples is binomial",
	}
	if mc.Stopped {
		sq.Interval = "exact interval for sampling until the h-th exceedance (negative binomial tails of L inverted): " +
			"[Beta^-1((1 - level)/2; h, L - h + 1), Beta^-1((1 + level)/2; h, L - h)], the upper end 1 when L = h; Besag & Clifford give no interval"
	}
	return sq
}

// effectSizes computes epsilon-squared and eta-squared based on H, with the interval the
// plan names. This switch is the one place where an interval method named in a plan meets
// its function in package stats.
func effectSizes(ctx context.Context, p *spec.Plan, in *Input, r *stats.Ranking, kw stats.KruskalWallis, opt Options) (*results.EffectSizes, error) {
	eps, err := stats.EpsilonSquared(kw.H, kw.N)
	if err != nil {
		return nil, err
	}
	es := &results.EffectSizes{EpsilonSquared: eps}
	if eta, err := stats.EtaSquaredH(kw.H, kw.N, kw.K); err == nil {
		es.EtaSquaredH = &eta
	}
	level := in.Analysis.EffectSize.Level
	half := strconv.FormatFloat(float64(1-level)/2, 'g', 6, 64)
	switch m := in.Analysis.EffectSize.Interval; m {
	case spec.NoInterval:
		return es, nil
	case spec.NoncentralInterval:
		iv := &results.EffectInterval{
			Method: spec.NoncentralInterval,
			Description: "inverts the noncentral chi-square approximation of H (df = k - 1) at the observed H (Steiger 2004) " +
				"for the noncentrality lambda, and bounds xi^2 = lambda/(N - k), the population share of the rank variance " +
				"between groups that epsilon-squared and eta-squared(H) both estimate, cut to [0, 1]; it contains 0 exactly " +
				"when the asymptotic chi-square p-value is at least (1 - level)/2 = " + half,
			Level:    level,
			Warnings: smallGroupWarning(in.Groups, r.Counts, stats.ChiSquareSmallGroup, "the chi-square approximation of H behind the interval is rough for groups this small (common practice asks for at least 5 per group)"),
		}
		es.Interval = iv
		if kw.N == kw.K {
			iv.NotComputed = "every group holds one observation (N = k), so the population effect has no estimate"
			iv.Warnings = nil // about bounds that are not there
			return es, nil
		}
		ei, err := stats.KruskalWallisEffectInterval(kw.H, kw.N, kw.K, level)
		if err != nil {
			return nil, err
		}
		iv.Noncentrality = &results.Bounds{Low: ei.NoncentralityLow, High: ei.NoncentralityHigh}
		iv.PopulationEffect = &results.ClippedBounds{Low: ei.Low, High: ei.High, Clipped: ei.Clipped}
		return es, nil
	case spec.BootstrapInterval:
		scheme, streamText := stats.BootstrapIndices, fmt.Sprintf("purpose %q, blocks of %d resamples", stats.BootstrapPurpose, stats.BootstrapBlockSize)
		if in.Analysis.EffectSize.BootstrapScheme() == spec.CountsScheme {
			scheme, streamText = stats.BootstrapCounts, fmt.Sprintf("%s, purpose %q, blocks of %d resamples", stream.Label, stats.CountsPurpose, stats.CountsBlockSize)
		}
		bs, err := await(ctx, "bootstrap", func() (stats.Bootstrap, error) {
			return stats.KruskalWallisBootstrap(ctx, r, stats.BootstrapOptions{
				Seed: uint64(p.Seed), AnalysisID: in.Analysis.ID, Resamples: in.Analysis.EffectSize.Resamples,
				Level: level, Workers: opt.Workers, Scheme: scheme,
				Progress: opt.progress(in.Analysis.ID, TaskBootstrap),
			})
		})
		if err != nil {
			return nil, err
		}
		lo, _ := stats.EpsilonSquared(bs.HLow, kw.N)
		hi, _ := stats.EpsilonSquared(bs.HHigh, kw.N)
		iv := &results.EffectInterval{
			Method: spec.BootstrapInterval,
			Description: "percentile bootstrap of H, resampling within groups, mapped to each statistic; H is never negative, " +
				"so this interval rarely contains 0 even when the groups do not differ",
			Level:          level,
			EpsilonSquared: &results.Bounds{Low: lo, High: hi},
			Resamples:      strconv.FormatInt(bs.Resamples, 10),
			Degenerate:     strconv.FormatInt(bs.Degenerate, 10),
			Stream:         streamText,
			Scheme:         in.Analysis.EffectSize.Scheme,
			Warnings: smallGroupWarning(in.Groups, r.Counts, stats.BootstrapSmallGroup, "resampling within a group of n values gives at most C(2n - 1, n) "+
				"different resamples (1, 3, 10, 35 for n = 1 to 4; a single value never varies), so the percentile interval "+
				"reflects those few resamples rather than the spread of H, and need not even contain the estimate"),
		}
		if es.EtaSquaredH != nil {
			lo, _ := stats.EtaSquaredH(bs.HLow, kw.N, kw.K)
			hi, _ := stats.EtaSquaredH(bs.HHigh, kw.N, kw.K)
			iv.EtaSquaredH = &results.Bounds{Low: lo, High: hi}
		}
		es.Interval = iv
		return es, nil
	default:
		return nil, fmt.Errorf("effect-size interval %q has no implementation", m)
	}
}

// smallGroupWarning returns a one-sentence warning naming the groups with fewer than least
// observations, followed by why, or nil when there are none.
func smallGroupWarning(names []string, counts []int, least int, why string) []string {
	var small []string
	for i, n := range counts {
		if n < least {
			small = append(small, fmt.Sprintf("%q (n = %d)", names[i], n))
		}
	}
	if len(small) == 0 {
		return nil
	}
	verb := "has"
	if len(small) > 1 {
		verb = "have"
	}
	return []string{fmt.Sprintf("%s %s fewer than %d observations: %s", strings.Join(small, ", "), verb, least, why)}
}
