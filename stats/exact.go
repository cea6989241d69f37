package stats

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/bits"
	"runtime"
	"sync/atomic"
)

// ExactBudget bounds the work of [KruskalWallisExact]; the zero value means
// [DefaultExactBudget]. The bounds count states and transitions of the dynamic
// programme, never time, so whether a design fits is the same on every machine.
type ExactBudget struct {
	// MaxStates is the most DP states alive at once: the states of the layer being
	// read plus the successors made for the next layer before they are merged. At
	// the peak a live state takes about 45 bytes. Zero means
	// DefaultExactBudget.MaxStates.
	MaxStates int64
	// MaxWork is the most units of work in the whole run: a unit is one transition
	// (one state extended by one way of placing the next value or tie block), one
	// state settled early by the bounds, or one final evaluation of the statistic.
	// It bounds the time: about 60 to 150 ns per unit on the 2-core x86-64 machine
	// the package was measured on (see BenchmarkKruskalWallisExact). Zero means
	// DefaultExactBudget.MaxWork.
	MaxWork int64
	// Progress, if not nil, is called after each layer of the programme (one value or
	// one whole tie block placed) with the units of work so far and MaxWork, from the
	// calling goroutine (see [Progress]). It is not part of the budget and the result
	// does not depend on it.
	Progress Progress
}

// DefaultExactBudget is the budget used for a zero [ExactBudget] (or a zero field of
// one): 3,500,000 live states (about 150 MB at the peak) and 10,000,000 units of work,
// about a second at most on the 2-core machine the package was measured on, for a
// run that finishes and for one that is refused. It admits, for example, every
// design of N <= 30 with k = 3 and (6,6,6,6), with or without ties, and (4,4,4,4,4),
// (3,3,3,3,3,3) and (80,80) with the data of BenchmarkKruskalWallisExact.
var DefaultExactBudget = ExactBudget{MaxStates: 3_500_000, MaxWork: 10_000_000}

// ErrExactBudget is returned, wrapped with the figures, when the design needs more
// states or work than the budget allows, or is outside the range the exact method
// represents (see [KruskalWallisExact]). Test with errors.Is.
var ErrExactBudget = errors.New("exact p-value: the design exceeds the work budget")

// Exact is the exact conditional p-value of the Kruskal-Wallis test and the work it
// took.
type Exact struct {
	P      float64 // P(H* >= observed H*) under the permutation null, given the ties
	States int64   // peak live states (report in results as the work done)
	Work   int64   // units of work: transitions, settled states and final evaluations
}

