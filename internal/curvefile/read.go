package curvefile

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"sync"

	"github.com/undercool-foundry/undercool/internal/thermocouple"
)

// Limits of what Read takes from one file. They bound the memory a file
// can make the reader use: about 16 bytes a reading, plus the kept extra
// columns' text and 24 bytes a value, plus a read buffer of 64 KiB (grown
// to hold one line of up to MaxLine).
const (
	// MaxLine is the longest line Read accepts, in bytes (1 MiB).
	MaxLine = 1 << 20
	// MaxExtraColumns is how many extra columns Read keeps. Further
	// columns are read past (checked as UTF-8 and counted, so that a short
	// row is still an error) and not kept; the curve's Notes say how many
	// and from which line.
	MaxExtraColumns = 64
	// MaxColumns is how many columns of a header Read looks at: the time
	// and the temperature are among them. Further columns are read past
	// like the extra columns not kept.
	MaxColumns = 1024
	// MaxReadings is the most readings Read takes from one file (4,194,304:
	// 70 minutes at 1 kHz; a cup is minutes long). A longer file is an
	// error naming the line.
	MaxReadings = 1 << 22
)

// ParseError is an unreadable line: it names the file and the line
// (1-based) as "name:LINE: what is wrong".
type ParseError struct {
	File string
	Line int
	Err  error
}

func (e *ParseError) Error() string { return fmt.Sprintf("%s:%d: %v", e.File, e.Line, e.Err) }

func (e *ParseError) Unwrap() error { return e.Err }

// ReadFile reads the curve file at path; errors name the path. Only a
// regular file is read: a directory, a FIFO, a device or a socket is
// refused with an error naming it, from its file status and before it is
// opened for reading, so that a FIFO without a writer cannot block (to read
// a stream, give it to Read). The file is then opened without waiting
// (O_NONBLOCK where there is one) and checked again, in case it was
// replaced in between.
func ReadFile(path string) (*Curve, error) { return Options{}.ReadFile(path) }

// Read reads one curve file; name labels it in errors (usually the path).
// Options.Read reads one with named columns and units.
//
// The format and the dialects accepted from other loggers:
//
//   - UTF-8 text (a byte-order mark is dropped); lines end with LF, CR LF
//     or a lone CR; no line is longer than MaxLine.
//   - "# key: value" lines are metadata, kept in file order in Curve.Meta,
//     wherever they appear (usually before the header). Keys are trimmed
//     and lower-cased and hold only letters, digits, spaces, '_', '-' and
//     '.'; values are made safe with CleanValue (control characters shown
//     as escapes, at most MaxMetaValue bytes). Any other line starting with
//     '#' is a comment: passed over and counted in Curve.Skipped, like
//     blank lines.
//   - A header row, then one reading a line. The separator is found from
//     the header (or the first data line): a tab, else ';', else ',', else
//     runs of spaces. Fields may be quoted with double quotes ("" inside a
//     quoted field is one quote).
//   - A decimal comma is accepted where the separator is not a comma, and
//     in quoted fields of comma-separated files; an unquoted decimal comma
//     in a comma-separated file is ambiguous and gives a clear error.
//     Numbers are read exactly: each is the float64 nearest to its text,
//     as strconv.ParseFloat gives it.
//   - Header names are matched without regard to case, spaces or unit
//     decorations: "time_s", "Time [s]", "t (s)", "time/ms" (milliseconds are
//     converted to s) name the time; "temp_c", "Temperature (°C)", "T degC"
//     the temperature; "emf_mv", "EMF [mV]" a raw thermocouple EMF; "cj_c",
//     "cold junction (°C)" its cold-junction temperature. Other columns are
//     kept as text in Curve.Extra (at most MaxExtraColumns of them). A
//     header that starts with the project's own "time_s,temp_c" keeps
//     every further column as an extra, whatever its name. Temperatures in
//     °F or K ("Temp [°F]", "temp_f", "T [K]", "CJ (°F)") are converted to
//     °C on reading, and the metadata gain "converted_from: °F" (or K).
//   - Without a header, the first reading line holds two numbers, read as
//     seconds and °C; where the first column goes back in time and the
//     second only rises, the second is the time and the first the
//     temperature (a logger that writes the temperature first), and the
//     curve's Notes say so.
//   - Rows at the end of the file whose temperature is blank or NaN are
//     padding (a spreadsheet whose columns end at different rows): they
//     are dropped, counted in Curve.Skipped and named in Curve.Notes. A
//     blank or NaN temperature followed by further readings is an error.
//   - An EMF column is converted to °C on reading (thermocouple package,
//     ITS-90 reference functions) with the type from "# thermocouple: K"
//     and the cold junction from a cj_c column or "# cold_junction_c: 25";
//     the raw mV are kept as the extra column "emf_mv" (and a cj_c column as
//     "cj_c"). A temperature column, when present, wins and the EMF column
//     is kept as an extra.
//
// Anything else is an error naming the file and line (*ParseError):
// non-numeric, NaN or infinite values, a wrong number of fields, invalid
// UTF-8, an over-long line, an empty file, a header without data, more than
// MaxReadings readings. Errors about the columns end with ColumnHint. Time
// going backwards or repeating is kept as read: judging it is the analysis
// core's job.
//
// Read makes one pass over the bytes, reading them in blocks of 64 KiB,
// and allocates nothing per line: numbers are parsed where they lie, and
// extra columns' text is gathered per column and cut into strings at the
// end.
func Read(r io.Reader, name string) (*Curve, error) { return Options{}.Read(r, name) }

