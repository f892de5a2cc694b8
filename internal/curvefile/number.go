package curvefile

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"unsafe"
)

// pow10 holds the exactly representable powers of ten used by scanNum's
// fast path.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// numReader reads the numbers of a row (numReader.read): the separator
// and decimal mark of its file.
type numReader struct {
	sep     byte   // the separator (' ': runs of blanks)
	dec     byte   // a decimal mark besides '.': ',' for a decimal comma, '.' for none
	scratch []byte // number text for strconv
}

// read reads the fields of a row at b[i:] as numbers into out, at most
// len(out) of them, while each holds a number and ends where its
// field ends: blanks may follow (spaces, and tabs where sep is not a
// tab), then sep or the line end; with sep ' ' (runs of blanks separate
// the fields) a run of blanks ends it. After a separator, blanks before
// the next field are passed over. b must hold a line end ('\n' or '\r')
// after i. It returns how many numbers it read, the index of the first
// field it did not read (or of the line end after the last), and eol,
// whether that last number ended the line. A field it did not read is
// left to the caller: text, a quoted field, a blank, or something that is
// not a number.
//
// A number is [+-]digits[.digits][(e|E)[+-]digits] with at least one digit
// before the exponent (dec counting as '.'), and its value a finite
// float64 (NaN, infinities and hexadecimal are never numbers here). One
// of at most 15 digits (whose digits make an integer m < 2^53), with a
// decimal exponent e within ±22, is converted as m·10^e or m/10^−e by one
// floating-point operation on two exact operands, so its one rounding is
// the correct one (Clinger's fast path: W. D. Clinger, "How to read
// floating point numbers accurately", PLDI 1990); every other number goes
// to strconv.ParseFloat. Each value is thus the float64 nearest to the
// text, bit for bit what strconv.ParseFloat gives for the same text with
// '.' as its decimal mark (FuzzParseNum).
//
// This is the reader's inner loop: it calls nothing for the usual number
// and allocates nothing, and it keeps few values live so that they stay
// in registers.
func (r *numReader) read(b []byte, i int, out []float64) (n, next int, eol bool) {
	for ; n < len(out); n++ {
		start := i
		if c := b[i]; c == '-' || c == '+' {
			i++
		}
		var m uint64 // the digits as an integer; wraps beyond 19 digits, and is then not used
		from := i
		for ; b[i]-'0' <= 9; i++ {
			m = m*10 + uint64(b[i]-'0')
		}
		digits := i - from
		exp := 0
		c := b[i]
		if c == '.' || c == r.dec {
			i++
			from = i
			for ; b[i]-'0' <= 9; i++ {
				m = m*10 + uint64(b[i]-'0')
			}
			exp = from - i
			digits -= exp
			c = b[i]
		}
		if digits == 0 {
			return n, start, false
		}
		if c|0x20 == 'e' {
			e, j := exponent(b, i+1)
			if j < 0 {
				return n, start, false // an exponent without digits
			}
			exp += e
			i = j
			c = b[i]
		}
		var v float64
		if digits <= 15 && uint(exp+22) <= 44 { // m < 10^15 < 2^53, exactly a float64
			v = float64(int64(m))
			if exp < 0 {
				v /= pow10[-exp]
			} else {
				v *= pow10[exp]
			}
			if b[start] == '-' {
				v = -v
			}
		} else {
			var ok bool
			if v, ok = r.slow(b[start:i]); !ok {
				return n, start, false
			}
		}
		// The field must end here: the separator, or the line end, or
		// blanks and then one of them.
		switch {
		case c == '\n' || c == '\r':
			out[n] = v
			return n + 1, i, true
		case c == r.sep && c != ' ':
			out[n] = v
			i++
			for b[i] == ' ' || b[i] == '\t' {
				i++
			}
			continue
		}
		j := i
		for b[j] == ' ' || b[j] == '\t' && r.sep != '\t' {
			j++
		}
		switch c = b[j]; {
		case c == '\n' || c == '\r':
			out[n] = v
			return n + 1, j, true
		case c == r.sep && c != ' ':
			j++
			for b[j] == ' ' || b[j] == '\t' {
				j++
			}
		case r.sep == ' ' && j > i:
		default:
			return n, start, false // text after the number
		}
		out[n] = v
		i = j
	}
	return n, i, false
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

// parseNum reads b as one whole number (see numReader.read), with ','
// as a decimal mark too where comma is true.
func parseNum(b []byte, comma bool) (float64, bool) {
	var buf []byte
	return parseNumIn(b, comma, &buf)
}

// parseNumIn is parseNum with a buffer for b and its line end.
func parseNumIn(b []byte, comma bool, buf *[]byte) (float64, bool) {
	if len(b) == 0 || bytes.IndexAny(b, "\r\n") >= 0 || b[len(b)-1] == ' ' || b[len(b)-1] == '\t' {
		return 0, false
	}
	r := numReader{sep: '\n', dec: '.'}
	if comma {
		r.dec = ','
	}
	*buf = append(append((*buf)[:0], b...), '\n')
	var out [1]float64
	if n, _, eol := r.read(*buf, 0, out[:]); n != 1 || !eol {
		return 0, false
	}
	return out[0], true
}
