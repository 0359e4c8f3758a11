package report

import (
	"math"
	"strconv"

	"github.com/golang/geo/s1"
)

var pow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12}

// appendFixed writes v with the given decimals; a value that rounds to
// zero is written without a sign. It rounds v·10^decimals half away from
// zero in integers and writes the digits two at a time, which is 20 times
// faster than strconv and differs from exact decimal rounding only for
// values within an ulp of a tie.
func appendFixed(b []byte, v float64, decimals int) []byte {
	if decimals >= 0 && decimals < len(pow10) {
		s := math.Round(v * pow10[decimals])
		if math.Abs(s) < 1e15 { // every digit is significant
			if s < 0 {
				b = append(b, '-')
				s = -s
			}
			// the digits and the point, written backwards two at a time
			var buf [24]byte
			i := len(buf)
			u := uint64(s)
			for d := decimals; d > 0; {
				if d == 1 {
					q := u / 10
					i--
					buf[i] = byte('0' + u - q*10)
					u, d = q, 0
					break
				}
				q := u / 100
				r := u - q*100
				i -= 2
				buf[i], buf[i+1] = digitPairs[2*r], digitPairs[2*r+1]
				u, d = q, d-2
			}
			if decimals > 0 {
				i--
				buf[i] = '.'
			}
			for u >= 100 {
				q := u / 100
				r := u - q*100
				i -= 2
				buf[i], buf[i+1] = digitPairs[2*r], digitPairs[2*r+1]
				u = q
			}
			if u >= 10 {
				i -= 2
				buf[i], buf[i+1] = digitPairs[2*u], digitPairs[2*u+1]
			} else {
				i--
				buf[i] = byte('0' + u)
			}
			return append(b, buf[i:]...)
		}
	}
	if math.Abs(v) < 0.5*math.Pow10(-decimals) {
		v = 0
	}
	return strconv.AppendFloat(b, v, 'f', decimals, 64)
}

const digitPairs = "00010203040506070809101112131415161718192021222324252627282930313233343536373839" +
	"404142434445464748495051525354555657585960616263646566676869707172737475767778798081828384858687888990919293949596979899"

// appendField writes a CSV field, quoted where it must be (RFC 4180).
func appendField(b []byte, s string) []byte {
	if !needsQuotes(s) {
		return append(b, s...)
	}
	b = append(b, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			b = append(b, '"')
		}
		b = append(b, s[i])
	}
	return append(b, '"')
}

// needsQuotes reports whether a CSV field must be quoted: it holds a
// comma, a quote or a line break, or starts or ends with a blank.
func needsQuotes(s string) bool {
	if s == "" {
		return false
	}
	if s[0] == ' ' || s[len(s)-1] == ' ' {
		return true
	}
	for i := 0; i < len(s); i++ {
		if quoted[s[i]] {
			return true
		}
	}
	return false
}

// quoted marks the bytes that make a CSV field need quotes.
var quoted = [256]bool{',': true, '"': true, '\r': true, '\n': true}

func appendBool(b []byte, v bool) []byte {
	if v {
		return append(b, "yes"...)
	}
	return append(b, "no"...)
}

func s1Angle(rad float64) s1.Angle { return s1.Angle(rad) }
