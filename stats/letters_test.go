package stats

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"
)

func matrix(k int, pairs ...[2]int) [][]bool {
	m := make([][]bool, k)
	for i := range m {
		m[i] = make([]bool, k)
	}
	for _, p := range pairs {
		m[p[0]][p[1]], m[p[1]][p[0]] = true, true
	}
	return m
}

// texts renders every group's letters with [Letters.Text].
func texts(l Letters) []string {
	out := make([]string, len(l.Names))
	for g := range out {
		out[g] = l.Text(g)
	}
	return out
}

// TestCompactLettersCases: small displays, each worked by hand from the definition (two
// groups share a letter exactly when they do not differ) and the two steps of
// [CompactLetters].
func TestCompactLettersCases(t *testing.T) {
	for _, tc := range []struct {
		name  string
		k     int
		pairs [][2]int
		want  []string
	}{
		{"no difference", 3, nil, []string{"a", "a", "a"}},
		{"one group", 1, nil, []string{"a"}},
		// Worked by hand: 1 and 3 differ, 2 differs from neither.
		{"ends differ", 3, [][2]int{{0, 2}}, []string{"a", "ab", "b"}},
		{"all differ", 3, [][2]int{{0, 1}, {0, 2}, {1, 2}}, []string{"a", "b", "c"}},
		// Worked by hand: insert-absorb leaves {1,2,3} and {3,4}.
		{"last differs from two", 4, [][2]int{{0, 3}, {1, 3}}, []string{"a", "a", "ab", "b"}},
		// Worked by hand: four ordered means where each differs from those two steps away
		// or more: the windows {1,2}, {2,3}, {3,4}.
		{"staircase", 4, [][2]int{{0, 2}, {0, 3}, {1, 3}}, []string{"a", "ab", "bc", "c"}},
		// Worked by hand, the sweep dropping a whole letter: groups 0, 1, 2 do not differ
		// from each other; 3 matches only 0 and 1, 4 only 1 and 2, 5 only 0 and 2. The
		// maximal sets are {0,1,2}, {0,1,3}, {0,2,5}, {1,2,4}; every pair of {0,1,2} is
		// also inside one of the other three, so the sweep removes 0, then 1, then 2 from
		// the first letter and the display needs three letters, not four.
		{"sweep drops a letter", 6, [][2]int{{0, 4}, {1, 5}, {2, 3}, {3, 4}, {3, 5}, {4, 5}},
			[]string{"ab", "ac", "bc", "a", "c", "b"}},
		// Worked by hand: 0-1 and 2-3 do not differ, every other pair does.
		{"two pairs", 4, [][2]int{{0, 2}, {0, 3}, {1, 2}, {1, 3}}, []string{"a", "a", "b", "b"}},
	} {
		l, err := CompactLetters(matrix(tc.k, tc.pairs...))
		if err != nil || !reflect.DeepEqual(texts(l), tc.want) {
			t.Errorf("%s: %v %v, want %v", tc.name, texts(l), err, tc.want)
		}
		if l.Greedy {
			t.Errorf("%s: greedy construction on a small case", tc.name)
		}
	}
}

// checkDisplay fails the test when [displayError] finds a fault.
func checkDisplay(t *testing.T, label string, m [][]bool, l Letters) {
	t.Helper()
	if err := displayError(m, l); err != nil {
		t.Fatalf("%s: %v", label, err)
	}
}

// displayError checks the defining property of a letter display on the text a reader
// sees: every group has a letter, the text reads back to the names, and two groups share a
// letter exactly when they do not differ. It also checks minimality: no letter can be
// taken from any group (either it is the group's only letter, or some pair it connects
// shares no other letter).
func displayError(m [][]bool, l Letters) error {
	k := len(m)
	if len(l.Names) != k {
		return fmt.Errorf("%d groups in the display, want %d", len(l.Names), k)
	}
	sets := make([]map[string]bool, k)
	used := map[string]bool{}
	for g := range k {
		names, err := parseLetters(l.Text(g))
		if err != nil {
			return fmt.Errorf("group %d: %w", g, err)
		}
		if !slices.Equal(names, l.Names[g]) {
			return fmt.Errorf("group %d: %q reads back as %v, want %v", g, l.Text(g), names, l.Names[g])
		}
		sets[g] = map[string]bool{}
		for _, n := range names {
			sets[g][n] = true
			used[n] = true
		}
	}
	if len(used) != l.Count {
		return fmt.Errorf("%d distinct letters used, Count = %d", len(used), l.Count)
	}
	for n := range l.Count {
		if !used[LetterName(n)] {
			return fmt.Errorf("letter %q (number %d of %d) unused", LetterName(n), n, l.Count)
		}
	}
	shared := func(i, j int) int {
		c := 0
		for n := range sets[i] {
			if sets[j][n] {
				c++
			}
		}
		return c
	}
	for i := range k {
		for j := i + 1; j < k; j++ {
			if (shared(i, j) > 0) == m[i][j] {
				return fmt.Errorf("groups %d and %d: letters %q and %q, differ = %v", i, j, l.Text(i), l.Text(j), m[i][j])
			}
		}
	}
	for g := range k {
		if len(l.Names[g]) == 1 {
			continue
		}
		for _, n := range l.Names[g] {
			needed := false
			for j := range k {
				if j != g && sets[j][n] && shared(g, j) == 1 {
					needed = true
					break
				}
			}
			if !needed {
				return fmt.Errorf("group %d (%q) could drop letter %q", g, l.Text(g), n)
			}
		}
	}
	return nil
}

