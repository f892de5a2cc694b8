package curvefile

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/undercool-foundry/undercool/internal/thermocouple"
)

// MaxLine is the longest line Read accepts, in bytes (1 MiB).
const MaxLine = 1 << 20

// ParseError is an unreadable line: it names the file and the line
// (1-based) as "name:LINE: what is wrong".
type ParseError struct {
	File string
	Line int
	Err  error
}

func (e *ParseError) Error() string { return fmt.Sprintf("%s:%d: %v", e.File, e.Line, e.Err) }

func (e *ParseError) Unwrap() error { return e.Err }

// ReadFile reads the curve file at path; errors name the path.
func ReadFile(path string) (*Curve, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("curvefile: %w", err)
	}
	defer f.Close()
	return Read(f, path)
}

// Read reads one curve file; name labels it in errors (usually the path).
//
// The format and the dialects accepted from other loggers:
//
//   - UTF-8 text (a byte-order mark is dropped); lines end with LF, CR LF
//     or a lone CR; no line is longer than MaxLine.
//   - "# key: value" lines are metadata, kept in file order in Curve.Meta,
//     wherever they appear (usually before the header). Keys are trimmed
//     and lower-cased and hold only letters, digits, spaces, '_', '-' and
//     '.'; values are trimmed. Any other line starting with '#' is a
//     comment: passed over and counted in Curve.Skipped, like blank lines.
//   - A header row, then one reading a line. The separator is found from
//     the header (or the first data line): a tab, else ';', else ',', else
//     runs of spaces. Fields may be quoted with double quotes ("" inside a
//     quoted field is one quote).
//   - A decimal comma is accepted where the separator is not a comma, and
//     in quoted fields of comma-separated files; an unquoted decimal comma
//     in a comma-separated file is ambiguous and gives a clear error.
//   - Header names are matched without regard to case, spaces or unit
//     decorations: "time_s", "Time [s]", "t (s)", "time/ms" (milliseconds are
//     converted to s) name the time; "temp_c", "Temperature (°C)", "T degC"
//     the temperature; "emf_mv", "EMF [mV]" a raw thermocouple EMF; "cj_c",
//     "cold junction (°C)" its cold-junction temperature. Other columns are
//     kept as text in Curve.Extra. Temperatures in °F or K ("Temp [°F]",
//     "temp_f", "T [K]", "CJ (°F)") are converted to °C on reading, and the
//     metadata gain "converted_from: °F" (or K).
//   - Without a header, the first reading line holds two numbers, read as
//     seconds and °C.
//   - An EMF column is converted to °C on reading (thermocouple package,
//     ITS-90 reference functions) with the type from "# thermocouple: K"
//     and the cold junction from a cj_c column or "# cold_junction_c: 25";
//     the raw mV are kept as the extra column "emf_mv" (and a cj_c column as
//     "cj_c"). A temperature column, when present, wins and the EMF column
//     is kept as an extra.
//
// Anything else is an error naming the file and line (*ParseError):
// non-numeric, NaN or infinite values, a wrong number of fields, invalid
// UTF-8, an over-long line, an empty file, a header without data. Time
// going backwards or repeating is kept as read: judging it is the analysis
// core's job.
func Read(r io.Reader, name string) (*Curve, error) {
	p := parser{c: &Curve{Name: name}}
	if n := sizeHint(r); n > 0 {
		// Lines of a cup log are rarely shorter than 12 bytes.
		p.time = make([]float64, 0, min(n/12+1, 1<<22))
		p.temp = make([]float64, 0, cap(p.time))
	}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 16*1024), MaxLine+2)
	sc.Split(splitLines)
	for sc.Scan() {
		p.line++
		if err := p.feed(sc.Bytes()); err != nil {
			var pe *ParseError
			if errors.As(err, &pe) {
				return nil, pe // already names its own line (a metadata line)
			}
			return nil, &ParseError{File: name, Line: p.line, Err: err}
		}
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			err = fmt.Errorf("line longer than %d bytes (1 MiB)", MaxLine)
		}
		return nil, &ParseError{File: name, Line: p.line + 1, Err: err}
	}
	switch {
	case p.line == 0:
		return nil, &ParseError{File: name, Line: 1, Err: errors.New("empty file")}
	case p.cols == nil:
		return nil, &ParseError{File: name, Line: p.line, Err: errors.New("no header and no readings")}
	case len(p.time) == 0:
		return nil, &ParseError{File: name, Line: p.headerLine, Err: errors.New("a header but no readings after it")}
	}
	p.c.Time, p.c.Temp = p.time, p.temp
	return p.c, nil
}

