// Package escape makes text from a device, a file or a database safe to
// show: every character that a terminal, a log reader or an XML parser
// would act on instead of showing is replaced by a visible escape.
//
// The characters escaped (Unsafe) are the C0 controls (U+0000–U+001F),
// DEL (U+007F), the C1 controls (U+0080–U+009F), the Unicode
// bidirectional-text controls (U+061C, U+200E, U+200F, U+202A–U+202E,
// U+2066–U+2069; Unicode Standard Annex #9, "Explicit Directional
// Formatting Characters"), the line and paragraph separators U+2028 and
// U+2029, and every byte that is not part of valid UTF-8 (a lone 0x9B
// byte is the 8-bit form of the ECMA-48 Control Sequence Introducer). An
// escape sequence (ECMA-48: ESC, CSI, OSC...) can retitle a terminal,
// write to its clipboard (OSC 52) or move its cursor; a bidirectional
// override reorders what the operator reads.
//
// C0 controls and DEL are written \xNN, invalid bytes \xNN, the others
// \uNNNN (lower-case hexadecimal), the form curve files hold such values
// in (docs/curve-files.md).
//
// Every sink that shows text the program did not write itself goes
// through Text or Line: the dashboard, the headless lines, error messages
// on stderr, the report page, history and export, the port list.
package escape

import (
	"io"
	"strings"
	"unicode/utf8"
)

// Unsafe reports whether r is a character Text escapes.
func Unsafe(r rune) bool {
	switch {
	case r < 0x20, r == 0x7f, r >= 0x80 && r <= 0x9f:
		return true
	case r == 0x061c, r == 0x200e, r == 0x200f,
		r >= 0x202a && r <= 0x202e,
		r >= 0x2066 && r <= 0x2069,
		r == 0x2028, r == 0x2029:
		return true
	}
	return false
}

// Text is s with every unsafe character and invalid byte escaped, except
// line breaks (LF) and tabs: for messages of several lines.
func Text(s string) string { return escape(s, true) }

// Line is s with every unsafe character and invalid byte escaped, line
// breaks and tabs included: for one line or one field of a screen.
func Line(s string) string { return escape(s, false) }

// Safe reports whether Line(s) == s.
func Safe(s string) bool {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x7f {
			return safeSlow(s)
		}
	}
	return true
}

func safeSlow(s string) bool {
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && n == 1 || Unsafe(r) {
			return false
		}
		i += n
	}
	return true
}

func escape(s string, keepBreaks bool) string {
	if Safe(s) {
		return s
	}
	const hex = "0123456789abcdef"
	var b strings.Builder
	b.Grow(len(s) + 8)
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n == 1:
			b.WriteString(`\x`)
			b.WriteByte(hex[s[i]>>4])
			b.WriteByte(hex[s[i]&15])
		case keepBreaks && (r == '\n' || r == '\t'):
			b.WriteByte(byte(r))
		case r < 0x20 || r == 0x7f:
			b.WriteString(`\x`)
			b.WriteByte(hex[r>>4])
			b.WriteByte(hex[r&15])
		case Unsafe(r):
			b.WriteString(`\u`)
			for shift := 12; shift >= 0; shift -= 4 {
				b.WriteByte(hex[(r>>shift)&15])
			}
		default:
			b.WriteString(s[i : i+n])
		}
		i += n
	}
	return b.String()
}

// JSON is JSON text b with every C1 control and bidirectional control
// written as a \uXXXX escape (encoding/json writes C0 controls, U+2028
// and U+2029 escaped already, and invalid UTF-8 as U+FFFD). Such
// characters stand only inside strings in JSON, where the escape means
// the same character (RFC 8259, section 7): a decoder reads back exactly
// what was encoded, and a terminal shows JSON lines without acting on
// them. b is returned as it is when it holds none.
func JSON(b []byte) []byte {
	i := 0
	for i < len(b) && b[i] < 0x80 {
		i++
	}
	if i == len(b) {
		return b
	}
	const hex = "0123456789abcdef"
	var out []byte
	last := 0
	for i < len(b) {
		if b[i] < 0x80 {
			i++
			continue
		}
		r, n := utf8.DecodeRune(b[i:])
		if r >= 0x80 && Unsafe(r) {
			if out == nil {
				out = make([]byte, 0, len(b)+16)
			}
			out = append(out, b[last:i]...)
			out = append(out, '\\', 'u', hex[r>>12&15], hex[r>>8&15], hex[r>>4&15], hex[r&15])
			last = i + n
		}
		i += n
	}
	if out == nil {
		return b
	}
	return append(out, b[last:]...)
}

// JSONWriter is w with each write rewritten by JSON: for a json.Encoder,
// which writes one whole value a call.
func JSONWriter(w io.Writer) io.Writer { return jsonWriter{w} }

type jsonWriter struct{ w io.Writer }

func (j jsonWriter) Write(p []byte) (int, error) {
	if _, err := j.w.Write(JSON(p)); err != nil {
		return 0, err
	}
	return len(p), nil
}