// TestDisplayErrorFindsFaults: the checker of the property tests rejects displays that
// break the property, are not minimal, or do not read back.
func TestDisplayErrorFindsFaults(t *testing.T) {
	m := matrix(3, [2]int{0, 2})
	for _, tc := range []struct {
		name  string
		names [][]string
		count int
	}{
		{"pair that differs shares a letter", [][]string{{"a"}, {"a"}, {"a"}}, 1},
		{"pair that does not differ shares none", [][]string{{"a"}, {"b"}, {"c"}}, 3},
		// 1 and 2 share "b" and "c": either could go.
		{"not minimal", [][]string{{"a"}, {"a", "b", "c"}, {"b", "c"}}, 3},
		{"group without a letter", [][]string{{"a"}, {}, {"b"}}, 2},
		{"count wrong", [][]string{{"a"}, {"a", "b"}, {"b"}}, 3},
		// Written together, "a1" would read back as one name.
		{"reads back differently", [][]string{{"a"}, {"a", "1"}, {"1"}}, 2},
	} {
		if err := displayError(m, Letters{Names: tc.names, Count: tc.count}); err == nil {
			t.Errorf("%s: accepted", tc.name)
		}
	}
	if err := displayError(m, Letters{Names: [][]string{{"a"}, {"a", "b"}, {"b"}}, Count: 2}); err != nil {
		t.Errorf("valid display rejected: %v", err)
	}
}

// randomDifferences draws a significance matrix of one of three kinds: independent pairs
// with probability p; "ordered", where groups sit at random positions on a line and differ
// when more than a width apart (the pattern of comparisons of ordered mean ranks); and the
// ordered kind with a share of its decisions flipped.
func randomDifferences(rng *rand.Rand, k int) [][]bool {
	m := matrix(k)
	kind := rng.IntN(3)
	p := []float64{0.02, 0.3, 0.7, 0.97}[rng.IntN(4)]
	pos := make([]float64, k)
	for i := range pos {
		pos[i] = rng.Float64()
	}
	width := float64(rng.IntN(40)+1) / 100
	for i := range k {
		for j := i + 1; j < k; j++ {
			var d bool
			switch kind {
			case 0:
				d = rng.Float64() < p
			case 1:
				d = pos[i]-pos[j] > width || pos[j]-pos[i] > width
			default:
				d = pos[i]-pos[j] > width || pos[j]-pos[i] > width
				if rng.IntN(50) == 0 {
					d = !d
				}
			}
			m[i][j], m[j][i] = d, d
		}
	}
	return m
}

// TestCompactLettersProperty: on seeded random significance matrices with k up to 150, the
// display has the defining property, reads back unambiguously and is minimal after the
// sweep.
func TestCompactLettersProperty(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 13))
	trials := 300
	if testing.Short() {
		trials = 60
	}
	wide := 0
	for trial := range trials {
		k := 1 + rng.IntN(12)
		if trial%4 == 0 {
			k = 1 + rng.IntN(150)
		}
		m := randomDifferences(rng, k)
		l, err := CompactLetters(m)
		if err != nil {
			t.Fatal(err)
		}
		if l.Count > 52 {
			wide++
		}
		checkDisplay(t, fmt.Sprintf("trial %d (k = %d)", trial, k), m, l)
	}
	if wide == 0 {
		t.Error("no trial needed more than 52 letters; the separated form went untested")
	}
}

