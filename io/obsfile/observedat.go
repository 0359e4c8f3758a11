package obsfile

import (
	"errors"
	"time"
)

// observedAtLayouts are the ISO 8601 forms of observed_at (and of
// LandXML's xs:dateTime): a calendar date and a time of day to the minute
// or second, with a decimal fraction of the second (after a point or,
// as ISO 8601 also allows, a comma: time.Parse takes either), with or without a
// zone (Z or ±hh:mm); a space may stand for the T (RFC 3339 §5.6 allows
// it, and spreadsheets write it).
var observedAtLayouts = [...]string{
	"2006-01-02T15:04:05.999999999Z07:00",
	"2006-01-02T15:04:05.999999999",
	"2006-01-02T15:04Z07:00",
	"2006-01-02T15:04",
}

// ParseObservedAt checks a date and time of an observation. A time
// without a zone is read as written, in no zone (UTC's clock, for
// ordering), as the field instrument's clock gave it.
func ParseObservedAt(s string) (time.Time, error) {
	if len(s) > 10 && s[10] == ' ' {
		b := []byte(s)
		b[10] = 'T'
		s = string(b)
	}
	for _, l := range observedAtLayouts {
		if t, err := time.Parse(l, s); err == nil {
			return t, nil
		}
	}
	return time.Time{}, errors.New("not an ISO 8601 date and time")
}