// KruskalWallisExact returns the exact p-value of the Kruskal-Wallis test conditional
// on the observed tie pattern: with every one of the N!/Π n_i! assignments of the
// pooled midranks to groups of the observed sizes equally likely,
//
//	p = P(T* >= T_obs),   T = Σ_i S_i^2 / n_i,   S_i = 2 R_i (doubled rank sums)
//
// H* = (12/(N(N+1)) · T/4 - 3(N+1)) / C is an increasing function of T with the same
// constants (N, the sizes, the tie correction C) for every assignment, so H, H* and T
// give the same p (Kruskal & Wallis 1952, JASA 47:583-621; the conditional null with
// ties as in the project's docs/methods.md §1.3). With k = 2 it is the exact two-sided
// Wilcoxon-Mann-Whitney rank-sum p-value conditional on the ties,
// P(|W* - E W| >= |W - E W|), since T is then an increasing function of
// (S_1 - n_1 (N+1))^2.
//
// # Algorithm
//
// A dynamic programme over the pooled values in ascending order, the
// contingency-table view of the permutation distribution (Klotz & Teng 1977, JASA
// 72:165-169; Mehta & Patel 1983, JASA 78:427-434): an assignment is a table a_ij
// (group i, tie block j) with row sums n_i and column sums t_j, with probability
//
//	P(a) = Π_j [ Π_i C(r_ij, a_ij) / C(N - T_{j-1}, t_j) ],   r_ij = n_i - Σ_{l<j} a_il
//
// (the sequential factorisation: block j spreads its t_j tied values over the room
// r_ij left in the groups). After the first values the state is the vector of
// (c_i, S_i), the count and the sum of doubled midranks each group holds so far;
// states reached in several ways merge by adding their probabilities. A small tie
// block is spread in whole, every composition (a_1j..a_kj) at once; a larger one,
// and every untied value, one value at a time, the value going to group i with
// probability r_i/(values left), which is the same law (draws without replacement).
// The last block fills every remaining place, so the states before it are finished
// directly: T = Σ_i (S_i + r_i d_m)^2 / n_i.
//
// Network-style pruning (after Mehta & Patel 1983): before a state is extended, an
// exact upper bound and a lower bound on T over its completions are compared with
// T_obs; a state that cannot reach T_obs is dropped and one all of whose completions
// reach it is counted at once (see the bounds in the source, exactPlan.settle).
//
// Parts that are this package's own: the bounds; groups of equal size are
// interchangeable in T and in the transition probabilities, so a state stores the
// (c_i, S_i) of each class of equal-size groups sorted, and a value is placed in a
// run of identical groups once, with the run length as a factor; the largest group in
// canonical order is implied by the totals and not stored; the successors of a layer
// are merged by a counting sort into hash partitions and a small hash table per
// partition (see exactLayers); the chunks of a layer and the partitions are worked
// on by up to GOMAXPROCS goroutines (at most exactMaxWorkers), with the same result
// for any number.
//
// # Exactness and precision
//
// T is compared exactly: T·L = Σ_i S_i^2 (L/n_i), L = lcm(n_1..n_k), is an integer,
// computed in 128-bit unsigned arithmetic (math/bits) for the final comparison and in
// int64 for the bounds (used only when L·(N(N+1))^2·N^2 < 2^63, else no pruning); an
// assignment counts when its integer is at least the observed one. No floating-point
// tolerance is involved (float64 is used in the bounds only to skip an exact test that
// would fail, which cannot change a decision).
//
// The probabilities are float64. Every step multiplies a path's probability by a
// factor made of products and quotients of integers and binomial coefficients
// (computed by the multiplicative formula, exact below 2^53), merges add positive
// terms, and p is a compensated (Neumaier) sum. To first order the relative error of
// P is at most (3 + Σ_j e_j)·2^-53 over the layers j, with e_j = k + 1 for a layer
// that places one value and e_j = 2tk + k + 2t + 1 + m_j for a tie block of t values
// spread in whole, m_j being the most terms added into one state (at most
// C(t+k-1, k-1)·k!). For untied data that is (N(k+1) + 3)·2^-53, about 2e-14 for
// N = 30 and k = 4. The tests check P within 1e-12 of exact fractions and the whole
// distribution's total within 1e-12 of 1. This holds as long as no probability falls
// below 2^-1022 (possible only when p itself is far below 1e-290). P is capped at 1.
//
// # Determinism
//
// The states of a layer are kept in a fixed order (by the partition of their hash,
// then by slot), each state's successors are made in a fixed order, layers are cut
// into chunks of a fixed size whatever the number of goroutines, and every sum is
// accumulated in a fixed order (within a state, a chunk, then chunk by chunk) with
// explicit float64 conversions (no fused multiply-add); no Go map is used and no
// transcendental function is called. The same Ranking gives the same P bit for bit on
// every machine, Go release and GOMAXPROCS. Relabeling groups, reordering rows or transforming values by a strictly
// increasing function does not change P either: the programme sees only the sizes,
// the tie blocks and the integer T_obs.
//
// # Budget and errors
//
// Zero fields of budget take the value of [DefaultExactBudget]. When the live states
// exceed budget.MaxStates or the work exceeds budget.MaxWork, the run stops at once
// and returns [ErrExactBudget] wrapped with the figures: the work done before
// stopping exceeds the budget by at most the work on one chunk of exactChunkStates
// (4096) states per goroutine. The method also
// returns ErrExactBudget (wrapped) for designs it cannot represent: N > 65535,
// lcm(n_i) >= 2^64, or a state of more than 127 bits (k+1 groups of the largest
// sizes need about k·(2 log2 N + log2 n) bits). It returns [ErrAllTied] (wrapped) when
// every observation is tied, and an error when r is nil or inconsistent or a budget
// field is negative. It never modifies r.
//
// It returns ctx's error (wrapped) when ctx is done before the programme ends. The
// context is checked before each chunk of exactChunkStates (4096) states of a layer is
// extended, before each partition of a layer's merge and every 4096 final states, so
// at most a chunk's work per goroutine (4096 states and their transitions: milliseconds,
// tens of milliseconds for the widest tie blocks) is done after it ends.
func KruskalWallisExact(ctx context.Context, r *Ranking, budget ExactBudget) (Exact, error) {
	if err := checkRankingDeep(r); err != nil {
		return Exact{}, fmt.Errorf("exact p-value: %w", err)
	}
	if len(r.Blocks) < 2 {
		return Exact{}, fmt.Errorf("exact p-value: %w", ErrAllTied)
	}
	b, err := budget.resolve()
	if err != nil {
		return Exact{}, err
	}
	pl, err := newExactPlan(r.Counts, r.Blocks)
	if err != nil {
		return Exact{}, err
	}
	obs := pl.observed(r.Counts, r.RankSum2)
	ex, err := pl.run(ctx, b, obs, nil, true)
	if err != nil && !errors.Is(err, ErrExactBudget) {
		return Exact{}, fmt.Errorf("exact p-value: %w", err)
	}
	return ex, err
}

// resolve replaces zero fields by the defaults and rejects negative ones.
func (b ExactBudget) resolve() (ExactBudget, error) {
	if b.MaxStates < 0 || b.MaxWork < 0 {
		return ExactBudget{}, fmt.Errorf("exact p-value: negative budget (MaxStates %d, MaxWork %d)",
			b.MaxStates, b.MaxWork)
	}
	if b.MaxStates == 0 {
		b.MaxStates = DefaultExactBudget.MaxStates
	}
	if b.MaxWork == 0 {
		b.MaxWork = DefaultExactBudget.MaxWork
	}
	return b, nil
}