// sizeHint is the number of bytes r will give, where r can tell (a file,
// or an in-memory reader), else 0.
func sizeHint(r io.Reader) int {
	switch v := r.(type) {
	case interface{ Len() int }:
		return v.Len()
	case *os.File:
		if fi, err := v.Stat(); err == nil && fi.Mode().IsRegular() {
			return int(min(fi.Size(), math.MaxInt32))
		}
	}
	return 0
}

// splitLines is a bufio.SplitFunc for LF, CR LF and lone CR line ends.
func splitLines(data []byte, atEOF bool) (int, []byte, error) {
	if i := bytes.IndexByte(data, '\n'); i >= 0 {
		if j := bytes.IndexByte(data[:i], '\r'); j >= 0 {
			if j == i-1 {
				return i + 1, data[:j], nil
			}
			return j + 1, data[:j], nil
		}
		return i + 1, data[:i], nil
	}
	if j := bytes.IndexByte(data, '\r'); j >= 0 && (j < len(data)-1 || atEOF) {
		return j + 1, data[:j], nil
	}
	if atEOF && len(data) > 0 {
		return len(data), data, nil
	}
	return 0, nil, nil
}

type role uint8

const (
	roleExtra role = iota
	roleTime
	roleTemp
	roleEMF
	roleCJ
)

type column struct {
	role  role
	name  string
	scale float64  // time unit to s
	unit  tempUnit // temperature unit (temperature and cold-junction columns)
	extra int      // index into Curve.Extra for roleExtra (and kept EMF/CJ)
}

// tempUnit is the unit of a temperature column; its readings are converted
// to °C as they are read.
type tempUnit byte

const (
	unitC tempUnit = iota
	unitF
	unitK
)

// toC converts a reading in the unit to °C: t/°C = (t/°F − 32)/1.8 (NIST
// SP 811, 2008 edition, appendix B.8; computed as ·5/9, exact for whole
// °F steps of 9), t90/°C = T90/K − 273.15 (ITS-90, Preston-Thomas,
// Metrologia 27 (1990) 3).
func (u tempUnit) toC(v float64) float64 {
	switch u {
	case unitF:
		return (v - 32) * 5 / 9
	case unitK:
		return v - 273.15
	}
	return v
}

// String is the unit's symbol.
func (u tempUnit) String() string {
	switch u {
	case unitF:
		return "°F"
	case unitK:
		return "K"
	}
	return "°C"
}

type field struct {
	b      []byte
	quoted bool
}

type parser struct {
	c          *Curve
	time, temp []float64 // readings so far (moved into c at the end)
	line       int
	headerLine int
	sep        byte // '\t', ';', ',' or ' ' (runs of blanks)
	cols       []column
	width      int  // number of columns
	emf        bool // converting an EMF column
	tc         thermocouple.Type
	cjMeta     float64
	cjCol      bool
	metaLine   map[string]int
}

func (p *parser) feed(line []byte) error {
	if len(line) > MaxLine {
		return fmt.Errorf("line longer than %d bytes (1 MiB)", MaxLine)
	}
	if p.line == 1 {
		if bytes.HasPrefix(line, []byte{0xFF, 0xFE}) || bytes.HasPrefix(line, []byte{0xFE, 0xFF}) {
			return errors.New("UTF-16 text; save the file as UTF-8")
		}
		line = bytes.TrimPrefix(line, []byte("\xEF\xBB\xBF"))
	}
	if !utf8.Valid(line) {
		return errors.New("invalid UTF-8 text; save the file as UTF-8")
	}
	line = trimBlanks(line)
	if len(line) == 0 {
		p.c.Skipped++
		return nil
	}
	if line[0] == '#' {
		p.comment(line[1:])
		return nil
	}
	if p.cols == nil {
		if bytes.IndexByte(line, 0) >= 0 {
			return errors.New("NUL bytes in the header: UTF-16 or binary data? save the file as UTF-8 text")
		}
		return p.first(line)
	}
	return p.reading(line)
}

// comment keeps a "# key: value" line as metadata and counts any other
// '#' line as skipped.
func (p *parser) comment(body []byte) {
	s := string(trimBlanks(body))
	k, v, ok := strings.Cut(s, ":")
	k = strings.ToLower(strings.TrimSpace(k))
	if !ok || !validKey(k) {
		p.c.Skipped++
		return
	}
	p.c.Meta = append(p.c.Meta, Meta{Key: k, Value: strings.TrimSpace(v)})
	if p.metaLine == nil {
		p.metaLine = map[string]int{}
	}
	if _, seen := p.metaLine[k]; !seen {
		p.metaLine[k] = p.line
	}
}

