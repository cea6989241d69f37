package exactdp

import (
	"context"
	"fmt"
	"sync/atomic"

	"rankplan/stats/internal/blockrun"
	"rankplan/stats/internal/wide"
)

// run executes the programme and returns P(T·L >= obs). With visit non-nil it also
// calls visit with T·L and the probability of every final state, in a fixed order.
// States are settled early by the bounds of settle only when prune is set, visit is
// nil and pl.prune allows it. It returns ctx's error when ctx ends the programme (see
// [PValue]).
func (pl *plan) run(ctx context.Context, b Budget, obs wide.U128, visit func(t wide.U128, w float64), prune bool) (Result, error) {
	k := pl.k
	prune = prune && pl.prune && visit == nil
	ls := &layers{wide: pl.wide, big: int(min(b.MaxStates, maxReserve))}
	ls.cur.k0, ls.cur.w = []uint64{0}, []float64{1} // the empty state
	if pl.wide {
		ls.cur.k1 = []uint64{0}
	}
	for range workerCount(b.Workers) {
		ls.workers = append(ls.workers, &worker{sc: pl.newScratch()})
	}

	res := Result{States: 1}
	var p neumaier  // probability of the assignments counted so far
	var done int    // values placed so far
	var doneS int64 // their sum of doubled midranks
	last := len(pl.blocks) - 1
	for j, blk := range pl.blocks[:last] {
		// A block goes in whole (every composition at once) when it has few
		// compositions, else one value at a time.
		steps, per := blk.Size, 1
		if pl.whole(blk.Size) {
			steps, per = 1, blk.Size
		}
		for range steps {
			rem := pl.n - done
			cb := 1.0
			if per > 1 {
				cb = binomial(rem, per)
			}
			ncur := len(ls.cur.w)
			nc := (ncur + chunkStates - 1) / chunkStates
			for len(ls.chunks) < nc {
				ls.chunks = append(ls.chunks, chunk{wide: pl.wide}) // big 0: chunks grow by doubling
			}
			// Workers stop taking chunks once the chunks finished so far exceed the
			// budget. The chunks done are 0..m-1 for some m and include every finished
			// one, so the budget is exceeded within them, and the check below, in
			// chunk order, stops there: the chunks not done are never read.
			var finishedWork, finishedSucc atomic.Int64
			stop := func() bool {
				return res.Work+finishedWork.Load() > b.MaxWork ||
					int64(ncur)+finishedSucc.Load() > b.MaxStates
			}
			st := step{done: done, doneS: doneS, d: blk.Rank2, per: per, rem: rem, cb: cb, obs: int64(obs.Lo), prune: prune}
			if err := ls.work(ctx, nc, stop, func(ci int, wk *worker) {
				c := &ls.chunks[ci]
				pl.expand(c, &ls.cur, ci*chunkStates, min(ncur, (ci+1)*chunkStates), st, &wk.sc)
				finishedWork.Add(c.work)
				finishedSucc.Add(int64(len(c.w)))
			}); err != nil {
				return Result{}, err // the chunks not done must not be read
			}
			// Combine the chunks in order, checking the budget after each.
			live := int64(ncur)
			for ci := range nc {
				c := &ls.chunks[ci]
				res.Work += c.work
				live += int64(len(c.w))
				res.States = max(res.States, live)
				if live > b.MaxStates || res.Work > b.MaxWork {
					return Result{}, fmt.Errorf("%w: tie block %d of %d: %d live states (budget %d), %d units of work (budget %d)",
						ErrBudget, j+1, len(pl.blocks), live, b.MaxStates, res.Work, b.MaxWork)
				}
				p.add(c.p.s)
				p.add(c.p.c)
			}
			done += per
			doneS += int64(per) * blk.Rank2
			if err := ls.merge(ctx, nc); err != nil {
				return Result{}, err
			}
			if b.Progress != nil {
				b.Progress(res.Work, b.MaxWork)
			}
		}
	}

	// The last block fills every remaining place.
	d := pl.blocks[last].Rank2
	sc := &ls.workers[0].sc
	halt := ctx.Done()
	for idx := range ls.cur.w {
		if idx%chunkStates == 0 && blockrun.Cancelled(halt) {
			return Result{}, ctx.Err()
		}
		var k1 uint64
		if pl.wide {
			k1 = ls.cur.k1[idx]
		}
		pl.decode(ls.cur.k0[idx], k1, done, doneS, sc)
		var t wide.U128
		for i := range k {
			y := uint64(sc.s[i] + sc.r[i]*d)
			t = t.AddMul(y*y, pl.mu[i])
		}
		if visit != nil {
			visit(t, ls.cur.w[idx])
		}
		if !t.Less(obs) {
			p.add(ls.cur.w[idx])
		}
	}
	res.Work += int64(len(ls.cur.w))
	if res.Work > b.MaxWork {
		return Result{}, fmt.Errorf("%w: last tie block: %d units of work (budget %d)", ErrBudget, res.Work, b.MaxWork)
	}
	res.P = min(p.sum(), 1)
	if b.Progress != nil {
		b.Progress(res.Work, b.MaxWork)
	}
	return res, nil
}