// exactU128 is an unsigned 128-bit integer, used for the exact statistic T·L.
type exactU128 struct{ hi, lo uint64 }

func (a exactU128) less(b exactU128) bool { return a.hi < b.hi || (a.hi == b.hi && a.lo < b.lo) }

// addMul returns a + x·y.
func (a exactU128) addMul(x, y uint64) exactU128 {
	hi, lo := bits.Mul64(x, y)
	var carry uint64
	a.lo, carry = bits.Add64(a.lo, lo, 0)
	a.hi, _ = bits.Add64(a.hi, hi, carry)
	return a
}

// exactPlan is the fixed part of an exact run: groups in canonical order (ascending
// size, so that classes of equal size are contiguous), the statistic's integer
// weights, the bit layout of a state key and the prefix sums of the doubled ranks.
type exactPlan struct {
	n, k   int
	size   []int64  // n_i in canonical order
	start  []int    // start[i]: first canonical index of i's class
	end    []int    // end[i]: one past the last canonical index of i's class
	mu     []uint64 // L / n_i
	blocks []Block
	g      []int64   // g[x]: the sum of the x smallest doubled midranks, x = 0..N
	binom  []float64 // binom[r*(exactWholeMax+1)+a] = C(r, a), r <= max n_i; only when some block is spread whole
	// wholeMax is the largest tie block spread in whole: exactWholeMax (tests lower it).
	wholeMax int

	// Pruning (see settle) works in int64 and is on when L·(N(N+1))^2·N^2 < 2^63.
	prune bool
	l     int64 // L = lcm(n_1..n_k)
	tot   int64 // N(N+1), the sum of all doubled midranks

	// Key layout of canonical group i < k-1: the field value v = c<<sbits | S (just S
	// for a group of size 1, whose count is 1 exactly when S > 0) sits in word
	// word[i] of the key at bit shift[i]; wide when word 1 is used. Bit 63 of word 1
	// is kept free (see exactSlot).
	wide  bool
	word  []uint8
	shift []uint8
	sbits []uint8
	fmask []uint64
	smask []uint64
}

// newExactPlan checks that the design is within the method's range and lays it out.
func newExactPlan(counts []int, blocks []Block) (*exactPlan, error) {
	n := 0
	for _, c := range counts {
		n += c
	}
	k := len(counts)
	if n > 65535 {
		return nil, fmt.Errorf("%w: N = %d is above the exact method's limit of 65535", ErrExactBudget, n)
	}
	pl := &exactPlan{n: n, k: k, blocks: blocks, wholeMax: exactWholeMax}
	order := make([]int, k)
	for i := range order {
		order[i] = i
	}
	// Stable insertion sort by size.
	for i := 1; i < k; i++ {
		for j := i; j > 0 && counts[order[j]] < counts[order[j-1]]; j-- {
			order[j], order[j-1] = order[j-1], order[j]
		}
	}
	pl.size = make([]int64, k)
	for i, g := range order {
		pl.size[i] = int64(counts[g])
	}
	pl.start = make([]int, k)
	pl.end = make([]int, k)
	for i := 0; i < k; {
		j := i
		for j < k && pl.size[j] == pl.size[i] {
			j++
		}
		for q := i; q < j; q++ {
			pl.start[q], pl.end[q] = i, j
		}
		i = j
	}

	// L = lcm of the sizes, and the weights L / n_i.
	var l uint64 = 1
	for i := 0; i < k; i = pl.end[i] {
		s := uint64(pl.size[i])
		hi, lo := bits.Mul64(l/exactGCD(l, s), s)
		if hi != 0 {
			return nil, fmt.Errorf("%w: the least common multiple of the group sizes exceeds 2^64", ErrExactBudget)
		}
		l = lo
	}
	pl.mu = make([]uint64, k)
	for i := range pl.mu {
		pl.mu[i] = l / uint64(pl.size[i])
	}
	pl.tot = int64(n) * int64(n+1)
	pl.l = int64(l)
	pl.prune = exactFits63(l, uint64(pl.tot), uint64(pl.tot), uint64(n), uint64(n))

	pl.g = make([]int64, n+1)
	x := 0
	for _, b := range blocks {
		for range b.Size {
			pl.g[x+1] = pl.g[x] + b.Rank2
			x++
		}
	}

	// Binomial coefficients C(r, a), a <= exactWholeMax, when some block is spread in
	// whole.
	for _, b := range blocks {
		if pl.whole(b.Size) {
			const w = exactWholeMax + 1
			maxN := int(pl.size[k-1])
			pl.binom = make([]float64, (maxN+1)*w)
			for r := 0; r <= maxN; r++ {
				for a := 0; a <= min(r, exactWholeMax); a++ {
					pl.binom[r*w+a] = exactBinomial(r, a)
				}
			}
			break
		}
	}

	// Key layout.
	pl.word = make([]uint8, k)
	pl.shift = make([]uint8, k)
	pl.sbits = make([]uint8, k)
	pl.fmask = make([]uint64, k)
	pl.smask = make([]uint64, k)
	word, pos := 0, 0
	for i := range k {
		sb := bits.Len64(uint64(exactMaxRankSum2(blocks, pl.size[i])))
		width := sb
		if pl.size[i] > 1 {
			width += bits.Len64(uint64(pl.size[i]))
		}
		pl.sbits[i] = uint8(sb)
		pl.smask[i] = 1<<sb - 1
		pl.fmask[i] = 1<<width - 1
		if i == k-1 {
			break // the last group in canonical order is implied by the totals
		}
		if pos+width > 64-word { // bit 63 of word 1 is kept free (see exactSlot)
			word, pos = word+1, 0
		}
		if word > 1 || pos+width > 64-word {
			return nil, fmt.Errorf("%w: %d groups need more than 127 bits of state", ErrExactBudget, k)
		}
		pl.word[i], pl.shift[i] = uint8(word), uint8(pos)
		pl.wide = pl.wide || word == 1
		pos += width
	}
	return pl, nil
}

