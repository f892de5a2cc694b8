package curvefile

import (
	"bytes"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// lineEnd is the number of bytes from the start of b to past the line end
// at e (two for CR LF).
func lineEnd(b []byte, e int) int {
	if b[e] == '\r' && e+1 < len(b) && b[e+1] == '\n' {
		return e + 2
	}
	return e + 1
}

// badField is a numeric field of a row that holds no number.
type badField struct {
	col   int
	text  string
	blank bool // empty, or NaN
}

// rowState is what row has read of the row at hand.
type rowState struct {
	v         []float64 // the numbers read, by column (as in the file)
	bad       badField  // the first numeric field without a number
	hasBad    bool
	tempBlank bool // the temperature (or EMF) field is blank or NaN
}

// row reads the rest of the line at the start of b, which holds its line
// end: numReader.read has read its first k fields, up to b[i] (the line
// end where eol). With k = 0 it may also be a blank line, or a '#' line
// (handed to lineAt). It returns the bytes of the line. Each field is read
// once: the numbers where they lie, a run of numeric columns in one call of
// numReader.read; a text field up to its separator (otherField).
func (p *parser) row(b []byte, k, i int, eol bool) (int, error) {
	rs := &p.rs
	rs.hasBad, rs.tempBlank = false, false
	if k == 0 {
		i = skipBlanks(b, 0)
		if c := b[i]; c == '\n' || c == '\r' {
			p.c.Skipped++
			return lineEnd(b, i), nil
		} else if c == '#' {
			return p.lineAt(b)
		}
	}
	for !eol {
		if k < len(p.run) && p.run[k] > 0 {
			var n int
			n, i, eol = p.num.read(b, i, p.rs.v[k:k+p.run[k]])
			if k += n; eol {
				break
			}
			if n > 0 {
				continue // i is at the next field
			}
		}
		if k >= len(p.cols) { // the rest of the line is not kept
			if n, e, err := p.skipRest(b, i, k); err != nil {
				return 0, err
			} else if n > 0 {
				k, i = n, e
				break
			}
		}
		var err error
		if i, err = p.otherField(b, i, k); err != nil {
			return 0, err
		}
		k++
		if c := b[i]; c == p.sep && c != ' ' {
			i = skipBlanks(b, i+1)
			continue
		} else if c == '\n' || c == '\r' {
			break
		}
		var more bool
		if i, more = p.afterField(b, i); !more {
			break
		}
	}
	return p.endRow(b, i, k)
}

// endRow completes a row of n fields whose line end is b[e]: a reading,
// or a padding row, or the row's error.
func (p *parser) endRow(b []byte, e, n int) (int, error) {
	rs := &p.rs
	if e > MaxLine {
		return 0, fmt.Errorf("line longer than %d bytes (1 MiB)", MaxLine)
	}
	if rs.hasBad && !rs.tempBlank {
		return 0, p.lineErr(b, p.fieldError(&rs.bad))
	}
	if n < p.width {
		return 0, p.lineErr(b, p.countError(n))
	}
	if rs.hasBad { // padding: no temperature in this row
		if p.pad.rows == 0 {
			p.pad = padding{first: p.line, err: p.fieldError(&rs.bad)}
			p.fast = -1
		}
		p.pad.rows++
		p.pad.last = p.line
		return lineEnd(b, e), nil
	}
	if p.pad.rows > 0 {
		return 0, &ParseError{File: p.c.Name, Line: p.pad.first, Err: p.pad.err}
	}
	t := rs.v[p.timeCol]
	if p.timeScale != 1 {
		t /= p.timeScale
	}
	var temp float64
	if p.emf {
		mv, cj := rs.v[p.tempCol], p.cjMeta
		p.keepNumber(p.tempCol, mv)
		if p.cjCol >= 0 {
			cj = p.cols[p.cjCol].unit.toC(rs.v[p.cjCol])
			p.keepNumber(p.cjCol, cj) // kept as cj_c, °C
		}
		var err error
		if temp, err = p.tc.Temp(mv, cj); err != nil {
			return 0, err
		}
	} else {
		temp = p.tempUnit.toC(rs.v[p.tempCol])
	}
	if len(p.num.time) == MaxReadings {
		return 0, fmt.Errorf("more than %d readings: a cup's curve is minutes long; split the file", MaxReadings)
	}
	p.num.time = append(p.num.time, t)
	p.num.temp = append(p.num.temp, temp)
	return lineEnd(b, e), nil
}

// keepNumber keeps v as the text of column k's extra column (an EMF or
// cold-junction column of an EMF file), in its shortest exact form.
func (p *parser) keepNumber(k int, v float64) {
	x := &p.extra[p.cols[k].extra]
	x.text = strconv.AppendFloat(x.text, v, 'f', -1, 64)
	x.ends = append(x.ends, len(x.text))
}

// skipRest reads past the fields from the k-th on at b[i:], none of which
// is kept, in one pass over their bytes where it can: with ',' or ';' as
// the separator and no quote among them. It checks them as otherField
// would (UTF-8; empty beyond the header's width) and returns the number
// of fields of the line and the index of its line end, or n = 0 where the
// fields must be read one by one.
func (p *parser) skipRest(b []byte, i, k int) (n, end int, err error) {
	if p.sep != ',' && p.sep != ';' {
		return 0, 0, nil
	}
	e := i + bytes.IndexAny(b[i:], "\r\n")
	rest := b[i:e]
	if bytes.IndexByte(rest, '"') >= 0 {
		return 0, 0, nil
	}
	if !utf8.Valid(rest) {
		return 0, 0, errInvalidUTF8
	}
	n = k + 1 + bytes.Count(rest, []byte{p.sep})
	if n > p.width { // the fields beyond the width must be empty
		j := 0
		for range p.width - k {
			j += bytes.IndexByte(rest[j:], p.sep) + 1
		}
		if len(bytes.Trim(rest[j:], " \t"+string(p.sep))) != 0 {
			return 0, 0, p.lineErr(b, p.countError(p.countFields(b)))
		}
	}
	return n, e, nil
}

// otherField reads the field of column k at b[i] that numReader.read did
// not: a text field (extra, ignored or beyond the header), a quoted field
// (perhaps a number), a number of another shape than read's (an exponent,
// more than 15 digits), or a numeric field without a number, which is the
// row's error, or (blank or NaN) perhaps padding. It returns the index
// after the field.
func (p *parser) otherField(b []byte, i, k int) (int, error) {
	r := roleIgnore
	if k < len(p.cols) {
		r = p.cols[k].role
	}
	start := i
	var f []byte
	quoted := b[start] == '"'
	if quoted {
		var err error
		if f, i, err = p.quoted(b, start); err != nil {
			return 0, p.lineErr(b, err)
		}
		if r >= roleTime {
			if v, ok := parseNumIn(f, true, &p.numBuf); ok {
				p.rs.v[k] = v
				return i, nil
			}
		}
	} else {
		i = p.textEnd(b, start)
		f = trimRightBlanks(b[start:i])
		if r >= roleTime && len(f) > 0 { // a number of a shape numReader.read leaves
			if v, ok := parseNumIn(f, p.dec == ',', &p.numBuf); ok {
				p.rs.v[k] = v
				return i, nil
			}
		}
	}
	rs := &p.rs
	switch {
	case k >= p.width:
		if len(f) != 0 || quoted {
			if rs.hasBad {
				return 0, p.lineErr(b, p.fieldError(&rs.bad))
			}
			return 0, p.lineErr(b, p.countError(p.countFields(b)))
		}
	case r == roleIgnore, r == roleExtra:
		if !utf8.Valid(f) {
			return 0, errInvalidUTF8
		}
		if r == roleExtra {
			if bytes.IndexByte(f, 0) >= 0 {
				return 0, errNUL
			}
			p.extra[p.cols[k].extra].add(f)
		}
	default:
		blank := len(f) == 0 && !quoted || isNaN(f)
		if !rs.hasBad {
			rs.bad, rs.hasBad = badField{col: k, text: string(f), blank: blank}, true
		}
		if !blank {
			return 0, p.lineErr(b, p.fieldError(&rs.bad))
		}
		if k == p.tempCol {
			rs.tempBlank = true
		}
	}
	return i, nil
}

// isNaN reports whether a field is the text NaN (in any case), which
// spreadsheets and numerical libraries write for a missing value.
func isNaN(f []byte) bool { return len(f) == 3 && strings.EqualFold(string(f), "nan") }

// fieldError is the error of a numeric field without a number.
func (p *parser) fieldError(bad *badField) error {
	name := p.cols[bad.col].name
	if bad.text == "" {
		return fmt.Errorf("column %q is empty", name)
	}
	return fmt.Errorf("column %q: %q is not a finite number", name, shorten(bad.text))
}

// shorten cuts a text quoted in an error to 80 bytes.
func shorten(s string) string {
	const most = 80
	if len(s) <= most {
		return s
	}
	cut := most
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return s[:cut] + "…"
}

// lineErr is err, or the invalid UTF-8 of the line at the start of b where
// it has some (the line's text is then the reason).
func (p *parser) lineErr(b []byte, err error) error {
	e := bytes.IndexAny(b, "\r\n")
	switch {
	case e > MaxLine:
		return fmt.Errorf("line longer than %d bytes (1 MiB)", MaxLine)
	case e >= 0 && !utf8.Valid(b[:e]):
		return errInvalidUTF8
	}
	return err
}

// quoted reads the quoted field starting at b[i] (a '"'). It returns its
// text (aliasing b, or p.quote where a doubled quote had to be made one)
// and the index after the closing quote and any blanks after it, which
// must end the field.
func (p *parser) quoted(b []byte, i int) ([]byte, int, error) {
	var out []byte
	copied := false
	from := i + 1
	for j := i + 1; j < len(b); j++ {
		switch b[j] {
		case '\n', '\r':
			return nil, 0, errors.New("a quote is not closed on this line")
		case '"':
			if j+1 < len(b) && b[j+1] == '"' {
				if !copied {
					out, copied = p.quote[:0], true
				}
				out = append(out, b[from:j+1]...)
				from = j + 2
				j++
				continue
			}
			if copied {
				out = append(out, b[from:j]...)
				p.quote = out
			} else {
				out = b[from:j]
			}
			k := p.skipPad(b, j+1)
			if !isEOL(b, k) && !p.isSep(b[k]) && !(p.sep == ' ' && k > j+1) {
				return nil, 0, errors.New("text after a closing quote")
			}
			return out, k, nil
		}
	}
	return nil, 0, errors.New("a quote is not closed on this line")
}

// textEnd is the index of the separator or line end that ends the
// unquoted field starting at b[i].
func (p *parser) textEnd(b []byte, i int) int {
	if p.sep == ' ' {
		for i < len(b) && b[i] != ' ' && b[i] != '\t' && b[i] != '\n' && b[i] != '\r' {
			i++
		}
		return i
	}
	for i < len(b) && b[i] != p.sep && b[i] != '\n' && b[i] != '\r' {
		i++
	}
	return i
}

// fieldEnds reports whether a number that ends at b[i] ends its field:
// only blanks follow before the separator or the line end.
func (p *parser) fieldEnds(b []byte, i int) bool {
	j := p.skipPad(b, i)
	return isEOL(b, j) || b[j] == p.sep || p.sep == ' ' && j > i
}

// afterField moves past the end of a field at b[i] (blanks, then the
// separator) and reports whether another field follows; at the line end it
// returns the line end's index.
func (p *parser) afterField(b []byte, i int) (int, bool) {
	j := p.skipPad(b, i)
	if isEOL(b, j) {
		return j, false
	}
	if p.sep == ' ' {
		return j, true // the run of blanks was the separator
	}
	return skipBlanks(b, j+1), true // b[j] is the separator
}

// skipPad moves past the blanks that may stand between a field and its
// separator: spaces, and tabs where the separator is not a tab. (After a
// separator, and at the start of a line, skipBlanks moves past spaces and
// tabs alike.)
func (p *parser) skipPad(b []byte, i int) int {
	if p.sep == '\t' {
		for i < len(b) && b[i] == ' ' {
			i++
		}
		return i
	}
	return skipBlanks(b, i)
}

func isEOL(b []byte, i int) bool { return i >= len(b) || b[i] == '\n' || b[i] == '\r' }

func (p *parser) isSep(c byte) bool {
	if p.sep == ' ' {
		return c == ' ' || c == '\t'
	}
	return c == p.sep
}

type field struct {
	b      []byte
	quoted bool
}

// countFields counts the fields of the line at the start of b (for an
// error message).
func (p *parser) countFields(b []byte) int {
	e := bytes.IndexAny(b, "\r\n")
	n := 0
	for i, more := skipBlanks(b[:e], 0), true; more; n++ {
		if i < e && b[i] == '"' {
			var err error
			if _, i, err = p.quoted(b[:e], i); err != nil {
				return n + 1
			}
		} else {
			i = p.textEnd(b[:e], i)
		}
		i, more = p.afterField(b[:e], i)
	}
	return n
}

func (p *parser) countError(n int) error {
	msg := fmt.Sprintf("%d fields where the header has %d columns", n, p.width)
	if p.sep == ',' && n > p.width {
		msg += " (a decimal comma in a comma-separated file? quote such values, or use ';' as the separator)"
	}
	return errors.New(msg)
}

func skipBlanks(b []byte, i int) int {
	for i < len(b) && (b[i] == ' ' || b[i] == '\t') {
		i++
	}
	return i
}

func trimBlanks(b []byte) []byte {
	return trimRightBlanks(b[skipBlanks(b, 0):])
}

func trimRightBlanks(b []byte) []byte {
	for len(b) > 0 && (b[len(b)-1] == ' ' || b[len(b)-1] == '\t') {
		b = b[:len(b)-1]
	}
	return b
}
