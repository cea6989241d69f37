package stats

import (
	"context"
	"fmt"
	"math"
	"slices"

	"rankplan/stats/stream"
)

// EpsilonSquared is the rank epsilon-squared of the Kruskal-Wallis test,
//
//	E²_R = H (N + 1) / (N² − 1) = H / (N − 1)
//
// with H the tie-corrected statistic (Tomczak & Tomczak 2014, Trends in Sport Sciences
// 1(21):19-25, as summarised in the project's docs/methods.md §2). With the tie-corrected H it
// equals the share of the rank sum of squares that lies between groups, so it lies in
// [0, 1]. n must be at least 2.
func EpsilonSquared(h float64, n int) (float64, error) {
	if n < 2 || !(h >= 0) {
		return 0, fmt.Errorf("epsilon-squared: need N >= 2 and H >= 0, got N = %d, H = %v", n, h)
	}
	return h / float64(n-1), nil
}

// EtaSquaredH is eta-squared based on H,
//
//	η²_H = (H − k + 1) / (N − k)
//
// (attributed to Cohen 2008 by Tomczak & Tomczak 2014; docs/methods.md §2). It is negative
// whenever H < k − 1, and is reported as it is, not floored at 0. It is undefined when
// N = k (every group holds one observation): that gives an error.
func EtaSquaredH(h float64, n, k int) (float64, error) {
	if k < 2 || n <= k || !(h >= 0) {
		return 0, fmt.Errorf("eta-squared (H): need N > k >= 2 and H >= 0, got N = %d, k = %d, H = %v", n, k, h)
	}
	return (h - float64(k) + 1) / float64(n-k), nil
}

// RankEffectInterval is a confidence interval of the population effect ξ² that
// [EpsilonSquared] and [EtaSquaredH] estimate (see [KruskalWallisEffectInterval]).
type RankEffectInterval struct {
	Level float64
	// NoncentralityLow and NoncentralityHigh bound the noncentrality λ of the chi-square
	// approximation of H* ([NoncentralityInterval] at x = H*, df = k − 1).
	NoncentralityLow, NoncentralityHigh float64
	// Low and High bound ξ² = λ/(N − k), each cut to [0, 1].
	Low, High float64
	// Clipped is true when λ/(N − k) fell outside [0, 1] at either end and was cut.
	Clipped bool
}

