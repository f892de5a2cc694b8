package curvefile

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"unsafe"
)

// pow10 holds the exactly representable powers of ten used by the fast
// path of numReader.read and numReader.number.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// numReader reads the numbers of a row (numReader.read): the separator
// and decimal mark of its file, and the readings it keeps where it reads
// on from row to row.
type numReader struct {
	sep     byte   // the separator (' ': runs of blanks)
	dec     byte   // a decimal mark besides '.': ',' for a decimal comma, '.' for none
	scratch []byte // number text for strconv

	time, temp []float64 // the readings so far (the file's, in s and °C)
	row        int       // the start of the row read stopped at
	// Where read takes whole rows as readings (lines sets these): the
	// fields of such a row (parser.fast; else -1: read reads one row), the
	// time and temperature in the out lines gives read, and the readings
	// time and temp have room for (their capacity, MaxReadings).
	rows             int
	outTime, outTemp *float64
	room             int
}

// read reads the fields of a row at b[i:] as numbers into out, at most
// len(out) of them, while each holds a number of the usual shape and ends
// where its field ends: blanks may follow (spaces, and tabs where sep is
// not a tab), then sep or the line end; with sep ' ' (runs of blanks
// separate the fields) a run of blanks ends it. After a separator, blanks
// before the next field are passed over. b must hold a line end ('\n' or
// '\r') after i. It returns how many numbers it read, the index of the
// first field it did not read (or of the line end after the last), and
// eol, whether that last number ended the line. A field it did not read is
// left to the caller: text, a quoted field, a blank, something that is not
// a number, or a number of another shape (parseNumIn reads those).
//
// The usual shape is a logger's: [+-]digits[.digits], dec counting as
// '.', with 1 to 15 digits and no exponent. Its digits make an integer
// m < 10^15 < 2^53 and its f digits after the mark are at most 15, so m
// and 10^f are both exactly float64s (every power of ten up to 10^22 is)
// and m/10^f, one correctly rounded division of exact operands, is the
// float64 nearest to the text (Clinger's fast path: W. D. Clinger, "How to
// read floating point numbers accurately", PLDI 1990): bit for bit what
// strconv.ParseFloat gives (FuzzParseNum).
//
// Where rows is the width of a row (lines sets it, with outTime, outTemp
// and room), read reads on from row to row: each row of rows numbers, no longer than MaxLine (only runs
// of blanks can make it so: a number of the usual shape and its
// separator take at most 18 bytes, and a row has at most MaxColumns), is a
// reading while time and temp have room for one (their capacity, and
// MaxReadings): its time and temperature are appended to them, and read
// goes on with the next line. It stops at the first row it does not take,
// or at the end of b; r.row is then that row's start, and the results are
// as above for that row (n = 0 and next = len(b) at the end of b). Where
// rows is -1 it reads the one row at i (r.row = i).
//
// This is the reader's inner loop. It calls nothing, so that its values
// stay in registers, and allocates nothing.
func (r *numReader) read(b []byte, i int, out []float64) (n, next int, eol bool) {
	r.row = i
fields:
	for n < len(out) {
		start := i
		sign := b[i]
		from := i + int(signs[sign]) // the first digit
		var m uint64
		m, i = digitsAt(b, from, 0)
		digits, frac := i-from, 0
		if c := b[i]; c == '.' || c == r.dec {
			from = i + 1
			m, i = digitsAt(b, from, m)
			frac = i - from
			digits += frac
		}
		if uint(digits-1) >= 15 {
			if digits == 0 && n > 0 && (b[start] == ' ' || b[start] == '\t') {
				if i = skipBlanks(b, start); i-r.row > MaxLine {
					return n, i, false // row and endRow tell
				}
				continue // blanks after a separator
			}
			return n, start, false // no number, or more than 15 digits
		}
		m -= zeros[digits&15]                   // digits <= 15
		v := float64(int64(m)) / pow10[frac&15] // frac <= 15: the mask only tells the compiler so
		if sign == '-' {
			v = -v
		}
		// The field must end here: the line end, or the separator, or
		// blanks and then one of them. Anything else (an exponent, text)
		// is left to the caller.
		for c := b[i]; ; c = b[i] {
			switch {
			case c == '\n' || c == '\r':
				out[n] = v
				n++
				k := len(r.time)
				if n != r.rows || k >= r.room {
					return n, i, true
				}
				r.time = r.time[:k+1] // within room: no call here
				r.temp = r.temp[:k+1]
				r.time[k], r.temp[k] = *r.outTime, *r.outTemp
				if i++; c == '\r' && i < len(b) && b[i] == '\n' {
					i++
				}
				if r.row = i; i >= len(b) {
					return 0, i, false
				}
				n = 0
				continue fields
			case c == r.sep && c != ' ':
				out[n] = v
				n++
				i++
				continue fields
			case c == ' ' || c == '\t' && r.sep != '\t':
				j := i + 1
				for b[j] == ' ' || b[j] == '\t' && r.sep != '\t' {
					j++
				}
				if j-r.row > MaxLine {
					return n, start, false // row and endRow tell
				}
				if c = b[j]; c != '\n' && c != '\r' && (c != r.sep || c == ' ') {
					if r.sep != ' ' {
						return n, start, false // text after the number
					}
					out[n] = v // the run of blanks was the separator
					n++
					i = j
					continue fields
				}
				i = j // the line end or the separator after blanks
			default:
				return n, start, false // text after the number
			}
		}
	}
	return n, skipBlanks(b, i), false // the field after a separator starts after its blanks
}

