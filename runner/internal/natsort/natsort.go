// Package natsort orders text labels naturally: runs of ASCII digits compare as the
// numbers they write, so that "coins25" comes before "coins100" and "L9" before "L10".
//
// # The order
//
// A label is read as a sequence of tokens: each maximal run of the ASCII digits 0-9 is one
// number token, and every other byte is a token of its own. Two labels compare token by
// token, and the first pair of tokens that differ decides:
//
//   - two numbers by their value (any length: the digits are compared, never converted,
//     so no run overflows);
//   - two bytes by their value;
//   - a number and a byte as the number's first digit and the byte would compare; since
//     the byte is not a digit, every number falls between '/' (0x2F) and ':' (0x3A),
//     whatever its value.
//
// A label whose tokens are a proper prefix of the other's comes first. When all tokens
// are equal, the labels differ at most in leading zeros: the first number written with
// fewer leading zeros comes first ("a1" < "a01" < "a001", and "x1y02" < "x01y2"). Two
// labels compare equal only when they are the same bytes, so the order is total.
//
// Bytes are compared as bytes: letters by their code (upper case before lower case),
// UTF-8 sequences by their bytes, which is the order of code points, and digits of other
// scripts as any other bytes. Nothing depends on the locale or on Unicode tables, so the
// order is the same on every machine and with every version of Go.
package natsort

import (
	"slices"
	"strings"
)

// Compare returns -1 when a comes before b in the natural order described in the package
// documentation, +1 when it comes after, and 0 when a == b. It allocates nothing and
// takes time linear in the lengths of a and b.
func Compare(a, b string) int {
	zeros := 0 // the decision on leading zeros, if the tokens turn out equal
	i, j := 0, 0
	for i < len(a) && j < len(b) {
		if !isDigit(a[i]) || !isDigit(b[j]) {
			if a[i] != b[j] {
				return sign(int(a[i]) - int(b[j]))
			}
			i++
			j++
			continue
		}
		// Two numbers: skip the leading zeros, then the longer run of significant
		// digits is the larger number; equal lengths compare digit by digit.
		za, zb := i, j
		for i < len(a) && a[i] == '0' {
			i++
		}
		for j < len(b) && b[j] == '0' {
			j++
		}
		sa, sb := i, j
		for i < len(a) && isDigit(a[i]) {
			i++
		}
		for j < len(b) && isDigit(b[j]) {
			j++
		}
		if la, lb := i-sa, j-sb; la != lb {
			return sign(la - lb)
		}
		if c := strings.Compare(a[sa:i], b[sb:j]); c != 0 {
			return c
		}
		if zeros == 0 {
			zeros = sign((sa - za) - (sb - zb))
		}
	}
	switch {
	case i < len(a):
		return 1
	case j < len(b):
		return -1
	}
	return zeros
}

// Sort sorts labels in place in the natural order of [Compare].
func Sort(labels []string) {
	slices.SortFunc(labels, Compare)
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

func sign(x int) int {
	switch {
	case x < 0:
		return -1
	case x > 0:
		return 1
	}
	return 0
}
