package stats

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/bits"
	"slices"

	"rankplan/stats/internal/wide"
	"rankplan/stats/stream"
)

// PermutationBlockSize is the number of resamples drawn from one stream block of the
// Monte Carlo permutation test. It is part of the reproducibility contract: changing it
// changes every recorded Exceed count.
const PermutationBlockSize = 4096

// PermutationPurpose labels the stream of the Monte Carlo permutation test (see package
// stream).
const PermutationPurpose = "kw-permutation"

// PermutationScheme names, for the record, how [KruskalWallisPermutation] draws.
const PermutationScheme = stream.Label + " " + PermutationPurpose +
	", blocks of 4096 resamples, Fisher-Yates over the group labels (Durstenfeld 1964), Lemire bounded integers"

// Comparison rules reported in [Permutation].Comparison.
const (
	// ComparisonExact: T*·L >= T_obs·L compared as 128-bit unsigned integers.
	ComparisonExact = "exact-integer"
	// ComparisonFloat: T* >= T_obs·(1 − 1e-12) in float64, group terms summed in group order.
	ComparisonFloat = "float64, relative tolerance 1e-12"
)

// permutationRelTol is the relative tolerance of [ComparisonFloat].
const permutationRelTol = 1e-12

// DefaultPermutationLevel is the confidence level of the Clopper-Pearson interval of
// [KruskalWallisPermutation] when [PermutationOptions].Level is 0.
const DefaultPermutationLevel = 0.95

// Permutation is a Monte Carlo permutation p-value of the Kruskal-Wallis test with its
// Monte Carlo error; see [KruskalWallisPermutation].
type Permutation struct {
	// Resamples is the number of random relabelings the estimate rests on: m, or L when
	// the sequential rule stopped (the resample that brought the h-th exceedance).
	Resamples int64
	Exceed    int64   // b = #{resamples with T* >= T_obs} among them (h when stopped)
	P         float64 // (b + 1) / (m + 1); h / L when the sequential rule stopped
	SE        float64 // sqrt(p̂ (1 − p̂) / m), p̂ = b / m (m = L, b = h when stopped)
	// Level is the confidence level of the interval [CILow, CIHigh].
	Level float64
	// CILow and CIHigh are the Clopper-Pearson interval at Level for the permutation
	// p-value that b estimates (b is binomial with m trials; [ClopperPearson]), from
	// [BetaQuantile], whose results are the same bits on every architecture. Its relative
	// error against scipy 1.10.1 stats.beta.ppf is below max(1e-12, 1e-17·m)
	// (TestBetaQuantile). They describe the Monte Carlo error, so that is far below what
	// matters.
	// When the sequential rule stopped, the interval is [SequentialInterval](h, L, Level)
	// instead.
	CILow, CIHigh float64
	Comparison    string // ComparisonExact or ComparisonFloat: how T* >= T_obs was decided

	// StopAfter is h of the sequential rule ([PermutationOptions].StopAfter); 0 without
	// one, and then MaxResamples is 0 and Stopped false.
	StopAfter int64
	// MaxResamples is m, the most resamples the sequential rule would draw.
	MaxResamples int64
	// Stopped reports that the sequential rule stopped at the h-th exceedance, before or
	// at the m-th resample; when false, every m resamples were drawn and P is
	// (b + 1)/(m + 1).
	Stopped bool
}

// PermutationOptions configure [KruskalWallisPermutation].
type PermutationOptions struct {
	Seed       uint64 // the run seed
	AnalysisID string // the analysis's identifier; different analyses draw different streams
	Resamples  int64  // m >= 1
	Workers    int    // goroutines; 0 or less: runtime.GOMAXPROCS(0). The result does not depend on it.
	// Level is the confidence level of the Clopper-Pearson interval, strictly between 0
	// and 1; 0 means [DefaultPermutationLevel]. It does not change the count b.
	Level float64
	// StopAfter, when at least 1, is h of Besag & Clifford's sequential rule: stop at
	// the resample that brings the h-th exceedance (see [KruskalWallisPermutation]);
	// 0 draws all Resamples. It must not exceed Resamples.
	StopAfter int64
	// Progress, if not nil, is called with the resamples finished so far after each
	// block of PermutationBlockSize, from the worker goroutines (see [Progress]). The
	// result does not depend on it.
	Progress Progress
}

