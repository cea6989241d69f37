package runner

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"

	"rankplan/runner/audit"
	"rankplan/spec"
	"rankplan/stats"
)

// Limits on what one run takes on, checked by `check` and by `run` before anything is
// written, so that a mistaken plan or data file is refused with its position instead of
// running for days or filling the disk. They are listed in the README's table of limits,
// beside those of the plan file (package spec) and of the data file (package data).
const (
	// MaxGroups is the most groups one analysis compares: the studentized range that
	// DSCF and Nemenyi refer to is computed up to k = 1000 groups.
	MaxGroups = 1000
	// MaxPostHocGroups is the most groups of an analysis with post-hoc comparisons:
	// 4950 pairs. Each pair is a row of pairs.csv and of the report's tables, so that
	// 1000 groups, with 499,500 pairs, gave a run of minutes, gigabytes of memory and a
	// report of hundreds of megabytes.
	MaxPostHocGroups = 100
	// MaxResampleDraws bounds the work of one resampling step (the Monte Carlo p-value,
	// the effect-size bootstrap) of one analysis: resamples × observations. At about
	// 10 ns a draw that is a quarter of an hour; 10^7 observations still take 10^4
	// resamples.
	MaxResampleDraws = 100_000_000_000
	// MaxLockBytes is the largest plan lock (--lock) read: 1 MiB, four times the
	// largest plan.
	MaxLockBytes = audit.MaxLockBytes
	// MaxKeyBytes is the largest key file (run --sign, verify --pubkey) read: 64 KiB;
	// an Ed25519 key in PEM takes about 120 bytes.
	MaxKeyBytes = audit.MaxKeyBytes
)

// checkGroups refuses more groups than an analysis, or its post-hoc comparisons, may
// take. groups are the analysed groups, the same for every analysis.
func checkGroups(p *spec.Plan, path string, groups []string) spec.ErrorList {
	k := len(groups)
	if k > MaxGroups {
		key := "data.group"
		if p.Has("groups.include") {
			key = "groups.include"
		}
		return spec.ErrorList{p.Errorf(key, "column %q of %s holds %d groups, more than the limit of %d for an analysis; name the groups to analyse in groups.include",
			p.Data.Group, path, k, MaxGroups)}
	}
	var errs spec.ErrorList
	if k > MaxPostHocGroups {
		for i, a := range p.Analyses {
			if a.PostHoc.Method == spec.NoPostHoc {
				continue
			}
			errs = append(errs, p.Errorf("analyses."+strconv.Itoa(i)+".posthoc.method",
				"post-hoc comparisons of %d groups (%d pairs) exceed the limit of %d groups; choose fewer groups with groups.include, or set posthoc.method to none",
				k, k*(k-1)/2, MaxPostHocGroups))
		}
	}
	return errs
}

// CheckWork applies the limits on the work of each analysis: whether an exact p-value
// fits the work budget (method exact is refused when it does not, as run refuses it;
// method auto then falls back to Monte Carlo), and the resamples × observations of the
// Monte Carlo p-value and the bootstrap against [MaxResampleDraws]. Deciding whether an
// exact p-value fits means computing it, under the budget of a second or so; the
// result is kept in the input, so that [Execute] does not compute it again. Problems
// come back as a [spec.ErrorList] in an [InputError]. `check` calls it for its preview,
// and [Run] before it creates the run folder.
func (prep *Prepared) CheckWork(ctx context.Context) error {
	p := prep.Plan
	hook, _ := ctx.Value(progressKey{}).(func(analysis, task string, done, total int64))
	opt := Options{Progress: hook}
	var errs spec.ErrorList
	for i := range prep.Analyses {
		in := &prep.Analyses[i]
		a := in.Analysis
		at := "analyses." + strconv.Itoa(i)
		n := int64(len(in.Values))
		monteCarlo := a.PValue.Method == spec.Permutation
		if a.PValue.Method == spec.Exact || a.PValue.Method == spec.Auto {
			r, err := rank(ctx, in)
			if err != nil {
				return fmt.Errorf("analysis %q: %w", a.ID, err)
			}
			_, err = in.exactP(ctx, r, opt.progress(a.ID, TaskExact))
			switch {
			case err == nil, errors.Is(err, stats.ErrAllTied):
			case errors.Is(err, stats.ErrExactBudget) && a.PValue.Method == spec.Exact:
				errs = append(errs, exactRefused(p, i, err))
			case errors.Is(err, stats.ErrExactBudget):
				monteCarlo = in.autoChoice() == spec.Permutation
			default:
				return fmt.Errorf("analysis %q: %w", a.ID, err)
			}
		}
		if a.PostHoc.Method != spec.NoPostHoc && len(in.Values) > 0 {
			if e := spanTooWide(p, at, in.Values); e != nil {
				errs = append(errs, e)
			}
		}
		if m := a.PValue.Resamples; monteCarlo && m*n > MaxResampleDraws {
			errs = append(errs, tooManyDraws(p, at+".pvalue.resamples", "Monte Carlo", m, n))
		}
		if m := a.EffectSize.Resamples; a.EffectSize.Interval == spec.BootstrapInterval && m*n > MaxResampleDraws {
			errs = append(errs, tooManyDraws(p, at+".effect_size.resamples", "bootstrap", m, n))
		}
	}
	if len(errs) > 0 {
		return &InputError{Err: errs.Err()}
	}
	return nil
}

