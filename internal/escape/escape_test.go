package escape

import (
	"encoding/json"
	"maps"
	"math/rand/v2"
	"strings"
	"testing"
	"unicode/utf8"
)

// TestLine: the sequences a hostile device line could carry, each shown as
// visible escapes. The control sequences are those of ECMA-48 (5th edition,
// 1991): ESC ] 0 ; ... BEL sets the window title (an xterm "OSC"), OSC 52
// writes the clipboard, CSI 2 J clears the screen; U+202E is the
// RIGHT-TO-LEFT OVERRIDE of Unicode Standard Annex #9.
func TestLine(t *testing.T) {
	for _, c := range []struct{ name, in, want string }{
		{"plain", "L-2405 cup 1", "L-2405 cup 1"},
		{"accents and degrees", "Odile Flintcaster, 1250 °C", "Odile Flintcaster, 1250 °C"},
		{"window title (OSC 0)", "\x1b]0;pwned\x07", `\x1b]0;pwned\x07`},
		{"clipboard write (OSC 52)", "\x1b]52;c;Zm9v\x07", `\x1b]52;c;Zm9v\x07`},
		{"8-bit CSI as a byte", "a\x9b2Jb", `a\x9b2Jb`},
		{"C1 CSI as a character", "a\u009b2Jb", `a\u009b2Jb`},
		{"bidi override", "ab\u202edcba", `ab\u202edcba`},
		{"isolates and marks", "\u2066x\u2069\u200e\u061c", `\u2066x\u2069\u200e\u061c`},
		{"line separator", "a\u2028b", `a\u2028b`},
		{"DEL and NUL", "a\x7f\x00", `a\x7f\x00`},
		{"line break and tab", "a\nb\tc\r", `a\x0ab\x09c\x0d`},
		{"invalid UTF-8", "fw=1.3\xff", `fw=1.3\xff`},
	} {
		if got := Line(c.in); got != c.want {
			t.Errorf("%s: Line(%q) = %q, want %q", c.name, c.in, got, c.want)
		}
	}
	if got := Text("two\nlines\twith \x1b[31m"); got != "two\nlines\twith \\x1b[31m" {
		t.Errorf("Text keeps line breaks and tabs only: got %q", got)
	}
}

// TestLineProperties: for random byte strings (fixed seed), Line gives
// valid UTF-8 with no unsafe character, is the identity on safe text, and
// is idempotent.
func TestLineProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(18, 2026))
	alphabet := []string{"a", "é", "\x1b", "\x9b", "\u009b", "\u202e", "\n", "\t", "\x7f", "\xff", "\u2028", "°", `\`}
	for range 5000 {
		var b strings.Builder
		for range rng.IntN(20) {
			b.WriteString(alphabet[rng.IntN(len(alphabet))])
		}
		s := b.String()
		got := Line(s)
		if !utf8.ValidString(got) || strings.ContainsFunc(got, Unsafe) {
			t.Fatalf("Line(%q) = %q still holds unsafe text", s, got)
		}
		if Line(got) != got || !Safe(got) {
			t.Fatalf("Line not idempotent on %q", s)
		}
		if Safe(s) != (got == s) {
			t.Fatalf("Safe(%q) = %v but Line changed it: %q", s, Safe(s), got)
		}
		txt := Text(s)
		if !utf8.ValidString(txt) || strings.ContainsFunc(txt, func(r rune) bool { return Unsafe(r) && r != '\n' && r != '\t' }) {
			t.Fatalf("Text(%q) = %q still holds unsafe text", s, txt)
		}
	}
}

// TestJSON: C1 and bidirectional controls in JSON strings become \u
// escapes (RFC 8259, section 7) and decode back to the same strings.
func TestJSON(t *testing.T) {
	in := map[string]string{"sample": "L-2405\u202e1\u009b2J", "note": "1250 °C, é", "esc": "\x1b]0;x\x07"}
	b, err := json.Marshal(in)
	if err != nil {
		t.Fatal(err)
	}
	got := JSON(b)
	if strings.ContainsFunc(string(got), Unsafe) || !strings.Contains(string(got), `\u202e`) || !strings.Contains(string(got), "°C, é") {
		t.Fatalf("JSON(%s) = %s", b, got)
	}
	var back map[string]string
	if err := json.Unmarshal(got, &back); err != nil || !maps.Equal(back, in) {
		t.Fatalf("decodes to %q (%v), want %q", back, err, in)
	}
	plain := []byte(`{"a":"b"}`)
	if g := JSON(plain); &g[0] != &plain[0] {
		t.Error("plain JSON copied")
	}
}