// KruskalWallisEffectInterval returns a confidence interval at the level for the
// population effect that epsilon-squared and eta-squared(H) estimate,
//
//	ξ² = Σ_i p_i (θ_i − 1/2)² / τ²,
//
// with p_i = n_i/N the design's group shares, Y drawn from the pooled mixture Σ_i p_i F_i,
// G(y) = P(Y < y) + ½P(Y = y) its mid-distribution function, θ_i = E G(X_i) for X_i from
// group i (the relative effect of group i against the pool) and τ² = Var G(Y), which is
// 1/12 without ties. Since E G(Y) = 1/2, ξ² is the share of the variance of G(Y) that lies
// between the groups (law of total variance), so it lies in [0, 1] and is 0 when every
// group has the pooled distribution's relative effect 1/2, as when all groups have one
// distribution. It is the population value of epsilon-squared, the share of the rank sum of
// squares between groups: E R̄_i = Nθ_i + 1/2 exactly, and the pooled rank variance is
// N²τ² to first order.
//
// Under alternatives near no effect, H* is approximately noncentral chi-square with k − 1
// degrees of freedom (Andrews 1954, Annals of Mathematical Statistics 25:724-736, recalled
// from memory), with noncentrality proportional to N ξ². Matching the mean of that
// approximation, k − 1 + λ, with the mean of H*, which to first order in 1/N is
// k − 1 + (N − k)ξ² (a seeded simulation in the tests agrees within 3% for ξ² up to 0.75),
// gives the mapping used here,
//
//	λ = (N − k) ξ²,   ξ² = λ/(N − k),
//
// under which eta-squared(H) = (H* − k + 1)/(N − k) is the moment estimator of ξ², and
// epsilon-squared = H*/(N − 1) overestimates it by about (k − 1)(1 − ξ²)/(N − 1). The
// interval of λ is [NoncentralityInterval] at x = H*, df = k − 1 (Steiger 2004), and its
// ends are divided by N − k and cut to [0, 1], the range of ξ² (Clipped says so). It
// contains 0 exactly when the chi-square test does not reject at (1 − level)/2; so it
// agrees with the asymptotic test at alpha when level = 1 − 2·alpha (Steiger 2004 for the
// F test). It is [0, 0] when H* lies below the (1 − level)/2 quantile of the central
// chi-square. Since the approximation's variance grows with λ faster than that of H*, which
// cannot exceed N − 1, the interval is conservative for large effects (see the coverage
// test).
//
// N must exceed k (with one observation per group ξ² has no estimate), k be at least 2, H*
// finite and not negative, and level in (0, 1).
func KruskalWallisEffectInterval(hStar float64, n, k int, level float64) (RankEffectInterval, error) {
	if k < 2 || n <= k || !(hStar >= 0 && hStar <= math.MaxFloat64) {
		return RankEffectInterval{}, fmt.Errorf("effect interval: need N > k >= 2 and a finite H >= 0, got N = %d, k = %d, H = %v", n, k, hStar)
	}
	lo, hi, err := NoncentralityInterval(hStar, float64(k-1), level)
	if err != nil {
		return RankEffectInterval{}, fmt.Errorf("effect interval: %w", err)
	}
	out := RankEffectInterval{Level: level, NoncentralityLow: lo, NoncentralityHigh: hi}
	d := float64(n - k)
	out.Low, out.High = lo/d, hi/d
	if out.Low > 1 {
		out.Low, out.Clipped = 1, true
	}
	if out.High > 1 {
		out.High, out.Clipped = 1, true
	}
	return out, nil
}

// BootstrapSmallGroup is the group size below which [KruskalWallisBootstrap] is flagged as
// unreliable. Resampling within a group of n values can give only C(2n − 1, n) different
// multisets: 1, 3, 10 and 35 for n = 1 to 4 (126 at n = 5). A group of one value is the
// same in every resample, so its sampling variation is left out altogether, and a group of
// two is a single value repeated in half of the resamples; the percentile interval then
// reflects the few resamples available rather than the spread of H*, and can even leave
// out the estimate itself.
const BootstrapSmallGroup = 5

// ChiSquareSmallGroup is the group size below which the chi-square approximation of H,
// and so [KruskalWallisEffectInterval], is flagged as rough: common practice asks for at
// least 5 observations per group before H is referred to the chi-square distribution
// (Kruskal & Wallis 1952 tabulated exact values for smaller designs; recalled from memory).
const ChiSquareSmallGroup = 5

// BootstrapBlockSize is the number of bootstrap resamples drawn from one stream block.
// It is part of the reproducibility contract: changing it changes every interval.
const BootstrapBlockSize = 256

// BootstrapPurpose labels the stream of the effect-size bootstrap (see package stream).
const BootstrapPurpose = "kw-effect-bootstrap"

// BootstrapOptions configure [KruskalWallisBootstrap].
type BootstrapOptions struct {
	Seed       uint64
	AnalysisID string
	Resamples  int64   // at least 1
	Level      float64 // confidence level, in (0, 1)
	Workers    int     // 0 or less: runtime.GOMAXPROCS(0); the result does not depend on it
	// Scheme is how resamples are drawn; the zero value is [BootstrapIndices].
	Scheme BootstrapScheme
	// Progress, if not nil, is called with the resamples finished so far after each
	// block of resamples (BootstrapBlockSize or CountsBlockSize), from the worker goroutines (see [Progress]). The
	// result does not depend on it.
	Progress Progress
}

