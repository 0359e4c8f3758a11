package landxml

import (
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"

	"github.com/geored/geored/io/obsfile"
)

// A scanner is a LandXML file's token reader: each token's position, the
// root element, and the elements skipped, folded into one warning.
type scanner struct {
	file      string
	d         *xml.Decoder
	line, col int // where the last token starts
	root      bool
	rootLine  int // where the LandXML element starts
	rootCol   int
	skipped   map[string]*skipCount
	attrs     map[string]*skipCount // "Element attribute" not read
}

type skipCount struct {
	n         int
	line, col int // the first one
}

func newScanner(r io.Reader, file string, lim obsfile.Limits) *scanner {
	lim = lim.OrDefault()
	d := xml.NewDecoder(&tokenLimiter{r: r, file: file, max: lim.MaxLineBytes, line: 1})
	// No CharsetReader: a file in an encoding other than UTF-8 is an
	// error that says so, not read as something else.
	return &scanner{file: file, d: d, skipped: map[string]*skipCount{}}
}

// next returns the next token, io.EOF at the end, or an error that ends
// the file (malformed XML, an unreadable file, a token over the limit).
func (s *scanner) next() (xml.Token, error) {
	s.line, s.col = s.d.InputPos()
	t, err := s.d.Token()
	if err == nil {
		return t, nil
	}
	if errors.Is(err, io.EOF) {
		if !s.root {
			return nil, &Error{File: s.file, Line: s.line, Column: s.col, Want: "a LandXML 1.2 file: no LandXML element"}
		}
		return nil, io.EOF
	}
	var se *xml.SyntaxError
	if errors.As(err, &se) {
		line, col := s.d.InputPos()
		return nil, &Error{File: s.file, Line: line, Column: col, Want: "well-formed XML (" + se.Msg + ")", Err: err}
	}
	var le *obsfile.LimitError
	if errors.As(err, &le) {
		return nil, err
	}
	return nil, fmt.Errorf("%s: %w", s.file, err)
}

// token is next, but at the end of a file without a Units element (units
// false) the error that says so.
func (s *scanner) token(units bool) (xml.Token, error) {
	t, err := s.next()
	if errors.Is(err, io.EOF) && !units {
		return nil, s.noUnits()
	}
	return t, err
}

// at is an error at the start of the element last read.
func (s *scanner) at(el, attr, value, want string) *Error {
	return &Error{File: s.file, Line: s.line, Column: s.col, Element: el, Attr: attr, Value: value, Want: want}
}

// start checks the root element: LandXML, version 1.2.
func (s *scanner) start(t xml.StartElement) error {
	if t.Name.Local != "LandXML" {
		return s.at(t.Name.Local, "", "", "a LandXML 1.2 file: the root element LandXML")
	}
	s.root, s.rootLine, s.rootCol = true, s.line, s.col
	v, ok := attr(t, "version")
	ns := t.Name.Space
	switch {
	case ok && strings.TrimSpace(v) == "1.2":
	case !ok && strings.HasSuffix(ns, "LandXML-1.2"):
	case ok:
		return s.at("LandXML", "version", v, "1.2: geored reads LandXML 1.2")
	default:
		return s.at("LandXML", "version", "", "1.2 (a version attribute or the LandXML-1.2 namespace)")
	}
	return nil
}

// noUnits is the error of a file without a Units element, at its root.
func (s *scanner) noUnits() error {
	return &Error{File: s.file, Line: s.rootLine, Column: s.rootCol, Element: "LandXML", Want: "a Units element: the file's units are never guessed"}
}

// skip passes over the element t has opened, with its content, and
// counts it for the warning.
func (s *scanner) skip(t xml.StartElement) error {
	c := s.skipped[t.Name.Local]
	if c == nil {
		c = &skipCount{line: s.line, col: s.col}
		s.skipped[t.Name.Local] = c
	}
	c.n++
	return s.skipQuiet()
}

// maxDepth bounds how deep elements nest, within the elements read and
// within one skipped: the decoder keeps a record per open element.
const maxDepth = 256

// skipQuiet passes over the element just opened without counting it: one
// the other reader of the file reads.
func (s *scanner) skipQuiet() error {
	line, col := s.line, s.col
	for depth := 1; depth > 0; {
		tok, err := s.next()
		if errors.Is(err, io.EOF) {
			return &Error{File: s.file, Line: line, Column: col, Want: "the end tag of the element that starts here"}
		}
		if err != nil {
			return err
		}
		switch tok.(type) {
		case xml.StartElement:
			if depth++; depth > maxDepth {
				return s.tooDeep()
			}
		case xml.EndElement:
			depth--
		}
	}
	return nil
}

// tooDeep is the error of an element nested deeper than maxDepth.
func (s *scanner) tooDeep() error {
	return &Error{File: s.file, Line: s.line, Column: s.col, Want: fmt.Sprintf("elements nested at most %d deep", maxDepth)}
}

