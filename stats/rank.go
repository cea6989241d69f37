package stats

import (
	"fmt"
	"math"
	"slices"
	"unsafe"
)

// Block is one tie block of the pooled sorted sample: a maximal run of equal values.
//
// With blocks numbered j = 1..m in ascending value order, sizes t_j and
// T_j = t_1 + ... + t_j, block j takes the positions T_{j-1}+1 .. T_j, so its midrank
// and doubled midrank are
//
//	r_j = T_{j-1} + (t_j + 1)/2
//	d_j = 2 r_j = 2 T_{j-1} + t_j + 1   (always an integer)
type Block struct {
	Rank2 int64 // doubled midrank d_j = 2*T_{j-1} + t_j + 1
	Size  int   // t_j, the number of tied observations
}

// Ranking is the pooled midranking of k groups: computed once by [Rank] and reused by
// every rank statistic (Kruskal-Wallis now; exact and Monte Carlo p-values, post-hoc
// comparisons and effect sizes later).
//
// All rank arithmetic uses doubled midranks, which are integers, so the per-group rank
// sums are exact:
//
//	RankSum2[i] = 2 R_i = Σ_{blocks j} a_ij d_j,   Σ_i RankSum2[i] = N (N + 1)
//
// where a_ij is the number of group i's observations in block j.
//
// Values are compared with ==, so -0 and +0 are tied; Sorted stores every zero as +0.
type Ranking struct {
	N, K     int
	Counts   []int       // n_i, the size of group i; len K
	RankSum2 []int64     // 2 R_i, the sum of group i's doubled midranks; len K
	Blocks   []Block     // tie blocks in ascending value order; len m
	TieSum   float64     // Σ_j (t_j^3 - t_j), summed in float64 in block order
	Sorted   [][]float64 // Sorted[i] is group i's values ascending; all share one backing array of length N
}

// Rank builds the [Ranking] of values, where group[j] in [0, k) is the group of
// observation j. It computes the tie blocks of the pooled sample and, for each group,
// the exact sum of doubled midranks (see [Block] and [Ranking]):
//
//	2 R_i = Σ_{j : group[j] = i} d(values[j])
//
// Rank returns an error, and never panics, when k < 2, when len(group) != len(values),
// when a group index is outside [0, k) or a value is NaN or ±Inf (the message names the
// first such observation, counting from 0), or when a group has no observations (the
// message names the group, counting from 0).
//
// Rank does not modify group or values. The Sorted slices of the result are sub-slices
// of one backing array of length N, each with its capacity cut to its length. It takes
// O(N log N) time (a sort within each group, by radix for large groups (see
// [sortFinite]), then a k-way merge of the sorted groups with a heap, O(N log k)) and
// O(N + k + m) memory, with a fixed number of allocations whatever N is.
func Rank(group []int32, values []float64, k int) (*Ranking, error) {
	if k < 2 {
		return nil, fmt.Errorf("rank: need at least 2 groups, got k = %d", k)
	}
	n := len(values)
	if len(group) != n {
		return nil, fmt.Errorf("rank: %d group labels for %d values", len(group), n)
	}
	var counts []int
	if k <= n {
		counts = make([]int, k)
	}
	for j, g := range group {
		if g < 0 || int64(g) >= int64(k) {
			return nil, fmt.Errorf("rank: observation %d: group index %d is outside [0, %d)", j, g, k)
		}
		if v := values[j]; math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("rank: observation %d: value %v is not finite", j, v)
		}
		if counts != nil {
			counts[g]++
		}
	}
	if counts == nil {
		return nil, fmt.Errorf("rank: group %d has no observations (%d groups, %d observations)",
			firstMissingGroup(group), k, n)
	}
	for i, c := range counts {
		if c == 0 {
			return nil, fmt.Errorf("rank: group %d has no observations", i)
		}
	}

	// Place each group's values in its own segment of one backing array, then sort
	// each segment. The scratch array holds four k-long work areas.
	backing := make([]float64, n)
	sorted := make([][]float64, k)
	scratch := make([]int, 4*k)
	next := scratch[:k]
	off := 0
	for i, c := range counts {
		sorted[i] = backing[off : off+c : off+c]
		next[i] = off
		off += c
	}
	for j, g := range group {
		v := values[j]
		if v == 0 {
			v = 0 // store -0 as +0
		}
		backing[next[g]] = v
		next[g]++
	}
	// Scratch for the radix sort of the largest group (allocated for small groups too,
	// so that the number of allocations does not depend on N).
	radixScratch := make([]uint64, slices.Max(counts))
	for _, s := range sorted {
		sortFinite(s, radixScratch)
	}

	// First merge: count the tie blocks, so Blocks is allocated once at its size.
	mg := merger{sorted: sorted, pos: scratch[:k], heap: scratch[k : 2*k], runs: scratch[2*k : 3*k], runLen: scratch[3*k:]}
	m := 0
	for mg.init(); mg.size > 0; {
		mg.next()
		m++
	}

	r := &Ranking{
		N:        n,
		K:        k,
		Counts:   counts,
		RankSum2: make([]int64, k),
		Blocks:   make([]Block, m),
		Sorted:   sorted,
	}
	// Second merge: doubled midranks, rank sums and the tie sum, in block order.
	var below int64 // T_{j-1}
	tieSum := 0.0
	j := 0
	for mg.init(); mg.size > 0; j++ {
		t := mg.next()
		d := 2*below + int64(t) + 1
		for i, g := range mg.runs[:mg.nruns] {
			r.RankSum2[g] += int64(mg.runLen[i]) * d
		}
		r.Blocks[j] = Block{Rank2: d, Size: t}
		if t > 1 {
			ft := float64(t)
			tieSum += float64(ft * float64(float64(ft*ft)-1))
		}
		below += int64(t)
	}
	r.TieSum = tieSum
	return r, nil
}

