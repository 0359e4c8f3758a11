package units

import (
	"strconv"
	"strings"
)

// ParseFloat reads a number in decimal syntax only — an optional sign,
// digits with an optional decimal point, an optional exponent e or E
// with an optional sign and digits — as strconv.ParseFloat(s, 64) does,
// bit for bit and error for error. What strconv takes beyond that is a
// syntax error here (a *strconv.NumError): hexadecimal floats (0x1p9,
// which strconv reads as 512), underscores, Inf, Infinity and NaN, none
// of which a surveyor's file means as a number.
//
// It has a short road for what observation files hold: an optional
// sign, at most 19 digits and an optional decimal point. When the digits
// make an integer m ≤ 2^53 and there are f ≤ 22 of them after the point,
// m and 10^f are exact doubles and the one division m / 10^f is
// correctly rounded, as strconv's own exact case is (Clinger, "How to
// read floating point numbers accurately", PLDI 1990). Anything else
// (exponents, more digits, spaces, words) is checked for decimal syntax
// and goes to strconv.
func ParseFloat(s string) (float64, error) {
	if v, ok := parseShortDecimal(s, '.'); ok {
		return v, nil
	}
	if !decimalSyntax(s, '.') {
		return 0, syntaxError(s)
	}
	return strconv.ParseFloat(s, 64)
}

// A DecimalMark is the character between a number's whole digits and its
// fractional ones: a point or a comma.
type DecimalMark byte

// The decimal marks.
const (
	DecimalPoint DecimalMark = '.'
	DecimalComma DecimalMark = ','
)

// String is the mark in quotes, for messages: "'.'" or "','".
func (m DecimalMark) String() string { return "'" + string(rune(m)) + "'" }

// ParseFloatMark is ParseFloat with mark as the decimal mark; with
// DecimalPoint it is ParseFloat. With DecimalComma the syntax is
// ParseFloat's with a comma in place of the point, so "1234,5" is 1234.5
// and a point anywhere is a syntax error: "1.234,5" (a point grouping
// the thousands), "1,234.5" and "1.5" are refused, not read as some
// number. No other mark is a decimal mark.
func ParseFloatMark(s string, mark DecimalMark) (float64, error) {
	switch mark {
	case DecimalPoint:
		return ParseFloat(s)
	case DecimalComma:
	default:
		return 0, syntaxError(s)
	}
	if v, ok := parseShortDecimal(s, ','); ok {
		return v, nil
	}
	if !decimalSyntax(s, ',') {
		return 0, syntaxError(s)
	}
	// s holds one comma at most and no point: strconv reads it as a point.
	v, err := strconv.ParseFloat(strings.Replace(s, ",", ".", 1), 64)
	if ne, ok := err.(*strconv.NumError); ok {
		ne.Num = s
	}
	return v, err
}

func syntaxError(s string) error {
	return &strconv.NumError{Func: "ParseFloat", Num: s, Err: strconv.ErrSyntax}
}

// decimalSyntax reports whether s is [+-]digits[MARKdigits][(e|E)[+-]digits],
// with digits on at least one side of the mark.
func decimalSyntax(s string, mark byte) bool {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	start := i
	i, _ = appendDigits(s, i, 0)
	mantissa := i - start
	if i < len(s) && s[i] == mark {
		j, _ := appendDigits(s, i+1, 0)
		mantissa += j - i - 1
		i = j
	}
	if mantissa == 0 {
		return false
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		j, _ := appendDigits(s, i, 0)
		if j == i {
			return false
		}
		i = j
	}
	return i == len(s)
}

// exactPow10 are the powers of ten that a double holds exactly.
var exactPow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseShortDecimal reads the short road of ParseFloat, with mark as the
// decimal mark.
func parseShortDecimal(s string, mark byte) (float64, bool) {
	// A sign, digits and a mark, 21 bytes at most; m wraps only for
	// 20 digits, which go to strconv.
	if len(s) == 0 || len(s) > 21 {
		return 0, false
	}
	i, neg := 0, false
	if s[0] == '-' || s[0] == '+' {
		neg, i = s[0] == '-', 1
	}
	start := i
	i, m := appendDigits(s, i, 0)
	digits, frac := i-start, 0
	if i < len(s) && s[i] == mark {
		start = i + 1
		i, m = appendDigits(s, start, m)
		frac = i - start
		digits += frac
	}
	if i < len(s) || digits == 0 || digits > 19 || m > 1<<53 || frac >= len(exactPow10) {
		return 0, false
	}
	v := float64(m) / exactPow10[frac]
	if neg {
		v = -v
	}
	return v, true
}

// appendDigits reads the decimal digits of s from i on into m, as its
// lower places, and returns where they end and m.
func appendDigits(s string, i int, m uint64) (int, uint64) {
	for ; i < len(s); i++ {
		c := s[i] - '0'
		if c > 9 {
			break
		}
		m = m*10 + uint64(c)
	}
	return i, m
}
