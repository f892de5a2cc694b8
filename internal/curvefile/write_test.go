package curvefile

import (
	"bytes"
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"
	"unicode/utf8"
)

// TestWriterMakesMetadataSafe: whatever a device or a form puts into a
// metadata value, the file reads back, with the value as CleanValue
// makes it (issue: one invalid byte, or a 1.65 MB "# device:" line of
// 50,000 keys, made a file that analyze refused).
func TestWriterMakesMetadataSafe(t *testing.T) {
	var device strings.Builder
	for i := range 50_000 {
		fmt.Fprintf(&device, "info_key_%05d=value_%05d_wide ", i, i) // 33 bytes a key, as in the issue
	}
	tests := []struct{ name, in, want string }{
		{"invalid UTF-8", "1.3\xff", `1.3\xff`},
		{"terminal title and clipboard sequences", "\x1b]0;pwned\x07\x1b]52;c;Zm9v\x07", `\x1b]0;pwned\x07\x1b]52;c;Zm9v\x07`},
		{"line breaks", "line 1\nline 2\r\nline 3", `line 1\x0aline 2\x0d\x0aline 3`},
		{"C1 control and bidirectional override", "ab\u0085c\u202edcba", `ab\u0085c\u202edcba`},
		{"DEL, tab kept", "a\x7fb\tc", "a\\x7fb\tc"},
		{"blanks trimmed", "  Pell Brasswick \t", "Pell Brasswick"},
		{"plain text untouched", "L-2417 cup 1 (°C, ü, 鋳)", "L-2417 cup 1 (°C, ü, 鋳)"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := CleanValue(tt.in); got != tt.want {
				t.Errorf("CleanValue(%q) = %q, want %q", tt.in, got, tt.want)
			}
			back := writeRead(t, []Meta{{"note", tt.in}})
			if !reflect.DeepEqual(back.Meta, []Meta{{"note", tt.want}}) {
				t.Errorf("read back %q, want %q", back.Meta, tt.want)
			}
		})
	}
	long := device.String()
	back := writeRead(t, []Meta{{"device", long}, {"alloy", "grey-iron"}})
	v := back.Get("device")
	kept, note, _ := strings.Cut(v, " [cut: ")
	var cut int
	if _, err := fmt.Sscanf(note, "%d bytes]", &cut); err != nil || len(long) < 1_600_000 || len(v) > MaxMetaValue ||
		!strings.HasPrefix(long, kept) || len(kept)+cut != len(strings.TrimSpace(long)) || back.Get("alloy") != "grey-iron" {
		t.Errorf("a %d-byte device line read back as %d bytes ending %q", len(long), len(v), v[max(0, len(v)-40):])
	}
	for _, v := range []string{long, "\xff\x1b\u202e", "a [cut: 3 bytes]", strings.Repeat("é", MaxMetaValue)} {
		if c := CleanValue(v); CleanValue(c) != c || !utf8.ValidString(c) || len(c) > MaxMetaValue {
			t.Errorf("CleanValue is not stable on %.20q", v)
		}
	}
}

// writeRead writes a one-reading curve with the metadata and reads it
// back.
func writeRead(t *testing.T, meta []Meta) *Curve {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteCurve(&buf, &Curve{Meta: meta, Time: []float64{0}, Temp: []float64{1300}}); err != nil {
		t.Fatal(err)
	}
	c, err := Read(&buf, "back.csv")
	if err != nil {
		t.Fatalf("the writer wrote a file the reader refuses: %v", err)
	}
	return c
}

// TestWriterKeysAndRefusals: keys are written as Read gives them back, or
// refused; what cannot be made safe without changing the data is refused.
func TestWriterKeysAndRefusals(t *testing.T) {
	back := writeRead(t, []Meta{{" Operator ", "Odile Flintcaster"}, {"Cold_Junction_C", "24.5"}})
	if !reflect.DeepEqual(back.Meta, []Meta{{"operator", "Odile Flintcaster"}, {"cold_junction_c", "24.5"}}) {
		t.Errorf("keys read back as %q", back.Meta)
	}
	var buf bytes.Buffer
	for _, k := range []string{"", "  ", "a:b", "x/y", "line\nbreak", strings.Repeat("k", 65), "\xff"} {
		if _, err := NewWriter(&buf, []Meta{{k, "v"}}); err == nil {
			t.Errorf("key %q accepted", k)
		}
	}
	for _, name := range []string{"", " ", "a\nb", "nul\x00", "\xfe"} {
		if _, err := NewWriter(&buf, nil, name); err == nil {
			t.Errorf("column name %q accepted", name)
		}
	}
	if _, err := NewWriter(&buf, nil, make([]string, MaxExtraColumns+1)...); err == nil || !strings.Contains(err.Error(), "at most 64") {
		t.Errorf("%d extra columns: %v", MaxExtraColumns+1, err)
	}
	w, err := NewWriter(&buf, nil, "flags")
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range []struct {
		t, c float64
		x    string
	}{{math.NaN(), 1, ""}, {0, math.Inf(1), ""}, {0, 1, "a\rb"}, {0, 1, "\xff"}, {0, 1, strings.Repeat("x", MaxLine)}} {
		if err := w.Write(r.t, r.c, r.x); err == nil {
			t.Errorf("reading %v %v %.10q accepted", r.t, r.c, r.x)
		}
	}
	if err := WriteCurve(&buf, &Curve{}); err == nil {
		t.Error("a curve without readings written")
	}
}

