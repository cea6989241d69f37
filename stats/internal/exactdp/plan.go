package exactdp

import (
	"fmt"
	"math/bits"

	"rankplan/stats/internal/wide"
)

// plan is the fixed part of an exact run: groups in canonical order (ascending
// size, so that classes of equal size are contiguous), the statistic's integer
// weights, the bit layout of a state key and the prefix sums of the doubled ranks.
type plan struct {
	n, k   int
	size   []int64  // n_i in canonical order
	start  []int    // start[i]: first canonical index of i's class
	end    []int    // end[i]: one past the last canonical index of i's class
	mu     []uint64 // L / n_i
	blocks []Block
	g      []int64   // g[x]: the sum of the x smallest doubled midranks, x = 0..N
	binom  []float64 // binom[r*(maxWhole+1)+a] = C(r, a), r <= max n_i; only when some block is spread whole
	// wholeMax is the largest tie block spread in whole: maxWhole (tests lower it).
	wholeMax int

	// Pruning (see settle) works in int64 and is on when L·(N(N+1))^2·N^2 < 2^63.
	prune bool
	l     int64 // L = lcm(n_1..n_k)
	tot   int64 // N(N+1), the sum of all doubled midranks

	// Key layout of canonical group i < k-1: the field value v = c<<sbits | S (just S
	// for a group of size 1, whose count is 1 exactly when S > 0) sits in word
	// word[i] of the key at bit shift[i]; wide when word 1 is used. Bit 63 of word 1
	// is kept free (see slot).
	wide  bool
	word  []uint8
	shift []uint8
	sbits []uint8
	fmask []uint64
	smask []uint64
}

// newPlan checks that the design is within the method's range and lays it out.
func newPlan(counts []int, blocks []Block) (*plan, error) {
	n := 0
	for _, c := range counts {
		n += c
	}
	k := len(counts)
	if err := CheckSize(counts); err != nil {
		return nil, err
	}
	pl := &plan{n: n, k: k, blocks: blocks, wholeMax: maxWhole}
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
		hi, lo := bits.Mul64(l/gcd(l, s), s)
		if hi != 0 {
			return nil, fmt.Errorf("%w: the least common multiple of the group sizes exceeds 2^64", ErrBudget)
		}
		l = lo
	}
	pl.mu = make([]uint64, k)
	for i := range pl.mu {
		pl.mu[i] = l / uint64(pl.size[i])
	}
	pl.tot = int64(n) * int64(n+1)
	pl.l = int64(l)
	pl.prune = fits63(l, uint64(pl.tot), uint64(pl.tot), uint64(n), uint64(n))

	pl.g = make([]int64, n+1)
	x := 0
	for _, b := range blocks {
		for range b.Size {
			pl.g[x+1] = pl.g[x] + b.Rank2
			x++
		}
	}

	// Binomial coefficients C(r, a), a <= maxWhole, when some block is spread in
	// whole.
	for _, b := range blocks {
		if pl.whole(b.Size) {
			const w = maxWhole + 1
			maxN := int(pl.size[k-1])
			pl.binom = make([]float64, (maxN+1)*w)
			for r := 0; r <= maxN; r++ {
				for a := 0; a <= min(r, maxWhole); a++ {
					pl.binom[r*w+a] = binomial(r, a)
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
		sb := bits.Len64(uint64(maxRankSum2(blocks, pl.size[i])))
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
		if pos+width > 64-word { // bit 63 of word 1 is kept free (see slot)
			word, pos = word+1, 0
		}
		if word > 1 || pos+width > 64-word {
			return nil, fmt.Errorf("%w: %d groups need more than 127 bits of state", ErrBudget, k)
		}
		pl.word[i], pl.shift[i] = uint8(word), uint8(pos)
		pl.wide = pl.wide || word == 1
		pos += width
	}
	return pl, nil
}

// maxRankSum2 is the largest sum of doubled midranks a group of size n can hold: the
// n largest ranks.
func maxRankSum2(blocks []Block, n int64) int64 {
	var s int64
	for j := len(blocks) - 1; j >= 0 && n > 0; j-- {
		t := min(int64(blocks[j].Size), n)
		s += t * blocks[j].Rank2
		n -= t
	}
	return s
}

// fits63 reports whether the product of xs is below 2^63.
func fits63(xs ...uint64) bool {
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

func gcd(a, b uint64) uint64 {
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

// observed returns T·L for the observed doubled rank sums (original group order).
func (pl *plan) observed(counts []int, rankSum2 []int64) wide.U128 {
	l := uint64(pl.l)
	var t wide.U128
	for i, s := range rankSum2 {
		u := uint64(s)
		t = t.AddMul(u*u, l/uint64(counts[i]))
	}
	return t
}

// fieldValue is the key field of canonical group i holding c values with sum s.
func (pl *plan) fieldValue(i int, c, s int64) uint64 {
	if pl.size[i] == 1 {
		return uint64(s)
	}
	return uint64(c)<<pl.sbits[i] | uint64(s)
}