// Bootstrap is a percentile bootstrap interval of the tie-corrected H, from which the
// intervals of [EpsilonSquared] and [EtaSquaredH] follow (both are increasing affine
// functions of H, so their interval ends are those functions of the H interval ends).
type Bootstrap struct {
	Level      float64
	Resamples  int64
	HLow       float64 // type 7 quantile of the bootstrap H* at (1 − Level)/2
	HHigh      float64 // type 7 quantile at (1 + Level)/2
	Degenerate int64   // resamples in which every value was tied; their H* counts as 0
}

// KruskalWallisBootstrap draws a percentile bootstrap of H* by resampling within groups:
// resample b draws, for each group i in order, n_i values with replacement from group i's
// sorted values (r.Sorted[i]), ranks the pooled resample and computes H* as
// [KruskalWallisTest] does. A resample whose values are all tied has no H; it counts as
// H* = 0 (the groups are then identical) and is counted in Degenerate.
//
// The draws follow the stream rules of package stream, by opt.Scheme:
//
//   - [BootstrapIndices]: resamples are cut into blocks of [BootstrapBlockSize]; block j
//     draws from stream.New(stream.Key(BootstrapPurpose, Seed, AnalysisID, j)), one
//     stream.Below(n_i) per drawn value, groups in order, resamples in order.
//   - [BootstrapCounts]: blocks of [CountsBlockSize] under [CountsPurpose]; each resample
//     draws, groups in order, the group's counts over its runs of equal values as one
//     multinomial (conditional binomials, or indices when runs are short; package
//     stream §6 and §7, docs/methods.md §2.1), so that its cost grows with the number
//     of distinct values rather than of observations. Its resamples have the law of the
//     first scheme's, not its draws.
//
// Blocks run on Workers goroutines; each resample's H* is stored at its index, so
// the result is identical for any number of workers. The interval is the type 7 quantile
// pair (Hyndman & Fan 1996) of the sorted H* values at (1 ∓ Level)/2 (percentile method;
// Efron & Tibshirani 1993, An Introduction to the Bootstrap, ch. 13, recalled from memory).
//
// It returns ctx's error (wrapped) when ctx is done before the last resample: the context
// is checked before every resample and every 65536 draws within one.
func KruskalWallisBootstrap(ctx context.Context, r *Ranking, opt BootstrapOptions) (Bootstrap, error) {
	if err := checkRankingDeep(r); err != nil {
		return Bootstrap{}, fmt.Errorf("bootstrap: %w", err)
	}
	if opt.Resamples < 1 {
		return Bootstrap{}, fmt.Errorf("bootstrap: need at least 1 resample, got %d", opt.Resamples)
	}
	if !(opt.Level > 0 && opt.Level < 1) {
		return Bootstrap{}, fmt.Errorf("bootstrap: level must lie in (0, 1), got %v", opt.Level)
	}
	bi, err := newBootIndex(r)
	if err != nil {
		return Bootstrap{}, err
	}
	purpose, blockSize := BootstrapPurpose, int64(BootstrapBlockSize)
	counts := false
	switch opt.Scheme {
	case BootstrapIndices:
		if !bi.byGroup {
			if err := bi.withIndex(r); err != nil {
				return Bootstrap{}, err
			}
		}
	case BootstrapCounts:
		purpose, blockSize, counts = CountsPurpose, CountsBlockSize, true
		bi.prepareCells()
	default:
		return Bootstrap{}, fmt.Errorf("bootstrap: unknown resampling scheme %d", int(opt.Scheme))
	}
	m := opt.Resamples
	hs := make([]float64, m)
	degenerate := make([]bool, m)
	blocks := (m + blockSize - 1) / blockSize
	workers := resolveWorkers(opt.Workers, blocks)
	progress := newProgressCounter(opt.Progress, m)
	scratch := make([]*bootWorker, workers)
	done := ctx.Done()
	err = runBlocks(ctx, blocks, workers, nil, func(w int, j int64) error {
		if scratch[w] == nil {
			scratch[w] = newBootWorker(r, bi, counts)
			scratch[w].done = done
		}
		s := stream.New(stream.Key(purpose, opt.Seed, opt.AnalysisID, uint64(j)))
		end := min((j+1)*blockSize, m)
		for b := j * blockSize; b < end; b++ {
			if cancelled(done) {
				return ctx.Err()
			}
			if counts {
				hs[b], degenerate[b] = scratch[w].resampleCounts(s)
			} else {
				hs[b], degenerate[b] = scratch[w].resample(s)
			}
			if scratch[w].stopped {
				return ctx.Err()
			}
		}
		progress.add(end - j*blockSize)
		return nil
	})
	if err != nil {
		return Bootstrap{}, fmt.Errorf("bootstrap: %w", err)
	}

	out := Bootstrap{Level: opt.Level, Resamples: m}
	for _, d := range degenerate {
		if d {
			out.Degenerate++
		}
	}
	slices.Sort(hs)
	out.HLow = type7(hs, float64(1-opt.Level)/2)
	out.HHigh = type7(hs, float64(1+opt.Level)/2)
	return out, nil
}

