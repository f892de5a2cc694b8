package protocol

import (
	"strings"
	"testing"
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