func validKey(k string) bool {
	if k == "" || len(k) > 64 {
		return false
	}
	for _, r := range k {
		if !unicode.IsLetter(r) && !unicode.IsDigit(r) && !strings.ContainsRune("_-. ", r) {
			return false
		}
	}
	return true
}

// first handles the first line that is neither blank nor '#': the header,
// or the first reading of a headerless two-column file.
func (p *parser) first(line []byte) error {
	p.sep = detectSep(line)
	fields, err := p.split(line)
	if err != nil {
		return err
	}
	numeric := true
	for _, f := range fields {
		if _, ok := parseNum(f.b, f.quoted || p.sep != ','); !ok {
			numeric = false
			break
		}
	}
	if numeric {
		if len(fields) != 2 {
			msg := fmt.Sprintf("no header row, and %d numbers on the first reading line (a file without a header must have two columns: seconds, °C)", len(fields))
			if p.sep == ',' {
				msg += "; with comma separators a decimal comma must be quoted, or use ';' as the separator"
			}
			return errors.New(msg)
		}
		p.cols = []column{{role: roleTime, name: "time_s", scale: 1}, {role: roleTemp, name: "temp_c"}}
		p.width = 2
		p.headerLine = p.line
		return p.reading(line)
	}
	p.headerLine = p.line
	return p.header(fields)
}

func (p *parser) header(fields []field) error {
	for len(fields) > 0 && len(fields[len(fields)-1].b) == 0 {
		fields = fields[:len(fields)-1] // trailing separator
	}
	cols := make([]column, len(fields))
	var first, second [roleCJ + 1]int // column index + 1 of the first and second column of each role
	for i, f := range fields {
		name := strings.TrimSpace(string(f.b))
		if name == "" {
			return fmt.Errorf("column %d of the header has no name", i+1)
		}
		r, scale, unit := classify(name)
		cols[i] = column{role: r, name: name, scale: scale, unit: unit}
		switch {
		case r == roleExtra:
		case first[r] == 0:
			first[r] = i + 1
		case second[r] == 0:
			second[r] = i + 1
		}
	}
	dup := func(r role, what string) error {
		if second[r] == 0 {
			return nil
		}
		return fmt.Errorf("two %s columns in the header: %q and %q", what, cols[first[r]-1].name, cols[second[r]-1].name)
	}
	if err := errors.Join(dup(roleTime, "time"), dup(roleTemp, "temperature")); err != nil {
		return err
	}
	if first[roleTime] == 0 {
		return fmt.Errorf("no time column (time_s) in the header")
	}
	switch {
	case first[roleTemp] != 0:
		if u := cols[first[roleTemp]-1].unit; u != unitC {
			p.c.Set("converted_from", u.String())
		}
		// A temperature column wins: EMF and cold-junction columns are kept as text.
		for i := range cols {
			if cols[i].role == roleEMF || cols[i].role == roleCJ {
				cols[i].role = roleExtra
			}
		}
	case first[roleEMF] != 0:
		if err := errors.Join(dup(roleEMF, "EMF"), dup(roleCJ, "cold-junction")); err != nil {
			return err
		}
		if err := p.setupEMF(first[roleCJ] != 0); err != nil {
			return err
		}
		if j := first[roleCJ]; j != 0 && cols[j-1].unit != unitC {
			p.c.Set("converted_from", cols[j-1].unit.String())
		}
		cols[first[roleEMF]-1].name = "emf_mv"
		if j := first[roleCJ]; j != 0 {
			cols[j-1].name = "cj_c"
		}
	default:
		for _, c := range cols {
			if base, unit := splitUnit(strings.ToLower(c.name)); tempNames[base] || (base == "t" && unit != "") {
				return fmt.Errorf("column %q: temperatures must be in °C, °F or K (unit %q not accepted)", c.name, unit)
			}
		}
		return fmt.Errorf("no temperature column (temp_c, or emf_mv with '# thermocouple:') in the header")
	}
	for i := range cols {
		if c := &cols[i]; c.role != roleTime && c.role != roleTemp {
			c.extra = len(p.c.Extra)
			p.c.Extra = append(p.c.Extra, Column{Name: c.name})
		}
	}
	p.cols, p.width = cols, len(cols)
	return nil
}