// pooledDistinct returns the distinct values of the pooled sample, ascending; values
// that compare equal (-0 and +0 among them) count once, as in [Rank]. It sorts only each
// group's distinct values (its sorted values with repeats dropped), O(N + Σ m_i log Σ m_i).
func pooledDistinct(r *Ranking) ([]float64, error) {
	if r.N > math.MaxInt32 {
		return nil, fmt.Errorf("bootstrap: %d observations are more than the index can hold", r.N)
	}
	var distinct []float64
	for _, vals := range r.Sorted {
		for j, v := range vals {
			if j == 0 || v != vals[j-1] {
				distinct = append(distinct, v)
			}
		}
	}
	slices.Sort(distinct)
	distinct = slices.CompactFunc(distinct, func(a, b float64) bool { return a == b })
	if len(distinct) != len(r.Blocks) {
		return nil, fmt.Errorf("bootstrap: the ranking has %d tie blocks but its values hold %d distinct values", len(r.Blocks), len(distinct))
	}
	return distinct, nil
}

// valueIndex returns, for each value of r.Sorted (groups in order, one slice of length N
// sharing the groups' order), the index of its tie block in r.Blocks: the position of its
// value among the distinct values of the pooled sample ([pooledDistinct]), ascending. It is
// computed once for all resamples, and only where a resample keeps each draw's block
// (the indices scheme with many distinct values): it takes 4 bytes per observation.
func valueIndex(r *Ranking) ([]int32, error) {
	distinct, err := pooledDistinct(r)
	if err != nil {
		return nil, err
	}
	idx := make([]int32, 0, r.N)
	for _, vals := range r.Sorted {
		u := 0
		for _, v := range vals {
			for distinct[u] < v {
				u++
			}
			idx = append(idx, int32(u))
		}
	}
	return idx, nil
}

// withIndex sets bi.index to valueIndex(r) unless it is set already.
func (bi *bootIndex) withIndex(r *Ranking) error {
	if bi.index != nil {
		return nil
	}
	idx, err := valueIndex(r)
	bi.index = idx
	return err
}

// bootIndex is what every resample of a ranking reads, built once and shared read-only.
//
// A resample is ranked in one of two ways that give the same integers. With few distinct
// values (byGroup: K·m <= N) it counts the draws of each group per run of equal values,
// finding a drawn position's run through a small table (runs), and sums per group from
// those counts, O(N + Σ m_i) for m_i distinct values in group i; otherwise it keeps each
// draw's block index (from index) and sums over the draws, O(N + m).
type bootIndex struct {
	index   []int32 // valueIndex(r), when a resample needs it (see bootIndex.withIndex); else nil
	byGroup bool
	runs    []groupRuns // per group
}

