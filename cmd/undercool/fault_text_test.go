package main

import (
	"bytes"
	"context"
	"encoding/json"
	"encoding/xml"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/store"
)

// hostile is text a device, a file or another program's write could put
// into the records: an xterm title sequence, an OSC 52 clipboard write
// (ECMA-48 operating system commands), a screen clear through the 8-bit
// CSI (U+009B) and a right-to-left override (Unicode UAX #9).
const hostile = "L-2405\x1b]0;pwned\x07\x1b]52;c;Zm9v\x07\u009b2J\u202e1"

// rawControl reports whether s holds a character package escape would
// escape, apart from line breaks and tabs (and the progress line's own
// "\r\x1b[K", which none of these commands writes).
func rawControl(s string) bool {
	return strings.ContainsFunc(s, func(r rune) bool { return r != '\n' && r != '\t' && escape.Unsafe(r) })
}

// TestFaultHostileTextInRecords: a sample stored with control characters
// in its id, ladle, alloy, reasons and advice (a database written by an
// older undercool, or by hand) reaches neither the terminal raw through
// `history` nor the CSV of `export`, and the SVG report page stays
// well-formed XML (before the fix an escape character in the sample id
// made the page invalid XML: XML 1.0, section 2.2, allows no C0 control
// but tab, LF and CR, not even as a character reference).
func TestFaultHostileTextInRecords(t *testing.T) {
	dir := t.TempDir()
	curve := reportCurveFile(t, dir)
	c, err := curvefile.ReadFile(curve)
	if err != nil {
		t.Fatal(err)
	}
	dbPath := filepath.Join(dir, "records.db")
	db, err := store.Open(context.Background(), dbPath)
	if err != nil {
		t.Fatal(err)
	}
	rec := assess.Assess(assess.Input{File: curve, Alloy: c.Get("alloy"), Time: c.Time, Temp: c.Temp, Meta: c.Meta})
	rec.Reasons = append(rec.Reasons, "reason "+hostile)
	rec.Advice = append(rec.Advice, "consider "+hostile)
	s := sampleFromCurve(curve, c, rec)
	s.Sample, s.Ladle, s.Operator, s.Note = hostile, hostile, hostile, hostile
	s.CurveSHA256, _ = store.HashFile(curve)
	id, err := db.AddSample(context.Background(), s)
	if err != nil {
		t.Fatal(err)
	}
	db.Close()

	code, out, errs := recordsRun(t, dbPath, "history")
	if code != 0 || !strings.Contains(out, `L-2405\x1b]0;pwned`) || rawControl(out+errs) {
		t.Errorf("history: status %d, raw control text or no escapes:\n%q\n%q", code, out, errs)
	}
	code, out, _ = recordsRun(t, dbPath, "history", "--json")
	var line struct {
		Sample string `json:"sample"`
	}
	// escaped as JSON escapes, which decode back to the stored text
	if code != 0 || rawControl(out) || json.Unmarshal([]byte(out), &line) != nil || line.Sample != hostile {
		t.Errorf("history --json: status %d, %q", code, out)
	}
	csvPath := filepath.Join(dir, "out.csv")
	if code, _, errs := recordsRun(t, dbPath, "export", "--csv", "--out", csvPath); code != 0 {
		t.Fatalf("export: %d %s", code, errs)
	}
	if b, _ := os.ReadFile(csvPath); rawControl(strings.ReplaceAll(string(b), "\r\n", "\n")) || !bytes.Contains(b, []byte(`\u202e`)) {
		t.Errorf("export CSV holds raw control text: %q", b)
	}
	page := filepath.Join(dir, "page.svg")
	if code, _, errs := recordsRun(t, dbPath, "report", strconv.FormatInt(id, 10), "--out", page); code != 0 {
		t.Fatalf("report: %d %s", code, errs)
	}
	svg, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	dec := xml.NewDecoder(bytes.NewReader(svg))
	for {
		_, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("the SVG page is not well-formed XML: %v", err)
		}
	}
	if !bytes.Contains(svg, []byte(`L-2405\x1b]0;pwned`)) {
		t.Error("the page does not show the sample id with visible escapes")
	}
}

// TestFaultHostileTextOnStderr: a file name or a port name with control
// characters in it comes back in the error with visible escapes.
func TestFaultHostileTextOnStderr(t *testing.T) {
	name := filepath.Join(t.TempDir(), "cup\x1b]0;pwned\x07.csv")
	code, out, errs := recordsRun(t, filepath.Join(t.TempDir(), "r.db"), "analyze", name)
	if code != 1 || rawControl(out+errs) || !strings.Contains(errs, `cup\x1b]0;pwned\x07.csv`) {
		t.Errorf("status %d, stderr %q", code, errs)
	}
	code, _, errs = recordsRun(t, filepath.Join(t.TempDir(), "r.db"), "record", "--port", "/dev/tty\x1b[2J", "--wait-s", "0.2", "--no-store")
	if code != 1 || rawControl(errs) {
		t.Errorf("record: status %d, stderr %q", code, errs)
	}
}

// TestFaultPortsHostileUSBStrings: a USB adapter's vendor, product and
// serial strings are whatever its firmware says; `ports` shows them with
// visible escapes (before the fix they were printed raw).
func TestFaultPortsHostileUSBStrings(t *testing.T) {
	acqFakePorts(t, []acquire.PortInfo{
		{Name: "/dev/ttyUSB0", USB: true, VID: "0403", PID: "6001", Serial: "A1\x1b[2J", Manufacturer: "FT\u202eDI", Product: "\x1b]0;pwned\x07"},
	}, nil)
	code, out, _ := acqRun(t, context.Background(), "ports")
	want := "/dev/ttyUSB0  USB  vid 0403  pid 6001  serial A1\\x1b[2J  FT\\u202eDI  \\x1b]0;pwned\\x07\n"
	if code != 0 || out != want {
		t.Errorf("exit %d, output %q, want %q", code, out, want)
	}
}
