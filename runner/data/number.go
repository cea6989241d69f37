package data

// maxExactDigits is the number of significant decimal digits that always survive a
// round trip through float64: any decimal with at most this many significant digits,
// in the normal range, converts to a float64 that converts back to it, so two distinct
// such decimals never become the same float64.
//
//	DBL_DIG = floor((53 - 1) * log10(2)) = 15
//
// Source: IEEE 754-2008 binary64 (53-bit significand); the C standard's DBL_DIG
// (ISO/IEC 9899:2011, 5.2.4.2.2) is this value.
const maxExactDigits = 15

// scanDecimal checks that b is a number in plain decimal notation and counts its
// significant digits. The accepted syntax, with sep the decimal separator, is
//
//	number   = [sign] mantissa [exponent]
//	mantissa = digits [sep digits] / sep digits
//	exponent = ("e" / "E") [sign] digits
//	sign     = "+" / "-"
//	digits   = 1*DIGIT
//
// so "1.", hex floats, digit separators, "inf" and "nan" are rejected. sig is the
// number of mantissa digits from the first to the last non-zero digit: the digits that
// carry the value. Leading and trailing zeros are left out ("1.50" and "1.5" are the same
// value, 2 digits), since only digits that carry the value can make two distinct decimals
// meet in one float64. sig is 0 when every mantissa digit is zero.
func scanDecimal(b []byte, sep byte) (sig int, ok bool) {
	i, n := 0, len(b)
	// count runs from the first non-zero digit; sig is its value at the last non-zero one.
	count := 0
	if i < n && (b[i] == '+' || b[i] == '-') {
		i++
	}
	intDigits, fracDigits := 0, 0
	for ; i < n && isDigit(b[i]); i++ {
		intDigits++
		if count > 0 || b[i] != '0' {
			count++
		}
		if b[i] != '0' {
			sig = count
		}
	}
	if i < n && b[i] == sep {
		i++
		for ; i < n && isDigit(b[i]); i++ {
			fracDigits++
			if count > 0 || b[i] != '0' {
				count++
			}
			if b[i] != '0' {
				sig = count
			}
		}
		if fracDigits == 0 {
			return 0, false
		}
	}
	if intDigits == 0 && fracDigits == 0 {
		return 0, false
	}
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		i++
		if i < n && (b[i] == '+' || b[i] == '-') {
			i++
		}
		expDigits := 0
		for ; i < n && isDigit(b[i]); i++ {
			expDigits++
		}
		if expDigits == 0 {
			return 0, false
		}
	}
	return sig, i == n
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

// trimSpaces returns b without leading and trailing ASCII spaces (0x20 only).
func trimSpaces(b []byte) []byte {
	i, j := 0, len(b)
	for i < j && b[i] == ' ' {
		i++
	}
	for j > i && b[j-1] == ' ' {
		j--
	}
	return b[i:j]
}
