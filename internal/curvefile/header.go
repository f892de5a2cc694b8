package curvefile

import (
	"bytes"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/undercool-foundry/undercool/internal/thermocouple"
)

type role uint8

const (
	roleIgnore role = iota // read past, not kept (beyond MaxExtraColumns)
	roleExtra
	roleTime
	roleTemp
	roleEMF
	roleCJ
)

type column struct {
	role  role
	name  string
	scale float64  // time: units in a second (v/scale is s)
	unit  tempUnit // temperature unit (temperature and cold-junction columns)
	extra int      // index into parser.extra for roleExtra (and kept EMF/CJ)
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

// lineAt handles the line at the start of b outside the readings: line 1,
// metadata, comments, blank lines and the header (or a first reading
// without a header). It returns the bytes used.
func (p *parser) lineAt(b []byte) (int, error) {
	skip := 0
	if p.line == 1 {
		if bytes.HasPrefix(b, []byte{0xFF, 0xFE}) || bytes.HasPrefix(b, []byte{0xFE, 0xFF}) {
			return 0, errors.New("UTF-16 text; save the file as UTF-8")
		}
		if bytes.HasPrefix(b, []byte("\xEF\xBB\xBF")) {
			skip = 3
			b = b[3:]
		}
	}
	e := bytes.IndexAny(b, "\r\n") // b holds a line end
	n := lineEnd(b, e)
	line := b[:e]
	if len(line) > MaxLine {
		return 0, fmt.Errorf("line longer than %d bytes (1 MiB)", MaxLine)
	}
	if !utf8.Valid(line) {
		return 0, errInvalidUTF8
	}
	line = trimBlanks(line)
	switch {
	case len(line) == 0:
		p.c.Skipped++
	case line[0] == '#':
		p.comment(line[1:])
	case p.cols != nil:
		return p.row(b, 0, 0, false) // a reading (row sends '#' lines here, never readings)
	default:
		if bytes.IndexByte(line, 0) >= 0 {
			return 0, errors.New("NUL bytes in the header: UTF-16 or binary data? save the file as UTF-8 text")
		}
		reading, err := p.first(line)
		if err != nil {
			return 0, err
		}
		if reading {
			m, err := p.row(b, 0, 0, false)
			return skip + m, err
		}
	}
	return skip + n, nil
}

var errInvalidUTF8 = errors.New("invalid UTF-8 text; save the file as UTF-8")

// errNUL is a NUL byte in a text field kept from the file: no text a
// curve file carries has one (the Writer refuses them), so the file is
// binary or torn.
var errNUL = errors.New("a NUL byte in a text field (a binary or damaged file?)")

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
	v, cut := cleanValue(v)
	if cut > 0 {
		p.note("%s:%d: metadata %q: %d bytes cut (values are kept up to %d bytes)", p.c.Name, p.line, k, cut, MaxMetaValue)
	}
	p.c.Meta = append(p.c.Meta, Meta{Key: k, Value: v})
	p.metaLines = append(p.metaLines, p.line)
}

