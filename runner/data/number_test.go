package data

import (
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// numberSyntax is the accepted number syntax written as regular expressions, an
// independent statement of the grammar that scanDecimal implements by hand.
var numberSyntax = map[byte]*regexp.Regexp{
	'.': regexp.MustCompile(`^([+-]?)([0-9]+(?:\.[0-9]+)?|\.[0-9]+)([eE][+-]?[0-9]+)?$`),
	',': regexp.MustCompile(`^([+-]?)([0-9]+(?:,[0-9]+)?|,[0-9]+)([eE][+-]?[0-9]+)?$`),
}

// regexpSignificant counts the digits that carry the value of a cell the regexp
// accepted: the mantissa without its separator and leading and trailing zeros.
func regexpSignificant(mantissa string) int {
	digits := strings.Trim(strings.NewReplacer(".", "", ",", "").Replace(mantissa), "0")
	return len(digits)
}

// FuzzNumber checks scanDecimal against the regular expressions above, and the value
// loadReader reads against strconv.ParseFloat of the same text (Go 1.26 standard library).
func FuzzNumber(f *testing.F) {
	for _, s := range []string{
		"1.5", "-0", ".5", "1.", "1e5", "1e", "+.5e-3", "0x1p3", "inf", "NaN", "1_0",
		"007.500", "1,5", "1e400", "1e-400", "0.30000000000000001", " 2 ", "",
	} {
		f.Add(s, false)
		f.Add(s, true)
	}
	f.Fuzz(func(t *testing.T, s string, comma bool) {
		sep := byte('.')
		if comma {
			sep = ','
		}
		sig, ok := scanDecimal([]byte(s), sep)
		m := numberSyntax[sep].FindStringSubmatch(s)
		if ok != (m != nil) {
			t.Fatalf("%q sep %q: scanDecimal ok=%v, regexp match=%v", s, sep, ok, m != nil)
		}
		if !ok {
			return
		}
		if want := regexpSignificant(m[2]); sig != want {
			t.Fatalf("%q: sig %d, regexp count %d", s, sig, want)
		}
		// The same text as a cell must read as ParseFloat reads it, or be out of range.
		opt := base()
		opt.Delimiter, opt.Decimal, opt.MissingTokens = ';', sep, nil
		tab, err := loadString("g;x\na;\""+strings.ReplaceAll(s, `"`, `""`)+"\"\n", opt)
		want, perr := strconv.ParseFloat(strings.Replace(s, ",", ".", 1), 64)
		if perr != nil || (want == 0 && sig > 0) {
			if err == nil || !strings.Contains(err.Error(), "is out of range") {
				t.Fatalf("%q: ParseFloat %v, %v; loadReader error %v", s, want, perr, err)
			}
			return
		}
		if err != nil {
			t.Fatalf("%q: %v", s, err)
		}
		if got := tab.Outcome[0][0]; math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("%q: got %v, ParseFloat %v", s, got, want)
		}
		if wantHP := sig > maxExactDigits; (tab.HighPrecisionCells == 1) != wantHP {
			t.Fatalf("%q: HighPrecisionCells %d, sig %d", s, tab.HighPrecisionCells, sig)
		}
	})
}
