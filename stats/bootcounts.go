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

// CountsShortRun is the run length below which the [BootstrapCounts] scheme draws a run's
// count through uniform indices rather than its own binomial: the short runs of a group
// are drawn as one cell, and the draws that fall into that cell are spread over its
// positions by Below (package stream, §7). Either way the count vector is multinomial;
// the length only sets which is cheaper (on one core of the development machine an index
// cost about 10 to 20 ns, a binomial 50 to 80 ns). Part of the reproducibility contract.
const CountsShortRun = 8

// runCells is how the [BootstrapCounts] scheme draws one group's counts, computed once
// from the data (see [bootIndex.prepareCells]).
type runCells struct {
	size  int64            // S, the total length of the short runs (t < CountsShortRun)
	long  []int32          // the long runs, ascending
	bino  []binomialParams // the cells' binomials: the short cell's first when S > 0, then one per long run
	short groupRuns        // the short runs end to end: blocks[k] is the run index, bounds cumulative
}

// drawCounts fills w.runCount with one resample's counts under the [BootstrapCounts]
// scheme, groups in order: runCount[i][l] is how often group i drew its run l (its l-th
// distinct value, ascending, of length t_l). A group of n values whose short runs
// (t_l < CountsShortRun) have total length S draws
//
//	R = n (draws left), L = n (length of the cells left)
//	if S > 0:  X = Binomial(R, S/L);  R = R − X;  L = L − S          (the short cell)
//	for each long run l, ascending, while R > 0:
//	           x_l = Binomial(R, t_l/L);  R = R − x_l;  L = L − t_l
//	X times:   j = Below(S), counting the short run that holds position j of the short
//	           runs laid end to end in ascending order
//
// with Binomial as [binomialParams] draws it. Conditional binomials give the multinomial
// of the cells (given the earlier counts, a cell's count is the number of the R remaining
// draws that fall into it among the cells of total length L; common practice), and given
// X the short cell's draws are X uniform positions in it, so the counts of the runs are
// Multinomial(n; t_0/n, ..., t_{m−1}/n), the law of n uniform indices. A cell whose length
// is all that is left (t = L) takes R without a draw, so a group of short runs alone is
// n draws of Below(n). It returns false, with the counts meaningless, when w.done was
// closed: the context is checked every cancelEvery binomials or indices.
func (w *bootWorker) drawCounts(s *stream.Stream) bool {
	for i, vals := range w.r.Sorted {
		c, cnt := w.bi.runs[i].cells, w.runCount[i]
		clear(cnt)
		rem := int64(len(vals))
		var x int64
		k := 0
		if c.size > 0 {
			x = c.bino[0].draw(s, rem)
			rem -= x
			k = 1
		}
		for j, l := range c.long {
			if j&(cancelEvery-1) == cancelEvery-1 && cancelled(w.done) {
				return false
			}
			if rem == 0 {
				break
			}
			v := c.bino[k+j].draw(s, rem)
			cnt[l] = int32(v)
			rem -= v
		}
		if x > 0 {
			sc := w.shortCount[i]
			clear(sc)
			if !w.drawIndices(s, &c.short, sc, uint64(x), uint64(c.size)) {
				return false
			}
			for k, v := range sc {
				cnt[c.short.blocks[k]] += v
			}
		}
	}
	return true
}

// prepareCells sets, for every group, how [bootWorker.drawCounts] draws its counts: the
// short runs end to end with their position table, and the binomial of each cell (they
// depend on the data alone, not on the draws).
func (bi *bootIndex) prepareCells() {
	for i := range bi.runs {
		g := &bi.runs[i]
		if g.cells != nil {
			continue
		}
		m := len(g.blocks)
		n := int64(g.bounds[m])
		short := 0
		for l := range m {
			if g.bounds[l+1]-g.bounds[l] < CountsShortRun {
				short++
			}
		}
		c := &runCells{long: make([]int32, 0, m-short), bino: make([]binomialParams, 0, m-short+1)}
		if short > 0 {
			c.short.blocks = make([]int32, 0, short)
			c.short.bounds = make([]int32, 0, short+1)
		}
		for l := range m {
			if t := g.bounds[l+1] - g.bounds[l]; t < CountsShortRun {
				c.short.blocks = append(c.short.blocks, int32(l))
				c.short.bounds = append(c.short.bounds, int32(c.size))
				c.size += int64(t)
			} else {
				c.long = append(c.long, int32(l))
			}
		}
		left := n
		if c.size > 0 {
			c.short.bounds = append(c.short.bounds, int32(c.size))
			c.short.index()
			c.bino = append(c.bino, newBinomialParams(c.size, left))
			left -= c.size
		}
		for _, l := range c.long {
			t := int64(g.bounds[l+1] - g.bounds[l])
			c.bino = append(c.bino, newBinomialParams(t, left))
			left -= t
		}
		g.cells = c
	}
}

// drawIndices counts, into cnt, the runs of draws draws j = Below(size) from the
// positions that g describes (a group's sorted values, or its short runs end to end). It
// returns false when w.done was closed.
func (w *bootWorker) drawIndices(s *stream.Stream, g *groupRuns, cnt []int32, draws, size uint64) bool {
	for q := range draws {
		if q&(cancelEvery-1) == cancelEvery-1 && cancelled(w.done) {
			return false
		}
		j := int32(s.Below(size))
		l := g.coarse[j>>g.shift]
		for g.bounds[l+1] <= j {
			l++
		}
		cnt[l]++
	}
	return true
}