// metaLine is the line of the first metadata line with the key.
func (p *parser) metaLine(key string) int {
	for i, m := range p.c.Meta {
		if m.Key == key && i < len(p.metaLines) {
			return p.metaLines[i]
		}
	}
	return 0
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
// or (reading true) the first reading of a file without a header.
func (p *parser) first(line []byte) (reading bool, err error) {
	p.sep = detectSep(line)
	p.dec = ','
	if p.sep == ',' {
		p.dec = '.'
	}
	fields, width, err := p.split(line, MaxColumns)
	if err != nil {
		return false, err
	}
	p.headerLine = p.line
	for _, f := range fields {
		if _, ok := parseNum(f.b, f.quoted || p.sep != ','); !ok {
			return false, p.header(fields[:min(len(fields), width)], width)
		}
	}
	return true, p.headerless(width)
}

// headerless sets up the columns of a file without a header whose first
// reading line has n fields.
func (p *parser) headerless(n int) error {
	scale, _ := p.opt.timeScale()
	unit, _, _ := p.opt.tempUnit()
	if scale == 0 {
		scale = 1
	}
	if p.opt.TimeColumn == "" && p.opt.TempColumn == "" {
		if n != 2 {
			msg := fmt.Sprintf("no header row, and %d numbers on the first reading line (a file without a header must have two columns: seconds, °C)", n)
			if p.sep == ',' {
				msg += "; with comma separators a decimal comma must be quoted, or use ';' as the separator"
			}
			return errors.New(msg + "; or " + ColumnHint)
		}
		p.swapCheck = p.opt.IsZero()
		p.converted(unit)
		return p.setColumns([]column{{role: roleTime, name: "time_s", scale: scale}, {role: roleTemp, name: "temp_c", unit: unit}}, 2)
	}
	names := make([]string, min(n, MaxColumns))
	for i := range names {
		names[i] = "column " + strconv.Itoa(i+1)
	}
	ti, te, err := p.named(names, false)
	if err != nil {
		return err
	}
	if n < 2 {
		return errors.New("no header row, and one number on the first reading line: a time and a temperature column are needed")
	}
	if ti < 0 {
		ti = firstOther(te)
	}
	if te < 0 {
		te = firstOther(ti)
	}
	if ti == te {
		return fmt.Errorf("the time and the temperature are both column %d", ti+1)
	}
	cols := make([]column, len(names))
	for i := range cols {
		cols[i] = column{role: roleExtra, name: names[i]}
	}
	cols[ti] = column{role: roleTime, name: "time_s", scale: scale}
	cols[te] = column{role: roleTemp, name: "temp_c", unit: unit}
	p.converted(unit)
	return p.setColumns(cols, n)
}

// named finds the time and the temperature columns the options name
// among the names of the header (header true) or of the first line's
// fields; -1 where the options name none.
func (p *parser) named(names []string, header bool) (ti, te int, err error) {
	if ti, err = resolve("time", p.opt.TimeColumn, names, header); err != nil {
		return 0, 0, err
	}
	if te, err = resolve("temp", p.opt.TempColumn, names, header); err != nil {
		return 0, 0, err
	}
	return ti, te, nil
}

// firstOther is the first column index that is not i.
func firstOther(i int) int {
	if i == 0 {
		return 1
	}
	return 0
}

func (p *parser) converted(u tempUnit) {
	if u != unitC {
		p.c.Set("converted_from", u.String())
		if len(p.metaLines) < len(p.c.Meta) {
			p.metaLines = append(p.metaLines, p.line)
		}
	}
}

// header sets up the columns from the header's first fields; width
// counts them all, up to the last with a name (a trailing separator makes
// no column).
func (p *parser) header(fields []field, width int) error {
	names := make([]string, len(fields))
	for i, f := range fields {
		names[i] = strings.TrimSpace(string(f.b))
		if names[i] == "" {
			return fmt.Errorf("column %d of the header has no name", i+1)
		}
	}
	ti, te, err := p.named(names, true)
	if err != nil {
		return err
	}
	if ti >= 0 && ti == te {
		return fmt.Errorf("the time and the temperature are both column %d (%q)", ti+1, names[ti])
	}
	optScale, _ := p.opt.timeScale()
	optUnit, haveUnit, _ := p.opt.tempUnit()
	// The project's own header fixes the roles of its first two columns.
	own := len(names) >= 2 && names[0] == "time_s" && names[1] == "temp_c"
	cols := make([]column, len(names))
	var first, second [roleCJ + 1]int // column index + 1 of the first and second column of each role
	for i, name := range names {
		r, scale, unit := classify(name)
		switch {
		case i == ti:
			r, scale = roleTime, 1
			if _, u := splitUnit(strings.ToLower(name)); u != "" {
				s, ok := timeUnits[u]
				if !ok && optScale == 0 {
					return fmt.Errorf("column %q: time unit %q not known (s, ms, min); give the unit with --time-unit", name, u)
				}
				scale = s
			}
		case i == te:
			r, unit = roleTemp, unitC
			if _, u := splitUnit(strings.ToLower(name)); u != "" {
				tu, ok := tempUnits[u]
				if !ok && !haveUnit {
					return fmt.Errorf("column %q: temperature unit %q not known (°C, °F or K); give the unit with --temp-unit", name, u)
				}
				unit = tu
			}
		case own && i >= 2 && (r == roleTime || r == roleTemp),
			ti >= 0 && r == roleTime,
			te >= 0 && (r == roleTemp || r == roleEMF || r == roleCJ):
			r = roleExtra // a named column wins over the reader's own pick
		}
		if r == roleTime && optScale != 0 {
			scale = optScale
		}
		if r == roleTemp && haveUnit {
			unit = optUnit
		}
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
		return fmt.Errorf("two %s columns in the header: %q and %q; %s", what, cols[first[r]-1].name, cols[second[r]-1].name, ColumnHint)
	}
	if err := errors.Join(dup(roleTime, "time"), dup(roleTemp, "temperature")); err != nil {
		return err
	}
	if first[roleTime] == 0 {
		return fmt.Errorf("no time column (time_s) in the header (%s); %s", listNames(names), ColumnHint)
	}
	switch {
	case first[roleTemp] != 0:
		p.converted(cols[first[roleTemp]-1].unit)
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
		if j := first[roleCJ]; j != 0 {
			p.converted(cols[j-1].unit)
			cols[j-1].name = "cj_c"
		}
		cols[first[roleEMF]-1].name = "emf_mv"
	default:
		for _, c := range cols {
			if base, unit := splitUnit(strings.ToLower(c.name)); tempNames[base] || (base == "t" && unit != "") {
				return fmt.Errorf("column %q: temperatures must be in °C, °F or K (unit %q not accepted); %s", c.name, unit, ColumnHint)
			}
		}
		return fmt.Errorf("no temperature column (temp_c, or emf_mv with '# thermocouple:') in the header (%s); %s", listNames(names), ColumnHint)
	}
	return p.setColumns(cols, width)
}

// setColumns keeps the columns of a row, cols being the first of width
// (those beyond MaxColumns are read past), the extra ones up to
// MaxExtraColumns, and notes where the numbers are.
func (p *parser) setColumns(cols []column, width int) error {
	p.width = width
	p.cjCol = -1
	last, dropped := -1, width-len(cols)
	for i := range cols {
		c := &cols[i]
		switch {
		case c.role == roleTime:
			p.timeCol, p.timeScale = i, c.scale
		case c.role == roleTemp || c.role == roleEMF && p.emf:
			p.tempCol, p.tempUnit = i, c.unit
		case c.role == roleCJ && p.emf:
			p.cjCol = i
		}
		switch {
		case c.role == roleTime || c.role == roleTemp:
		case len(p.extra) == MaxExtraColumns:
			c.role = roleIgnore
			dropped++
			continue
		default:
			c.extra = len(p.extra)
			p.extra = append(p.extra, extraText{})
			p.c.Extra = append(p.c.Extra, Column{Name: c.name})
		}
		last = i
	}
	if dropped > 0 {
		p.note("%s:%d: %d columns after the first %d extra columns are not kept", p.c.Name, p.line, dropped, len(p.extra))
	}
	p.cols = cols[: last+1 : last+1]
	p.run = make([]int, len(p.cols))
	for i := len(p.cols) - 1; i >= 0; i-- {
		if p.cols[i].role >= roleTime {
			p.run[i] = 1
			if i+1 < len(p.run) {
				p.run[i] += p.run[i+1]
			}
		}
	}
	p.rs.v = make([]float64, len(p.cols))
	p.num.sep, p.num.dec, p.num.rows = p.sep, p.dec, -1
	p.lead = p.rs.v[:p.run[0]]
	p.fast = p.width
	if p.emf || p.timeScale != 1 || p.tempUnit != unitC || len(p.lead) != p.width {
		p.fast = -1
	} else {
		p.num.outTime, p.num.outTemp = &p.lead[p.timeCol], &p.lead[p.tempCol]
	}
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
		return &ParseError{File: p.c.Name, Line: p.metaLine("thermocouple"), Err: err}
	}
	p.tc, p.emf = tc, true
	if cjColumn {
		return nil
	}
	for _, k := range []string{"cold_junction_c", "cj_c"} {
		if v := p.c.Get(k); v != "" {
			cj, ok := parseNum([]byte(v), true)
			if !ok {
				return &ParseError{File: p.c.Name, Line: p.metaLine(k), Err: fmt.Errorf("%s %q is not a number", k, v)}
			}
			p.cjMeta = cj
			return nil
		}
	}
	return errors.New("an emf_mv column needs the cold-junction temperature: a cj_c column or a '# cold_junction_c: 25' line before the header")
}

