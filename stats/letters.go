package stats

import (
	"fmt"
	"math/bits"
	"slices"
	"strconv"
	"strings"
)

// Letters is a compact letter display of k groups: a set of letters for each group such
// that two groups share a letter exactly when their comparison is not significant.
type Letters struct {
	// Names[g] lists the names of group g's letters ([LetterName]), in letter order. Every
	// group has at least one letter.
	Names [][]string
	// Count is the number of letters in the display.
	Count int
	// Greedy is true when the letters were built by the greedy construction because the
	// insert-and-absorb step would have exceeded its work budget (see [CompactLetters]).
	Greedy bool
}

// Text returns group g's letters as one string, by this rule: when the display has at most
// 52 letters, every name is one character (a..z, then A..Z) and the names are written
// together ("ab", "aC"); when it has more, the names are joined with "." ("a.b1.Z3"). A
// name is always one ASCII letter followed by an optional number without a leading zero,
// so either form reads back to exactly one list of names (the tests check it): a group with
// the letters "a" and "b" never reads like a group with one letter "ab".
func (l Letters) Text(g int) string {
	if l.Count <= 52 {
		return strings.Join(l.Names[g], "")
	}
	return strings.Join(l.Names[g], ".")
}

// LetterName names letter n (from 0): a..z for n < 26, A..Z for n < 52, and beyond that
// the letter of n mod 52 followed by the number ⌊n/52⌋: a1, b1, ..., Z1, a2, ...
func LetterName(n int) string {
	base := n % 52
	var c byte
	if base < 26 {
		c = byte('a' + base)
	} else {
		c = byte('A' + base - 26)
	}
	if n < 52 {
		return string(c)
	}
	return string(c) + strconv.Itoa(n/52)
}

// letterWork bounds the insert-and-absorb step, counted in 64-bit word operations on the
// columns (about 3·10^7, a few tens of milliseconds): the number of its columns, the maximal sets of
// groups no two of which differ, can grow exponentially with k (Moon & Moser 1965, Israel
// J. Math. 3:23-28: 3^(k/3) for k/3 disjoint triples). The budget counts operations, not
// time, so the same decisions give the same letters on every machine.
const letterWork = 1 << 25

// CompactLetters returns a compact letter display for k groups: each group gets a set of
// letters such that two groups share a letter exactly when their comparison is not
// significant. different[i][j] (i != j) says that groups i and j differ significantly; it
// must be square and symmetric with a false diagonal.
//
// Algorithm: the insert-and-absorb method with its sweep, after Piepho (2004, J. Comput.
// Graph. Statist. 13:456-466; the steps below are recalled from memory).
//
//  1. Insert and absorb: start with one column (letter) holding every group. For each
//     significant pair (i, j), in the order i < j, j ascending within i, every column
//     holding both is replaced by two copies, one without j and one without i (insert);
//     a new column contained in another column is dropped (absorb). The columns left are
//     the maximal sets of groups no two of which differ.
//  2. Sweep: the columns are put in canonical order (by their lists of groups in
//     ascending order, compared lexicographically) and visited in that order, each
//     column's groups in ascending order. Group i loses the column's letter when it has
//     another letter and, for every other group j in the column, i and j share another
//     letter: every pair the letter connects for i is already connected, so the display
//     still says the same. Columns left empty are dropped.
//
// After the sweep no single letter of any group can be removed without breaking the
// display: a removal only takes connections away, so a letter found necessary stays
// necessary, and one pass suffices. (Whether Piepho's sweep visits the columns in this
// order is not recalled; the order here is our choice and makes the result canonical.)
//
// When step 1 would exceed its budget of word operations ([letterWork]), the columns are
// built greedily instead and then swept the same way: for each pair (i, j), i < j, that
// does not differ and shares no column yet, a column starts as {i, j} and takes every
// further group g, in ascending order, that differs from none of its groups; a group
// that differs from every other gets a column of its own. The display then satisfies the
// same property and the same minimality, but may use other letters than step 1 would.
//
// The remaining columns are ordered canonically again and named by [LetterName]; each
// group's letters are the names of the columns holding it. The result is deterministic.
func CompactLetters(different [][]bool) (Letters, error) {
	k := len(different)
	for i := range different {
		if len(different[i]) != k {
			return Letters{}, fmt.Errorf("compact letters: row %d has %d entries, want %d", i, len(different[i]), k)
		}
		if different[i][i] {
			return Letters{}, fmt.Errorf("compact letters: group %d is marked as differing from itself", i)
		}
	}
	for i := range different {
		for j := range i {
			if different[i][j] != different[j][i] {
				return Letters{}, fmt.Errorf("compact letters: the significance matrix is not symmetric at (%d, %d)", i, j)
			}
		}
	}
	if k == 0 {
		return Letters{}, nil
	}
	w := (k + 63) / 64
	cols, ok := insertAbsorb(different, w)
	greedy := !ok
	if greedy {
		cols = greedyColumns(different, w)
	}
	byGroups := make([]column, len(cols))
	for n, c := range cols {
		byGroups[n] = column{members(c)}
	}
	swept := canonicalOrder(sweepColumns(canonicalOrder(byGroups), k))
	out := Letters{Names: make([][]string, k), Count: len(swept), Greedy: greedy}
	for n, c := range swept {
		name := LetterName(n)
		for _, g := range c.members {
			out.Names[g] = append(out.Names[g], name)
		}
	}
	return out, nil
}

// bitset is a set of groups, 64 to a word.
type bitset []uint64

