package exactdp

import (
	"context"
	"math"
	"runtime"

	"rankplan/stats/internal/blockrun"
)

// slot is one entry of the merge table: a key and its probability. Bit 63 of
// k1 is set in every stored key (word 1 of a key never uses it), so a zero slot is
// empty.
type slot struct {
	k0, k1 uint64
	w      float64
}

const usedBit = 1 << 63

// states is a list of states: keys and probabilities in parallel slices (k1
// only for two-word keys).
type states struct {
	k0, k1 []uint64
	w      []float64
}

// chunk collects what the states of one chunk of a layer produce, in the order
// of the states: their successors, the probability of those settled as reaching the
// observed statistic, and the work.
type chunk struct {
	states
	p    neumaier
	work int64
	wide bool
	big  int
}

// add appends a successor: the state (a, b) (b is 0 for one-word keys) with
// probability w.
func (c *chunk) add(a, b uint64, w float64) {
	if n := len(c.w); n == cap(c.w) || n == cap(c.k0) || c.wide && n == cap(c.k1) {
		c.w = resize(c.w, n+1, c.big)[:n]
		c.k0 = resize(c.k0, n+1, c.big)[:n]
		if c.wide {
			c.k1 = resize(c.k1, n+1, c.big)[:n]
		}
	}
	c.k0 = append(c.k0, a)
	if c.wide {
		c.k1 = append(c.k1, b)
	}
	c.w = append(c.w, w)
}

// resize returns s with length n, reallocated (contents kept) when its capacity
// is short: fourfold up to smallBuf entries, then at once to big (at least
// doubling). Memory fresh from the operating system is zero and costs a page fault
// only where it is first touched, which on some machines costs more than the
// programme's own work on it; so a large design reserves the room its budget allows
// once, instead of copying its layers into ever larger buffers, and a small design
// never does.
func resize[T any](s []T, n, big int) []T {
	if n <= cap(s) {
		return s[:n]
	}
	c := max(n, 4*cap(s), 64)
	if c > smallBuf {
		c = max(n, big, 2*cap(s))
	}
	t := make([]T, n, c)
	copy(t, s)
	return t
}

const (
	chunkStates = 4096    // states per chunk of a layer
	smallBuf    = 1 << 16 // buffers grow fourfold up to this many entries
	maxReserve  = 1 << 22 // and then to the budget, at most this many
	maxPartBits = 12
	partSize    = 1 << 13 // at most about this many successors per partition
	maxWorkers  = 4       // goroutines of a run, at most
)

// layers holds the programme's current layer and the successors of its chunks.
// The successors are merged in two passes: a counting sort groups them by partition
// (the top bits of their hash) into the buffer of the current layer, whose states
// have all been read by then; each partition is then merged in place through a small
// open-addressing table (linear probing, load at most 2/3) that stays in cache, and
// the merged partitions are closed up into the new current layer. So the memory in
// use is about the current layer plus its successors, reused throughout.
//
// Order and determinism. A layer is cut into chunks of chunkStates states; each
// chunk's successors are made in the order of its states, and the chunks are taken
// in order wherever their results are combined (successors, settled probability,
// work, the budget checks). The probabilities of a merged state are added in the
// order its successors were made, and the states come out partition by partition,
// each in slot order. Neither the number of workers that expand chunks or merge
// partitions at the same time nor the machine changes any of this.
type layers struct {
	wide    bool
	big     int
	cur     states
	chunks  []chunk
	part    []uint16 // the partition of each successor, in chunk order
	start   []int    // partition offsets
	merged  []int    // merged states of each partition
	workers []*worker
}

// worker is the scratch space of one goroutine.
type worker struct {
	sc  scratch
	tab []slot // the merge table
}

func hash(a, b uint64) uint64 {
	h := a*0x9E3779B97F4A7C15 ^ b*0xC2B2AE3D27D4EB4F
	h ^= h >> 31
	return h * 0xD6E8FEB86659FD93
}

// work runs f(i, worker) for i = 0..n-1 on the layers' goroutines by [blockrun.Run]: i
// taken in increasing order, ctx checked and stop (may be nil) polled before each i, so
// the i done are always 0..m-1 for some m. It returns ctx's error when ctx ended the
// work, else nil.
func (ls *layers) work(ctx context.Context, n int, stop func() bool, f func(i int, wk *worker)) error {
	return blockrun.Run(ctx, int64(n), len(ls.workers), stop, func(w int, j int64) error {
		f(int(j), ls.workers[w])
		return nil
	})
}