// spanTooWide refuses post-hoc comparisons of values whose range, largest minus
// smallest, is beyond the largest double (about 1.8e308): a pairwise difference, and so
// a Hodges-Lehmann shift or an end of its interval, could then not be represented. When
// the range is finite, every difference between two of the values is finite too.
func spanTooWide(p *spec.Plan, at string, values []float64) *spec.Error {
	lo, hi := values[0], values[0]
	for _, v := range values[1:] {
		lo, hi = min(lo, v), max(hi, v)
	}
	if !math.IsInf(hi-lo, 0) {
		return nil
	}
	return p.Errorf(at+".posthoc", "the outcome's values run from %s to %s, a range beyond the largest number a double holds (about 1.8e308), so the pairwise shifts cannot be represented; rescale the outcome (for example state it in a unit 1e300 times larger) or drop the post-hoc comparisons",
		strconv.FormatFloat(lo, 'g', -1, 64), strconv.FormatFloat(hi, 'g', -1, 64))
}

func tooManyDraws(p *spec.Plan, key, what string, m, n int64) *spec.Error {
	return p.Errorf(key, "%d %s resamples of %d observations are %d draws, more than the limit of %d for one analysis; use at most %d resamples",
		m, what, n, m*n, int64(MaxResampleDraws), MaxResampleDraws/n)
}

// exactOutcome is the exact p-value of an analysis, or the reason it has none, once
// computed.
type exactOutcome struct {
	ex  stats.Exact
	err error
}

// exactP returns the exact p-value of the input's design under the default work budget,
// computing it only once. It is the one place where the budget is applied: `check`
// (through [Prepared.CheckWork]) and `run` (through CheckWork and pValue) decide alike
// whether a design fits. A computation stopped by ctx is not kept.
func (in *Input) exactP(ctx context.Context, r *stats.Ranking, progress stats.Progress) (stats.Exact, error) {
	if in.exact == nil {
		budget := stats.DefaultExactBudget
		budget.Progress = progress
		ex, err := stats.KruskalWallisExact(ctx, r, budget)
		if ctx.Err() != nil {
			return stats.Exact{}, fmt.Errorf("exact p-value: %w", ctx.Err())
		}
		in.exact = &exactOutcome{ex, err}
	}
	return in.exact.ex, in.exact.err
}

// exactRefused is the error for method exact on analysis index when the design does not
// fit the work budget.
func exactRefused(p *spec.Plan, index int, err error) *spec.Error {
	return p.Errorf(fmt.Sprintf("analyses.%d.pvalue.method", index),
		"the exact p-value of this design does not fit the work budget (%v); use method auto or permutation", err)
}

// autoChoice is the method that p-value method auto takes for the input, as [pValue]
// decides it: exact when the exact p-value fitted the work budget; when it did not,
// asymptotic when the plan sets pvalue.asymptotic_when_large and every group is large
// ([Input.largeGroups]), else permutation. It is empty before [Prepared.CheckWork] has
// tried the exact p-value, and when that gave no p-value for another reason (every
// value tied).
func (in *Input) autoChoice() spec.PValueMethod {
	switch {
	case in.exact == nil:
		return ""
	case in.exact.err == nil:
		return spec.Exact
	case errors.Is(in.exact.err, stats.ErrExactBudget):
		if ok, _ := in.largeGroups(); ok {
			return spec.Asymptotic
		}
		return spec.Permutation
	}
	return ""
}

// LargeGroupSize is the group size from which method auto with
// pvalue.asymptotic_when_large takes the asymptotic chi-square p-value when the exact
// distribution does not fit the work budget: every group must hold at least this many
// observations. It comes from the accuracy study of docs/methods.md §1.8
// (testdata/reference/auto_large_scipy.py, checked by TestLargeGroupSizeStudy): it is
// the smallest group size of the study from which, for k = 3 to 6 groups, equal or
// unequal sizes, with or without heavy ties, the actual size of the chi-square test
// under the permutation null never exceeds alpha by more than three standard errors
// of the study and is at least 0.9 alpha at alpha = 0.05 and 0.8 alpha at 0.01 (at
// 0.001 the test is conservative: at least 0.6 alpha).
const LargeGroupSize = 25

// largeGroups reports whether the plan lets method auto take the asymptotic p-value
// for this input's design (pvalue.asymptotic_when_large) and every group holds at least
// [LargeGroupSize] observations, with the smallest group's size. It does not look at
// the exact method's budget.
func (in *Input) largeGroups() (bool, int) {
	smallest := 0
	for i, c := range in.Counts {
		if i == 0 || c < smallest {
			smallest = c
		}
	}
	return in.Analysis.PValue.AsymptoticWhenLarge && smallest >= LargeGroupSize, smallest
}