// step describes one layer: done values placed with sum doneS; the next d
// goes in per at a time (per > 1: a whole block, cb = C(rem, per)), rem values being
// left; obs is T_obs·L for settle.
type step struct {
	done  int
	doneS int64
	d     int64
	per   int
	rem   int
	cb    float64
	obs   int64
	prune bool
}

// expand settles or extends the states cur[lo:hi] in order, filling chunk c.
func (pl *plan) expand(c *chunk, cur *states, lo, hi int, st step, sc *scratch) {
	c.k0, c.k1, c.w = c.k0[:0], c.k1[:0], c.w[:0]
	c.p, c.work = neumaier{}, 0
	for idx := lo; idx < hi; idx++ {
		k0, k1, w := cur.k0[idx], uint64(0), cur.w[idx]
		if pl.wide {
			k1 = cur.k1[idx]
		}
		pl.decode(k0, k1, st.done, st.doneS, sc)
		settled := 0
		if st.prune && st.done > 0 {
			settled = pl.settle(sc, st.done, st.obs)
		}
		switch {
		case settled > 0:
			c.p.add(w) // every completion reaches the observed statistic
			c.work++
		case settled < 0:
			c.work++ // no completion reaches it
		case st.per == 1:
			c.work += pl.spread(c, k0, k1, w, st.d, st.rem, sc)
		default:
			c.work += pl.spreadWhole(c, w, st.d, st.per, st.cb, sc)
		}
	}
}

// decode unpacks a key into sc.c, sc.s, sc.r and sc.v (canonical order), given the
// number done and the sum doneS of the values placed so far.
func (pl *plan) decode(k0, k1 uint64, done int, doneS int64, sc *scratch) {
	k := pl.k
	var cs, ss int64
	for i := range k - 1 {
		w := k0
		if pl.word[i] == 1 {
			w = k1
		}
		f := (w >> pl.shift[i]) & pl.fmask[i]
		s := int64(f & pl.smask[i])
		var c int64
		if pl.size[i] == 1 {
			if s != 0 {
				c = 1
			}
		} else {
			c = int64(f >> pl.sbits[i])
		}
		sc.c[i], sc.s[i], sc.r[i], sc.v[i] = c, s, pl.size[i]-c, f
		cs += c
		ss += s
	}
	c, s := int64(done)-cs, doneS-ss
	sc.c[k-1], sc.s[k-1], sc.r[k-1] = c, s, pl.size[k-1]-c
	sc.v[k-1] = pl.fieldValue(k-1, c, s)
}

// setField returns the key (k0, k1) with canonical group i's field set to f.
func (pl *plan) setField(k0, k1 uint64, i int, f uint64) (uint64, uint64) {
	m := pl.fmask[i] << pl.shift[i]
	if pl.word[i] == 0 {
		return k0&^m | f<<pl.shift[i], k1
	}
	return k0, k1&^m | f<<pl.shift[i]
}

// spread adds to next the successors of the current state (key k0, k1, probability
// w, decoded in sc) when the next value, with doubled midrank d, goes to a group
// with room left, rem values being left to place: group g with probability
// r_g/rem. Of a run of identical groups of one class only the last is extended, with
// the run length as a factor, and the grown group moves up within its class to keep
// the class sorted. It returns the number of transitions.
func (pl *plan) spread(next *chunk, k0, k1 uint64, w float64, d int64, rem int, sc *scratch) int64 {
	k := pl.k
	var work int64
	for g := range k {
		if sc.r[g] == 0 {
			continue
		}
		e := pl.end[g]
		if g+1 < e && sc.v[g+1] == sc.v[g] {
			continue
		}
		run := int64(1)
		for q := g - 1; q >= pl.start[g] && sc.v[q] == sc.v[g]; q-- {
			run++
		}
		nv := pl.fieldValue(g, sc.c[g]+1, sc.s[g]+d)
		p := g
		for p+1 < e && sc.v[p+1] < nv {
			p++
		}
		// Canonical order after the move: positions g..p-1 take the groups g+1..p,
		// position p the grown group; position k-1 is not stored.
		a, b := k0, k1
		for i := g; i < p && i < k-1; i++ {
			a, b = pl.setField(a, b, i, sc.v[i+1])
		}
		if p < k-1 {
			a, b = pl.setField(a, b, p, nv)
		}
		f := float64(float64(run*sc.r[g]) / float64(rem))
		next.add(a, b, float64(w*f))
		work++
	}
	return work
}