// TestWriterExtraNamesReadBack: extra columns named like a time or a
// temperature (as a logger export read with named columns keeps them) are
// kept as extras when read back: the own header's time_s,temp_c come
// first and fix the roles.
func TestWriterExtraNamesReadBack(t *testing.T) {
	c := &Curve{Time: []float64{0, 0.1}, Temp: []float64{700, 699.5}, Extra: []Column{
		{"Time", []string{"07:10:00", "07:10:00"}}, {"Temp [°C]", []string{"24", "24"}}, {"EMF [mV]", []string{"", ""}}, {"time_s", []string{"a", "b"}},
	}}
	var buf bytes.Buffer
	if err := WriteCurve(&buf, c); err != nil {
		t.Fatal(err)
	}
	back, err := Read(&buf, "back.csv")
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back.Extra, c.Extra) || !sameFloats(back.Time, c.Time) {
		t.Errorf("read back %q", back.Extra)
	}
}

// FuzzWriteRead writes any metadata, column name and values with the
// Writer: it either refuses them, for the reasons it documents, or writes
// a file that Read reads back with the metadata as CleanValue makes them
// and everything else bit for bit.
func FuzzWriteRead(f *testing.F) {
	f.Add("alloy", "grey-iron", "flags", "gap_before", 0.1, 1300.25)
	f.Add("device", "fw=1.3\xff tc=K", "note", "a,b;\"c\"", -0.0, 24.5)
	f.Add("Note", "\x1b]52;c;Zm9v\x07\u202e", " ch ", " padded ", 1e300, -1e-300)
	f.Add("a:b", "x", "", "", 1.0, 2.0)
	f.Fuzz(func(t *testing.T, key, value, name, extra string, tm, tc float64) {
		var buf bytes.Buffer
		meta := []Meta{{key, value}, {"alloy", value}}
		w, err := NewWriter(&buf, meta, name)
		_, keyErr := metaKey(key)
		nameOK := checkText(strings.TrimSpace(name)) == nil && strings.TrimSpace(name) != ""
		if (err == nil) != (keyErr == nil && nameOK) {
			t.Fatalf("NewWriter(%q, %q): %v (key %v, name ok %v)", key, name, err, keyErr, nameOK)
		}
		if err != nil {
			return
		}
		err = w.Write(tm, tc, extra)
		finite := !math.IsNaN(tm) && !math.IsInf(tm, 0) && !math.IsNaN(tc) && !math.IsInf(tc, 0)
		if (err == nil) != (finite && checkText(extra) == nil) {
			t.Fatalf("Write(%v, %v, %q): %v", tm, tc, extra, err)
		}
		if err != nil {
			return
		}
		c, err := Read(&buf, "fuzz.csv")
		if err != nil {
			t.Fatalf("the writer wrote a file the reader refuses: %v\n%q", err, buf.String())
		}
		k, _ := metaKey(key)
		if want := []Meta{{k, CleanValue(value)}, {"alloy", CleanValue(value)}}; !reflect.DeepEqual(c.Meta, want) {
			t.Fatalf("meta %q, want %q", c.Meta, want)
		}
		if want := []Column{{strings.TrimSpace(name), []string{extra}}}; !reflect.DeepEqual(c.Extra, want) {
			t.Fatalf("extra %q, want %q", c.Extra, want)
		}
		if !sameFloats(c.Time, []float64{tm}) || !sameFloats(c.Temp, []float64{tc}) {
			t.Fatalf("reading %v %v, want %v %v", c.Time, c.Temp, tm, tc)
		}
	})
}
