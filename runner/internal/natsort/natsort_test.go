package natsort

import (
	"math/big"
	"slices"
	"strings"
	"testing"
)

// The expected orders below are worked out by hand from the rule in the package
// documentation.
func TestCompare(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		want int
	}{
		{"", "", 0},
		{"", "a", -1},
		{"", "0", -1},
		{"coins25", "coins100", -1}, // 25 < 100, unlike byte order
		{"coins100", "coins100", 0}, // the same label
		{"L9", "L10", -1},           // 9 < 10
		{"L2", "L10", -1},
		{"A", "B", -1},    // bytes
		{"B", "a", -1},    // upper case before lower case, as bytes
		{"a1", "a01", -1}, // equal numbers: fewer leading zeros first
		{"a01", "a001", -1},
		{"a0", "a00", -1},      // zero itself: one zero before two
		{"x1y02", "x01y2", -1}, // the first number that differs in zeros decides
		{"a01b2", "a1b2", 1},
		{"a1b", "a01", 1}, // tokens decide before zeros: "b" after the end
		{"a01", "a1b", -1},
		{"a1", "a1b", -1},   // a proper prefix of tokens first
		{"10", "9a", 1},     // 10 > 9
		{"1", "a", -1},      // a number before a letter ('1' < 'a')
		{"1", " ", 1},       // a number after a space (' ' < '0')
		{"1", "/", 1},       // '/' is 0x2F: before every number
		{"99", ":", -1},     // ':' is 0x3A: after every number
		{"x-2", "x-10", -1}, // '-' is a byte; 2 < 10 (no signs)
		{"1.5", "1.10", -1}, // '.' is a byte: 5 < 10 (no decimals)
		{"v1.2.10", "v1.2.9", 1},
		{"tab\t1", "tab 1", -1}, // '\t' < ' '
		{"é1", "e2", 1},         // UTF-8 0xC3 after 'e' (0x65)
		{"é2", "é10", -1},
		{"٣", "3", 1}, // Arabic-Indic three is bytes, not a number
		{"a12345678901234567890123", "a12345678901234567890124", -1}, // beyond 64 bits
		{"a99999999999999999999999", "a100000000000000000000000", -1},
		{"g007", "g7", 1},
		{"g007", "g8", -1},
	} {
		if got := Compare(tc.a, tc.b); got != tc.want {
			t.Errorf("Compare(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.want)
		}
		if got := Compare(tc.b, tc.a); got != -tc.want {
			t.Errorf("Compare(%q, %q) = %d, want %d", tc.b, tc.a, got, -tc.want)
		}
	}
}