// digitsAt reads the decimal digits at b[i:] onto m and returns m and the
// index after the last digit. b must hold a byte other than a digit after
// i. For each digit m becomes m·10 plus the digit's byte, not its value
// (one instruction fewer a digit): after k digits in all the caller takes
// zeros[k] off. m wraps beyond 19 digits; the callers count the digits and
// use m only for 15 at most.
func digitsAt(b []byte, i int, m uint64) (uint64, int) {
	for {
		c := b[i]
		if c-'0' > 9 {
			return m, i
		}
		m = m*10 + uint64(c)
		i++
	}
}

// signs is 1 for the bytes of a sign, '+' and '-', else 0.
var signs = [256]uint8{'+': 1, '-': 1}

// zeros[k] is what k digits' '0's add to digitsAt's m: '0'·(10^k − 1)/9.
var zeros = func() (z [16]uint64) {
	for k := 1; k < len(z); k++ {
		z[k] = z[k-1]*10 + '0'
	}
	return z
}()

// number reads the number at b[i:], of any shape read does not take too
// (see numReader.read): [+-]digits[.digits][(e|E)[+-]digits] with at least
// one digit before the exponent, and a finite value. b must hold a line
// end after i. A number of at most 15 digits with a decimal exponent e
// within ±22 is converted as m·10^e or m/10^−e, one rounding of exact
// operands (Clinger's fast path, as in read); any other goes to
// strconv.ParseFloat. It returns the value and the index after the number;
// ok is false where b[i:] starts with no number. Its first lines read the
// sign, digits and mark as read does: read keeps them inline because it
// must call nothing (a call, even not taken, makes its loops spill; a
// shared function is too large to be inlined).
func (r *numReader) number(b []byte, i int) (v float64, end int, ok bool) {
	start := i
	if c := b[i]; c == '-' || c == '+' {
		i++
	}
	from := i
	var m uint64
	m, i = digitsAt(b, i, 0)
	digits, exp := i-from, 0
	if c := b[i]; c == '.' || c == r.dec {
		from = i + 1
		m, i = digitsAt(b, from, m)
		exp = from - i
		digits -= exp
	}
	if digits == 0 {
		return 0, 0, false
	}
	if b[i]|0x20 == 'e' {
		e, j := exponent(b, i+1)
		if j < 0 {
			return 0, 0, false // an exponent without digits
		}
		exp += e
		i = j
	}
	if digits <= 15 && uint(exp+22) <= 44 { // m < 10^15 < 2^53, exactly a float64
		v = float64(int64(m - zeros[digits]))
		if exp < 0 {
			v /= pow10[-exp]
		} else {
			v *= pow10[exp]
		}
		if b[start] == '-' {
			v = -v
		}
		return v, i, true
	}
	if v, ok = r.slow(b[start:i]); !ok {
		return 0, 0, false
	}
	return v, i, true
}

// slow converts the number text b with strconv.ParseFloat, a decimal
// comma made a point.
func (r *numReader) slow(b []byte) (float64, bool) {
	s := append(r.scratch[:0], b...)
	if r.dec != '.' {
		if j := bytes.IndexByte(s, r.dec); j >= 0 {
			s[j] = '.'
		}
	}
	r.scratch = s
	// The string aliases scratch only for the call: ParseFloat keeps it in
	// nothing but its error, which is dropped here.
	f, err := strconv.ParseFloat(unsafe.String(unsafe.SliceData(s), len(s)), 64)
	if err != nil && !errors.Is(err, strconv.ErrRange) || math.IsInf(f, 0) {
		return 0, false
	}
	return f, true
}

// exponent reads the digits of an exponent, with its sign, at b[i:]; j is
// the index after it, or -1 where there are no digits. Exponents beyond a
// million stay at a million: the number is then zero or infinite anyway.
func exponent(b []byte, i int) (e, j int) {
	neg := false
	if i < len(b) && (b[i] == '+' || b[i] == '-') {
		neg = b[i] == '-'
		i++
	}
	from := i
	for ; i < len(b); i++ {
		c := b[i] - '0'
		if c > 9 {
			break
		}
		if e < 1_000_000 {
			e = e*10 + int(c)
		}
	}
	if i == from {
		return 0, -1
	}
	if neg {
		e = -e
	}
	return e, i
}

// parseNum reads b as one whole number (numReader.read's usual shape or
// numReader.number's), with ',' as a decimal mark too where comma is true.
func parseNum(b []byte, comma bool) (float64, bool) {
	var buf []byte
	return parseNumIn(b, comma, &buf)
}

// parseNumIn is parseNum with a buffer for b and its line end. It tries
// numReader.read first, as the rows' numbers are read, then
// numReader.number.
func parseNumIn(b []byte, comma bool, buf *[]byte) (float64, bool) {
	if len(b) == 0 || bytes.IndexAny(b, "\r\n") >= 0 || b[len(b)-1] == ' ' || b[len(b)-1] == '\t' {
		return 0, false
	}
	r := numReader{sep: '\n', dec: '.', rows: -1}
	if comma {
		r.dec = ','
	}
	*buf = append(append((*buf)[:0], b...), '\n')
	var out [1]float64
	if n, _, _ := r.read(*buf, 0, out[:]); n == 1 {
		return out[0], true
	}
	v, end, ok := r.number(*buf, 0)
	return v, ok && end == len(b)
}
