package limits

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestFaultLoadDeepOrHuge: files built to make the TOML decoder work for
// minutes (its cost grows with the square of the nesting depth of inline
// tables: an 80 KB file of nested inline tables took 15.7 GB and 122 s
// before the guard) are refused before decoding, with an error naming the
// file and the line; so are oversized files and files that are not regular
// files. The same holds for calibration files.
func TestFaultLoadDeepOrHuge(t *testing.T) {
	dir := t.TempDir()
	nested := func(open, close string, n int) string {
		return strings.Repeat(open, n) + "1" + strings.Repeat(close, n)
	}
	head := "version = \"t\"\n[alloy.grey-iron]\nfamily = \"iron\"\n"
	for _, c := range []struct {
		name, text string
		line       int
		msg        string
	}{
		{"80 KB of nested inline tables", head + "x = " + nested("{a = ", "}", 80_000/6) + "\n", 4, "nests arrays or inline tables more than 4 deep"},
		{"nested arrays", head + "x = " + nested("[", "]", 5000) + "\n", 4, "more than 4 deep"},
		{"a deep table header", head + "[" + strings.Repeat("a.", 5000) + "b]\n", 4, "keys deep"},
		{"a deep dotted key", head + strings.Repeat("a.", 5000) + "b = 1\n", 4, "keys deep"},
		{"inline tables after text the scanner stops at", head + "y = 1 2\nx = " + nested("{a = ", "}", 5000) + "\n", 5, "brackets or braces nest"},
		{"one level too deep", head + "x = " + nested("[", "]", MaxValueDepth+1) + "\n", 4, "more than 4 deep"},
		{"oversized", head + "# " + strings.Repeat("x", MaxFileBytes) + "\n", 0, "more than a limits file may hold"},
	} {
		t.Run(c.name, func(t *testing.T) {
			path := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "-")+".toml")
			if err := os.WriteFile(path, []byte(c.text), 0o644); err != nil {
				t.Fatal(err)
			}
			for what, load := range map[string]func(string) error{
				"Load":            func(p string) error { _, err := Load(p); return err },
				"LoadCalibration": func(p string) error { _, err := LoadCalibration(p); return err },
			} {
				err := load(path)
				var le *Error
				if !errors.As(err, &le) || !strings.HasPrefix(err.Error(), path) || le.Line != c.line || !strings.Contains(err.Error(), c.msg) {
					t.Errorf("%s: %v (line %d); want %s, line %d, %q", what, err, lineOfErr(le), path, c.line, c.msg)
				}
			}
		})
	}
	// The bounds leave room for real files: the shipped example, nested as
	// deep as the format goes, loads.
	ok := head + "[alloy.grey-iron.reference]\nliquidus_slopes = { si = -6.6 }\n" +
		"[alloy.grey-iron.metric]\neutectic_min_c = { required = true, pass_min = 1140.0 }\n"
	path := filepath.Join(dir, "fine.toml")
	os.WriteFile(path, []byte(ok), 0o644)
	if _, err := Load(path); err != nil {
		t.Errorf("a file within the bounds: %v", err)
	}
	if _, err := Parse(Example(), "shipped"); err != nil {
		t.Errorf("the shipped example: %v", err)
	}
	if _, err := Load(dir); err == nil || !strings.Contains(err.Error(), "not a regular file") {
		t.Errorf("directory: %v", err)
	}
}

func lineOfErr(e *Error) int {
	if e == nil {
		return -1
	}
	return e.Line
}

// TestFaultControlCharacters: control characters (C0, DEL, C1) and
// bidirectional controls in limits text (advice, descriptions, the note,
// version, edited_by, alloy names) are refused with an error naming the
// file, the line and the key; line breaks and tabs are allowed in the note
// only. Printed raw, an ESC could retitle the operator's terminal.
func TestFaultControlCharacters(t *testing.T) {
	for _, c := range []struct {
		name, text string
		line       int
		key, char  string
	}{
		{"ESC in advice", goodFile + "low = \"consider \\u001b]0;pwned\\u0007 inoculating\"\n", 9, "alloy.grey-iron.metric.eutectic_min_c.low", "U+001B (control)"},
		{"raw DEL in a description", strings.Replace(goodFile, "family = \"iron\"\n", "family = \"iron\"\ndescription = \"grey\x7f\"\n", 1), 5, "alloy.grey-iron.description", "control characters"}, // the decoder's own refusal
		{"C1 CSI in the version", strings.Replace(goodFile, `"t1"`, `"t1\u009b2J"`, 1), 1, "version", "U+009B"},
		{"bidi override in edited_by", "edited_by = \"Pell \u202eBrasswick\"\n" + goodFile, 1, "edited_by", "U+202E (bidirectional control)"},
		{"isolate in high advice", goodFile + "high = \"a \u2066b\u2069\"\n", 9, "alloy.grey-iron.metric.eutectic_min_c.high", "U+2066"},
		{"tab in missing advice", goodFile + "missing = \"a\\tb\"\n", 9, "alloy.grey-iron.metric.eutectic_min_c.missing", "U+0009"},
		{"newline in an alloy name", strings.ReplaceAll(goodFile, "grey-iron", "\"grey\\niron\""), 3, "alloy.grey\niron", "U+000A"},
		{"ESC in a metric name", goodFile + "\n[alloy.grey-iron.metric.\"ce\\e[2J\"]\npass_min = 1.0\n", 10, "alloy.grey-iron.metric.ce\x1b[2J", "U+001B"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Parse([]byte(c.text), "shop.toml")
			var le *Error
			if !errors.As(err, &le) || le.File != "shop.toml" || le.Line != c.line || le.Key != c.key || !strings.Contains(err.Error(), c.char) {
				t.Errorf("%v (line %d, key %q); want line %d, key %q, %s", err, lineOfErr(le), keyOfErr(le), c.line, c.key, c.char)
			}
			for _, line := range strings.Split(fmt.Sprint(err), "\n") { // errors.Join puts one error a line
				if strings.ContainsFunc(line, unsafeRune) {
					t.Errorf("the error itself holds a raw control character: %q", line)
				}
			}
		})
	}
	// A multi-line note keeps its line breaks and tabs.
	note := "version = \"t1\"\nnote = \"\"\"Pell Brasswick:\n\tkeep the holder H3 bands\"\"\"\n" + goodFile[len("version = \"t1\"\n"):]
	if _, err := Parse([]byte(note), "shop.toml"); err != nil {
		t.Errorf("multi-line note: %v", err)
	}
}

func keyOfErr(e *Error) string {
	if e == nil {
		return ""
	}
	return e.Key
}