// TestInsertAbsorbMaximalSets: step 1 leaves exactly the maximal sets of groups no two of
// which differ, compared with a brute-force enumeration of all subsets (k <= 10).
func TestInsertAbsorbMaximalSets(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 7))
	for trial := range 200 {
		k := 1 + rng.IntN(10)
		m := randomDifferences(rng, k)
		cols, ok := insertAbsorb(m, 1)
		if !ok {
			t.Fatalf("trial %d: budget exceeded at k = %d", trial, k)
		}
		var got []uint64
		for _, c := range cols {
			got = append(got, c[0])
		}
		slices.Sort(got)
		var want []uint64
		alike := func(s uint64) bool {
			for i := range k {
				for j := i + 1; j < k; j++ {
					if s&(1<<i) != 0 && s&(1<<j) != 0 && m[i][j] {
						return false
					}
				}
			}
			return true
		}
		for s := uint64(1); s < 1<<k; s++ {
			if !alike(s) {
				continue
			}
			maximal := true
			for g := range k {
				if s&(1<<g) == 0 && alike(s|1<<g) {
					maximal = false
					break
				}
			}
			if maximal {
				want = append(want, s)
			}
		}
		if !slices.Equal(got, want) {
			t.Fatalf("trial %d (k = %d): columns %b, maximal sets %b", trial, k, got, want)
		}
	}
}

// TestCompactLettersGreedy: complete multipartite "no difference" patterns (groups differ
// only within their triple) have 3^(k/3) maximal sets (Moon & Moser 1965), so step 1 runs
// out of budget and the greedy construction takes over; the display keeps its property
// and minimality.
func TestCompactLettersGreedy(t *testing.T) {
	for _, k := range []int{60, 150} {
		m := matrix(k)
		for i := range k {
			for j := range k {
				if i != j && i/3 == j/3 {
					m[i][j] = true
				}
			}
		}
		l, err := CompactLetters(m)
		if err != nil {
			t.Fatal(err)
		}
		if !l.Greedy {
			t.Errorf("k = %d: insert-absorb finished on 3^%d maximal sets", k, k/3)
		}
		checkDisplay(t, fmt.Sprintf("multipartite k = %d", k), m, l)
	}
}

// TestCompactLetters120: 120 groups ordered by mean rank, each pair differing when four or
// more places apart (the shape of comparisons of ordered groups), need 117 letters, the
// windows of four neighbours; the sweep then takes from each group the windows it does not
// need. Past 52 letters the names carry numbers and are joined with ".", so a group holding
// "a" and "b" cannot be read as one holding a letter "ab" (with the names of two letters
// written together, a reader would see shared letters in pairs that differ).
func TestCompactLetters120(t *testing.T) {
	const k = 120
	m := matrix(k)
	for i := range k {
		for j := i + 4; j < k; j++ {
			m[i][j], m[j][i] = true, true
		}
	}
	l, err := CompactLetters(m)
	if err != nil {
		t.Fatal(err)
	}
	if l.Count != k-3 || l.Greedy {
		t.Fatalf("%d letters (greedy %v), want %d windows", l.Count, l.Greedy, k-3)
	}
	checkDisplay(t, "k = 120", m, l)
	// Worked by hand from the sweep: window n holds groups n..n+3 and is named
	// LetterName(n). Group 0 lies only in window 0. Groups 1, 2 and 3 keep window 0 (their
	// pair with group 0 lies in no other) and the window that alone holds their pair with
	// group 4 once the sweep has passed: window 1 for group 1; group 2 leaves window 1
	// (its pairs there lie also in windows 0 and 2) and keeps window 2; group 3 leaves
	// windows 1 and 2 and keeps window 3. Group 119 lies only in the last window, 116.
	for _, tc := range []struct {
		g    int
		want string
	}{{0, "a"}, {1, "a.b"}, {2, "a.c"}, {3, "a.d"}, {119, "m2"}} {
		if got := l.Text(tc.g); got != tc.want {
			t.Errorf("group %d: %q, want %q", tc.g, got, tc.want)
		}
	}
	// And a random ordered pattern of the same size (seeded).
	rng := rand.New(rand.NewPCG(120, 120))
	for trial := range 5 {
		m := randomDifferences(rng, k)
		l, err := CompactLetters(m)
		if err != nil {
			t.Fatal(err)
		}
		checkDisplay(t, fmt.Sprintf("k = 120, trial %d", trial), m, l)
	}
}