// setupEMF finds the thermocouple type and the cold junction for an EMF
// column.
func (p *parser) setupEMF(cjColumn bool) error {
	typ := p.c.Get("thermocouple")
	if typ == "" {
		return errors.New("an emf_mv column needs a '# thermocouple: TYPE' line before the header (types B E J K N R S T)")
	}
	tc, err := thermocouple.Lookup(typ)
	if err != nil {
		return &ParseError{File: p.c.Name, Line: p.metaLine["thermocouple"], Err: err}
	}
	p.tc, p.emf = tc, true
	if cjColumn {
		p.cjCol = true
		return nil
	}
	for _, k := range []string{"cold_junction_c", "cj_c"} {
		if v := p.c.Get(k); v != "" {
			cj, ok := parseNum([]byte(v), true)
			if !ok {
				return &ParseError{File: p.c.Name, Line: p.metaLine[k], Err: fmt.Errorf("%s %q is not a number", k, v)}
			}
			p.cjMeta = cj
			return nil
		}
	}
	return errors.New("an emf_mv column needs the cold-junction temperature: a cj_c column or a '# cold_junction_c: 25' line before the header")
}

// reading parses one reading line.
func (p *parser) reading(line []byte) error {
	var emf, cj float64
	n := 0 // fields seen
	for more := true; more; n++ {
		var f field
		var err error
		f, line, more, err = p.next(line)
		if err != nil {
			return err
		}
		if n >= p.width {
			if len(f.b) != 0 || f.quoted {
				return p.countError(n + 1 + p.countRest(line, more))
			}
			continue // trailing separators
		}
		c := &p.cols[n]
		if c.role == roleExtra {
			p.c.Extra[c.extra].Values = append(p.c.Extra[c.extra].Values, string(f.b))
			continue
		}
		if len(f.b) == 0 {
			return fmt.Errorf("column %q is empty", c.name)
		}
		v, ok := parseNum(f.b, f.quoted || p.sep != ',')
		if !ok {
			return fmt.Errorf("column %q: %q is not a finite number", c.name, f.b)
		}
		switch c.role {
		case roleTime:
			if c.scale != 1 {
				v /= c.scale
			}
			p.time = append(p.time, v)
		case roleTemp:
			p.temp = append(p.temp, c.unit.toC(v))
		case roleEMF:
			emf = v
			p.c.Extra[c.extra].Values = append(p.c.Extra[c.extra].Values, strconv.FormatFloat(v, 'f', -1, 64))
		case roleCJ:
			cj = c.unit.toC(v)
			v = cj // kept as cj_c, °C
			p.c.Extra[c.extra].Values = append(p.c.Extra[c.extra].Values, strconv.FormatFloat(v, 'f', -1, 64))
		}
	}
	if n < p.width {
		return p.countError(n)
	}
	if p.emf {
		if !p.cjCol {
			cj = p.cjMeta
		}
		t, err := p.tc.Temp(emf, cj)
		if err != nil {
			return err
		}
		p.temp = append(p.temp, t)
	}
	return nil
}

