package stats

import (
	"fmt"
	"math/big"
	"strconv"

	"rankplan/stats/internal/wide"
)

// mannWhitneyNull is the exact null distribution of the Mann-Whitney U for samples of
// sizes m and n without ties: every one of the C(m+n, m) assignments of the pooled ranks
// to the first sample equally likely (Mann & Whitney 1947). It holds the cumulative counts
// #{U <= u} for u = 0..upTo as exact integers.
type mannWhitneyNull struct {
	m, n  int
	upTo  int
	limbs int      // words per count
	cum   []uint64 // #{U <= u}, limbs words each, least significant word first
	total *big.Int // C(m+n, m)
}

// newMannWhitneyNull counts the untied null distribution of U up to u = upTo
// (0 <= upTo <= m n) in exact integer arithmetic. The counts #{U = u} are the
// coefficients of the Gaussian binomial coefficient
//
//	G(q) = Π_{k=1..s} (1 − q^{b+k}) / (1 − q^k),   s = min(m, n), b = max(m, n)
//
// (the number of partitions of u into at most s parts of size at most b; common practice,
// e.g. Andrews 1976, The Theory of Partitions, Thm 3.1, recalled from memory), built one
// factor at a time: multiplying by 1 − q^{b+k} subtracts the coefficients shifted by b + k,
// dividing by 1 − q^k adds them back shifted by k, running upwards.
//
// Every coefficient is a fixed-width integer of W 64-bit words, W chosen so that
// 2^(64W−1) > C(m+n, m), in a flat []uint64. The arithmetic is modulo 2^(64W): the
// coefficients between the two halves of a step may be negative, but after each full step
// they are the counts of the s' × b box (s' = k), non-negative and below C(b+k, k), so
// every count is exact; step k only works on the words that C(b+k, k) needs, as the words
// above stay zero. A product truncated at degree upTo is exact in degrees <= upTo, so no
// coefficient above upTo is formed.
//
// The cost is about 2 Σ_k min(upTo, k b) w_k word additions, w_k the words of C(b+k, k);
// memory (upTo + 1) W words.
func newMannWhitneyNull(m, n, upTo int) (*mannWhitneyNull, error) {
	if m < 1 || n < 1 || upTo < 0 || int64(upTo) > int64(m)*int64(n) {
		return nil, fmt.Errorf("mann-whitney null: need m, n >= 1 and 0 <= upTo <= m n, got %d, %d, %d", m, n, upTo)
	}
	s, b := min(m, n), max(m, n)
	total := new(big.Int).Binomial(int64(m+n), int64(s))
	w := total.BitLen()/64 + 1
	a := make([]uint64, (upTo+1)*w)
	a[0] = 1
	box := big.NewInt(1) // C(b+k, k), the sum of the counts after step k
	var num, den big.Int
	for k := 1; k <= s; k++ {
		box.Mul(box, num.SetInt64(int64(b+k)))
		box.Quo(box, den.SetInt64(int64(k)))
		wk := box.BitLen()/64 + 1
		deg := min(upTo, k*b) // the product has degree k b
		mulOneMinus(a, w, wk, deg, b+k)
		divOneMinus(a, w, wk, deg, k)
	}
	// Cumulative counts, in place: dividing by 1 − q.
	divOneMinus(a, w, w, upTo, 1)
	return &mannWhitneyNull{m: m, n: n, upTo: upTo, limbs: w, cum: a, total: total}, nil
}

// mulOneMinus multiplies the coefficients a[0..deg] (stride w, low wk words used) by
// 1 − q^shift, truncated at degree deg: a[u] −= a[u − shift], u from deg down to shift.
func mulOneMinus(a []uint64, w, wk, deg, shift int) {
	if wk == 1 {
		for u := deg; u >= shift; u-- {
			a[u*w] -= a[(u-shift)*w]
		}
		return
	}
	for u := deg; u >= shift; u-- {
		i, j := u*w, (u-shift)*w
		wide.SubWords(a[i:i+wk:i+wk], a[j:j+wk:j+wk])
	}
}

