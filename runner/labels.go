package runner

import (
	"fmt"
	"slices"
	"strings"
	"unicode"

	"golang.org/x/text/cases"
	"golang.org/x/text/unicode/norm"

	"rankplan/runner/report"
	"rankplan/runner/results"
)

// Group labels are compared exactly as written, byte for byte: "A" and "A " are two groups.
// That is the only rule a preregistered plan can rely on, but a label that differs from
// another only in a way a reader cannot see is almost always a data-entry slip, so
// rankplan warns about such pairs instead of silently merging or silently splitting them.

// Ways two labels can look alike, in the order they are tested.
const (
	diffSpaces  = "surrounding spaces"
	diffControl = "control or invisible format characters"
	diffNFC     = "Unicode normalisation (NFC: composed and decomposed accents)"
	diffNFKC    = "Unicode compatibility forms (NFKC: e.g. full-width letters)"
	diffCase    = "letter case"
)

var caseFold = cases.Fold()

// lookAlikeKey maps a label to a key under which labels a reader would take for the same
// are equal: control and format characters (Unicode categories Cc and Cf, such as NUL or a
// zero-width space) dropped, surrounding white space trimmed, NFKC normalisation (which
// includes NFC) and Unicode case folding (golang.org/x/text; Unicode Standard Annex #15 and
// the Unicode case folding tables).
func lookAlikeKey(s string) string {
	s = strings.TrimFunc(dropInvisible(s), unicode.IsSpace)
	s = norm.NFKC.String(s)
	return caseFold.String(s)
}

// lookAlikeDifference says how two distinct labels with the same look-alike key differ: the
// steps of lookAlikeKey, in its order, that change either label on the way to making them
// equal, joined by " and ".
func lookAlikeDifference(a, b string) string {
	steps := []struct {
		name string
		f    func(string) string
	}{
		{diffSpaces, func(s string) string { return strings.TrimFunc(s, unicode.IsSpace) }},
		{diffControl, dropInvisible},
		{diffNFC, norm.NFC.String},
		{diffNFKC, norm.NFKC.String},
		{diffCase, caseFold.String},
	}
	var how []string
	for _, st := range steps {
		if a == b {
			break
		}
		na, nb := st.f(a), st.f(b)
		if na != a || nb != b {
			how = append(how, st.name)
		}
		a, b = na, nb
	}
	return strings.Join(how, " and ")
}

func dropInvisible(s string) string {
	return strings.Map(func(r rune) rune {
		if unicode.In(r, unicode.Cc, unicode.Cf) {
			return -1
		}
		return r
	}, s)
}

// LookAlikeGroups finds the sets of distinct labels among found that a reader would take
// for the same label (see lookAlikeKey), in the order of their first label's position in
// found. column names the data column they come from. It is O(L log L) in the number of
// distinct labels.
func LookAlikeGroups(column string, found []string) []results.LookAlike {
	type keyed struct {
		key string
		pos int
	}
	byKey := map[string][]int{}
	var keys []keyed
	for i, g := range found {
		k := lookAlikeKey(g)
		if _, ok := byKey[k]; !ok {
			keys = append(keys, keyed{k, i})
		}
		byKey[k] = append(byKey[k], i)
	}
	var out []results.LookAlike
	for _, k := range keys {
		idx := byKey[k.key]
		if len(idx) < 2 {
			continue
		}
		la := results.LookAlike{Column: column}
		var how []string
		for n, i := range idx {
			la.Labels = append(la.Labels, found[i])
			la.Shown = append(la.Shown, report.VisibleLabel(found[i]))
			if n > 0 {
				if d := lookAlikeDifference(found[idx[0]], found[i]); !slices.Contains(how, d) {
					how = append(how, d)
				}
			}
		}
		la.Differences = how
		out = append(out, la)
	}
	return out
}

// lookAlikeHint returns, for a label named in the plan but absent from the data, the data
// labels that look like it, with how they differ; "" when there are none.
func lookAlikeHint(name string, found []string) string {
	k := lookAlikeKey(name)
	var near []string
	for _, g := range found {
		if g != name && lookAlikeKey(g) == k {
			near = append(near, fmt.Sprintf("%s, which differs only by %s", report.VisibleLabel(g), lookAlikeDifference(name, g)))
		}
	}
	if len(near) == 0 {
		return ""
	}
	return fmt.Sprintf("; the data have %s (the plan has %s; labels are compared exactly as written)", strings.Join(near, " and "), report.VisibleLabel(name))
}