func TestLetterNames(t *testing.T) {
	for _, tc := range []struct {
		n    int
		want string
	}{{0, "a"}, {25, "z"}, {26, "A"}, {51, "Z"}, {52, "a1"}, {103, "Z1"}, {104, "a2"}, {52*10 + 3, "d10"}} {
		if got := LetterName(tc.n); got != tc.want {
			t.Errorf("LetterName(%d) = %q, want %q", tc.n, got, tc.want)
		}
		if names, err := parseLetters(LetterName(tc.n)); err != nil || !slices.Equal(names, []string{tc.want}) {
			t.Errorf("parseLetters(%q) = %v, %v", tc.want, names, err)
		}
	}
	for _, tc := range []struct {
		text string
		want []string
	}{
		{"ab", []string{"a", "b"}},
		{"aZ", []string{"a", "Z"}},
		{"a.b", []string{"a", "b"}},
		{"a1.b1", []string{"a1", "b1"}},
		{"a.b12.Z3", []string{"a", "b12", "Z3"}},
		{"a1", []string{"a1"}},
	} {
		if got, err := parseLetters(tc.text); err != nil || !slices.Equal(got, tc.want) {
			t.Errorf("parseLetters(%q) = %v, %v, want %v", tc.text, got, err, tc.want)
		}
	}
	for _, bad := range []string{"", ".", "a.", ".a", "a..b", "1a", "a0", "a01", "ab.c", "a.a", "aa", "a-b", "é", "a b"} {
		if got, err := parseLetters(bad); err == nil {
			t.Errorf("parseLetters(%q) = %v, want an error", bad, got)
		}
	}
}

// TestLettersTextInjective: in a display of more than 52 letters, distinct sets of letters
// give distinct texts, and every text reads back to its set (all subsets of a window of
// names around the 52 boundary).
func TestLettersTextInjective(t *testing.T) {
	l := Letters{Count: 60}
	seen := map[string][]string{}
	pool := []int{0, 1, 25, 26, 51, 52, 53, 59}
	for s := 1; s < 1<<len(pool); s++ {
		var names []string
		for b, n := range pool {
			if s&(1<<b) != 0 {
				names = append(names, LetterName(n))
			}
		}
		l.Names = [][]string{names}
		text := l.Text(0)
		if prev, ok := seen[text]; ok {
			t.Fatalf("%v and %v both written %q", prev, names, text)
		}
		seen[text] = names
		if got, err := parseLetters(text); err != nil || !slices.Equal(got, names) {
			t.Fatalf("%q reads back as %v, %v, want %v", text, got, err, names)
		}
		if strings.Count(text, ".") != len(names)-1 {
			t.Fatalf("%q: names not separated", text)
		}
	}
}

func TestCompactLettersErrors(t *testing.T) {
	m := matrix(3)
	m[0][1] = true // not symmetric
	diag := matrix(2)
	diag[1][1] = true
	for _, tc := range []struct {
		name string
		m    [][]bool
	}{
		{"asymmetric", m},
		{"ragged", [][]bool{{false, false}, {false}}},
		{"diagonal", diag},
	} {
		if _, err := CompactLetters(tc.m); err == nil {
			t.Errorf("%s matrix accepted", tc.name)
		}
	}
	if l, err := CompactLetters(nil); err != nil || l.Count != 0 || len(l.Names) != 0 {
		t.Errorf("no groups: %+v, %v", l, err)
	}
}

// parseLetters reads a group's letters written by [Letters.Text] back into the list of
// names: with a "." the text is split there and each part must be one name; without one,
// every ASCII letter starts a new name and the digits after it belong to it. It returns an
// error for text no display writes (empty names, a leading digit or zero, other
// characters, a name given twice). The tests read every display back with it to check
// that its text is unambiguous.
func parseLetters(s string) ([]string, error) {
	var names []string
	if strings.Contains(s, ".") {
		names = strings.Split(s, ".")
	} else {
		for i := 0; i < len(s); {
			j := i + 1
			for j < len(s) && s[j] >= '0' && s[j] <= '9' {
				j++
			}
			names = append(names, s[i:j])
			i = j
		}
	}
	if len(names) == 0 {
		return nil, errors.New("letters: empty text")
	}
	seen := make(map[string]bool, len(names))
	for _, n := range names {
		if !validLetterName(n) {
			return nil, fmt.Errorf("letters %q: %q is not a letter name (one ASCII letter and an optional number without a leading zero)", s, n)
		}
		if seen[n] {
			return nil, fmt.Errorf("letters %q: %q appears twice", s, n)
		}
		seen[n] = true
	}
	return names, nil
}

func validLetterName(n string) bool {
	if n == "" || !('a' <= n[0] && n[0] <= 'z' || 'A' <= n[0] && n[0] <= 'Z') {
		return false
	}
	if len(n) == 1 {
		return true
	}
	if n[1] == '0' {
		return false
	}
	for i := 1; i < len(n); i++ {
		if n[i] < '0' || n[i] > '9' {
			return false
		}
	}
	return true
}