// divOneMinus divides the coefficients a[0..deg] (stride w, low wk words used) by
// 1 − q^shift, truncated at degree deg: a[u] += a[u − shift], u from shift up to deg.
func divOneMinus(a []uint64, w, wk, deg, shift int) {
	if wk == 1 {
		for u := shift; u <= deg; u++ {
			a[u*w] += a[(u-shift)*w]
		}
		return
	}
	for u := shift; u <= deg; u++ {
		i, j := u*w, (u-shift)*w
		wide.AddWords(a[i:i+wk:i+wk], a[j:j+wk:j+wk])
	}
}

// cumAt returns #{U <= u} as a big.Int.
func (d *mannWhitneyNull) cumAt(u int) *big.Int {
	return wide.WordsToBig(d.cum[u*d.limbs : (u+1)*d.limbs])
}

// mosesIndex is the choice of the interval's index under the untied null for one level.
type mosesIndex struct {
	c          int     // differences cut from each end
	coverage   float64 // 1 − 2 P0(U <= c), correctly rounded
	attainable bool    // false: even c = 0 has coverage below the level
}

// index returns c = max{u : P0(U <= u) <= (1 − level)/2} and the coverage 1 − 2 P0(U <= c),
// both from exact rational arithmetic: the level is the exact decimal of its shortest
// representation (0.95 is 19/20), and u qualifies when 2 #{U <= u} <= (1 − level) C(m+n, m).
// If not even u = 0 qualifies, the level is not attainable: c = 0 (the widest interval) with
// its coverage 1 − 2/C(m+n, m). The counts must reach the answer: upTo >= floor(m n / 2)
// always does, since P0(U <= floor(mn/2)) >= 1/2 > (1 − level)/2.
func (d *mannWhitneyNull) index(level float64) (mosesIndex, error) {
	lv, err := exactLevel(level)
	if err != nil {
		return mosesIndex{}, fmt.Errorf("mann-whitney null: %w", err)
	}
	// threshold = floor((1 − level) C / 2) = floor((q − p) C / (2 q)) for level = p/q.
	p, q := lv.Num(), lv.Denom()
	thr := new(big.Int).Sub(q, p)
	thr.Mul(thr, d.total)
	thr.Quo(thr, new(big.Int).Lsh(q, 1))
	tw, ok := wide.BigToWords(thr, d.limbs) // thr < C/2 < 2^(64W)
	if !ok {
		return mosesIndex{}, fmt.Errorf("mann-whitney null: the threshold %v does not fit %d words", thr, d.limbs)
	}
	w := d.limbs
	if wide.CmpWords(d.cum[0:w], tw) > 0 {
		return mosesIndex{c: 0, coverage: coverageOf(d.total, big.NewInt(1)), attainable: false}, nil
	}
	// The cumulative counts increase strictly: bisect for the last one <= thr.
	lo, hi := 0, d.upTo // cum[lo] <= thr; cum[hi] > thr is checked below
	if wide.CmpWords(d.cum[hi*w:(hi+1)*w], tw) <= 0 {
		return mosesIndex{}, fmt.Errorf("mann-whitney null: counts up to %d do not reach the level %v", d.upTo, level)
	}
	for hi-lo > 1 {
		mid := lo + (hi-lo)/2
		if wide.CmpWords(d.cum[mid*w:(mid+1)*w], tw) <= 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return mosesIndex{c: lo, coverage: coverageOf(d.total, d.cumAt(lo)), attainable: true}, nil
}

// exactLevel is the level as the exact decimal of its shortest representation (the text
// strconv prints for it: 0.95 is 19/20, not the binary double nearest 0.95), which must lie
// strictly between 0 and 1.
func exactLevel(level float64) (*big.Rat, error) {
	lv, ok := new(big.Rat).SetString(strconv.FormatFloat(level, 'g', -1, 64))
	if !ok || lv.Sign() <= 0 || lv.Cmp(big.NewRat(1, 1)) >= 0 {
		return nil, fmt.Errorf("level must lie in (0, 1), got %v", level)
	}
	return lv, nil
}

// coverageOf is 1 − 2 cum/total, the float64 nearest the exact rational.
func coverageOf(total, cum *big.Int) float64 {
	num := new(big.Int).Lsh(cum, 1)
	num.Sub(total, num)
	f, _ := new(big.Rat).SetFrac(num, total).Float64()
	return f
}
