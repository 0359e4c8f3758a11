package report

import (
	"math"
	"strconv"
	"strings"

	"github.com/golang/geo/s1"
)

// appendFixed writes v with the given decimals; a value that rounds to
// zero is written without a sign.
func appendFixed(b []byte, v float64, decimals int) []byte {
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
