// Package wide is the unsigned integer arithmetic of more than 64 bits that the exact
// methods of package stats need: [U128] for an exact statistic such as
// T·L = Σ_i S_i² (L/n_i), and numbers of any fixed width as little-endian slices of
// 64-bit words for exact null counts. Every operation is modulo 2^128 or 2^(64W) and
// built on math/bits, so it is exact and the same on every machine; the operations that
// can overflow report it.
package wide

import (
	"math/big"
	"math/bits"
)

// U128 is the unsigned 128-bit integer Hi·2^64 + Lo.
type U128 struct{ Hi, Lo uint64 }

// Mul returns the full product x·y, which always fits.
func Mul(x, y uint64) U128 {
	hi, lo := bits.Mul64(x, y)
	return U128{hi, lo}
}

// Less reports whether a < b.
func (a U128) Less(b U128) bool { return a.Hi < b.Hi || (a.Hi == b.Hi && a.Lo < b.Lo) }

// Add returns a + b modulo 2^128 and whether the sum overflowed.
func (a U128) Add(b U128) (U128, bool) {
	lo, c := bits.Add64(a.Lo, b.Lo, 0)
	hi, c := bits.Add64(a.Hi, b.Hi, c)
	return U128{hi, lo}, c != 0
}

// AddMul returns a + x·y modulo 2^128 (callers that need it exact bound their terms).
func (a U128) AddMul(x, y uint64) U128 {
	hi, lo := bits.Mul64(x, y)
	var carry uint64
	a.Lo, carry = bits.Add64(a.Lo, lo, 0)
	a.Hi, _ = bits.Add64(a.Hi, hi, carry)
	return a
}

// Mul64 returns a·w modulo 2^128 and whether the product overflowed.
func (a U128) Mul64(w uint64) (U128, bool) {
	h1, lo := bits.Mul64(a.Lo, w)
	h2, l2 := bits.Mul64(a.Hi, w)
	hi, c := bits.Add64(l2, h1, 0)
	return U128{hi, lo}, h2 != 0 || c != 0
}

// AddWords sets d = d + s modulo 2^(64 len(d)), s holding at least len(d) words (the
// extra ones are ignored), and returns the carry out of the top word.
func AddWords(d, s []uint64) uint64 {
	s = s[:len(d)]
	var carry uint64
	for i := range d {
		d[i], carry = bits.Add64(d[i], s[i], carry)
	}
	return carry
}

// SubWords sets d = d − s modulo 2^(64 len(d)), s holding at least len(d) words (the
// extra ones are ignored), and returns the borrow out of the top word.
func SubWords(d, s []uint64) uint64 {
	s = s[:len(d)]
	var borrow uint64
	for i := range d {
		d[i], borrow = bits.Sub64(d[i], s[i], borrow)
	}
	return borrow
}

// CmpWords compares the numbers x and y of len(x) words (y holding at least as many):
// -1, 0 or +1 as x < y, x == y or x > y.
func CmpWords(x, y []uint64) int {
	y = y[:len(x)]
	for j := len(x) - 1; j >= 0; j-- {
		switch {
		case x[j] < y[j]:
			return -1
		case x[j] > y[j]:
			return 1
		}
	}
	return 0
}

// WordsToBig returns the number held in the words w as a big.Int.
func WordsToBig(w []uint64) *big.Int {
	x := new(big.Int)
	var word big.Int
	for j := len(w) - 1; j >= 0; j-- {
		x.Lsh(x, 64)
		x.Or(x, word.SetUint64(w[j]))
	}
	return x
}

// BigToWords returns the non-negative x as n words, and false when x is negative or
// needs more than n words.
func BigToWords(x *big.Int, n int) ([]uint64, bool) {
	if x.Sign() < 0 || x.BitLen() > 64*n {
		return nil, false
	}
	w := make([]uint64, n)
	var word, rest big.Int
	rest.Set(x)
	mask := new(big.Int).SetUint64(^uint64(0))
	for j := range w {
		w[j] = word.And(&rest, mask).Uint64()
		rest.Rsh(&rest, 64)
	}
	return w, true
}