// sizeHint is the number of bytes r will give, where r can tell, else 0;
// exact is true where that is all it will give (an in-memory reader's
// length), false for a file's size, which says nothing of how much of it
// was read before.
func sizeHint(r io.Reader) (size int, exact bool) {
	switch v := r.(type) {
	case interface{ Len() int }:
		return v.Len(), true
	case *os.File:
		if fi, err := v.Stat(); err == nil && fi.Mode().IsRegular() && fi.Size() <= math.MaxInt32 {
			return int(fi.Size()), false
		}
	}
	return 0, false
}

// bufPool holds read buffers between files (analyze reads thousands).
var bufPool = sync.Pool{New: func() any { b := make([]byte, blockSize); return &b }}

// blockSize is the size of one read.
const blockSize = 64 << 10

// read reads the curve from r. size is the number of bytes r holds, where
// known (else 0); exact says that r ends after them.
func read(r io.Reader, name string, opt Options, size int, exact bool) (*Curve, error) {
	bp := bufPool.Get().(*[]byte)
	p := parser{c: &Curve{Name: name}, opt: opt, in: input{r: r, buf: *bp, left: -1}}
	if exact {
		p.in.left = size
	}
	defer func() {
		if cap(p.in.buf) <= 4*blockSize {
			*bp = p.in.buf[:cap(p.in.buf)]
		}
		bufPool.Put(bp)
	}()
	p.size = size
	for {
		ok, err := p.in.more()
		if err != nil {
			return nil, &ParseError{File: name, Line: p.line + 1, Err: err}
		}
		if !ok {
			break
		}
		if err := p.lines(); err != nil {
			var pe *ParseError
			if errors.As(err, &pe) {
				return nil, pe // names its own line (a metadata or padding line)
			}
			return nil, &ParseError{File: name, Line: p.line, Err: err}
		}
	}
	return p.finish()
}

// presize makes room for the readings a file of p.size bytes can hold,
// judged from the length of the row at the start of rest (the first after
// the header), so that appending them does not copy them again and again.
// It reports false where rest does not hold that whole row.
func (p *parser) presize(rest []byte) bool {
	n := bytes.IndexByte(rest, '\n') + 1
	if n == 0 {
		return false
	}
	if n = min(p.size/max(n, 12)+16, MaxReadings); n > cap(p.num.time) {
		p.num.time = append(make([]float64, 0, n), p.num.time...)
		p.num.temp = append(make([]float64, 0, n), p.num.temp...)
	}
	return true
}

// lines reads the whole lines in the input buffer. The usual reading
// lines (numbers only, in s and °C: parser.fast) are taken by
// numReader.read itself, as many as follow each other in one call; the
// rest of a line that is not all numbers goes on in row from where the
// numbers stopped; other lines go to lineAt.
func (p *parser) lines() error {
	in := &p.in
	b := in.buf[in.pos:in.lim]
	i := 0
	if p.unsized && p.cols != nil {
		p.unsized = !p.presize(b)
	}
	for i < len(b) && p.cols == nil { // up to the header
		p.line++
		n, err := p.lineAt(b[i:])
		if err != nil {
			return err
		}
		if i += n; p.cols != nil && p.size > 0 {
			p.unsized = !p.presize(b[i:])
		}
	}
	for i < len(b) {
		// The rows numReader.read takes whole (all of them, usually), then
		// the one it stops at.
		before := len(p.num.time)
		p.num.rows = p.fast
		p.num.room = min(cap(p.num.time), cap(p.num.temp), MaxReadings)
		k, j, eol := p.num.read(b, i, p.lead)
		p.num.rows = -1 // row's calls read one row
		row := p.num.row
		if p.line += len(p.num.time) - before; row >= len(b) {
			i = row
			break
		}
		p.line++
		n, err := p.row(b[row:], k, j-row, eol)
		if err != nil {
			return err
		}
		i = row + n
	}
	in.pos += i
	return nil
}