// KruskalWallisPermutation estimates the permutation p-value of the Kruskal-Wallis test
// by Monte Carlo: the share of random relabelings of the observations whose statistic
// is at least the observed one. group, values and k are the data as given to [Rank],
// and r is their Ranking.
//
// Statistic. With d_j the doubled midrank of observation j (see [Block]) and
// S_i = Σ_{j in group i} d_j, the test uses
//
//	T = Σ_i S_i² / n_i
//
// which, given the tie pattern, is an increasing function of H and of H*
// (H = 3/(N(N+1)) · T − 3(N+1); docs/methods.md §1.3), so T* >= T_obs exactly when
// H* >= H_obs. T is compared exactly when possible: with L = lcm(n_1, ..., n_k),
//
//	T·L = Σ_i S_i² · (L / n_i)
//
// is an integer, and by Cauchy-Schwarz T·L <= L · Σ_j d_j², so when that bound is
// below 2^128 (checked once) every T·L is computed and compared in 128-bit unsigned
// arithmetic ([ComparisonExact]). Otherwise T is computed in float64, terms summed in
// group order, and a resample counts when T* >= T_obs·(1 − 1e-12) ([ComparisonFloat];
// a relative tolerance keeps ties that rounding would split: common practice).
//
// Resampling. Resamples are cut into blocks of [PermutationBlockSize]: block
// j = 0, 1, ... covers resamples j·4096 ... min((j+1)·4096, m) − 1. Block j copies the
// original label array group (in row order), takes the stream
// stream.New(stream.Key("kw-permutation", Seed, AnalysisID, j)), and for each of its
// resamples shuffles the label array a in place by Fisher-Yates ([stream.ShuffleInt32]:
// i = N−1 down to 1, swap a[i] with a[Below(i+1)]), continuing from the previous
// resample's order, then computes T* with row i's doubled rank counted in group a[i].
// Blocks run on Workers goroutines and their integer counts are added, so the result
// is bit-identical for any number of workers.
//
// Estimate and error (docs/methods.md §1.6):
//
//	P      = (b + 1) / (m + 1)                    (Phipson & Smyth 2010, SAGMB 9(1): art. 39)
//	SE     = sqrt(p̂ (1 − p̂) / m),  p̂ = b / m
//	[CILow, CIHigh] = ClopperPearson(b, m, Level)
//
// Sequential rule (StopAfter = h >= 1; Besag & Clifford 1991, "Sequential Monte Carlo
// p-values", Biometrika 78:301-304; docs/methods.md §1.7). The resamples are taken in
// the order above (block 0 first, and within a block in drawing order); when the h-th
// exceedance comes at resample L <= m, the procedure stops there and reports
//
//	P      = h / L
//	SE     = sqrt(p̂ (1 − p̂) / L),  p̂ = h / L
//	[CILow, CIHigh] = SequentialInterval(h, L, Level)
//
// and when fewer than h of the m resamples exceed, it reports the fixed-m result
// above. The result is that of drawing one resample after another and stopping at the
// h-th exceedance; blocks still run in parallel, but their counts are consumed in block
// order, the rule is applied at the first block whose running count reaches h, the h-th
// exceedance is found within it from a record of which of its resamples exceeded, and
// later blocks are not started or are abandoned; a block also ends at the exceedance
// that completes the count it needs. So it too is bit-identical for any number of
// workers; with one worker it draws exactly L resamples, with more at most Workers − 1
// blocks of work are wasted.
//
// It returns [ErrAllTied] (wrapped) when every observation is tied, an error when m < 1,
// when Level is not 0 and not strictly between 0 and 1,
// when N >= 2^31, when r is not the Ranking of (group, values, k), and ctx's error if ctx
// is cancelled (checked before every resample, and every 65536 draws within one). It
// does not modify group, values or r.
// Memory is O(N) per worker plus O(N) shared, allocated once; a resample allocates
// nothing and costs O(N + k).
func KruskalWallisPermutation(ctx context.Context, group []int32, values []float64, k int, r *Ranking, opt PermutationOptions) (Permutation, error) {
	if opt.Resamples < 1 {
		return Permutation{}, fmt.Errorf("kw permutation: need at least 1 resample, got %d", opt.Resamples)
	}
	level := opt.Level
	if level == 0 {
		level = DefaultPermutationLevel
	}
	if !(level > 0 && level < 1) {
		return Permutation{}, fmt.Errorf("kw permutation: the interval level must lie strictly between 0 and 1, got %v", opt.Level)
	}
	if opt.StopAfter < 0 || opt.StopAfter > opt.Resamples {
		return Permutation{}, fmt.Errorf("kw permutation: the sequential rule's h must lie in [1, %d] (the resamples), or be 0 for none; got %d", opt.Resamples, opt.StopAfter)
	}
	ps, err := newPermSetup(group, values, k, r)
	if err != nil {
		return Permutation{}, fmt.Errorf("kw permutation: %w", err)
	}
	b, l, err := ps.run(ctx, opt)
	if err != nil {
		return Permutation{}, fmt.Errorf("kw permutation: %w", err)
	}
	var out Permutation
	if l > 0 {
		out, err = sequentialSummary(opt.StopAfter, l, opt.Resamples, level)
	} else {
		out, err = permutationSummary(b, opt.Resamples, level)
		if opt.StopAfter > 0 {
			out.StopAfter, out.MaxResamples = opt.StopAfter, opt.Resamples
		}
	}
	if err != nil {
		return Permutation{}, fmt.Errorf("kw permutation: %w", err)
	}
	out.Comparison = ps.comparison()
	return out, nil
}

