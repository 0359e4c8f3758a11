package report

import (
	"encoding/json"
	"io"
)

// WriteJSON writes the summary as indented JSON; numbers are written in
// their shortest round-trip form.
func WriteJSON(w io.Writer, s *Summary) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(s)
}
