package report

import (
	"fmt"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"rankplan/runner/results"
)

// VisibleLabel writes a label so that look-alikes can be told apart: quoted with Go's
// escapes for control characters and invisible format characters, and, when the label has
// characters outside ASCII, followed by their code points (U+0065 U+0301 for a decomposed é).
func VisibleLabel(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	ascii := true
	for i, w := 0, 0; i < len(s); i += w {
		r, width := utf8.DecodeRuneInString(s[i:])
		w = width
		switch {
		case r == utf8.RuneError && width == 1:
			fmt.Fprintf(&b, `\x%02x`, s[i])
			ascii = false
		case r == '"' || r == '\\':
			b.WriteByte('\\')
			b.WriteRune(r)
		case unicode.In(r, unicode.Cc, unicode.Cf) || !unicode.IsPrint(r) && r != ' ':
			q := strconv.QuoteRuneToASCII(r)
			b.WriteString(q[1 : len(q)-1])
			if r >= utf8.RuneSelf {
				ascii = false
			}
		default:
			b.WriteRune(r)
			if r >= utf8.RuneSelf {
				ascii = false
			}
		}
	}
	b.WriteByte('"')
	if !ascii {
		b.WriteString(" (")
		n := 0
		for _, r := range s {
			if n > 0 {
				b.WriteByte(' ')
			}
			if n == 16 {
				b.WriteString("…")
				break
			}
			fmt.Fprintf(&b, "U+%04X", r)
			n++
		}
		b.WriteByte(')')
	}
	return b.String()
}

// plainLabel reports whether a label can be shown as it is: printable, no surrounding
// spaces, no invisible characters.
func plainLabel(s string) bool {
	if s == "" || strings.TrimSpace(s) != s || !utf8.ValidString(s) {
		return false
	}
	for _, r := range s {
		if unicode.In(r, unicode.Cc, unicode.Cf) || !unicode.IsPrint(r) && r != ' ' {
			return false
		}
	}
	return true
}

// labelShower returns how the terminal shows a group label: as it is, or written visibly
// ([VisibleLabel]) when it is not plain or looks like another label of the data.
func labelShower(d results.Data) func(string) string {
	alike := map[string]bool{}
	for _, la := range d.LookAlikeGroups {
		for _, l := range la.Labels {
			alike[l] = true
		}
	}
	return func(s string) string {
		if alike[s] || !plainLabel(s) {
			return VisibleLabel(s)
		}
		return s
	}
}

// writeLookAlikes warns about labels that look alike but are separate groups.
func writeLookAlikes(ew *errWriter, d results.Data) {
	for _, la := range d.LookAlikeGroups {
		ew.printf("warning: column %q has labels that look alike but are different groups (labels are compared exactly as written): %s; they differ by %s\n",
			la.Column, strings.Join(la.Shown, ", "), strings.Join(la.Differences, "; "))
	}
}