// extraText gathers one extra column's values as one text and the end of
// each value in it.
type extraText struct {
	text []byte
	ends []int
}

func (x *extraText) add(v []byte) {
	x.text = append(x.text, v...)
	x.ends = append(x.ends, len(x.text))
}

// padding is the run of rows without a temperature seen last.
type padding struct {
	first, last int   // lines
	rows        int   // rows in the run
	err         error // what the first row's error would be
	col         string
}

type parser struct {
	size       int  // bytes the input holds, where known (else 0)
	unsized    bool // presize still waits for a whole first row
	c          *Curve
	opt        Options
	in         input
	line       int
	headerLine int
	sep        byte // '\t', ';', ',' or ' ' (runs of blanks)
	dec        byte // decimal mark besides '.' in unquoted numbers: ',' unless sep is ','
	cols       []column
	width      int // fields of a row (cols holds the first ones, up to the last kept)
	extra      []extraText
	run        []int // for each column, how many numeric columns start there (0: not numeric)
	timeCol    int   // the time column
	timeScale  float64
	tempCol    int // the temperature column, or the EMF column of an EMF file
	tempUnit   tempUnit
	emf        bool // converting an EMF column
	tc         thermocouple.Type
	cjMeta     float64
	cjCol      int // the cold-junction column of an EMF file, or -1
	// fast is the width of a row that numReader.read takes whole as a
	// reading, all its fields numbers read into lead: p.width where the
	// time is in s and the temperature in °C (nothing to convert), every
	// column is a number and no padding run is open; else -1 (every row
	// goes to row and endRow).
	fast      int
	lead      []float64 // rs.v[:run[0]]: the numbers at the start of a row
	metaLines []int     // the line of each of c.Meta
	swapCheck bool      // headerless two columns: see whether they are swapped
	pad       padding
	rs        rowState  // the row being read
	num       numReader // the numbers of a row, into rs.v
	numBuf    []byte    // a number otherField reads, and its line end
	quote     []byte    // a quoted field with doubled quotes, unquoted
}

func (p *parser) note(format string, args ...any) {
	p.c.Notes = append(p.c.Notes, fmt.Sprintf(format, args...))
}

// finish checks what the whole file gave and makes the curve.
func (p *parser) finish() (*Curve, error) {
	c := p.c
	switch {
	case p.line == 0:
		return nil, &ParseError{File: c.Name, Line: 1, Err: errors.New("empty file")}
	case p.cols == nil:
		return nil, &ParseError{File: c.Name, Line: p.line, Err: errors.New("no header and no readings")}
	case len(p.num.time) == 0 && p.pad.rows > 0:
		return nil, &ParseError{File: c.Name, Line: p.pad.first, Err: p.pad.err}
	case len(p.num.time) == 0:
		return nil, &ParseError{File: c.Name, Line: p.headerLine, Err: errors.New("a header but no readings after it")}
	}
	if p.pad.rows > 0 {
		c.Skipped += p.pad.rows
		name := "temp_c"
		for _, col := range p.cols {
			if col.role == roleTemp || col.role == roleEMF {
				name = col.name
			}
		}
		p.note("%s:%d-%d: the last %d rows have no temperature in column %q (blank or NaN: padding), not read", c.Name, p.pad.first, p.pad.last, p.pad.rows, name)
	}
	if p.swapCheck && swapped(p.num.time, p.num.temp) {
		p.num.time, p.num.temp = p.num.temp, p.num.time
		p.note("%s:%d: no header, and the first column goes back while the second only rises: read the second column as the time (s) and the first as the temperature (°C) (--time-column and --temp-column name them otherwise)", c.Name, p.headerLine)
	}
	c.Time, c.Temp = p.num.time, p.num.temp
	for i := range p.extra {
		x := &p.extra[i]
		ends := x.ends[:min(len(x.ends), len(c.Time))] // padding rows dropped
		text := string(x.text)
		vals := make([]string, len(ends))
		from := 0
		for j, e := range ends {
			vals[j] = text[from:e]
			from = e
		}
		c.Extra[i].Values = vals
	}
	return c, nil
}

// swapped reports whether a headerless file's first column (read as the
// time) goes back at least once while its second only rises: a logger
// that writes the temperature first.
func swapped(first, second []float64) bool {
	if len(first) < 3 || !(second[len(second)-1] > second[0]) {
		return false
	}
	back := false
	for i := 1; i < len(first); i++ {
		if second[i] < second[i-1] {
			return false
		}
		back = back || first[i] < first[i-1]
	}
	return back
}