// firstMissingGroup returns the smallest group index that no observation has, for use
// when there are more groups than observations (so some index in [0, len(group)] is
// missing). It assumes every label is non-negative.
func firstMissingGroup(group []int32) int {
	seen := make([]bool, len(group)+1)
	for _, g := range group {
		if int(g) < len(seen) {
			seen[g] = true
		}
	}
	return slices.Index(seen, false)
}

// merger walks the tie blocks of k sorted groups in ascending value order with a
// binary min-heap of group indices keyed by each group's next value (ties between
// groups broken by the lower index, so the walk is deterministic). Each call to next
// consumes one whole tie block: every group's run of the current minimum value.
type merger struct {
	sorted [][]float64
	pos    []int // pos[g]: index of group g's next unconsumed value
	heap   []int // group indices; heap[:size] is the heap
	size   int
	runs   []int // runs[:nruns]: groups that had the current block's value
	runLen []int // runLen[i]: how many values of group runs[i] the block holds
	nruns  int
}

func (mg *merger) init() {
	mg.size = 0
	for g := range mg.sorted {
		mg.pos[g] = 0
		mg.heap[mg.size] = g
		mg.size++
	}
	for i := mg.size/2 - 1; i >= 0; i-- {
		mg.down(i)
	}
}

// less orders heap entries by their group's next value, then by group index.
func (mg *merger) less(a, b int) bool {
	va, vb := mg.sorted[a][mg.pos[a]], mg.sorted[b][mg.pos[b]]
	return va < vb || (va == vb && a < b)
}

func (mg *merger) down(i int) {
	h := mg.heap[:mg.size]
	for {
		l := 2*i + 1
		if l >= len(h) {
			return
		}
		c := l
		if r := l + 1; r < len(h) && mg.less(h[r], h[l]) {
			c = r
		}
		if !mg.less(h[c], h[i]) {
			return
		}
		h[i], h[c] = h[c], h[i]
		i = c
	}
}

// next consumes the tie block of the smallest remaining value and returns its size.
// mg.runs[:mg.nruns] then lists the groups that had that value and mg.runLen their
// counts.
func (mg *merger) next() int {
	g0 := mg.heap[0]
	v := mg.sorted[g0][mg.pos[g0]]
	t := 0
	mg.nruns = 0
	for mg.size > 0 {
		g := mg.heap[0]
		s := mg.sorted[g]
		p := mg.pos[g]
		if s[p] != v {
			break
		}
		start := p
		for p < len(s) && s[p] == v {
			p++
		}
		mg.pos[g] = p
		t += p - start
		mg.runs[mg.nruns] = g
		mg.runLen[mg.nruns] = p - start
		mg.nruns++
		if p == len(s) {
			mg.size--
			mg.heap[0] = mg.heap[mg.size]
		}
		if mg.size > 0 {
			mg.down(0)
		}
	}
	return t
}

// radixMinLen is the shortest slice that sortFinite sorts by radix; shorter ones are
// sorted by comparison (pdqsort), which is faster there.
const radixMinLen = 1024

// radixBits is the width of one radix digit: six passes of 11 bits cover 64-bit keys,
// with a histogram of 2048 counters per pass.
const radixBits = 11

// sortFinite sorts s, which holds no NaN and no negative zero, in ascending order. A slice
// of radixMinLen values or more is sorted by a least-significant-digit radix sort
// (Knuth, TAOCP vol. 3, 2nd ed., 1998, §5.2.5) of the order-preserving 64-bit keys
//
//	key(v) = bits(v) XOR 0x8000000000000000   for v ≥ 0 (sign bit clear)
//	key(v) = NOT bits(v)                      for v < 0
//
// where bits(v) is the IEEE 754 binary64 encoding: for finite values, key(a) < key(b)
// exactly when a < b (common practice; the encoding orders non-negative values by their
// bits as unsigned integers, and reversing all bits of a negative value orders it below
// every non-negative one and in reverse magnitude). A pass whose digit is the same for
// every key moves nothing and is skipped. scratch must hold at least len(s) keys when
// len(s) ≥ radixMinLen. The result is the one ascending order of the values, so it is the
// same as a comparison sort's, bit for bit. O(len(s)) time, no allocation.
func sortFinite(s []float64, scratch []uint64) {
	n := len(s)
	if n < radixMinLen {
		slices.Sort(s)
		return
	}
	// The keys are built in place: s and its keys share memory (float64 and uint64 have
	// the same size and alignment).
	keys := unsafe.Slice((*uint64)(unsafe.Pointer(unsafe.SliceData(s))), n)
	const passes = (64 + radixBits - 1) / radixBits
	const buckets = 1 << radixBits
	var count [passes][buckets]int
	for i, b := range keys {
		if b>>63 != 0 {
			b = ^b
		} else {
			b |= 1 << 63
		}
		keys[i] = b
		for p := range passes {
			count[p][(b>>(p*radixBits))&(buckets-1)]++
		}
	}
	src, dst := keys, scratch[:n]
	for p := range passes {
		c := &count[p]
		shift := uint(p * radixBits)
		if c[(src[0]>>shift)&(buckets-1)] == n {
			continue // every key has this digit
		}
		sum := 0
		for d := range c {
			c[d], sum = sum, sum+c[d]
		}
		for _, b := range src {
			d := (b >> shift) & (buckets - 1)
			dst[c[d]] = b
			c[d]++
		}
		src, dst = dst, src
	}
	for i, b := range src {
		if b>>63 != 0 {
			b &^= 1 << 63
		} else {
			b = ^b
		}
		keys[i] = b
	}
}