// maxWhole is the largest tie block spread in whole (see whole).
const maxWhole = 16

// whole reports whether a tie block of t values is spread in whole: 2 <= t <=
// pl.wholeMax (maxWhole) and its compositions over the k groups,
// C(t+k-1, k-1), are at most 4tk. Spreading it one value at a time costs about tk
// transitions per state but makes states for every partial block; 4tk was the
// faster choice in the benchmarks.
func (pl *plan) whole(t int) bool {
	if t < 2 || t > pl.wholeMax {
		return false
	}
	limit := 4 * t * pl.k
	c := 1 // C(t+i, i) for i = 0..k-1
	for i := 1; i < pl.k; i++ {
		c = c * (t + i) / i
		if c > limit {
			return false
		}
	}
	return true
}

// binomial returns C(n, t) in float64 by the multiplicative formula
// C(n-t+i, i) = C(n-t+i-1, i-1) (n-t+i) / i: exact while below 2^53, else with a
// relative error of at most 2t rounding errors.
func binomial(n, t int) float64 {
	c := 1.0
	for i := 1; i <= t; i++ {
		c = float64(c*float64(n-t+i)) / float64(i)
	}
	return c
}

// spreadWhole adds to next the successors of the current state (probability w,
// decoded in sc) for a block of t tied values with doubled midrank d, cb = C(rem, t):
// every composition a of t with a_i <= r_i, in lexicographic order, with probability
// w · Π_i C(r_i, a_i) / cb (the multivariate hypergeometric law). It returns the
// number of transitions.
func (pl *plan) spreadWhole(next *chunk, w float64, d int64, t int, cb float64, sc *scratch) int64 {
	k := pl.k
	a, left, suf, prod, v2 := sc.a, sc.left, sc.suf, sc.prod, sc.v2
	suf[k] = 0
	for i := k - 1; i >= 0; i-- {
		suf[i] = suf[i+1] + sc.r[i]
	}
	binom := func(r int64, x int) float64 { return pl.binom[int(r)*(maxWhole+1)+x] }
	var work int64
	left[0] = t
	prod[0] = 1
	i := 0 // first position to fill with its smallest feasible part
	for {
		for ; i < k-1; i++ {
			a[i] = max(0, left[i]-int(suf[i+1]))
			left[i+1] = left[i] - a[i]
			prod[i+1] = float64(prod[i] * binom(sc.r[i], a[i]))
		}
		a[k-1] = left[k-1]
		f := float64(prod[k-1] * binom(sc.r[k-1], a[k-1]))
		for q := range k {
			v2[q] = pl.fieldValue(q, sc.c[q]+int64(a[q]), sc.s[q]+int64(a[q])*d)
		}
		// Sort each class of equal-size groups (insertion sort; classes are short).
		for q := 1; q < k; q++ {
			for p := q; p > pl.start[q] && v2[p] < v2[p-1]; p-- {
				v2[p], v2[p-1] = v2[p-1], v2[p]
			}
		}
		var k0, k1 uint64
		for q := range k - 1 {
			if pl.word[q] == 0 {
				k0 |= v2[q] << pl.shift[q]
			} else {
				k1 |= v2[q] << pl.shift[q]
			}
		}
		next.add(k0, k1, float64(w*float64(f/cb)))
		work++

		// Next composition: the deepest position before the last that can grow.
		i = k - 2
		for i >= 0 && a[i] >= min(int(sc.r[i]), left[i]) {
			i--
		}
		if i < 0 {
			return work
		}
		a[i]++
		left[i+1] = left[i] - a[i]
		prod[i+1] = float64(prod[i] * binom(sc.r[i], a[i]))
		i++
	}
}