// merge turns the successors of the chunks 0..nc-1 into the new current layer; it
// returns ctx's error, and leaves the layer unusable, when ctx ends it.
func (ls *layers) merge(ctx context.Context, nc int) error {
	n := 0
	for _, c := range ls.chunks[:nc] {
		n += len(c.w)
	}
	bitsP := uint(0)
	for bitsP < maxPartBits && n > partSize<<bitsP {
		bitsP++
	}
	parts := 1 << bitsP
	pmask := uint64(parts - 1)
	// Count the successors of each partition.
	ls.part = resize(ls.part, n, ls.big)
	ls.start = resize(ls.start, parts+1, parts+1)
	ls.merged = resize(ls.merged, parts, parts)
	clear(ls.start)
	i := 0
	for _, c := range ls.chunks[:nc] {
		for j, a := range c.k0 {
			var b uint64
			if ls.wide {
				b = c.k1[j]
			}
			p := uint16(hash(a, b) >> (64 - bitsP) & pmask)
			ls.part[i] = p
			ls.start[p+1]++
			i++
		}
	}
	for p := range parts {
		ls.start[p+1] += ls.start[p]
	}
	// Counting sort into the current layer's buffer (its states have been read).
	dst := &ls.cur
	dst.k0 = resize(dst.k0[:0], n, ls.big)
	dst.w = resize(dst.w[:0], n, ls.big)
	if ls.wide {
		dst.k1 = resize(dst.k1[:0], n, ls.big)
	}
	pos := ls.merged[:0] // reused as the write positions
	pos = append(pos, ls.start[:parts]...)
	i = 0
	for _, c := range ls.chunks[:nc] {
		for j := range c.w {
			p := ls.part[i]
			d := pos[p]
			pos[p]++
			dst.k0[d] = c.k0[j]
			dst.w[d] = c.w[j]
			if ls.wide {
				dst.k1[d] = c.k1[j]
			}
			i++
		}
	}
	// Merge each partition in place.
	if err := ls.work(ctx, parts, nil, func(p int, wk *worker) {
		ls.merged[p] = ls.mergePart(ls.start[p], ls.start[p+1], bitsP, wk)
	}); err != nil {
		return err
	}
	// Close up the partitions.
	out := 0
	for p := range parts {
		lo, m := ls.start[p], ls.merged[p]
		copy(dst.k0[out:], dst.k0[lo:lo+m])
		copy(dst.w[out:], dst.w[lo:lo+m])
		if ls.wide {
			copy(dst.k1[out:], dst.k1[lo:lo+m])
		}
		out += m
	}
	dst.k0, dst.w = dst.k0[:out], dst.w[:out]
	if ls.wide {
		dst.k1 = dst.k1[:out]
	}
	return nil
}

// mergePart merges the successors cur[lo:hi] of one partition and writes the merged
// states, in slot order, to cur[lo:]; it returns their number.
func (ls *layers) mergePart(lo, hi int, bitsP uint, wk *worker) int {
	if hi == lo {
		return 0
	}
	c := &ls.cur
	size, shift := tableSize(hi - lo)
	if len(wk.tab) < size {
		wk.tab = make([]slot, size)
	}
	tab := wk.tab[:size]
	mask := uint64(size - 1)
	for i := lo; i < hi; i++ {
		a, w := c.k0[i], c.w[i]
		var b uint64
		if ls.wide {
			b = c.k1[i]
		}
		b |= usedBit
		for h := hash(a, b&^usedBit) << bitsP >> shift; ; h = (h + 1) & mask {
			s := &tab[h]
			if s.k1 == 0 {
				*s = slot{a, b, w}
				break
			}
			if s.k0 == a && s.k1 == b {
				s.w = float64(s.w + w)
				break
			}
		}
	}
	out := lo
	for i := range tab {
		if s := &tab[i]; s.k1 != 0 {
			c.k0[out] = s.k0
			c.w[out] = s.w
			if ls.wide {
				c.k1[out] = s.k1 &^ usedBit
			}
			out++
			*s = slot{}
		}
	}
	return out - lo
}

// tableSize returns the merge table length for n entries, the least power of
// two at least 3n/2 (load at most 2/3), and the shift that maps a hash (without its
// partition bits) to a slot.
func tableSize(n int) (size int, shift uint) {
	b := uint(4)
	for 1<<b < n+n/2 {
		b++
	}
	return 1 << b, 64 - b
}

// neumaier is a compensated sum (Neumaier 1974, ZAMM 54:39-51).
type neumaier struct{ s, c float64 }

func (z *neumaier) add(x float64) {
	t := float64(z.s + x)
	if math.Abs(z.s) >= math.Abs(x) {
		z.c = float64(z.c + float64(float64(z.s-t)+x))
	} else {
		z.c = float64(z.c + float64(float64(x-t)+z.s))
	}
	z.s = t
}

func (z *neumaier) sum() float64 { return float64(z.s + z.c) }

// scratch holds the per-state work arrays of a worker, allocated once.
type scratch struct {
	c, s, r []int64   // counts, sums and remaining capacities in canonical order
	v       []uint64  // key field values in canonical order
	act     []int     // groups with room left
	f, q    []int64   // subset tables of settle
	lo, hi  []int64   // A_i and B_i of boxReaches
	v2      []uint64  // successor field values (spreadWhole)
	a, left []int     // a composition, and the values left for groups i..k-1
	suf     []int64   // suf[i]: the room left in groups i..k-1
	prod    []float64 // prod[i]: Π_{l<i} C(r_l, a_l)
}

func (pl *plan) newScratch() scratch {
	k := pl.k
	ns := 1 << min(k, maxSubsetK)
	return scratch{
		c: make([]int64, k), s: make([]int64, k), r: make([]int64, k), v: make([]uint64, k),
		act: make([]int, k), f: make([]int64, ns), q: make([]int64, ns),
		lo: make([]int64, k), hi: make([]int64, k),
		v2: make([]uint64, k), a: make([]int, k), left: make([]int, k+1), suf: make([]int64, k+1), prod: make([]float64, k+1),
	}
}

// workerCount is the number of goroutines a run uses: Budget.Workers when positive,
// else GOMAXPROCS, at most maxWorkers. The result does not depend on it (see layers).
func workerCount(requested int) int {
	if requested > 0 {
		return requested
	}
	return min(runtime.GOMAXPROCS(0), maxWorkers)
}
