package stats

import "rankplan/stats/stream"

// BootstrapScheme names how [KruskalWallisBootstrap] draws its resamples. The zero value
// is the first scheme, so that callers that name none reproduce the results of earlier
// releases.
type BootstrapScheme int

const (
	// BootstrapIndices draws one uniform index per observation (the first scheme): for
	// each group i in order, n_i values Below(n_i) from stream blocks of
	// [BootstrapBlockSize] resamples under [BootstrapPurpose].
	BootstrapIndices BootstrapScheme = iota
	// BootstrapCounts draws each group's count vector over its distinct values directly,
	// as a multinomial (see [KruskalWallisBootstrap] and package stream, §7), from stream
	// blocks of [CountsBlockSize] resamples under [CountsPurpose]. Its resamples have the
	// same distribution as those of BootstrapIndices, but other draws.
	BootstrapCounts
)

// CountsBlockSize is the number of resamples of the [BootstrapCounts] scheme drawn from
// one stream block. Part of the reproducibility contract: changing it changes every
// interval of the scheme.
const CountsBlockSize = 64

// CountsPurpose labels the stream of the [BootstrapCounts] scheme (see package stream).
const CountsPurpose = "kw-effect-counts"

// CountsIndexRatio chooses how the [BootstrapCounts] scheme draws one group's counts: a
// group of n_i values in m_i runs of equal values is drawn by n_i uniform indices when
// n_i < CountsIndexRatio·m_i, and by conditional binomials otherwise (package stream,
// §7). Either way the count vector is multinomial; the choice only sets which is cheaper
// (on one core of the development machine an index cost about 20 ns at 10^6 rows, a
// binomial 50 to 80 ns). Part of the reproducibility contract.
const CountsIndexRatio = 4

// drawCounts fills w.runCount with one resample's counts under the [BootstrapCounts]
// scheme, groups in order: runCount[i][l] is how often group i drew its run l (its l-th
// distinct value, ascending, of length t_l). A group of n values with m runs draws
//
//	if n < CountsIndexRatio·m:  n times j = Below(n), counting the run that holds j
//	else:  R = n (draws left), L = n (length of the runs left); for l = 0 .. m − 1:
//	           x_l = Binomial(R, t_l/L)  ([binomialParams] with a = t_l, b = L)
//	           R = R − x_l;  L = L − t_l
//
// The conditional binomials give the multinomial (n; t_0/n, ..., t_{m−1}/n): given the
// earlier counts, x_l is the number of the R remaining draws that fall into run l among the
// runs l.. of total length L (common practice). The last run takes what is left without a
// draw (t = L), and so does every run once R is 0. It returns false, with the counts
// meaningless, when w.done was closed: the context is checked every cancelEvery draws or
// runs.
func (w *bootWorker) drawCounts(s *stream.Stream) bool {
	for i, vals := range w.r.Sorted {
		n := int64(len(vals))
		g, cnt := &w.bi.runs[i], w.runCount[i]
		clear(cnt)
		if n < CountsIndexRatio*int64(len(cnt)) {
			if !w.drawIndices(s, g, cnt, uint64(n)) {
				return false
			}
			continue
		}
		rem := n
		for l := range cnt {
			if l&(cancelEvery-1) == cancelEvery-1 && cancelled(w.done) {
				return false
			}
			if rem == 0 {
				break
			}
			x := g.binomials[l].draw(s, rem)
			cnt[l] = int32(x)
			rem -= x
		}
	}
	return true
}

// prepareBinomials sets, for every group that [bootWorker.drawCounts] draws by
// conditional binomials, the parameters of run l's binomial, t_l/L_l with L_l the length
// of runs l, l+1, ... (they depend on the data alone, not on the draws).
func (bi *bootIndex) prepareBinomials() {
	for i := range bi.runs {
		g := &bi.runs[i]
		m := len(g.blocks)
		n := int64(g.bounds[m])
		if n < CountsIndexRatio*int64(m) || g.binomials != nil {
			continue
		}
		g.binomials = make([]binomialParams, m)
		left := n
		for l := range m {
			t := int64(g.bounds[l+1] - g.bounds[l])
			g.binomials[l] = newBinomialParams(t, left)
			left -= t
		}
	}
}

// drawIndices counts, into cnt, the runs of n draws j = Below(n) from one group's sorted
// positions (g describes its runs). It returns false when w.done was closed.
func (w *bootWorker) drawIndices(s *stream.Stream, g *groupRuns, cnt []int32, n uint64) bool {
	for q := range n {
		if q&(cancelEvery-1) == cancelEvery-1 && cancelled(w.done) {
			return false
		}
		j := int32(s.Below(n))
		l := g.coarse[j>>g.shift]
		for g.bounds[l+1] <= j {
			l++
		}
		cnt[l]++
	}
	return true
}
