// Package protocol is the project's line protocol for thermocouple
// amplifiers, version 1 (DEVELOPERS.md, "The line protocol"): ASCII text, one reading a line, space-separated key=value
// tokens, an optional "*HH" XOR checksum, "!" device-information lines and
// the plain "one number a line" form of simple boards. It holds the framer
// (Framer, a bufio.SplitFunc), the parser (ParseLine) and the writer
// (AppendLine, AppendChecksum) that the acquirer and the simulator's
// virtual amplifier share. It is pure: bytes in, values out.
package protocol

import (
	"bytes"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"sync/atomic"

	"github.com/undercool-foundry/undercool/internal/escape"
)

// MaxLineLen is the longest line the framer passes on, terminator excluded.
// A longer line is counted as over-long garbage and dropped.
const MaxLineLen = 512

// Framer frames a byte stream into lines ended by LF, CR LF or a lone CR.
// Its Split method is a bufio.SplitFunc. A line is handed on as soon as its
// terminator arrives (a CR is not held back waiting for a possible LF); a
// line longer than MaxLineLen is dropped whole and counted; bytes left
// without a terminator when the stream ends are a partial line, counted and
// dropped (a line cut by an unplugged cable must not be read as a reading).
//
// The counters may be read from another goroutine while Split runs.
type Framer struct {
	afterCR    bool // the last terminator was CR: an LF right after it belongs to it
	discarding bool // inside an over-long line, dropping bytes up to its end

	LF, CRLF, CR      atomic.Int64 // lines by terminator
	Overlong, Partial atomic.Int64 // dropped lines
}

// Reset forgets the position inside a line (after a reconnection); the
// counters are kept.
func (f *Framer) Reset() {
	f.afterCR = false
	f.discarding = false
}

// Split implements bufio.SplitFunc. Empty lines are returned as empty,
// non-nil tokens. Dropped lines are skipped within the call (a Scanner
// stops at the end of the stream when a call returns no token).
func (f *Framer) Split(data []byte, atEOF bool) (advance int, token []byte, err error) {
	for {
		n, tok := f.split1(data[advance:], atEOF)
		advance += n
		if tok != nil || n == 0 || advance == len(data) {
			return advance, tok, nil
		}
	}
}

func (f *Framer) split1(data []byte, atEOF bool) (advance int, token []byte) {
	start := 0
	if f.afterCR && len(data) > 0 {
		f.afterCR = false
		if data[0] == '\n' {
			f.CR.Add(-1)
			f.CRLF.Add(1)
			start = 1
		}
	}
	for i := start; i < len(data); i++ {
		c := data[i]
		if c != '\n' && c != '\r' {
			continue
		}
		if c == '\r' {
			f.afterCR = true
			f.CR.Add(1)
		} else {
			f.LF.Add(1)
		}
		if f.discarding {
			f.discarding = false
			return i + 1, nil
		}
		if i-start > MaxLineLen {
			f.Overlong.Add(1)
			return i + 1, nil
		}
		return i + 1, data[start:i:i]
	}
	rest := len(data) - start
	switch {
	case f.discarding:
		return len(data), nil
	case rest > MaxLineLen:
		f.discarding = true
		f.Overlong.Add(1)
		return len(data), nil
	case atEOF && rest > 0:
		f.Partial.Add(1)
		return len(data), nil
	}
	return start, nil
}

// LineKind tells what a parsed line holds.
type LineKind uint8

// Kinds of line.
const (
	LineBlank   LineKind = iota // empty or only spaces
	LineReading                 // a reading (temperature, EMF or fault)
	LineInfo                    // a "!" device-information line
)

// Fault is a fault a device reports instead of a reading (key f).
type Fault uint8

// Faults of the f= key.
const (
	FaultNone  Fault = iota
	FaultOpen        // f=open: open thermocouple circuit
	FaultShort       // f=short: shorted thermocouple
	FaultRange       // f=range: the amplifier's input is out of range
)

var faultNames = [...]string{FaultNone: "", FaultOpen: "open", FaultShort: "short", FaultRange: "range"}

func (f Fault) String() string {
	if int(f) < len(faultNames) {
		return faultNames[f]
	}
	return "fault(" + strconv.Itoa(int(f)) + ")"
}

// KV is one key=value token of a device-information line.
type KV struct {
	Key, Value string
}