// groupRuns describes the runs of equal values in one group's sorted values: run l holds
// positions bounds[l] ≤ j < bounds[l+1] and its value is pooled block blocks[l]. coarse[b]
// is the run holding position b << shift, so that the run of a position j is found from
// coarse[j >> shift] in a few steps, reading only tables of about m_i entries (they stay
// in cache where a table of all n_i positions would not).
type groupRuns struct {
	blocks []int32
	bounds []int32 // len(blocks) + 1 entries; the last is n_i
	coarse []int32
	shift  uint
	// cells is how the counts scheme draws the group (see bootIndex.prepareCells); nil
	// until prepared.
	cells *runCells
}

// index builds g's position table (shift, coarse) from g.bounds.
func (g *groupRuns) index() {
	n := int(g.bounds[len(g.bounds)-1])
	// A bucket of 2^shift positions, at most the mean run length, holds few run ends.
	for g.shift < 30 && 2<<g.shift*len(g.blocks) <= n {
		g.shift++
	}
	g.coarse = make([]int32, (n-1)>>g.shift+1)
	l := int32(0)
	for b := range g.coarse {
		for g.bounds[l+1] <= int32(b<<g.shift) {
			l++
		}
		g.coarse[b] = l
	}
}

// newBootIndex finds the runs of equal values of every group, each with its pooled
// block, straight from the sorted values (no per-observation table).
func newBootIndex(r *Ranking) (*bootIndex, error) {
	distinct, err := pooledDistinct(r)
	if err != nil {
		return nil, err
	}
	bi := &bootIndex{byGroup: int64(r.K)*int64(len(r.Blocks)) <= int64(r.N), runs: make([]groupRuns, r.K)}
	for i, vals := range r.Sorted {
		n := len(vals)
		g := &bi.runs[i]
		u := 0
		for j, v := range vals {
			if j == 0 || v != vals[j-1] {
				for distinct[u] < v {
					u++
				}
				g.blocks = append(g.blocks, int32(u))
				g.bounds = append(g.bounds, int32(j))
			}
		}
		g.bounds = append(g.bounds, int32(n))
		g.index()
	}
	return bi, nil
}

// bootWorker holds one goroutine's scratch buffers, so that a resample allocates nothing.
type bootWorker struct {
	r        *Ranking
	bi       *bootIndex
	draws    []int32   // !byGroup: the block index of each drawn value, groups in order
	count    []int64   // per distinct value: how often it was drawn, then its doubled midrank
	runCount [][]int32 // byGroup: runCount[i][l], how often group i drew from its run l
	// shortCount[i][k] is how often group i drew its k-th short run (counts scheme).
	shortCount [][]int32
	rankSum2   []int64
	blocks     []Block
	done       <-chan struct{} // the context's Done channel, checked every cancelEvery draws (nil: never)
	stopped    bool            // a resample was given up because done was closed
}

// newBootWorker returns the scratch buffers of one goroutine; counts says that the
// resamples are of the [BootstrapCounts] scheme, which always counts per group and run.
func newBootWorker(r *Ranking, bi *bootIndex, counts bool) *bootWorker {
	m := len(r.Blocks)
	w := &bootWorker{r: r, bi: bi, count: make([]int64, m), rankSum2: make([]int64, r.K), blocks: make([]Block, 0, m)}
	if bi.byGroup || counts {
		w.runCount = make([][]int32, r.K)
		for i, g := range bi.runs {
			w.runCount[i] = make([]int32, len(g.blocks))
		}
	}
	switch {
	case counts:
		w.shortCount = make([][]int32, r.K)
		for i, g := range bi.runs {
			w.shortCount[i] = make([]int32, len(g.cells.short.blocks))
		}
	case !bi.byGroup:
		w.draws = make([]int32, r.N)
	}
	return w
}