func (s bitset) has(i int) bool { return s[i>>6]&(1<<(i&63)) != 0 }
func (s bitset) set(i int)      { s[i>>6] |= 1 << (i & 63) }
func (s bitset) clear(i int)    { s[i>>6] &^= 1 << (i & 63) }

// subsetOf says whether s ⊆ t.
func (s bitset) subsetOf(t bitset) bool {
	for i, x := range s {
		if x&^t[i] != 0 {
			return false
		}
	}
	return true
}

// insertAbsorb is step 1 of [CompactLetters]; ok is false when it ran out of budget.
func insertAbsorb(different [][]bool, w int) (cols []bitset, ok bool) {
	k := len(different)
	full := make(bitset, w)
	for i := range k {
		full.set(i)
	}
	cols = []bitset{full}
	work := 0
	var kept, fresh []bitset
	var split []bool
	for i := range k {
		for j := i + 1; j < k; j++ {
			if !different[i][j] {
				continue
			}
			kept, fresh, split = kept[:0], fresh[:0], split[:0]
			for _, c := range cols {
				s := c.has(i) && c.has(j)
				split = append(split, s)
				if s {
					a := slices.Clone(c) // keeps i
					a.clear(j)
					c.clear(i) // keeps j
					fresh = append(fresh, a, c)
				} else {
					kept = append(kept, c)
				}
			}
			// Absorb: a new column inside an old one, or inside another new one of its
			// kind (both keep i, or both keep j), is dropped. Old columns were not nested,
			// so none of them lies inside a new one, and two new columns are never equal.
			work += len(cols) + len(fresh)*(len(kept)+len(fresh))*w
			if work > letterWork {
				return nil, false
			}
			if len(fresh) == 0 {
				continue
			}
			next := make([]bitset, 0, len(kept)+len(fresh))
			f := 0
			for n, c := range cols {
				if !split[n] {
					next = append(next, c)
					continue
				}
				for _, g := range [2]int{f, f + 1} {
					if !absorbed(fresh[g], g, kept, fresh) {
						next = append(next, fresh[g])
					}
				}
				f += 2
			}
			cols = next
		}
	}
	return cols, true
}

// absorbed says whether new column c = fresh[self] lies inside a kept column or inside
// another new column of its kind (same parity of index: even keeps i, odd keeps j).
func absorbed(c bitset, self int, kept, fresh []bitset) bool {
	for _, d := range kept {
		if c.subsetOf(d) {
			return true
		}
	}
	for f := self % 2; f < len(fresh); f += 2 {
		if f != self && c.subsetOf(fresh[f]) {
			return true
		}
	}
	return false
}

// greedyColumns is the greedy construction of [CompactLetters].
func greedyColumns(different [][]bool, w int) []bitset {
	k := len(different)
	alike := make([]bitset, k) // alike[i]: the groups that do not differ from i (i excluded)
	for i := range k {
		alike[i] = make(bitset, w)
		for j := range k {
			if j != i && !different[i][j] {
				alike[i].set(j)
			}
		}
	}
	covered := make([]bool, k*k)
	var cols []bitset
	for i := range k {
		if !anyBit(alike[i]) {
			c := make(bitset, w)
			c.set(i)
			cols = append(cols, c)
			continue
		}
		for j := i + 1; j < k; j++ {
			if different[i][j] || covered[i*k+j] {
				continue
			}
			c := make(bitset, w)
			c.set(i)
			c.set(j)
			cand := make(bitset, w)
			for x := range cand {
				cand[x] = alike[i][x] & alike[j][x]
			}
			for g := range k {
				if cand.has(g) {
					c.set(g)
					for x := range cand {
						cand[x] &= alike[g][x]
					}
				}
			}
			m := members(c)
			for _, a := range m {
				for _, b := range m {
					covered[a*k+b] = true
				}
			}
			cols = append(cols, c)
		}
	}
	return cols
}

func anyBit(s bitset) bool {
	for _, x := range s {
		if x != 0 {
			return true
		}
	}
	return false
}

// members lists the groups of s in ascending order.
func members(s bitset) []int {
	var out []int
	for i, x := range s {
		for x != 0 {
			out = append(out, i*64+bits.TrailingZeros64(x))
			x &= x - 1
		}
	}
	return out
}

// column is a letter's groups, in ascending order.
type column struct{ members []int }

// canonicalOrder sorts columns by their group lists, lexicographically.
func canonicalOrder(cols []column) []column {
	slices.SortFunc(cols, func(a, b column) int { return slices.Compare(a.members, b.members) })
	return cols
}

// sweepColumns is step 2 of [CompactLetters]: it removes every group's letter that is not
// needed, visiting columns in the given order, and drops empty columns.
func sweepColumns(cols []column, k int) []column {
	share := make([]int32, k*k) // share[i*k+j]: columns holding both i and j (i != j)
	count := make([]int32, k)   // count[i]: columns holding i
	for _, c := range cols {
		for _, i := range c.members {
			count[i]++
			for _, j := range c.members {
				if j != i {
					share[i*k+j]++
				}
			}
		}
	}
	out := cols[:0]
	for _, c := range cols {
		m := c.members
		for x := 0; x < len(m); {
			i := m[x]
			needed := count[i] < 2
			for _, j := range m {
				if j != i && share[i*k+j] < 2 {
					needed = true
					break
				}
			}
			if needed {
				x++
				continue
			}
			for _, j := range m {
				if j != i {
					share[i*k+j]--
					share[j*k+i]--
				}
			}
			count[i]--
			m = slices.Delete(m, x, x+1)
		}
		if len(m) > 0 {
			out = append(out, column{m})
		}
	}
	return out
}