// Line is one parsed protocol line.
type Line struct {
	Kind LineKind

	// Reading lines.
	Channel  string // channel id; "1" when the line names none
	HasMS    bool   // the line carried a device time
	MS       uint64 // device time, ms since the device started
	HasTemp  bool
	TempC    float64 // °C (c= or the plain form)
	HasEMF   bool
	EMFmV    float64 // mV (mv=)
	HasCJ    bool
	ColdJctC float64 // cold-junction temperature, °C (cj=)
	Fault    Fault   // f=
	Plain    bool    // the plain "one number a line" form

	// Info lines: the tokens in line order.
	Info []KV

	Checksum bool // the line carried a checksum, and it was right
}

// Limits of plausible values: anything outside is garbage, not a reading.
const (
	maxAbsTempC = 5000 // °C; no thermocouple reads beyond about 1820 °C (type B)
	maxAbsEMFmV = 200  // mV; the ITS-90 tables end below 80 mV
)

// Checksum is the protocol's checksum of b: the XOR of all its bytes.
func Checksum(b []byte) byte {
	var x byte
	for _, c := range b {
		x ^= c
	}
	return x
}

// AppendChecksum appends "*HH", the checksum of line, to line (upper-case
// hex). The simulator's virtual amplifier writes its checksums with it;
// firmware writers may use it to check their own implementation.
func AppendChecksum(line []byte) []byte {
	const hex = "0123456789ABCDEF"
	x := Checksum(line)
	return append(line, '*', hex[x>>4], hex[x&15])
}

var errEmptyValue = errors.New("empty value")

// ParseLine parses one line of the line protocol, terminator excluded. A
// line that does not follow the protocol gives an error saying why; the
// caller counts it as garbage. ParseLine does not allocate for reading lines
// on channels "1" to "8".
func ParseLine(b []byte) (Line, error) {
	var l Line
	b = trimSpace(b)
	if len(b) == 0 {
		return l, nil
	}
	// A checksum ends the line: '*' and two hex digits, outside a quoted
	// value (values cannot hold '"', so an odd count of quotes before the
	// '*' means it is inside one).
	if n := len(b); n >= 3 && b[n-3] == '*' && bytes.Count(b[:n-3], []byte{'"'})%2 == 0 {
		want, ok := unhex(b[n-2], b[n-1])
		if !ok {
			return l, fmt.Errorf("checksum %q is not two hex digits", b[n-3:])
		}
		if got := Checksum(b[:n-3]); got != want {
			return l, fmt.Errorf("checksum *%02X does not match the line (its XOR is %02X)", want, got)
		}
		l.Checksum = true
		b = trimSpace(b[:n-3])
	}
	if len(b) > 0 && b[0] == '!' {
		return parseInfo(b[1:], l)
	}
	if isNumber(b) {
		v, err := parseNumber(b, maxAbsTempC)
		if err != nil {
			return l, err
		}
		l.Kind, l.Channel, l.HasTemp, l.TempC, l.Plain = LineReading, "1", true, v, true
		return l, nil
	}
	return parseReading(b, l)
}

func parseReading(b []byte, l Line) (Line, error) {
	l.Kind = LineReading
	var seen uint8 // bit per key, to refuse duplicates
	const (
		kC = 1 << iota
		kMV
		kCJ
		kCh
		kMS
		kF
	)
	for len(b) > 0 {
		var tok []byte
		tok, b = nextToken(b)
		eq := indexByte(tok, '=')
		if eq <= 0 {
			return l, fmt.Errorf("token %q is not key=value", tok)
		}
		key, val := tok[:eq], tok[eq+1:]
		if len(val) == 0 {
			return l, fmt.Errorf("key %q: %w", key, errEmptyValue)
		}
		var bit uint8
		var err error
		switch string(key) {
		case "c":
			bit = kC
			l.TempC, err = parseNumber(val, maxAbsTempC)
			l.HasTemp = err == nil
		case "mv":
			bit = kMV
			l.EMFmV, err = parseNumber(val, maxAbsEMFmV)
			l.HasEMF = err == nil
		case "cj":
			bit = kCJ
			l.ColdJctC, err = parseNumber(val, maxAbsTempC)
			l.HasCJ = err == nil
		case "ch":
			bit = kCh
			l.Channel, err = parseChannel(val)
		case "ms":
			bit = kMS
			l.MS, err = strconv.ParseUint(string(val), 10, 64)
			if err != nil || val[0] == '+' {
				err = fmt.Errorf("%q is not an unsigned integer", val)
			}
			l.HasMS = err == nil
		case "f":
			bit = kF
			switch string(val) {
			case "open":
				l.Fault = FaultOpen
			case "short":
				l.Fault = FaultShort
			case "range":
				l.Fault = FaultRange
			default:
				err = fmt.Errorf("unknown fault %q (want open, short or range)", val)
			}
		default:
			if !isFutureKey(key) {
				return l, fmt.Errorf("unknown key %q", key)
			}
			continue // reserved for later versions of the protocol: ignored
		}
		if err != nil {
			return l, fmt.Errorf("key %s: %w", key, err)
		}
		if seen&bit != 0 {
			return l, fmt.Errorf("key %s given twice", key)
		}
		seen |= bit
	}
	if n := countBits(seen & (kC | kMV | kF)); n != 1 {
		return l, fmt.Errorf("a reading needs exactly one of c=, mv= or f= (has %d)", n)
	}
	if l.Channel == "" {
		l.Channel = "1"
	}
	return l, nil
}