// warnings are the warning that names the elements skipped and the one
// that names the attributes of elements read that were not.
func (s *scanner) warnings() []obsfile.Warning {
	var w []obsfile.Warning
	if len(s.skipped) > 0 {
		total, list, first := folded(s.skipped)
		w = append(w, obsfile.Warning{File: s.file, Line: first.line,
			Text: fmt.Sprintf("%d LandXML elements not read (the job's settings stand for what they say): %s", total, list)})
	}
	if len(s.attrs) > 0 {
		total, list, first := folded(s.attrs)
		w = append(w, obsfile.Warning{File: s.file, Line: first.line,
			Text: fmt.Sprintf("%d LandXML attributes not read (geored reduces distances; the job's settings stand for what the others say): %s", total, list)})
	}
	return w
}

// folded lists the counts of m in the order of their first place: the
// total, the list, and the first.
func folded(m map[string]*skipCount) (int, string, *skipCount) {
	names := make([]string, 0, len(m))
	for n := range m {
		names = append(names, n)
	}
	sort.Slice(names, func(i, j int) bool {
		a, b := m[names[i]], m[names[j]]
		if a.line != b.line {
			return a.line < b.line
		}
		if a.col != b.col {
			return a.col < b.col
		}
		return names[i] < names[j]
	})
	var b strings.Builder
	total := 0
	for i, n := range names {
		c := m[n]
		total += c.n
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%s ×%d (first at line %d, column %d)", obsfile.Clip(n), c.n, c.line, c.col)
	}
	return total, b.String(), m[names[0]]
}

// attr is the value of t's attribute name (no namespace).
func attr(t xml.StartElement, name string) (string, bool) {
	for _, a := range t.Attr {
		if a.Name.Local == name && a.Name.Space == "" {
			return a.Value, true
		}
	}
	return "", false
}

// startTag writes t back as a start tag, for rejects.csv, bounded.
func startTag(t xml.StartElement) string {
	var b strings.Builder
	b.WriteString("<" + t.Name.Local)
	for _, a := range t.Attr {
		if b.Len() > 512 {
			b.WriteString(" …")
			break
		}
		fmt.Fprintf(&b, " %s=%q", a.Name.Local, obsfile.Clip(a.Value))
	}
	b.WriteString(">")
	return b.String()
}

// A tokenLimiter bounds the bytes between two '>', so that no tag or text
// can take more memory than the job's max_line_bytes.
type tokenLimiter struct {
	r    io.Reader
	file string
	max  int
	run  int // bytes since the last '>'
	line int
}

func (l *tokenLimiter) Read(p []byte) (int, error) {
	n, err := l.r.Read(p)
	q := p[:n]
	for len(q) > 0 {
		i := bytes.IndexByte(q, '>')
		if i < 0 {
			l.run += len(q)
			l.line += bytes.Count(q, []byte{'\n'})
			break
		}
		l.run += i
		if l.run > l.max {
			break
		}
		l.line += bytes.Count(q[:i], []byte{'\n'})
		l.run, q = 0, q[i+1:]
	}
	if l.run > l.max {
		return 0, &obsfile.LimitError{File: l.file, Line: l.line, What: "this tag or text", Max: l.max, Unit: "bytes", Key: obsfile.LimitLineKey}
	}
	return n, err
}

// The attributes each element read has, besides those that only name or
// describe it (id, name, desc), which are not counted as not read.
// Attribute names are LandXML 1.2's as recalled (from memory).
var (
	setupAttrs       = attrSet("stationName", "instrumentHeight", "instrumentDetailsID")
	detailsAttrs     = attrSet("serialNumber", "manufacturer", "model")
	targetSetupAttrs = attrSet("targetHeight")
	groupAttrs       = attrSet("setupID")
	pointRefAttrs    = attrSet("pntRef")
	// horizDistance and vertDistance beside a slopeDistance are derived
	// from it and not read, by design: not counted.
	observationAttrs = attrSet("setupID", "targetSetupID", "slopeDistance", "zenithAngle", "horizDistance", "vertDistance",
		"targetHeight", "timeStamp", "directFace")
)

func attrSet(names ...string) map[string]bool {
	m := map[string]bool{"id": true, "name": true, "desc": true}
	for _, n := range names {
		m[n] = true
	}
	return m
}

// attrsNotRead counts, for the warning, the attributes of the element t
// (just opened) that are not in read: nothing the file says is passed
// over without a word, and an attribute name that differs from the one
// expected shows there.
func (s *scanner) attrsNotRead(t xml.StartElement, read map[string]bool) {
	for _, a := range t.Attr {
		if a.Name.Space != "" || read[a.Name.Local] {
			continue
		}
		key := t.Name.Local + " " + a.Name.Local
		c := s.attrs[key]
		if c == nil {
			if s.attrs == nil {
				s.attrs = map[string]*skipCount{}
			}
			c = &skipCount{line: s.line, col: s.col}
			s.attrs[key] = c
		}
		c.n++
	}
}