func TestSort(t *testing.T) {
	for _, tc := range []struct {
		in, want []string
	}{
		{[]string{"coins100", "coins25", "coins5"}, []string{"coins5", "coins25", "coins100"}},
		{[]string{"L10", "L1", "L2", "L01", "L"}, []string{"L", "L1", "L01", "L2", "L10"}},
		{[]string{"b", "B", "10", "9", "a2", "a10", "a"}, []string{"9", "10", "B", "a", "a2", "a10", "b"}},
		{[]string{"week 12", "week 3", "week 03", "week 1"}, []string{"week 1", "week 3", "week 03", "week 12"}},
		{nil, nil},
	} {
		got := slices.Clone(tc.in)
		Sort(got)
		if !slices.Equal(got, tc.want) {
			t.Errorf("Sort(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// token is one token of a label as the package documentation defines it: a number (its
// value and its leading zeros) or one byte.
type token struct {
	number bool
	value  *big.Int
	zeros  int
	b      byte
}

// tokens splits s as the documentation says, with math/big for the numbers' values.
func tokens(s string) []token {
	var out []token
	for i := 0; i < len(s); {
		if !isDigit(s[i]) {
			out = append(out, token{b: s[i]})
			i++
			continue
		}
		j := i
		for j < len(s) && isDigit(s[j]) {
			j++
		}
		v, _ := new(big.Int).SetString(s[i:j], 10)
		out = append(out, token{number: true, value: v, zeros: len(s[i:j]) - len(strings.TrimLeft(s[i:j], "0"))})
		i = j
	}
	return out
}

// reference compares two labels by the documented definition, step by step: token
// sequences first (numbers placed between '/' and ':'), then leading zeros, then bytes.
// It is slow and allocates; Compare must agree with it everywhere.
func reference(a, b string) int {
	ta, tb := tokens(a), tokens(b)
	// place orders the kinds of token: bytes below '0', numbers, bytes above '9'.
	place := func(x token) int {
		switch {
		case x.number:
			return 1
		case x.b < '0':
			return 0
		}
		return 2
	}
	for k := 0; k < len(ta) && k < len(tb); k++ {
		x, y := ta[k], tb[k]
		if px, py := place(x), place(y); px != py {
			return sign(px - py)
		}
		if x.number {
			if c := x.value.Cmp(y.value); c != 0 {
				return c
			}
		} else if x.b != y.b {
			return sign(int(x.b) - int(y.b))
		}
	}
	if len(ta) != len(tb) {
		return sign(len(ta) - len(tb))
	}
	for k := range ta {
		if ta[k].number && ta[k].zeros != tb[k].zeros {
			return sign(ta[k].zeros - tb[k].zeros)
		}
	}
	return strings.Compare(a, b)
}

// small maps fuzz bytes onto an alphabet dense in the cases that matter: zeros, other
// digits, bytes just below and above the digits, letters of both cases and a UTF-8 byte.
func small(s string) string {
	const alphabet = "0019/:aAb.\xc3"
	out := make([]byte, len(s))
	for i := range len(s) {
		out[i] = alphabet[int(s[i])%len(alphabet)]
	}
	return string(out)
}

func FuzzCompare(f *testing.F) {
	for _, s := range [][3]string{
		{"coins25", "coins100", "coins5"},
		{"a1", "a01", "a001"},
		{"x1y02", "x01y2", "x1y2"},
		{"1", "/", ":"},
		{"", "0", "00"},
		{"é2", "é10", "e"},
	} {
		f.Add(s[0], s[1], s[2])
	}
	f.Fuzz(func(t *testing.T, a, b, c string) {
		check(t, a, b, c)
		check(t, small(a), small(b), small(c))
	})
}

// check tests the laws of a total order on a, b and c, and Compare against reference.
func check(t *testing.T, a, b, c string) {
	t.Helper()
	ab, ba := Compare(a, b), Compare(b, a)
	if ab != -ba {
		t.Fatalf("not antisymmetric: Compare(%q, %q) = %d, Compare(%q, %q) = %d", a, b, ab, b, a, ba)
	}
	if (ab == 0) != (a == b) {
		t.Fatalf("Compare(%q, %q) = %d: only equal labels compare equal", a, b, ab)
	}
	if Compare(a, a) != 0 {
		t.Fatalf("Compare(%q, %q) != 0", a, a)
	}
	if r := reference(a, b); ab != r {
		t.Fatalf("Compare(%q, %q) = %d, the definition gives %d", a, b, ab, r)
	}
	bc, ac := Compare(b, c), Compare(a, c)
	if ab <= 0 && bc <= 0 && ac > 0 {
		t.Fatalf("not transitive: %q <= %q <= %q but Compare(%q, %q) = %d", a, b, c, a, c, ac)
	}
	if ab >= 0 && bc >= 0 && ac < 0 {
		t.Fatalf("not transitive: %q >= %q >= %q but Compare(%q, %q) = %d", a, b, c, a, c, ac)
	}
}

// TestOrderLaws checks the laws on every triple of short labels over a small alphabet:
// all 1 + 5 + 25 + 125 labels of up to three bytes from "0", "1", "9", "a" and "/".
func TestOrderLaws(t *testing.T) {
	labels := []string{""}
	for n, from := 0, 0; n < 3; n++ {
		to := len(labels)
		for _, l := range labels[from:to] {
			for _, c := range "019a/" {
				labels = append(labels, l+string(c))
			}
		}
		from = to
	}
	sorted := slices.Clone(labels)
	Sort(sorted)
	for i := 1; i < len(sorted); i++ {
		if Compare(sorted[i-1], sorted[i]) >= 0 {
			t.Fatalf("sorted labels out of order: %q, %q", sorted[i-1], sorted[i])
		}
	}
	// Pairs against the definition, then transitivity on every triple from the table of
	// pairs.
	n := len(labels)
	cmp := make([]int, n*n)
	for i, a := range labels {
		for j, b := range labels {
			check(t, a, b, "")
			cmp[i*n+j] = Compare(a, b)
		}
	}
	for i := range n {
		for j := range n {
			for k := range n {
				ij, jk, ik := cmp[i*n+j], cmp[j*n+k], cmp[i*n+k]
				if (ij <= 0 && jk <= 0 && ik > 0) || (ij >= 0 && jk >= 0 && ik < 0) {
					t.Fatalf("not transitive on %q, %q, %q", labels[i], labels[j], labels[k])
				}
			}
		}
	}
}

func TestCompareAllocates(t *testing.T) {
	a, b := "site0012-week10-arm3", "site12-week9-arm03"
	if n := testing.AllocsPerRun(100, func() { Compare(a, b) }); n != 0 {
		t.Errorf("Compare allocates %v times per call", n)
	}
}