// permutationSummary turns b exceedances in m resamples into the estimate, its
// standard error and its Clopper-Pearson interval at level (see
// [KruskalWallisPermutation]).
func permutationSummary(b, m int64, level float64) (Permutation, error) {
	if m < 1 || b < 0 || b > m {
		return Permutation{}, fmt.Errorf("summary: need 0 <= b <= m, m >= 1, got b = %d, m = %d", b, m)
	}
	fb, fm := float64(b), float64(m)
	ph := fb / fm
	out := Permutation{
		Resamples: m,
		Exceed:    b,
		P:         (fb + 1) / (fm + 1),
		SE:        math.Sqrt(float64(ph*(1-ph)) / fm),
		Level:     level,
	}
	var err error
	if out.CILow, out.CIHigh, err = ClopperPearson(b, m, level); err != nil {
		return Permutation{}, fmt.Errorf("permutation: %w", err)
	}
	return out, nil
}

// ClopperPearson returns the exact (Clopper-Pearson) confidence interval at level for
// the success probability of a binomial count b in m trials:
//
//	low  = Beta⁻¹((1 − level)/2; b, m − b + 1)      (0 when b = 0)
//	high = Beta⁻¹((1 + level)/2; b + 1, m − b)      (1 when b = m)
//
// (Clopper & Pearson 1934, Biometrika 26:404-413, citation recalled from memory; the
// Beta form of the binomial tails is common practice), with the quantiles from
// [BetaQuantile], so the ends are the same bits on every architecture. It returns an
// error unless 0 <= b <= m, m >= 1 and 0 < level < 1 (NaN included).
func ClopperPearson(b, m int64, level float64) (low, high float64, err error) {
	if m < 1 || b < 0 || b > m {
		return 0, 0, fmt.Errorf("clopper-pearson interval: need 0 <= b <= m, m >= 1, got b = %d, m = %d", b, m)
	}
	if !(level > 0 && level < 1) {
		return 0, 0, fmt.Errorf("clopper-pearson interval: the level must lie strictly between 0 and 1, got %v", level)
	}
	fb, fm := float64(b), float64(m)
	tail := (1 - level) / 2
	low, high = 0, 1
	if b > 0 {
		if low, err = BetaQuantile(tail, fb, fm-fb+1); err != nil {
			return 0, 0, fmt.Errorf("clopper-pearson interval: %w", err)
		}
	}
	if b < m {
		if high, err = BetaQuantile(1-tail, fb+1, fm-fb); err != nil {
			return 0, 0, fmt.Errorf("clopper-pearson interval: %w", err)
		}
	}
	return low, high, nil
}

