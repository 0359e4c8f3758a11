package input

import "strconv"

// maxEcho is how much of a value a message shows: a longer one is cut,
// with its length said (Clip).
const maxEcho = 200

// Clip is s as a message may show it: whole up to 200 bytes, else its
// first 200 bytes (never cutting a UTF-8 character), an ellipsis and its
// length, so that a hostile 100 MB field is not echoed on stderr, in
// rejects.csv and in summary.json.
func Clip(s string) string {
	if len(s) <= maxEcho {
		return s
	}
	n := maxEcho
	for n > 0 && s[n]&0xC0 == 0x80 { // a continuation byte: back to the character's start
		n--
	}
	return s[:n] + "… (" + GroupDigits(len(s)) + " bytes)"
}

// GroupDigits writes n with thousands separated by commas: 1,048,576.
func GroupDigits(n int) string {
	s := strconv.Itoa(n)
	neg := n < 0
	if neg {
		s = s[1:]
	}
	var b []byte
	for i := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b = append(b, ',')
		}
		b = append(b, s[i])
	}
	if neg {
		return "-" + string(b)
	}
	return string(b)
}