// exactMaxRankSum2 is the largest sum of doubled midranks a group of size n can hold: the
// n largest ranks.
func exactMaxRankSum2(blocks []Block, n int64) int64 {
	var s int64
	for j := len(blocks) - 1; j >= 0 && n > 0; j-- {
		t := min(int64(blocks[j].Size), n)
		s += t * blocks[j].Rank2
		n -= t
	}
	return s
}

// exactFits63 reports whether the product of xs is below 2^63.
func exactFits63(xs ...uint64) bool {
	p := uint64(1)
	for _, x := range xs {
		hi, lo := bits.Mul64(p, x)
		if hi != 0 || lo >= 1<<63 {
			return false
		}
		p = lo
	}
	return true
}

func exactGCD(a, b uint64) uint64 {
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

// observed returns T·L for the observed doubled rank sums (original group order).
func (pl *exactPlan) observed(counts []int, rankSum2 []int64) exactU128 {
	l := uint64(pl.l)
	var t exactU128
	for i, s := range rankSum2 {
		u := uint64(s)
		t = t.addMul(u*u, l/uint64(counts[i]))
	}
	return t
}

// fieldValue is the key field of canonical group i holding c values with sum s.
func (pl *exactPlan) fieldValue(i int, c, s int64) uint64 {
	if pl.size[i] == 1 {
		return uint64(s)
	}
	return uint64(c)<<pl.sbits[i] | uint64(s)
}

// exactSlot is one entry of the merge table: a key and its probability. Bit 63 of
// k1 is set in every stored key (word 1 of a key never uses it), so a zero slot is
// empty.
type exactSlot struct {
	k0, k1 uint64
	w      float64
}

const exactUsed = 1 << 63

// exactStates is a list of states: keys and probabilities in parallel slices (k1
// only for two-word keys).
type exactStates struct {
	k0, k1 []uint64
	w      []float64
}

// exactChunk collects what the states of one chunk of a layer produce, in the order
// of the states: their successors, the probability of those settled as reaching the
// observed statistic, and the work.
type exactChunk struct {
	exactStates
	p    exactNeumaier
	work int64
	wide bool
	big  int
}

// add appends a successor: the state (a, b) (b is 0 for one-word keys) with
// probability w.
func (c *exactChunk) add(a, b uint64, w float64) {
	if n := len(c.w); n == cap(c.w) || n == cap(c.k0) || c.wide && n == cap(c.k1) {
		c.w = exactResize(c.w, n+1, c.big)[:n]
		c.k0 = exactResize(c.k0, n+1, c.big)[:n]
		if c.wide {
			c.k1 = exactResize(c.k1, n+1, c.big)[:n]
		}
	}
	c.k0 = append(c.k0, a)
	if c.wide {
		c.k1 = append(c.k1, b)
	}
	c.w = append(c.w, w)
}

// exactResize returns s with length n, reallocated (contents kept) when its capacity
// is short: fourfold up to exactSmall entries, then at once to big (at least
// doubling). Memory fresh from the operating system is zero and costs a page fault
// only where it is first touched, which on some machines costs more than the
// programme's own work on it; so a large design reserves the room its budget allows
// once, instead of copying its layers into ever larger buffers, and a small design
// never does.
func exactResize[T any](s []T, n, big int) []T {
	if n <= cap(s) {
		return s[:n]
	}
	c := max(n, 4*cap(s), 64)
	if c > exactSmall {
		c = max(n, big, 2*cap(s))
	}
	t := make([]T, n, c)
	copy(t, s)
	return t
}

const (
	exactChunkStates = 4096    // states per chunk of a layer
	exactSmall       = 1 << 16 // buffers grow fourfold up to this many entries
	exactMaxReserve  = 1 << 22 // and then to the budget, at most this many
	exactMaxPartBits = 12
	exactPartSize    = 1 << 13 // at most about this many successors per partition
	exactMaxWorkers  = 4       // goroutines of a run, at most
)

// exactLayers holds the programme's current layer and the successors of its chunks.
// The successors are merged in two passes: a counting sort groups them by partition
// (the top bits of their hash) into the buffer of the current layer, whose states
// have all been read by then; each partition is then merged in place through a small
// open-addressing table (linear probing, load at most 2/3) that stays in cache, and
// the merged partitions are closed up into the new current layer. So the memory in
// use is about the current layer plus its successors, reused throughout.
//
// Order and determinism. A layer is cut into chunks of exactChunkStates states; each
// chunk's successors are made in the order of its states, and the chunks are taken
// in order wherever their results are combined (successors, settled probability,
// work, the budget checks). The probabilities of a merged state are added in the
// order its successors were made, and the states come out partition by partition,
// each in slot order. Neither the number of workers that expand chunks or merge
// partitions at the same time nor the machine changes any of this.
type exactLayers struct {
	wide    bool
	big     int
	cur     exactStates
	chunks  []exactChunk
	part    []uint16 // the partition of each successor, in chunk order
	start   []int    // partition offsets
	merged  []int    // merged states of each partition
	workers []*exactWorker
}

// exactWorker is the scratch space of one goroutine.
type exactWorker struct {
	sc  exactScratch
	tab []exactSlot // the merge table
}

func exactHash(a, b uint64) uint64 {
	h := a*0x9E3779B97F4A7C15 ^ b*0xC2B2AE3D27D4EB4F
	h ^= h >> 31
	return h * 0xD6E8FEB86659FD93
}

// work runs f(i, worker) for i = 0..n-1 on the layers' goroutines by [runBlocks]: i
// taken in increasing order, ctx checked and stop (may be nil) polled before each i, so
// the i done are always 0..m-1 for some m. It returns ctx's error when ctx ended the
// work, else nil.
func (ls *exactLayers) work(ctx context.Context, n int, stop func() bool, f func(i int, wk *exactWorker)) error {
	return runBlocks(ctx, int64(n), len(ls.workers), stop, func(w int, j int64) error {
		f(int(j), ls.workers[w])
		return nil
	})
}

// merge turns the successors of the chunks 0..nc-1 into the new current layer; it
// returns ctx's error, and leaves the layer unusable, when ctx ends it.
func (ls *exactLayers) merge(ctx context.Context, nc int) error {
	n := 0
	for _, c := range ls.chunks[:nc] {
		n += len(c.w)
	}
	bitsP := uint(0)
	for bitsP < exactMaxPartBits && n > exactPartSize<<bitsP {
		bitsP++
	}
	parts := 1 << bitsP
	pmask := uint64(parts - 1)
	// Count the successors of each partition.
	ls.part = exactResize(ls.part, n, ls.big)
	ls.start = exactResize(ls.start, parts+1, parts+1)
	ls.merged = exactResize(ls.merged, parts, parts)
	clear(ls.start)
	i := 0
	for _, c := range ls.chunks[:nc] {
		for j, a := range c.k0 {
			var b uint64
			if ls.wide {
				b = c.k1[j]
			}
			p := uint16(exactHash(a, b) >> (64 - bitsP) & pmask)
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
	dst.k0 = exactResize(dst.k0[:0], n, ls.big)
	dst.w = exactResize(dst.w[:0], n, ls.big)
	if ls.wide {
		dst.k1 = exactResize(dst.k1[:0], n, ls.big)
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
	if err := ls.work(ctx, parts, nil, func(p int, wk *exactWorker) {
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
func (ls *exactLayers) mergePart(lo, hi int, bitsP uint, wk *exactWorker) int {
	if hi == lo {
		return 0
	}
	c := &ls.cur
	size, shift := exactTableSize(hi - lo)
	if len(wk.tab) < size {
		wk.tab = make([]exactSlot, size)
	}
	tab := wk.tab[:size]
	mask := uint64(size - 1)
	for i := lo; i < hi; i++ {
		a, w := c.k0[i], c.w[i]
		var b uint64
		if ls.wide {
			b = c.k1[i]
		}
		b |= exactUsed
		for h := exactHash(a, b&^exactUsed) << bitsP >> shift; ; h = (h + 1) & mask {
			s := &tab[h]
			if s.k1 == 0 {
				*s = exactSlot{a, b, w}
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
				c.k1[out] = s.k1 &^ exactUsed
			}
			out++
			*s = exactSlot{}
		}
	}
	return out - lo
}

// exactTableSize returns the merge table length for n entries, the least power of
// two at least 3n/2 (load at most 2/3), and the shift that maps a hash (without its
// partition bits) to a slot.
func exactTableSize(n int) (size int, shift uint) {
	b := uint(4)
	for 1<<b < n+n/2 {
		b++
	}
	return 1 << b, 64 - b
}

// exactNeumaier is a compensated sum (Neumaier 1974, ZAMM 54:39-51).
type exactNeumaier struct{ s, c float64 }

func (z *exactNeumaier) add(x float64) {
	t := float64(z.s + x)
	if math.Abs(z.s) >= math.Abs(x) {
		z.c = float64(z.c + float64(float64(z.s-t)+x))
	} else {
		z.c = float64(z.c + float64(float64(x-t)+z.s))
	}
	z.s = t
}

func (z *exactNeumaier) sum() float64 { return float64(z.s + z.c) }

// exactScratch holds the per-state work arrays of a worker, allocated once.
type exactScratch struct {
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

func (pl *exactPlan) newScratch() exactScratch {
	k := pl.k
	ns := 1 << min(k, exactMaxSubsetK)
	return exactScratch{
		c: make([]int64, k), s: make([]int64, k), r: make([]int64, k), v: make([]uint64, k),
		act: make([]int, k), f: make([]int64, ns), q: make([]int64, ns),
		lo: make([]int64, k), hi: make([]int64, k),
		v2: make([]uint64, k), a: make([]int, k), left: make([]int, k+1), suf: make([]int64, k+1), prod: make([]float64, k+1),
	}
}

// exactWorkers is the number of goroutines a run uses: GOMAXPROCS, at most
// exactMaxWorkers. The result does not depend on it (see exactLayers).
var exactWorkers = func() int { return min(runtime.GOMAXPROCS(0), exactMaxWorkers) }

// run executes the programme and returns P(T·L >= obs). With visit non-nil it also
// calls visit with T·L and the probability of every final state, in a fixed order.
// States are settled early by the bounds of settle only when prune is set, visit is
// nil and pl.prune allows it. It returns ctx's error when ctx ends the programme (see
// [KruskalWallisExact]).
func (pl *exactPlan) run(ctx context.Context, b ExactBudget, obs exactU128, visit func(t exactU128, w float64), prune bool) (Exact, error) {
	k := pl.k
	prune = prune && pl.prune && visit == nil
	ls := &exactLayers{wide: pl.wide, big: int(min(b.MaxStates, exactMaxReserve))}
	ls.cur.k0, ls.cur.w = []uint64{0}, []float64{1} // the empty state
	if pl.wide {
		ls.cur.k1 = []uint64{0}
	}
	for range exactWorkers() {
		ls.workers = append(ls.workers, &exactWorker{sc: pl.newScratch()})
	}

	res := Exact{States: 1}
	var p exactNeumaier // probability of the assignments counted so far
	var done int        // values placed so far
	var doneS int64     // their sum of doubled midranks
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
				cb = exactBinomial(rem, per)
			}
			ncur := len(ls.cur.w)
			nc := (ncur + exactChunkStates - 1) / exactChunkStates
			for len(ls.chunks) < nc {
				ls.chunks = append(ls.chunks, exactChunk{wide: pl.wide}) // big 0: chunks grow by doubling
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
			st := exactStep{done: done, doneS: doneS, d: blk.Rank2, per: per, rem: rem, cb: cb, obs: int64(obs.lo), prune: prune}
			if err := ls.work(ctx, nc, stop, func(ci int, wk *exactWorker) {
				c := &ls.chunks[ci]
				pl.expand(c, &ls.cur, ci*exactChunkStates, min(ncur, (ci+1)*exactChunkStates), st, &wk.sc)
				finishedWork.Add(c.work)
				finishedSucc.Add(int64(len(c.w)))
			}); err != nil {
				return Exact{}, err // the chunks not done must not be read
			}
			// Combine the chunks in order, checking the budget after each.
			live := int64(ncur)
			for ci := range nc {
				c := &ls.chunks[ci]
				res.Work += c.work
				live += int64(len(c.w))
				res.States = max(res.States, live)
				if live > b.MaxStates || res.Work > b.MaxWork {
					return Exact{}, fmt.Errorf("%w: tie block %d of %d: %d live states (budget %d), %d units of work (budget %d)",
						ErrExactBudget, j+1, len(pl.blocks), live, b.MaxStates, res.Work, b.MaxWork)
				}
				p.add(c.p.s)
				p.add(c.p.c)
			}
			done += per
			doneS += int64(per) * blk.Rank2
			if err := ls.merge(ctx, nc); err != nil {
				return Exact{}, err
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
		if idx%exactChunkStates == 0 && cancelled(halt) {
			return Exact{}, ctx.Err()
		}
		var k1 uint64
		if pl.wide {
			k1 = ls.cur.k1[idx]
		}
		pl.decode(ls.cur.k0[idx], k1, done, doneS, sc)
		var t exactU128
		for i := range k {
			y := uint64(sc.s[i] + sc.r[i]*d)
			t = t.addMul(y*y, pl.mu[i])
		}
		if visit != nil {
			visit(t, ls.cur.w[idx])
		}
		if !t.less(obs) {
			p.add(ls.cur.w[idx])
		}
	}
	res.Work += int64(len(ls.cur.w))
	if res.Work > b.MaxWork {
		return Exact{}, fmt.Errorf("%w: last tie block: %d units of work (budget %d)", ErrExactBudget, res.Work, b.MaxWork)
	}
	res.P = min(p.sum(), 1)
	if b.Progress != nil {
		b.Progress(res.Work, b.MaxWork)
	}
	return res, nil
}

// exactStep describes one layer: done values placed with sum doneS; the next d
// goes in per at a time (per > 1: a whole block, cb = C(rem, per)), rem values being
// left; obs is T_obs·L for settle.
type exactStep struct {
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
func (pl *exactPlan) expand(c *exactChunk, cur *exactStates, lo, hi int, st exactStep, sc *exactScratch) {
	c.k0, c.k1, c.w = c.k0[:0], c.k1[:0], c.w[:0]
	c.p, c.work = exactNeumaier{}, 0
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
func (pl *exactPlan) decode(k0, k1 uint64, done int, doneS int64, sc *exactScratch) {
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
func (pl *exactPlan) setField(k0, k1 uint64, i int, f uint64) (uint64, uint64) {
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
func (pl *exactPlan) spread(next *exactChunk, k0, k1 uint64, w float64, d int64, rem int, sc *exactScratch) int64 {
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

// exactWholeMax is the largest tie block spread in whole (see whole).
const exactWholeMax = 16

// whole reports whether a tie block of t values is spread in whole: 2 <= t <=
// pl.wholeMax (exactWholeMax) and its compositions over the k groups,
// C(t+k-1, k-1), are at most 4tk. Spreading it one value at a time costs about tk
// transitions per state but makes states for every partial block; 4tk was the
// faster choice in the benchmarks.
func (pl *exactPlan) whole(t int) bool {
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

// exactBinomial returns C(n, t) in float64 by the multiplicative formula
// C(n-t+i, i) = C(n-t+i-1, i-1) (n-t+i) / i: exact while below 2^53, else with a
// relative error of at most 2t rounding errors.
func exactBinomial(n, t int) float64 {
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
func (pl *exactPlan) spreadWhole(next *exactChunk, w float64, d int64, t int, cb float64, sc *exactScratch) int64 {
	k := pl.k
	a, left, suf, prod, v2 := sc.a, sc.left, sc.suf, sc.prod, sc.v2
	suf[k] = 0
	for i := k - 1; i >= 0; i-- {
		suf[i] = suf[i+1] + sc.r[i]
	}
	binom := func(r int64, x int) float64 { return pl.binom[int(r)*(exactWholeMax+1)+x] }
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

// exactMaxSubsetK is the most groups for which settle computes its upper bound (a
// programme over the 2^k subsets of groups); with more groups it uses the lower bound
// only.
const exactMaxSubsetK = 6

// settle decides a state (decoded in sc, done values placed) before it is extended:
// -1 when no completion reaches the observed statistic obs = T_obs·L, +1 when every
// completion does, 0 when neither bound decides. Both bounds are computed exactly in
// integers, so the decision is exact. The values still to place are the N - done
// largest doubled midranks, whose partial sums come from pl.g.
//
// Lower bound (boxReaches): a completion gives group i a final sum Y_i = S_i + X_i
// with X_i between the sums of the r_i smallest and the r_i largest values left, and
// Σ_i Y_i = N(N+1); the minimum of T over that box and hyperplane is at most the
// minimum over completions.
//
// Upper bound, the exact maximum (k <= exactMaxSubsetK; with more groups settle
// never drops a state). The vectors (X_i) of all completions lie in the base
// polytope {X : Σ_{i∈A} X_i <= h(A) for all A, Σ_i X_i = h(all)}, h(A) the sum of the
// Σ_{i∈A} r_i largest values left; h is a concave function of a modular one, hence
// submodular, and the polytope's vertices are the greedy vectors (Edmonds 1970,
// "Submodular functions, matroids, and certain polyhedra"; recalled from memory),
// which are completions: those giving each group a consecutive run of the sorted
// values. T is convex in X, so its maximum over completions is at such a run
// assignment. Two run orders are tried first (groups by μ_i S_i descending, and
// ascending): if either reaches obs the state cannot be dropped. Otherwise the best
// order is found by a programme over subsets (the groups already given the top
// values): 2^k' k' steps for the k' groups with room left.
//
// Both bounds are this package's own construction for this statistic, in the spirit
// of the network algorithm's longest and shortest path bounds (Mehta & Patel 1983).
// All values are int64: pl.prune guarantees L·(N(N+1))^2·N^2 < 2^63.
func (pl *exactPlan) settle(sc *exactScratch, done int, obs int64) int {
	k := pl.k
	if pl.boxReaches(sc, done, obs) {
		return 1
	}
	if k > exactMaxSubsetK {
		return 0
	}

	g, n := pl.g, int64(pl.n)
	var base int64
	ka := 0
	for i := range k {
		if sc.r[i] == 0 {
			base += int64(pl.mu[i]) * sc.s[i] * sc.s[i]
			continue
		}
		// Keep the groups with room ordered by μ_i S_i, descending.
		j := ka
		for ; j > 0 && int64(pl.mu[sc.act[j-1]])*sc.s[sc.act[j-1]] < int64(pl.mu[i])*sc.s[i]; j-- {
			sc.act[j] = sc.act[j-1]
		}
		sc.act[j] = i
		ka++
	}
	// Two run assignments first, the top values to the groups with the highest
	// μ_i S_i and to those with the lowest: when either reaches obs, the state cannot
	// be dropped and the exact maximum is not needed.
	for _, desc := range [2]bool{true, false} {
		t, hi := base, n
		for q := range ka {
			gi := sc.act[q]
			if !desc {
				gi = sc.act[ka-1-q]
			}
			y := sc.s[gi] + g[hi] - g[hi-sc.r[gi]]
			hi -= sc.r[gi]
			t += int64(pl.mu[gi]) * y * y
		}
		if t >= obs {
			return 0
		}
	}

	// Exact maximum over run assignments.
	f, q := sc.f, sc.q
	f[0], q[0] = 0, 0
	full := 1<<ka - 1
	for a := 1; a <= full; a++ {
		low := a & -a
		q[a] = q[a^low] + sc.r[sc.act[bits.TrailingZeros(uint(low))]]
		// The groups of a hold the q[a] largest values; the one of them placed last
		// holds the lowest run, which starts just above the n - q[a] smallest values.
		lo := n - q[a]
		best := int64(-1)
		for b := a; b != 0; b &= b - 1 {
			i := bits.TrailingZeros(uint(b))
			gi := sc.act[i]
			y := sc.s[gi] + g[lo+sc.r[gi]] - g[lo]
			best = max(best, f[a&^(1<<i)]+int64(pl.mu[gi])*y*y)
		}
		f[a] = best
	}
	if base+f[full] < obs {
		return -1
	}
	return 0
}

// boxReaches reports whether the box lower bound of settle is at least obs: the
// minimum of Σ_i Y_i^2 / n_i over the box A_i <= Y_i <= B_i (A_i, B_i: S_i plus the
// sum of the r_i smallest or largest values left) with Σ_i Y_i = N(N+1). That
// minimum has Y_i = clamp(λ n_i, A_i, B_i) for the λ at which the Y_i add up to
// N(N+1) (the Lagrange conditions); g(λ) = Σ_i clamp(λ n_i, A_i, B_i) is continuous
// and nondecreasing, so λ lies between the two breakpoints A_i/n_i, B_i/n_i at which
// g crosses N(N+1); there the groups split into those held at A_i, those held at
// B_i and the free set F, and the minimum is
//
//	Σ_{i∉F} Y_i^2/n_i + (N(N+1) - Σ_{i∉F} Y_i)^2 / n_F
//
// All comparisons of breakpoints are cross-multiplications of integers.
func (pl *exactPlan) boxReaches(sc *exactScratch, done int, obs int64) bool {
	k := pl.k
	n, tot, l, g := int64(pl.n), pl.tot, pl.l, pl.g
	lo, hi := sc.lo, sc.hi
	inside := true // every balanced value n_i (N+1) within [A_i, B_i]
	for i := range k {
		lo[i] = sc.s[i] + g[int64(done)+sc.r[i]] - g[done]
		hi[i] = sc.s[i] + g[n] - g[n-sc.r[i]]
		bal := pl.size[i] * (n + 1)
		inside = inside && lo[i] <= bal && bal <= hi[i]
	}
	if inside {
		// The unconstrained minimum, T = N(N+1)^2 at Y_i = n_i (N+1), is in the box.
		return l*n*(n+1)*(n+1) >= obs
	}
	// Quick rejection: Y = A + θ(B - A) with θ = (N(N+1) - ΣA)/(ΣB - ΣA) is in the box
	// and on the hyperplane, so the minimum is at most T there. When that T is below
	// obs by more than float64 rounding could explain, the exact search below would
	// fail too, so this shortcut never changes the answer (and the answer does not
	// depend on how the float64 arithmetic rounds).
	var sumA, sumB int64
	for i := range k {
		sumA += lo[i]
		sumB += hi[i]
	}
	if sumB > sumA {
		th := float64(tot-sumA) / float64(sumB-sumA)
		v := 0.0
		for i := range k {
			y := float64(lo[i]) + float64(th*float64(hi[i]-lo[i]))
			v += float64(float64(pl.mu[i]) * float64(y*y))
		}
		if v < float64(obs)*(1-1e-9) {
			return false
		}
	}
	// Breakpoints p/q: A_i/n_i and B_i/n_i. Find the largest with g <= tot (pl, ql)
	// and the smallest with g >= tot (ph, qh).
	var pLo, qLo, pHi, qHi int64 = -1, 0, -1, 0
	for j := range 2 * k {
		p, q := lo[j>>1], pl.size[j>>1]
		if j&1 == 1 {
			p = hi[j>>1]
		}
		var gq int64 // q·g(p/q)
		for i := range k {
			gq += min(max(p*pl.size[i], q*lo[i]), q*hi[i])
		}
		if gq <= q*tot && (pLo < 0 || p*qLo > pLo*q) {
			pLo, qLo = p, q
		}
		if gq >= q*tot && (pHi < 0 || p*qHi < pHi*q) {
			pHi, qHi = p, q
		}
	}
	// Groups held at B_i (B_i/n_i <= lower breakpoint) or at A_i (A_i/n_i >= upper
	// breakpoint); the rest are free.
	var fixed, rest, nF int64
	rest = tot
	for i := range k {
		var y int64
		switch {
		case hi[i]*qLo <= pLo*pl.size[i]:
			y = hi[i]
		case lo[i]*qHi >= pHi*pl.size[i]:
			y = lo[i]
		default:
			nF += pl.size[i]
			continue
		}
		fixed += int64(pl.mu[i]) * y * y
		rest -= y
	}
	if nF == 0 {
		return fixed >= obs
	}
	return nF*fixed+l*rest*rest >= obs*nF
}
