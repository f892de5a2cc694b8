package curvefile

import (
	"fmt"
	"github.com/undercool-foundry/undercool/internal/escape"
	"strings"
	"unicode/utf8"
)

// MaxMetaValue is the longest metadata value a curve file holds, in bytes
// (8 KiB). Read and the Writer both cut longer values (CleanValue).
const MaxMetaValue = 8 << 10

// CleanValue is a metadata value in the form a curve file holds it, the
// one form the Writer writes and Read gives back:
//
//   - blanks at either end trimmed (Unicode white space, as strings.TrimSpace);
//   - each byte that is not valid UTF-8 written as \xNN;
//   - control characters written as visible escapes: C0 controls other
//     than the tab, and DEL, as \xNN (a line break becomes \x0a, an escape
//     \x1b), C1 controls and the bidirectional-text controls (U+061C,
//     U+200E, U+200F, U+202A–U+202E, U+2066–U+2069) and the line and
//     paragraph separators U+2028, U+2029 as \uNNNN;
//   - cut to at most MaxMetaValue bytes, at a character, ending with
//     " [cut: N bytes]".
//
// A device or a form can thus put anything into a value without making the
// file unreadable, or sending control sequences to a terminal that shows
// it. CleanValue(CleanValue(v)) == CleanValue(v).
func CleanValue(v string) string {
	s, _ := cleanValue(v)
	return s
}

// cleanValue is CleanValue and the number of bytes it cut.
func cleanValue(v string) (string, int) {
	v = strings.TrimSpace(v)
	if plain(v) && len(v) <= MaxMetaValue {
		return v, 0
	}
	var b strings.Builder
	for i := 0; i < len(v); {
		r, n := utf8.DecodeRuneInString(v[i:])
		switch {
		case r == utf8.RuneError && n == 1:
			fmt.Fprintf(&b, `\x%02x`, v[i])
		case r < 0x20 && r != '\t' || r == 0x7f:
			fmt.Fprintf(&b, `\x%02x`, r)
		case isControl(r):
			fmt.Fprintf(&b, `\u%04x`, r)
		default:
			b.WriteString(v[i : i+n])
		}
		i += n
	}
	s := strings.TrimSpace(b.String())
	if len(s) <= MaxMetaValue {
		return s, 0
	}
	// Room for the note, whose number has at most 10 digits.
	keep := MaxMetaValue - len(" [cut: 0123456789 bytes]")
	for keep > 0 && !utf8.RuneStart(s[keep]) {
		keep--
	}
	kept := strings.TrimSpace(s[:keep])
	cut := len(s) - len(kept)
	return kept + fmt.Sprintf(" [cut: %d bytes]", cut), cut
}

// plain reports whether s is printable ASCII and tabs only.
func plain(s string) bool {
	for i := 0; i < len(s); i++ {
		if c := s[i]; (c < 0x20 && c != '\t') || c >= 0x7f {
			return false
		}
	}
	return true
}

// isControl reports the characters above ASCII that CleanValue escapes:
// C1 controls, bidirectional-text controls, line and paragraph separators
// (escape.Unsafe).
func isControl(r rune) bool { return r >= 0x80 && escape.Unsafe(r) }

// metaKey is a metadata key as Read gives it back (trimmed, lower case),
// or an error where Read would not take it as a key.
func metaKey(k string) (string, error) {
	key := strings.ToLower(strings.TrimSpace(k))
	if !validKey(key) {
		return "", fmt.Errorf("curvefile: metadata key %q: keys are 1 to 64 letters, digits, spaces, '_', '-' or '.'", k)
	}
	return key, nil
}