// countRest counts the fields left on a line (for an error message).
func (p *parser) countRest(line []byte, more bool) int {
	n := 0
	for more {
		var err error
		_, line, more, err = p.next(line)
		if err != nil {
			break
		}
		n++
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

// detectSep picks the separator of a header or first reading line,
// ignoring quoted text: a tab, else ';', else ',', else blanks.
func detectSep(line []byte) byte {
	var tab, semi, comma bool
	inq := false
	for _, b := range line {
		switch {
		case b == '"':
			inq = !inq
		case inq:
		case b == '\t':
			tab = true
		case b == ';':
			semi = true
		case b == ',':
			comma = true
		}
	}
	switch {
	case tab:
		return '\t'
	case semi:
		return ';'
	case comma:
		return ','
	}
	return ' '
}

// split cuts a line into trimmed fields, unquoting quoted ones. The
// fields alias line (or fresh memory for fields with doubled quotes).
func (p *parser) split(line []byte) ([]field, error) {
	var out []field
	for more := true; more; {
		var f field
		var err error
		f, line, more, err = p.next(line)
		if err != nil {
			return nil, err
		}
		out = append(out, f)
	}
	return out, nil
}

// next cuts the first field off line; more reports that a separator
// followed it, so another (perhaps empty) field comes.
func (p *parser) next(line []byte) (f field, rest []byte, more bool, err error) {
	line = trimLeftBlanks(line)
	if len(line) > 0 && line[0] == '"' {
		val, after, err := unquote(line)
		if err != nil {
			return field{}, nil, false, err
		}
		f = field{b: val, quoted: true}
		line = trimLeftBlanks(after)
		if len(line) > 0 && !p.isSep(line[0]) {
			return field{}, nil, false, errors.New("text after a closing quote")
		}
	} else {
		i := p.indexSep(line)
		if i < 0 {
			i = len(line)
		}
		f = field{b: trimBlanks(line[:i])}
		line = line[i:]
	}
	if len(line) == 0 {
		return f, nil, false, nil
	}
	line = line[1:] // the separator
	if p.sep == ' ' {
		line = trimBlanks(line)
		return f, line, len(line) > 0, nil
	}
	return f, line, true, nil
}

func (p *parser) isSep(b byte) bool {
	if p.sep == ' ' {
		return b == ' ' || b == '\t'
	}
	return b == p.sep
}

func (p *parser) indexSep(line []byte) int {
	if p.sep == ' ' {
		return bytes.IndexAny(line, " \t")
	}
	return bytes.IndexByte(line, p.sep)
}

// unquote reads a quoted field at the start of s and returns its value and
// the rest of s after the closing quote.
func unquote(s []byte) (val, rest []byte, err error) {
	var buf []byte
	start := 1
	for i := 1; i < len(s); i++ {
		if s[i] != '"' {
			continue
		}
		if i+1 < len(s) && s[i+1] == '"' {
			buf = append(buf, s[start:i+1]...)
			start = i + 2
			i++
			continue
		}
		if buf == nil {
			return s[1:i], s[i+1:], nil
		}
		return append(buf, s[start:i]...), s[i+1:], nil
	}
	return nil, nil, errors.New("a quote is not closed on this line")
}

func trimBlanks(b []byte) []byte {
	b = trimLeftBlanks(b)
	for len(b) > 0 && (b[len(b)-1] == ' ' || b[len(b)-1] == '\t') {
		b = b[:len(b)-1]
	}
	return b
}

func trimLeftBlanks(b []byte) []byte {
	for len(b) > 0 && (b[0] == ' ' || b[0] == '\t') {
		b = b[1:]
	}
	return b
}

// classify gives a header name's role, for the time its unit in s, and for
// a temperature (or cold junction) its unit.
func classify(name string) (role, float64, tempUnit) {
	base, unit := splitUnit(strings.ToLower(strings.TrimSpace(name)))
	switch unit {
	case "", "s", "sec", "secs", "second", "seconds":
		if timeNames[base] {
			return roleTime, 1, unitC
		}
	case "ms":
		if timeNames[base] {
			return roleTime, 1000, unitC
		}
	case "min":
		if timeNames[base] {
			return roleTime, 1.0 / 60, unitC
		}
	}
	if tu, ok := tempUnits[unit]; ok || unit == "" {
		switch {
		case tempNames[base] || (base == "t" && unit != ""):
			return roleTemp, 0, tu
		case cjNames[base]:
			return roleCJ, 0, tu
		}
	}
	if unit == "mv" && (emfNames[base] || base == "") {
		return roleEMF, 0, unitC
	}
	if unit == "" && base == "mv" {
		return roleEMF, 0, unitC
	}
	return roleExtra, 0, unitC
}

var (
	timeNames = map[string]bool{"time": true, "t": true, "elapsed": true, "elapsed_time": true, "seconds": true}
	tempNames = map[string]bool{"temp": true, "temperature": true}
	emfNames  = map[string]bool{"emf": true, "e": true, "voltage": true, "u": true, "thermocouple": true}
	cjNames   = map[string]bool{"cj": true, "cjc": true, "cold_junction": true, "reference_junction": true, "ref_junction": true}
	// tempUnits are the temperature units read (cleaned, see cleanUnit)
	tempUnits = map[string]tempUnit{"c": unitC, "celsius": unitC, "f": unitF, "fahrenheit": unitF, "k": unitK, "kelvin": unitK}
)

// splitUnit separates a lower-cased header name into a base name and a
// unit: "temp [°c]", "temp (degc)", "t/s", "temp_c", "temp °c",
// "temperature_degc" all give a base and a unit.
func splitUnit(n string) (base, unit string) {
	base = n
	switch {
	case strings.HasSuffix(n, ")") || strings.HasSuffix(n, "]"):
		open := "("
		if n[len(n)-1] == ']' {
			open = "["
		}
		if i := strings.LastIndex(n, open); i >= 0 {
			base, unit = n[:i], n[i+1:len(n)-1]
		}
	case strings.Contains(n, "/"):
		i := strings.LastIndex(n, "/")
		base, unit = n[:i], n[i+1:]
	default:
		if i := strings.LastIndexAny(n, "_ "); i >= 0 && isUnit(n[i+1:]) {
			base, unit = n[:i], n[i+1:]
		} else {
			for _, u := range []string{"°c", "℃", "degc", "°f", "℉", "degf"} {
				if strings.HasSuffix(n, u) && len(n) > len(u) {
					base, unit = n[:len(n)-len(u)], u
					break
				}
			}
		}
	}
	return cleanBase(base), cleanUnit(unit)
}

func isUnit(u string) bool {
	switch u = cleanUnit(u); u {
	case "s", "ms", "min", "mv", "sec":
		return true
	}
	_, temp := tempUnits[u]
	return temp
}

// unitCleaner drops degree signs, "deg", blanks and dots from a unit.
var unitCleaner = strings.NewReplacer("°", "", "º", "", "℃", "c", "℉", "f", "deg", "", " ", "", ".", "")

func cleanUnit(u string) string { return unitCleaner.Replace(u) }

func cleanBase(b string) string {
	b = strings.Trim(b, " _-.")
	return strings.Join(strings.Fields(b), "_")
}

// scanDigits reads the run of decimal digits of b from i into mant,
// keeping at most 19 significant digits (nd counts them; leading zeros do
// not count). It returns the index after the run, the new mant and nd, the
// digits seen and how many of them were dropped.
func scanDigits(b []byte, i int, mant uint64, nd int) (int, uint64, int, int, int) {
	seen, dropped := 0, 0
	for ; i < len(b); i++ {
		c := b[i] - '0'
		if c > 9 {
			break
		}
		seen++
		if nd < 19 {
			mant = mant*10 + uint64(c)
			if mant != 0 {
				nd++
			}
		} else {
			dropped++
		}
	}
	return i, mant, nd, seen, dropped
}

// pow10 holds the exactly representable powers of ten used by parseNum's
// fast path.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseNum reads a decimal number: [+-]digits[.digits][e[+-]digits], with
// ',' as the decimal mark too where comma is true. It refuses NaN,
// infinities, hexadecimal and anything that does not fit a float64 finitely.
//
// Numbers of at most 15 significant digits with a decimal exponent within
// ±22 are converted by one exact multiplication or division (Clinger's
// fast path, correctly rounded); others go to strconv.ParseFloat, so every
// result is the nearest float64 to the text.
func parseNum(b []byte, comma bool) (float64, bool) {
	i, n := 0, len(b)
	neg := false
	if i < n && (b[i] == '+' || b[i] == '-') {
		neg = b[i] == '-'
		i++
	}
	var mant uint64
	nd := 0 // significant digits kept in mant
	i, mant, nd, intDigits, dropped := scanDigits(b, i, mant, nd)
	exp := dropped // decimal exponent
	trunc := dropped > 0
	digits := intDigits
	hasComma := false
	if i < n && (b[i] == '.' || (b[i] == ',' && comma)) {
		hasComma = b[i] == ','
		var frac int
		i, mant, nd, frac, dropped = scanDigits(b, i+1, mant, nd)
		exp -= frac - dropped
		trunc = trunc || dropped > 0
		digits += frac
	}
	if digits == 0 {
		return 0, false
	}
	if i < len(b) {
		if b[i] != 'e' && b[i] != 'E' {
			return 0, false
		}
		i++
		eneg := false
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			eneg = b[i] == '-'
			i++
		}
		if i == len(b) {
			return 0, false
		}
		e := 0
		for ; i < len(b); i++ {
			c := b[i]
			if c < '0' || c > '9' {
				return 0, false
			}
			if e < 1_000_000 {
				e = e*10 + int(c-'0')
			}
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	if !trunc && nd <= 15 && exp >= -22 && exp <= 22 {
		f := float64(mant)
		if exp < 0 {
			f /= pow10[-exp]
		} else {
			f *= pow10[exp]
		}
		if neg {
			f = -f
		}
		return f, true
	}
	s := string(b)
	if hasComma {
		s = strings.Replace(s, ",", ".", 1)
	}
	f, err := strconv.ParseFloat(s, 64)
	if math.IsInf(f, 0) || math.IsNaN(f) {
		return 0, false
	}
	if err != nil && !errors.Is(err, strconv.ErrRange) {
		return 0, false
	}
	return f, true
}
