package protocol

import (
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/escape"
)

// TestFaultParseLineNonFinite: NaN and infinity in every numeric key and
// in the plain one-number form, in any spelling, and numbers that overflow
// float64, are garbage with a reason (DEVELOPERS.md, line protocol: "no
// inf, nan"); none becomes a reading.
func TestFaultParseLineNonFinite(t *testing.T) {
	for _, in := range []string{
		"c=NaN", "c=nan", "c=-nan", "c=inf", "c=+Inf", "c=-Infinity", "c=1e999", "c=-1e400",
		"mv=NaN cj=25", "mv=inf", "mv=1e999", "mv=1.0 cj=nan", "mv=1.0 cj=-inf", "mv=1.0 cj=1e999",
		string(AppendChecksum([]byte("ch=1 ms=1200 c=NaN"))), "NaN", "nan", "inf", "-Inf", "1e999", "+1e309",
	} {
		l, err := ParseLine([]byte(in))
		if err == nil {
			t.Errorf("ParseLine(%q) accepted: %+v", in, l)
			continue
		}
		if msg := err.Error(); !strings.Contains(msg, "not a decimal number") && !strings.Contains(msg, "out of range") &&
			!strings.Contains(msg, "not key=value") {
			t.Errorf("ParseLine(%q): %v; want a reason", in, err)
		}
	}
}

// TestFaultParseLineHostileText: a device line cannot hand control
// characters, escape sequences, bidirectional overrides or invalid UTF-8
// to the program. Device-information values holding them are garbage
// (before the fix `! fw=1.3\xff` and C1 or bidi characters passed, and the
// curve file written from them could not be read back), and no error
// message carries them raw: before the fix, the message for a key with an
// empty value printed the key's bytes, and one serial line retitled the
// terminal (ECMA-48 OSC 0) and wrote its clipboard (OSC 52).
func TestFaultParseLineHostileText(t *testing.T) {
	for _, c := range []struct{ name, in string }{
		{"invalid UTF-8 in a value", "! fw=1.3\xff"},
		{"C1 CSI in a value", "! fw=1.3\u009b2J"},
		{"8-bit CSI byte in a value", "! fw=1.3\x9b2J"},
		{"bidi override in a value", "! sample=L-2405\u202e1 alloy=grey-iron"},
		{"line separator in a quoted value", "! note=\"a\u2028b\""},
		{"ESC in a quoted value", "! note=\"\x1b]0;x\x07\""},
		{"title sequence as a key with an empty value", "\x1b]0;pwned\x07="},
		{"clipboard write as a key with an empty value", "c=1 \x1b]52;c;Zm9v\x07="},
		{"escape in a reading's key", "\x1b[2Jc=1"},
		{"escape in an unknown fault", "f=\x1b[2J"},
		{"escape in a channel id", "ch=\x1b[2J c=1"},
	} {
		t.Run(c.name, func(t *testing.T) {
			l, err := ParseLine([]byte(c.in))
			if err == nil {
				t.Fatalf("ParseLine(%q) accepted: %+v", c.in, l)
			}
			if msg := err.Error(); !escape.Safe(msg) {
				t.Errorf("the error holds raw control text: %q", msg)
			}
		})
	}
	// Printable text beyond ASCII stays a value.
	l, err := ParseLine([]byte("! operator=\"Odile Flintcaster\" note=1250°C"))
	if err != nil || l.InfoValue("note") != "1250°C" {
		t.Errorf("printable UTF-8 refused: %v %+v", err, l)
	}
}