func parseInfo(b []byte, l Line) (Line, error) {
	l.Kind = LineInfo
	b = trimSpace(b)
	for len(b) > 0 {
		eq := indexByte(b, '=')
		if eq <= 0 {
			return l, fmt.Errorf("device info: %q is not key=value", firstToken(b))
		}
		key := b[:eq]
		if !isInfoKey(key) {
			return l, fmt.Errorf("device info: key %q must be letters, digits, '_' or '-'", key)
		}
		b = b[eq+1:]
		var val []byte
		if len(b) > 0 && b[0] == '"' {
			end := indexByte(b[1:], '"')
			if end < 0 {
				return l, fmt.Errorf("device info: key %s: unterminated quoted value", key)
			}
			val, b = b[1:1+end], b[2+end:]
			if len(b) > 0 && b[0] != ' ' && b[0] != '\t' {
				return l, fmt.Errorf("device info: key %s: text right after the closing quote", key)
			}
		} else {
			val, b = nextToken(b)
			if indexByte(val, '"') >= 0 {
				return l, fmt.Errorf("device info: key %s: stray quote in %q", key, val)
			}
		}
		if !escape.Safe(string(val)) {
			return l, fmt.Errorf("device info: key %s: value %q holds a control character or is not UTF-8 text", key, val)
		}
		l.Info = append(l.Info, KV{Key: string(key), Value: string(val)})
		b = trimSpace(b)
	}
	return l, nil
}

// sampleKeys are the device-information keys that describe the sample rather
// than the device (the same keys as the dashboard's sample form and the
// curve file's metadata). A device line holding them names the next sample.
var sampleKeys = []string{"sample", "alloy", "operator", "ladle", "furnace", "cup", "melt", "heat", "note"}

// SampleKeys lists the device-information keys that describe the sample
// (sample, alloy, operator, ladle, furnace, cup, melt, heat, note), in the
// order the curve files write them.
func SampleKeys() []string { return append([]string(nil), sampleKeys...) }

// IsSampleKey reports whether key is one of SampleKeys.
func IsSampleKey(key string) bool {
	for _, k := range sampleKeys {
		if k == key {
			return true
		}
	}
	return false
}

// InfoValue returns the value of key in a device-information line, or "".
func (l *Line) InfoValue(key string) string {
	for _, kv := range l.Info {
		if kv.Key == key {
			return kv.Value
		}
	}
	return ""
}

var smallChannels = [...]string{"1", "2", "3", "4", "5", "6", "7", "8"}

func parseChannel(v []byte) (string, error) {
	if len(v) > 16 {
		return "", fmt.Errorf("channel id %q is longer than 16 characters", v)
	}
	for _, c := range v {
		if !IsIDByte(c) {
			return "", fmt.Errorf("channel id %q: only letters, digits, '_' and '-' are allowed", v)
		}
	}
	if len(v) == 1 && v[0] >= '1' && v[0] <= '8' {
		return smallChannels[v[0]-'1'], nil
	}
	return string(v), nil
}

// isNumber reports whether b looks like a plain decimal number: an optional
// sign, digits with at most one '.', an optional exponent.
func isNumber(b []byte) bool {
	i := 0
	if i < len(b) && (b[i] == '+' || b[i] == '-') {
		i++
	}
	digits, dot := 0, false
	for ; i < len(b); i++ {
		c := b[i]
		switch {
		case c >= '0' && c <= '9':
			digits++
		case c == '.' && !dot:
			dot = true
		default:
			goto exp
		}
	}
exp:
	if digits == 0 {
		return false
	}
	if i == len(b) {
		return true
	}
	if b[i] != 'e' && b[i] != 'E' {
		return false
	}
	i++
	if i < len(b) && (b[i] == '+' || b[i] == '-') {
		i++
	}
	if i == len(b) {
		return false
	}
	for ; i < len(b); i++ {
		if b[i] < '0' || b[i] > '9' {
			return false
		}
	}
	return true
}