// resample draws one bootstrap resample of the [BootstrapIndices] scheme and returns its
// tie-corrected H*. A drawn value is one of the pooled sample's distinct values, so the
// resample is ranked by counting how often each distinct value was drawn (no comparison
// sort): a value drawn t times after b smaller draws has the doubled midrank 2b + t + 1,
// the same integers, tie blocks and H* as sorting the resample would give. When w.done is
// closed during the draws it gives the resample up and sets w.stopped; the result is then
// meaningless.
func (w *bootWorker) resample(s *stream.Stream) (hStar float64, degenerate bool) {
	r, bi := w.r, w.bi
	if bi.byGroup {
		for i, vals := range r.Sorted {
			cnt := w.runCount[i]
			clear(cnt)
			if !w.drawIndices(s, &bi.runs[i], cnt, uint64(len(vals)), uint64(len(vals))) {
				w.stopped = true
				return 0, false
			}
		}
		return w.hFromRunCounts()
	}
	clear(w.count)
	off := 0
	for _, vals := range r.Sorted {
		n := len(vals)
		idx, dr := bi.index[off:off+n], w.draws[off:off+n]
		for j := range dr {
			if j&(cancelEvery-1) == cancelEvery-1 && cancelled(w.done) {
				w.stopped = true
				return 0, false
			}
			u := idx[s.Below(uint64(n))]
			dr[j] = u
			w.count[u]++
		}
		off += n
	}
	w.midranks()
	off = 0
	for i, vals := range r.Sorted {
		var sum int64
		for _, u := range w.draws[off : off+len(vals)] {
			sum += w.count[u]
		}
		w.rankSum2[i] = sum
		off += len(vals)
	}
	return w.hStar()
}

// resampleCounts draws one resample of the [BootstrapCounts] scheme ([bootWorker.drawCounts])
// and returns its tie-corrected H*, ranked from the counts as [bootWorker.resample] does.
// When w.done is closed during the draws it gives the resample up and sets w.stopped.
func (w *bootWorker) resampleCounts(s *stream.Stream) (hStar float64, degenerate bool) {
	if !w.drawCounts(s) {
		w.stopped = true
		return 0, false
	}
	return w.hFromRunCounts()
}

// hFromRunCounts returns H* of the resample whose counts per group and run are in
// w.runCount: the pooled count of each distinct value, its doubled midrank, and each
// group's sum of doubled midranks Σ_l runCount[i][l]·d(value of run l).
func (w *bootWorker) hFromRunCounts() (hStar float64, degenerate bool) {
	clear(w.count)
	for i, g := range w.bi.runs {
		for l, c := range w.runCount[i] {
			w.count[g.blocks[l]] += int64(c)
		}
	}
	w.midranks()
	for i, g := range w.bi.runs {
		var sum int64
		for l, c := range w.runCount[i] {
			sum += int64(c) * w.count[g.blocks[l]]
		}
		w.rankSum2[i] = sum
	}
	return w.hStar()
}

// midranks turns w.count from how often each distinct value was drawn into its doubled
// midrank 2b + t + 1 (t draws of it after b smaller ones), and lists the tie blocks of the
// resample in w.blocks.
func (w *bootWorker) midranks() {
	w.blocks = w.blocks[:0]
	var below int64
	for u, t := range w.count {
		if t == 0 {
			continue
		}
		d := 2*below + t + 1
		w.count[u] = d
		w.blocks = append(w.blocks, Block{Rank2: d, Size: int(t)})
		below += t
	}
}

// hStar is H* of the resample whose rank sums and tie blocks are in w.rankSum2 and
// w.blocks; a resample with every value tied is degenerate and counts as 0.
func (w *bootWorker) hStar() (hStar float64, degenerate bool) {
	_, hStar, c := tieCorrectedH(w.r.N, w.r.Counts, w.rankSum2, w.blocks)
	if !(c > 0) {
		return 0, true
	}
	return hStar, false
}
