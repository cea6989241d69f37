package stats

import (
	"fmt"
	"slices"
)

// CompactLetters returns a compact letter display for k groups: each group gets a set of
// letters such that two groups share a letter exactly when their comparison is not
// significant. different[i][j] (i != j) says that groups i and j differ significantly; it
// must be symmetric.
//
// Algorithm: the insert-and-absorb method of Piepho (2004, J. Comput. Graph. Statist.
// 13:456-466; recalled from memory). Start with one column holding every group. For each
// significant pair (i, j), in the order i < j, j ascending within i: every column holding
// both is replaced by two copies, one without i and one without j (insert); then every
// column contained in another is removed (absorb). Columns are finally ordered by their
// first group and named "a", "b", ..., "z", "aa", ...; each group's letters are the names of
// the columns holding it, in that order. The result is deterministic.
func CompactLetters(different [][]bool) ([]string, error) {
	k := len(different)
	for i := range different {
		if len(different[i]) != k {
			return nil, fmt.Errorf("compact letters: row %d has %d entries, want %d", i, len(different[i]), k)
		}
		for j := range different[i] {
			if different[i][j] != different[j][i] {
				return nil, fmt.Errorf("compact letters: the significance matrix is not symmetric at (%d, %d)", i, j)
			}
		}
	}
	full := make([]bool, k)
	for i := range full {
		full[i] = true
	}
	cols := [][]bool{full}
	for i := 0; i < k; i++ {
		for j := i + 1; j < k; j++ {
			if !different[i][j] {
				continue
			}
			var next [][]bool
			for _, c := range cols {
				if c[i] && c[j] {
					a, b := slices.Clone(c), slices.Clone(c)
					a[i], b[j] = false, false
					next = append(next, a, b)
				} else {
					next = append(next, c)
				}
			}
			cols = absorb(next)
		}
	}
	first := func(c []bool) int { return slices.Index(c, true) }
	slices.SortStableFunc(cols, func(a, b []bool) int { return first(a) - first(b) })
	out := make([]string, k)
	for n, c := range cols {
		name := letterName(n)
		for g, in := range c {
			if in {
				out[g] += name
			}
		}
	}
	return out, nil
}

// absorb drops empty columns, repeats, and columns contained in another, keeping order.
func absorb(cols [][]bool) [][]bool {
	subset := func(a, b []bool) bool { // a ⊆ b
		for i := range a {
			if a[i] && !b[i] {
				return false
			}
		}
		return true
	}
	var out [][]bool
	for i, c := range cols {
		if !slices.Contains(c, true) {
			continue
		}
		keep := true
		for j, d := range cols {
			if i == j {
				continue
			}
			// Drop c if it lies inside another column; of two equal columns keep the first.
			if subset(c, d) && (!subset(d, c) || j < i) {
				keep = false
				break
			}
		}
		if keep {
			out = append(out, c)
		}
	}
	return out
}

// letterName names column n: a..z, then aa, ab, ...
func letterName(n int) string {
	name := ""
	for n++; n > 0; n = (n - 1) / 26 {
		name = string(rune('a'+(n-1)%26)) + name
	}
	return name
}