func parseNumber(b []byte, maxAbs float64) (float64, error) {
	if !isNumber(b) {
		return 0, fmt.Errorf("%q is not a decimal number", b)
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil || v > maxAbs || v < -maxAbs {
		return 0, fmt.Errorf("%q is out of range (±%g)", b, maxAbs)
	}
	return v, nil
}

// isFutureKey reports whether key is a name a later protocol version may
// use: 1 to 16 lower-case letters, digits or '_', starting with a letter.
func isFutureKey(key []byte) bool {
	if len(key) == 0 || len(key) > 16 || key[0] < 'a' || key[0] > 'z' {
		return false
	}
	for _, c := range key {
		if !(c >= 'a' && c <= 'z' || c >= '0' && c <= '9' || c == '_') {
			return false
		}
	}
	return true
}

func isInfoKey(key []byte) bool {
	if len(key) > 32 {
		return false
	}
	for _, c := range key {
		if !IsIDByte(c) {
			return false
		}
	}
	return true
}

// IsIDByte reports whether c may be part of a channel id or an info key:
// letters, digits, '_' and '-'.
func IsIDByte(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '-'
}

func unhex(a, b byte) (byte, bool) {
	x, ok1 := hexVal(a)
	y, ok2 := hexVal(b)
	return x<<4 | y, ok1 && ok2
}

func hexVal(c byte) (byte, bool) {
	switch {
	case c >= '0' && c <= '9':
		return c - '0', true
	case c >= 'a' && c <= 'f':
		return c - 'a' + 10, true
	case c >= 'A' && c <= 'F':
		return c - 'A' + 10, true
	}
	return 0, false
}

func isSpace(c byte) bool { return c == ' ' || c == '\t' }

func trimSpace(b []byte) []byte {
	for len(b) > 0 && isSpace(b[0]) {
		b = b[1:]
	}
	for len(b) > 0 && isSpace(b[len(b)-1]) {
		b = b[:len(b)-1]
	}
	return b
}

// nextToken splits b at the first run of spaces.
func nextToken(b []byte) (tok, rest []byte) {
	i := 0
	for i < len(b) && !isSpace(b[i]) {
		i++
	}
	tok, rest = b[:i], b[i:]
	for len(rest) > 0 && isSpace(rest[0]) {
		rest = rest[1:]
	}
	return tok, rest
}

func firstToken(b []byte) []byte { t, _ := nextToken(b); return t }

func indexByte(b []byte, c byte) int {
	for i, x := range b {
		if x == c {
			return i
		}
	}
	return -1
}

func countBits(x uint8) int {
	n := 0
	for ; x != 0; x &= x - 1 {
		n++
	}
	return n
}

// AppendLine appends l in protocol form (without a terminator or
// checksum): the inverse of ParseLine, used by the simulator's virtual
// amplifier and fake devices in tests, and a reference for firmware writers. Numbers are written in their shortest
// exact form.
func AppendLine(b []byte, l Line) []byte {
	switch l.Kind {
	case LineBlank:
		return b
	case LineInfo:
		b = append(b, '!')
		for _, kv := range l.Info {
			b = append(b, ' ')
			b = append(b, kv.Key...)
			b = append(b, '=')
			// Quoted when empty, when it holds a blank, or a '*' that would
			// otherwise read as the start of a checksum.
			if kv.Value == "" || strings.ContainsAny(kv.Value, " \t*") {
				b = append(b, '"')
				b = append(b, kv.Value...)
				b = append(b, '"')
			} else {
				b = append(b, kv.Value...)
			}
		}
		return b
	}
	if l.Plain {
		return strconv.AppendFloat(b, l.TempC, 'g', -1, 64)
	}
	start := len(b)
	sep := func() {
		if len(b) > start {
			b = append(b, ' ')
		}
	}
	if l.Channel != "" {
		b = append(b, "ch="...)
		b = append(b, l.Channel...)
	}
	if l.HasMS {
		sep()
		b = append(b, "ms="...)
		b = strconv.AppendUint(b, l.MS, 10)
	}
	switch {
	case l.Fault != FaultNone:
		sep()
		b = append(b, "f="...)
		b = append(b, l.Fault.String()...)
	case l.HasEMF:
		sep()
		b = append(b, "mv="...)
		b = strconv.AppendFloat(b, l.EMFmV, 'g', -1, 64)
	default:
		sep()
		b = append(b, "c="...)
		b = strconv.AppendFloat(b, l.TempC, 'g', -1, 64)
	}
	if l.HasCJ {
		b = append(b, " cj="...)
		b = strconv.AppendFloat(b, l.ColdJctC, 'g', -1, 64)
	}
	return b
}