// permSetup is what every worker shares: the doubled rank of each row, the original
// labels and the comparison rule with the observed statistic.
type permSetup struct {
	k      int
	labels []int32  // the caller's group slice; read only
	rank2  []uint32 // doubled midrank of each row (< 2^32 since N < 2^31)
	exact  bool
	weight []uint64  // L / n_i (exact rule)
	sizeF  []float64 // n_i as float64 (float rule)
	obsQ   wide.U128 // T_obs · L (exact rule)
	thresh float64   // T_obs · (1 − 1e-12) (float rule)
}

func (ps *permSetup) comparison() string {
	if ps.exact {
		return ComparisonExact
	}
	return ComparisonFloat
}

// newPermSetup checks that r is the Ranking of (group, values, k), finds each row's
// doubled midrank and decides the comparison rule.
func newPermSetup(group []int32, values []float64, k int, r *Ranking) (*permSetup, error) {
	return newPermSetupRule(group, values, k, r, true)
}

// newPermSetupRule is newPermSetup; allowExact = false forces the float rule (for tests).
func newPermSetupRule(group []int32, values []float64, k int, r *Ranking, allowExact bool) (*permSetup, error) {
	if err := checkRankingDeep(r); err != nil {
		return nil, err
	}
	n := len(values)
	switch {
	case len(group) != n:
		return nil, fmt.Errorf("%d group labels for %d values", len(group), n)
	case r.N != n || r.K != k:
		return nil, fmt.Errorf("the ranking has N = %d, K = %d; the data N = %d, k = %d", r.N, r.K, n, k)
	case int64(n) >= 1<<31:
		return nil, fmt.Errorf("%d observations; at most 2^31 - 1 are supported", n)
	}
	if len(r.Blocks) < 2 {
		return nil, ErrAllTied
	}
	rank2, err := permRowRanks(group, values, r)
	if err != nil {
		return nil, err
	}
	ps := &permSetup{k: k, labels: group, rank2: rank2}

	// Exact rule if L · Σ d² < 2^128, where L = lcm(n_i) must fit in 64 bits.
	ps.exact = allowExact
	lcm := uint64(1)
	for _, c := range r.Counts {
		if !ps.exact {
			break
		}
		g := permGCD(lcm, uint64(c))
		hi, lo := bits.Mul64(lcm/g, uint64(c))
		if hi != 0 {
			ps.exact = false
			break
		}
		lcm = lo
	}
	if ps.exact {
		var sumSq wide.U128
		for _, b := range r.Blocks {
			d := uint64(b.Rank2)
			var of bool // d < 2^32, so d² fits
			if sumSq, of = sumSq.Add(wide.Mul(uint64(b.Size), d*d)); of {
				ps.exact = false
				break
			}
		}
		if _, of := sumSq.Mul64(lcm); of {
			ps.exact = false
		}
	}
	sums := make([]uint64, k)
	for j, g := range group {
		sums[g] += uint64(rank2[j])
	}
	if ps.exact {
		ps.weight = make([]uint64, k)
		for i, c := range r.Counts {
			ps.weight[i] = lcm / uint64(c)
		}
		ps.obsQ = ps.exactQ(sums)
	} else {
		ps.sizeF = make([]float64, k)
		for i, c := range r.Counts {
			ps.sizeF[i] = float64(c)
		}
		ps.thresh = float64(ps.floatT(sums) * (1 - permutationRelTol))
	}
	return ps, nil
}

