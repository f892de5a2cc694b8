package limits

import (
	"bytes"
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// Bounds on a limits or calibration file, checked before the TOML decoder
// sees it: the decoder's cost grows with the square of the nesting depth of
// inline tables (an 80 KB file of nested inline tables took 15.7 GB and
// 122 s), and no limits file needs more than a few levels. A real shop file
// is 10–50 KB with keys five levels deep (alloy.NAME.metric.METRIC.pass_min)
// and one level of inline tables or arrays.
const (
	MaxFileBytes  = 1 << 20 // 1 MiB
	MaxKeyDepth   = 8       // parts of a dotted key, the table header's included
	MaxValueDepth = 4       // arrays and inline tables inside one another
)

// scanError is a place scanText cannot follow, or nesting beyond the
// bounds (deep).
type scanError struct {
	line int
	msg  string
	deep bool
}

func (e *scanError) Error() string { return fmt.Sprintf("line %d: %s", e.line, e.msg) }

// tomlEntry is one key = value of a TOML text, with the byte spans an
// in-place edit needs.
type tomlEntry struct {
	path   []string // the full key, table header included
	line   int      // 1-based line of the key
	inline bool     // inside an inline table

	// keyStart..valEnd is "key = value"; lineStart..lineEnd the whole line
	// (lines, for a multi-line value) with its newline, for entries that
	// start a line (not inline).
	keyStart, valStart, valEnd int
	lineStart, lineEnd         int
	comment                    int // start of a trailing comment on the value's last line, or -1
}

// tomlTable is a [table] or [[array of tables]] header.
type tomlTable struct {
	path             []string
	line             int
	start, end       int // the header line, newline included
	array            bool
	lastEntryLineEnd int // end of the last entry line of its section (end of the header line when empty)
}

// tomlText is the layout of a TOML document: where each key's value lies.
// It is read by scanText, a small scanner of the TOML 1.0 syntax (and the
// newlines TOML 1.1 allows in inline tables) that decodes no values: the
// TOML decoder does that. It serves three ends: refusing files nested too
// deep before the decoder sees them, naming the line of a key in errors,
// and editing a value in place while keeping every other byte.
type tomlText struct {
	data    []byte
	entries []tomlEntry
	tables  []tomlTable
}

// scanText reads the layout of data. Errors are *scanError, naming the
// line: nesting beyond MaxKeyDepth or MaxValueDepth, or text the scanner
// cannot follow (which the decoder will then name better).
func scanText(data []byte) (*tomlText, error) {
	s := &scanner{d: data, line: 1}
	doc := &tomlText{data: data}
	var prefix []string
	for {
		s.skipBlank()
		if s.i >= len(s.d) {
			break
		}
		switch c := s.d[s.i]; {
		case c == '\n':
			s.newline()
		case c == '#':
			s.skipComment()
		case c == '[':
			t, err := s.header()
			if err != nil {
				return nil, err
			}
			doc.tables = append(doc.tables, t)
			prefix = t.path
		default:
			if err := s.keyValue(doc, prefix, false, 0); err != nil {
				return nil, err
			}
		}
	}
	doc.finish()
	return doc, nil
}

// finish sets each table's last entry line (entries and tables are in
// file order, so one pass does it).
func (doc *tomlText) finish() {
	ti := -1
	for i := range doc.tables {
		doc.tables[i].lastEntryLineEnd = doc.tables[i].end
	}
	for _, e := range doc.entries {
		for ti+1 < len(doc.tables) && doc.tables[ti+1].start <= e.keyStart {
			ti++
		}
		if ti >= 0 && !e.inline {
			doc.tables[ti].lastEntryLineEnd = max(doc.tables[ti].lastEntryLineEnd, e.lineEnd)
		}
	}
}

// lines maps every dotted key (parts joined by ".") to its line.
func (doc *tomlText) lines() map[string]int {
	out := map[string]int{}
	put := func(path []string, n int) {
		k := strings.Join(path, ".")
		if _, seen := out[k]; !seen {
			out[k] = n
		}
	}
	for _, t := range doc.tables {
		put(t.path, t.line)
	}
	for _, e := range doc.entries {
		// A dotted key a.b.c = 1 also places a and a.b.
		for n := len(e.path); n > 0; n-- {
			put(e.path[:n], e.line)
		}
	}
	return out
}

type scanner struct {
	d         []byte
	i         int
	line      int
	lineStart int // offset of the current line's first byte
}

func (s *scanner) errf(format string, args ...any) error {
	return &scanError{line: s.line, msg: fmt.Sprintf(format, args...)}
}

func (s *scanner) deepf(format string, args ...any) error {
	return &scanError{line: s.line, msg: fmt.Sprintf(format, args...), deep: true}
}

func (s *scanner) skipBlank() {
	for s.i < len(s.d) && (s.d[s.i] == ' ' || s.d[s.i] == '\t' || s.d[s.i] == '\r') {
		s.i++
	}
}

func (s *scanner) newline() { s.i++; s.line++; s.lineStart = s.i }

func (s *scanner) skipComment() {
	for s.i < len(s.d) && s.d[s.i] != '\n' {
		s.i++
	}
}

// skipSpace passes blanks, newlines and comments (inside arrays and
// multi-line inline tables).
func (s *scanner) skipSpace() {
	for s.i < len(s.d) {
		switch s.d[s.i] {
		case ' ', '\t', '\r':
			s.i++
		case '\n':
			s.newline()
		case '#':
			s.skipComment()
		default:
			return
		}
	}
}

// header reads [a.b] or [[a.b]] and the rest of its line.
func (s *scanner) header() (tomlTable, error) {
	t := tomlTable{line: s.line, start: s.i}
	s.i++
	if s.i < len(s.d) && s.d[s.i] == '[' {
		t.array = true
		s.i++
	}
	path, err := s.key()
	if err != nil {
		return t, err
	}
	if len(path) > MaxKeyDepth {
		return t, s.deepf("table [%s] is %d keys deep (at most %d)", strings.Join(path, "."), len(path), MaxKeyDepth)
	}
	s.skipBlank()
	for _, want := range []bool{true, t.array} {
		if !want {
			continue
		}
		if s.i >= len(s.d) || s.d[s.i] != ']' {
			return t, s.errf("table header not closed")
		}
		s.i++
	}
	t.path = path
	s.skipBlank()
	if s.i < len(s.d) && s.d[s.i] == '#' {
		s.skipComment()
	}
	if s.i < len(s.d) && s.d[s.i] != '\n' {
		return t, s.errf("text after a table header")
	}
	if s.i < len(s.d) {
		s.newline()
	}
	t.end = s.i
	return t, nil
}

// key reads a dotted key: bare, "basic" and 'literal' parts.
func (s *scanner) key() ([]string, error) {
	var parts []string
	for {
		s.skipBlank()
		if s.i >= len(s.d) {
			return nil, s.errf("key expected")
		}
		var part string
		switch c := s.d[s.i]; {
		case c == '"':
			end, err := s.basicString()
			if err != nil {
				return nil, err
			}
			part = unescapeKey(string(s.d[s.i+1 : end-1]))
			s.i = end
		case c == '\'':
			end := bytes.IndexByte(s.d[s.i+1:], '\'')
			if end < 0 || bytes.IndexByte(s.d[s.i+1:s.i+1+end], '\n') >= 0 {
				return nil, s.errf("literal key not closed")
			}
			part = string(s.d[s.i+1 : s.i+1+end])
			s.i += end + 2
		case isBare(c):
			j := s.i
			for j < len(s.d) && isBare(s.d[j]) {
				j++
			}
			part = string(s.d[s.i:j])
			s.i = j
		default:
			return nil, s.errf("key expected")
		}
		parts = append(parts, part)
		s.skipBlank()
		if s.i < len(s.d) && s.d[s.i] == '.' {
			s.i++
			continue
		}
		return parts, nil
	}
}

func isBare(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '-'
}

// unescapeKey decodes the escapes of a quoted key (TOML 1.1: \b \t \n \f
// \r \e \" \\ \xHH \uXXXX \UXXXXXXXX), so that the key matches the
// decoder's; an escape it does not know is kept as written.
func unescapeKey(s string) string {
	if !strings.Contains(s, `\`) {
		return s
	}
	var b strings.Builder
	for i := 0; i < len(s); i++ {
		if s[i] != '\\' || i+1 >= len(s) {
			b.WriteByte(s[i])
			continue
		}
		simple := map[byte]rune{'b': '\b', 't': '\t', 'n': '\n', 'f': '\f', 'r': '\r', 'e': 0x1b, '"': '"', '\\': '\\'}
		if r, ok := simple[s[i+1]]; ok {
			b.WriteRune(r)
			i++
			continue
		}
		n := map[byte]int{'x': 2, 'u': 4, 'U': 8}[s[i+1]]
		if n > 0 && i+2+n <= len(s) {
			if v, err := strconv.ParseUint(s[i+2:i+2+n], 16, 32); err == nil {
				b.WriteRune(rune(v))
				i += 1 + n
				continue
			}
		}
		b.WriteByte(s[i])
	}
	return b.String()
}

// keyValue reads key = value. At the top level (not inline) it also reads
// the rest of the line and records the line span.
func (s *scanner) keyValue(doc *tomlText, prefix []string, inline bool, depth int) error {
	e := tomlEntry{line: s.line, keyStart: s.i, inline: inline, comment: -1}
	e.lineStart = s.lineStart
	rel, err := s.key()
	if err != nil {
		return err
	}
	e.path = append(append([]string(nil), prefix...), rel...)
	if len(e.path) > MaxKeyDepth {
		return s.deepf("key %s is %d keys deep (at most %d)", strings.Join(e.path, "."), len(e.path), MaxKeyDepth)
	}
	s.skipBlank()
	if s.i >= len(s.d) || s.d[s.i] != '=' {
		return s.errf("'=' expected after key %s", strings.Join(rel, "."))
	}
	s.i++
	s.skipBlank()
	e.valStart = s.i
	idx := len(doc.entries)
	doc.entries = append(doc.entries, e) // placed before any inline children
	if err := s.value(doc, e.path, depth); err != nil {
		return err
	}
	e.valEnd = s.i
	if !inline {
		s.skipBlank()
		if s.i < len(s.d) && s.d[s.i] == '#' {
			e.comment = s.i
			s.skipComment()
		}
		if s.i < len(s.d) && s.d[s.i] != '\n' {
			return s.errf("text after the value of %s", strings.Join(rel, "."))
		}
		if s.i < len(s.d) {
			s.newline()
		}
		e.lineEnd = s.i
	}
	doc.entries[idx] = e
	return nil
}

// value reads one value: a string of any kind, an array, an inline table,
// or a bare scalar (number, boolean, date and time).
func (s *scanner) value(doc *tomlText, path []string, depth int) error {
	if s.i >= len(s.d) {
		return s.errf("value expected")
	}
	switch c := s.d[s.i]; c {
	case '"':
		end, err := s.basicString()
		s.i = end
		return err
	case '\'':
		end, err := s.literalString()
		s.i = end
		return err
	case '[', '{':
		if depth+1 > MaxValueDepth {
			return s.deepf("value of %s nests arrays or inline tables more than %d deep", strings.Join(path, "."), MaxValueDepth)
		}
		s.i++
		if c == '[' {
			return s.items(']', "array", func() error { return s.value(doc, path, depth+1) })
		}
		return s.items('}', "inline table", func() error { return s.keyValue(doc, path, true, depth+1) })
	}
	start := s.i
	for s.i < len(s.d) {
		c := s.d[s.i]
		// A date and time may be written with a space: 2026-12-01 06:15:00Z.
		if c == ' ' && s.i-start == 10 && s.i+1 < len(s.d) && s.d[s.i+1] >= '0' && s.d[s.i+1] <= '9' && s.d[start+4] == '-' {
			s.i++
			continue
		}
		if c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == ',' || c == ']' || c == '}' || c == '#' {
			break
		}
		s.i++
	}
	if s.i == start {
		return s.errf("value expected")
	}
	return nil
}

// items reads the comma-separated items of an array or an inline table up
// to its closing byte (newlines and comments allowed between them).
func (s *scanner) items(closing byte, what string, item func() error) error {
	for {
		s.skipSpace()
		if s.i >= len(s.d) {
			return s.errf("%s not closed", what)
		}
		if s.d[s.i] == closing {
			s.i++
			return nil
		}
		if err := item(); err != nil {
			return err
		}
		s.skipSpace()
		if s.i < len(s.d) && s.d[s.i] == ',' {
			s.i++
		}
	}
}

// basicString returns the end (after the closing quote) of a "..." or
// """...""" string starting at s.i, counting its newlines.
func (s *scanner) basicString() (int, error) {
	multi := bytes.HasPrefix(s.d[s.i:], []byte(`"""`))
	i := s.i + 1
	if multi {
		i = s.i + 3
	}
	for i < len(s.d) {
		switch s.d[i] {
		case '\\':
			if i+1 < len(s.d) && s.d[i+1] == '\n' {
				s.line++
			}
			i += 2
			continue
		case '\n':
			if !multi {
				return i, s.errf("string not closed on its line")
			}
			s.line++
		case '"':
			if !multi {
				return i + 1, nil
			}
			if bytes.HasPrefix(s.d[i:], []byte(`"""`)) {
				return multiEnd(s.d, i, '"'), nil
			}
		}
		i++
	}
	return len(s.d), s.errf("string not closed")
}

// multiEnd is the end of a multi-line string whose closing triple quote q
// starts at i: up to two more quotes right after it are content (five
// quotes end a string with two quotes of content).
func multiEnd(d []byte, i int, q byte) int {
	end := i + 3
	for k := 0; k < 2 && end < len(d) && d[end] == q; k++ {
		end++
	}
	return end
}

// literalString is basicString for '...' and ”'...”' (no escapes).
func (s *scanner) literalString() (int, error) {
	if bytes.HasPrefix(s.d[s.i:], []byte(`'''`)) {
		for i := s.i + 3; i < len(s.d); i++ {
			if s.d[i] == '\n' {
				s.line++
			}
			if bytes.HasPrefix(s.d[i:], []byte(`'''`)) {
				return multiEnd(s.d, i, '\''), nil
			}
		}
		return len(s.d), s.errf("string not closed")
	}
	for i := s.i + 1; i < len(s.d); i++ {
		switch s.d[i] {
		case '\'':
			return i + 1, nil
		case '\n':
			return i, s.errf("string not closed on its line")
		}
	}
	return len(s.d), s.errf("string not closed")
}

// guard refuses, before any TOML decoding, a file larger than MaxFileBytes
// or nested deeper than MaxKeyDepth / MaxValueDepth, naming the file and
// the line. Where the scanner cannot follow the text (the decoder then
// names the problem better), the nesting of brackets and braces outside
// strings and comments is counted instead, so that no text reaches the
// decoder nested deeper than the bounds.
func guard(data []byte, name string) error {
	if len(data) > MaxFileBytes {
		return &Error{File: name, Msg: fmt.Sprintf("%d bytes is more than a limits file may hold (%d bytes); refused before reading it", len(data), MaxFileBytes)}
	}
	_, err := scanText(data)
	var se *scanError
	if !errors.As(err, &se) {
		return nil
	}
	if !se.deep {
		if line, depth := bracketDepth(data); depth > MaxValueDepth+1 {
			se = &scanError{line: line, msg: fmt.Sprintf("brackets or braces nest %d deep (at most %d)", depth, MaxValueDepth+1), deep: true}
		}
	}
	if !se.deep {
		return nil
	}
	return &Error{File: name, Line: se.line, Msg: se.msg + "; refused before reading it"}
}

// bracketDepth is the deepest nesting of [ and { outside strings and
// comments, and the line where it is first reached.
func bracketDepth(data []byte) (line, deepest int) {
	s := &scanner{d: data, line: 1}
	depth := 0
	for s.i < len(s.d) {
		switch s.d[s.i] {
		case '\n':
			s.newline()
			continue
		case '#':
			s.skipComment()
			continue
		case '"':
			s.i, _ = s.basicString()
			continue
		case '\'':
			s.i, _ = s.literalString()
			continue
		case '[', '{':
			depth++
			if depth > deepest {
				deepest, line = depth, s.line
			}
		case ']', '}':
			depth = max(0, depth-1)
		}
		s.i++
	}
	return line, deepest
}
