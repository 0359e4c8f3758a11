package units

import (
	"math"
	"strconv"
	"strings"
)

const packedWant = "ddd.mmss with minutes and seconds below 60"

// parsePackedDegrees reads a packed DDD.MMSSs angle from its text and
// returns decimal degrees. It works on the digits, not on a float64, so
// that 10.3000 is exactly 10°30′ (the float 10.3 is 10.2999999999999998…)
// and the sign of -0.3000 (−0°30′, whose degrees part is "minus zero") is
// kept. Digits after the point are positional: "12.3" is 12°30′. mark is
// the decimal mark ("12,3" with DecimalComma).
func parsePackedDegrees(quantity, s string, mark DecimalMark) (float64, error) {
	bad := func(err error) (float64, error) {
		return 0, &SyntaxError{Quantity: quantity, Value: s, Unit: "packed ddd.mmss", Want: packedWant, Err: err}
	}
	t := strings.TrimSpace(s)
	negative := false
	switch {
	case strings.HasPrefix(t, "-"):
		negative, t = true, t[1:]
	case strings.HasPrefix(t, "+"):
		t = t[1:]
	}
	whole, frac := t, ""
	if i := strings.IndexByte(t, byte(mark)); i >= 0 {
		whole, frac = t[:i], t[i+1:]
	}
	if whole == "" && frac == "" {
		return bad(nil)
	}
	if !allDigits(whole) || !allDigits(frac) {
		return bad(nil)
	}
	for len(frac) < 4 {
		frac += "0"
	}
	deg := 0.0
	if whole != "" {
		d, err := strconv.ParseFloat(whole, 64)
		if err != nil {
			return bad(err)
		}
		deg = d
	}
	minutes := float64(int(frac[0]-'0')*10 + int(frac[1]-'0'))
	seconds, err := strconv.ParseFloat(frac[2:4]+"."+frac[4:], 64)
	if err != nil {
		return bad(err)
	}
	if minutes >= 60 || seconds >= 60 {
		return bad(nil)
	}
	v := deg + minutes/60 + seconds/3600
	if math.IsInf(v, 0) {
		return bad(nil)
	}
	if negative {
		v = -v
	}
	return v, nil
}

func allDigits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

// formatPacked writes deg decimal degrees as packed DDD.MMSSs with the
// given number of decimal places of seconds, rounding once on the total
// seconds so that 59.99996″ carries into the minutes instead of printing
// as 60.
func formatPacked(deg float64, decimals int) string {
	if decimals < 0 {
		decimals = 0
	}
	if math.IsNaN(deg) || math.IsInf(deg, 0) {
		return strconv.FormatFloat(deg, 'f', -1, 64)
	}
	negative := deg < 0
	scale := math.Pow(10, float64(decimals))
	total := math.Round(math.Abs(deg) * 3600 * scale) // in units of 10^-decimals seconds
	perDegree := 3600 * scale
	perMinute := 60 * scale
	d := math.Floor(total / perDegree)
	rest := total - d*perDegree
	m := math.Floor(rest / perMinute)
	sec := rest - m*perMinute // still scaled
	var b strings.Builder
	if negative && total != 0 {
		b.WriteByte('-')
	}
	b.WriteString(strconv.FormatFloat(d, 'f', 0, 64))
	b.WriteByte('.')
	if m < 10 {
		b.WriteByte('0')
	}
	b.WriteString(strconv.FormatFloat(m, 'f', 0, 64))
	secDigits := strconv.FormatFloat(sec, 'f', 0, 64)
	for len(secDigits) < 2+decimals {
		secDigits = "0" + secDigits
	}
	b.WriteString(secDigits)
	return b.String()
}