func permGCD(a, b uint64) uint64 {
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

// exactQ is T·L = Σ_i S_i² · (L/n_i); newPermSetup has checked that it cannot overflow.
func (ps *permSetup) exactQ(sums []uint64) wide.U128 {
	var q wide.U128
	for i, s := range sums {
		t, _ := wide.Mul(s, s).Mul64(ps.weight[i])
		q, _ = q.Add(t)
	}
	return q
}

// floatT is T = Σ_i S_i² / n_i in float64, summed in group order; the explicit
// conversions keep the compiler from fusing operations differently across platforms.
func (ps *permSetup) floatT(sums []uint64) float64 {
	t := 0.0
	for i, s := range sums {
		f := float64(s)
		t += float64(f*f) / ps.sizeF[i]
	}
	return t
}

// exceeds reports whether the statistic of sums is at least the observed one.
func (ps *permSetup) exceeds(sums []uint64) bool {
	if ps.exact {
		return !ps.exactQ(sums).Less(ps.obsQ)
	}
	return ps.floatT(sums) >= ps.thresh
}

// permRowRanks returns the doubled midrank of each row: one k-way merge of r.Sorted
// assigns a doubled rank to every sorted position, then each row's value is found in
// its group by binary search. It fails when a row's group or value does not match r.
func permRowRanks(group []int32, values []float64, r *Ranking) ([]uint32, error) {
	n, k := r.N, r.K
	off := make([]int, k+1)
	for i, c := range r.Counts {
		if len(r.Sorted) != k || len(r.Sorted[i]) != c {
			return nil, errors.New("the ranking's sorted groups do not match its group sizes")
		}
		off[i+1] = off[i] + c
	}
	atSorted := make([]uint32, n)
	scratch := make([]int, 4*k)
	mg := merger{sorted: r.Sorted, pos: scratch[:k], heap: scratch[k : 2*k], runs: scratch[2*k : 3*k], runLen: scratch[3*k:]}
	var below int64
	j := 0
	for mg.init(); mg.size > 0; j++ {
		t := mg.next()
		d := 2*below + int64(t) + 1
		if j >= len(r.Blocks) || r.Blocks[j] != (Block{Rank2: d, Size: t}) {
			return nil, errors.New("the ranking's tie blocks do not match its sorted values")
		}
		for i, g := range mg.runs[:mg.nruns] {
			end := off[g] + mg.pos[g]
			for p := end - mg.runLen[i]; p < end; p++ {
				atSorted[p] = uint32(d)
			}
		}
		below += int64(t)
	}
	if j != len(r.Blocks) {
		return nil, errors.New("the ranking's tie blocks do not match its sorted values")
	}

	rank2 := make([]uint32, n)
	sums := make([]int64, k)
	for row, g := range group {
		if g < 0 || int(g) >= k {
			return nil, fmt.Errorf("observation %d: group index %d is outside [0, %d)", row, g, k)
		}
		p, found := slices.BinarySearch(r.Sorted[g], values[row])
		if !found {
			return nil, fmt.Errorf("observation %d: value %v is not in the ranking of group %d", row, values[row], g)
		}
		rank2[row] = atSorted[off[g]+p]
		sums[g] += int64(rank2[row])
	}
	if !slices.Equal(sums, r.RankSum2) {
		return nil, errors.New("the ranking's rank sums do not match the data")
	}
	return rank2, nil
}

// run draws the resamples of opt on the workers (see [runBlocks]) and returns the
// number of exceedances b among all m resamples, or, when the sequential rule of opt
// stopped, the index L >= 1 of the resample that brought the h-th exceedance (b is
// then not needed and 0). Counts are kept per block, so that b never depends on the
// workers.
func (ps *permSetup) run(ctx context.Context, opt PermutationOptions) (b, l int64, err error) {
	m := opt.Resamples
	blocks := (m-1)/PermutationBlockSize + 1
	workers := resolveWorkers(opt.Workers, blocks)
	progress := newProgressCounter(opt.Progress, m)
	counts := make([]int64, blocks)
	labels := make([][]int32, workers)
	sums := make([][]uint64, workers)
	var seq *seqStop
	var poll func() bool
	if opt.StopAfter > 0 {
		seq = newSeqStop(opt.StopAfter, blocks)
		poll = seq.stopped
	}
	err = runBlocks(ctx, blocks, workers, poll, func(w int, j int64) error {
		if labels[w] == nil {
			labels[w], sums[w] = make([]int32, len(ps.labels)), make([]uint64, 2*ps.k)
		}
		start := j * PermutationBlockSize
		end := min(start+PermutationBlockSize, m)
		c, err := ps.block(ctx, opt, uint64(j), end-start, labels[w], sums[w], seq)
		if err != nil {
			return err
		}
		counts[j] = c
		progress.add(end - start)
		if seq != nil {
			seq.finish(j, c)
		}
		return nil
	})
	if err != nil {
		return 0, 0, err
	}
	if seq != nil && seq.stopped() {
		l, err := seq.stopAt()
		return 0, l, err
	}
	for _, c := range counts {
		b += c
	}
	return b, 0, nil
}

// block draws the count resamples of block j into the scratch buffers a (len N) and
// sums (len 2k) and returns how many exceed the observed statistic. With a sequential
// rule (seq not nil) it also marks each exceeding resample in the block's bitmap, ends
// early with the count so far once that count holds the rule's stop ([seqStop.need]),
// and gives up (returning 0) once the rule has stopped at an earlier block, whose count
// alone then matters.
func (ps *permSetup) block(ctx context.Context, opt PermutationOptions, j uint64, count int64, a []int32, sums []uint64, seq *seqStop) (int64, error) {
	copy(a, ps.labels)
	s := stream.New(stream.Key(PermutationPurpose, opt.Seed, opt.AnalysisID, j))
	done := ctx.Done()
	d := ps.rank2[:len(a)]
	var hits []uint64
	if seq != nil {
		hits = seq.blockHits(int64(j))
	}
	var exceed int64
	for r := range count {
		if cancelled(done) {
			return 0, ctx.Err()
		}
		if seq != nil && seq.past(int64(j)) {
			return 0, nil
		}
		// Fisher-Yates exactly as stream.ShuffleInt32, adding each position's rank to
		// its group as soon as the position's label is final.
		clear(sums)
		for i := len(a) - 1; i > 0; i-- {
			if i&(cancelEvery-1) == 0 && cancelled(done) {
				return 0, ctx.Err()
			}
			// s.Below(i + 1) (Lemire's method), with its common case inline: one raw
			// value, whose low product half is at least the bound, so no rejection test
			// is needed; otherwise Below's own steps from the same value.
			n := uint64(i) + 1
			x, lo := bits.Mul64(s.Uint64(), n)
			if lo < n {
				x = lemireReject(s, n, x, lo)
			}
			a[i], a[x] = a[x], a[i]
			// Two partial sums per group, by the parity of the position, so that
			// consecutive positions of one group do not wait on each other's store.
			sums[2*int(a[i])+(i&1)] += uint64(d[i])
		}
		sums[2*int(a[0])] += uint64(d[0])
		for g := range ps.k { // reads 2g and 2g+1 >= g, so in place
			sums[g] = sums[2*g] + sums[2*g+1]
		}
		if ps.exceeds(sums[:ps.k]) {
			exceed++
			if hits != nil {
				hits[r>>6] |= 1 << (r & 63)
				if exceed >= seq.need(int64(j)) {
					return exceed, nil // the stop is here or earlier; the rest is not needed
				}
			}
		}
	}
	return exceed, nil
}

// lemireReject finishes [stream.Stream.Below](n) after its first raw value gave the
// product hi·2^64 + lo with lo < n: when lo is also below t = 2^64 mod n, the value is
// rejected and further raw values are drawn until one is not; it returns the high half
// of the accepted product. TestPermutationFusedShuffle checks the fused loop against
// stream.ShuffleInt32, and TestLemireRejectSteps this function against Below.
func lemireReject(s *stream.Stream, n, hi, lo uint64) uint64 {
	t := -n % n
	for lo < t {
		hi, lo = bits.Mul64(s.Uint64(), n)
	}
	return hi
}