// split cuts a header or first line (without its line end) into trimmed
// fields, unquoting quoted ones; the fields alias line or fresh memory.
// It keeps the first most fields and counts them all: width is the number
// of fields up to the last that is not empty.
func (p *parser) split(line []byte, most int) (fields []field, width int, err error) {
	n := 0
	for i, more := skipBlanks(line, 0), true; more; n++ {
		var f field
		if i < len(line) && line[i] == '"' {
			b, next, err := p.quoted(line, i)
			if err != nil {
				return nil, 0, err
			}
			f, i = field{b: b, quoted: true}, next
		} else {
			start := i
			i = p.textEnd(line, i)
			f = field{b: trimRightBlanks(line[start:i])}
		}
		if len(f.b) != 0 {
			width = n + 1
		}
		if n < most {
			if f.quoted {
				f.b = bytes.Clone(f.b) // (it may be p.quote, reused)
			}
			fields = append(fields, f)
		}
		i, more = p.afterField(line, i)
	}
	return fields, width, nil
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

// classify gives a header name's role, for the time its unit's count in a
// second, and for a temperature (or cold junction) its unit.
func classify(name string) (role, float64, tempUnit) {
	base, unit := splitUnit(strings.ToLower(strings.TrimSpace(name)))
	if s, ok := timeUnits[unit]; (ok || unit == "") && timeNames[base] {
		if !ok {
			s = 1
		}
		return roleTime, s, unitC
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
	// timeUnits are the time units read (cleaned, see cleanUnit), as their
	// count in a second
	timeUnits = map[string]float64{"s": 1, "sec": 1, "secs": 1, "second": 1, "seconds": 1, "ms": 1000, "min": 1.0 / 60}
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
