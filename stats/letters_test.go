package stats

import (
	"math/rand/v2"
	"reflect"
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

func TestCompactLettersCases(t *testing.T) {
	for _, tc := range []struct {
		k     int
		pairs [][2]int
		want  []string
	}{
		{3, nil, []string{"a", "a", "a"}},
		{3, [][2]int{{0, 2}}, []string{"a", "ab", "b"}},                // 1 and 3 differ; 2 matches both
		{3, [][2]int{{0, 1}, {0, 2}, {1, 2}}, []string{"a", "b", "c"}}, // all differ
		{4, [][2]int{{0, 3}, {1, 3}}, []string{"a", "a", "ab", "b"}},
	} {
		got, err := CompactLetters(matrix(tc.k, tc.pairs...))
		if err != nil || !reflect.DeepEqual(got, tc.want) {
			t.Errorf("k=%d %v: %v %v, want %v", tc.k, tc.pairs, got, err, tc.want)
		}
	}
}

// TestCompactLettersProperty: on random significance patterns, two groups share a letter
// exactly when they do not differ (the defining property of a letter display), and every
// group has a letter.
func TestCompactLettersProperty(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 13))
	for trial := 0; trial < 500; trial++ {
		k := 2 + rng.IntN(7)
		m := matrix(k)
		for i := 0; i < k; i++ {
			for j := i + 1; j < k; j++ {
				if rng.IntN(3) == 0 {
					m[i][j], m[j][i] = true, true
				}
			}
		}
		letters, err := CompactLetters(m)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < k; i++ {
			if letters[i] == "" {
				t.Fatalf("trial %d: group %d has no letter", trial, i)
			}
			for j := i + 1; j < k; j++ {
				share := sharesLetter(letters[i], letters[j])
				if share == m[i][j] {
					t.Fatalf("trial %d: groups %d, %d: letters %q %q, differ %v", trial, i, j, letters[i], letters[j], m[i][j])
				}
			}
		}
	}
}

// sharesLetter compares letter names of one character (k <= 8 keeps them below "z").
func sharesLetter(a, b string) bool {
	for _, c := range a {
		if strings.ContainsRune(b, c) {
			return true
		}
	}
	return false
}

func TestCompactLettersErrors(t *testing.T) {
	m := matrix(3)
	m[0][1] = true // not symmetric
	if _, err := CompactLetters(m); err == nil {
		t.Error("asymmetric matrix accepted")
	}
	if _, err := CompactLetters([][]bool{{false, false}, {false}}); err == nil {
		t.Error("ragged matrix accepted")
	}
	if got := letterName(0) + letterName(25) + letterName(26) + letterName(27); got != "azaaab" {
		t.Errorf("letter names %q", got)
	}
}
