package curvefile

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Writer appends readings to a curve file in the project's format: the
// metadata lines, the header row "time_s,temp_c[,extra...]", then one
// reading a line. Numbers are written in the shortest form that reads back
// to the same float64, so a written curve reads back reading for reading.
//
// The Writer never writes a file Read cannot read back as it was written:
// metadata values are made safe (CleanValue: control characters and
// invalid UTF-8 shown as escapes, cut to MaxMetaValue), so that nothing a
// device or a form sends can lose a sample; what cannot be made safe
// without changing the data is refused with an error (a key Read would
// not take, a column name or extra value with a line break, a NUL or
// invalid UTF-8, more than MaxExtraColumns extra columns, a line longer
// than MaxLine, a time or temperature that is not finite, more than
// MaxReadings readings).
//
// Writer buffers nothing: each Write goes straight to the underlying writer
// (wrap it in a bufio.Writer yourself where that is wanted), so a raw log
// loses nothing that was written before a crash.
type Writer struct {
	w     io.Writer
	extra int
	rows  int
	buf   []byte
}

// NewWriter writes the metadata and the header row and returns a Writer for
// the readings. Keys are written trimmed and in lower case, as Read gives
// them back, and must be keys Read takes (1 to 64 letters, digits,
// spaces, '_', '-' or '.'); values are written as CleanValue makes them.
// extra names the further columns after time_s and temp_c (trimmed, not
// empty). Names and extra values holding a separator (',' ';' tab), a
// double quote or leading or trailing blanks are written quoted ("a,b" and
// "" for a quote inside), as Read expects.
func NewWriter(w io.Writer, meta []Meta, extra ...string) (*Writer, error) {
	var b []byte
	for _, m := range meta {
		var err error
		if b, err = AppendMeta(b, m); err != nil {
			return nil, err
		}
	}
	if len(extra) > MaxExtraColumns {
		return nil, fmt.Errorf("curvefile: %d extra columns; a curve file keeps at most %d", len(extra), MaxExtraColumns)
	}
	b = append(b, "time_s,temp_c"...)
	for _, e := range extra {
		e = strings.TrimSpace(e)
		if err := checkText(e); err != nil || e == "" {
			return nil, fmt.Errorf("curvefile: column name %q must be UTF-8 text, not empty, without line breaks or NUL", e)
		}
		b = append(b, ',')
		b = appendField(b, e)
	}
	if len(b)-bytes.LastIndexByte(b, '\n') > MaxLine {
		return nil, fmt.Errorf("curvefile: the header row would be longer than %d bytes", MaxLine)
	}
	b = append(b, '\n')
	if _, err := w.Write(b); err != nil {
		return nil, fmt.Errorf("curvefile: writing header: %w", err)
	}
	return &Writer{w: w, extra: len(extra)}, nil
}

// AppendMeta appends one metadata line, "# key: value", as NewWriter
// writes it (the key trimmed and lower-cased, the value made safe with
// CleanValue); the error says why a key cannot be written. For writers of
// curve files that copy metadata lines themselves.
func AppendMeta(b []byte, m Meta) ([]byte, error) {
	key, err := metaKey(m.Key)
	if err != nil {
		return b, err
	}
	b = append(b, "# "...)
	b = append(b, key...)
	b = append(b, ": "...)
	b = append(b, CleanValue(m.Value)...)
	return append(b, '\n'), nil
}

// checkText refuses text Read would not give back as a field: invalid
// UTF-8, line breaks, NUL.
func checkText(s string) error {
	if !utf8.ValidString(s) || strings.ContainsAny(s, "\r\n\x00") {
		return errors.New("not UTF-8 text without line breaks or NUL")
	}
	return nil
}

// Write appends one reading: time in s, temperature in °C (both finite),
// and one value for each extra column (UTF-8 text without line breaks or
// NUL; quoted where needed).
func (w *Writer) Write(timeS, tempC float64, extra ...string) error {
	if len(extra) != w.extra {
		return fmt.Errorf("curvefile: %d extra values for %d extra columns", len(extra), w.extra)
	}
	if math.IsNaN(timeS) || math.IsInf(timeS, 0) || math.IsNaN(tempC) || math.IsInf(tempC, 0) {
		return fmt.Errorf("curvefile: reading %v s, %v °C: not finite", timeS, tempC)
	}
	if w.rows == MaxReadings {
		return fmt.Errorf("curvefile: more than %d readings in one curve file", MaxReadings)
	}
	b := w.buf[:0]
	b = strconv.AppendFloat(b, timeS, 'f', -1, 64)
	b = append(b, ',')
	b = strconv.AppendFloat(b, tempC, 'f', -1, 64)
	for _, e := range extra {
		if err := checkText(e); err != nil {
			return fmt.Errorf("curvefile: extra value %q: %w", e, err)
		}
		b = append(b, ',')
		b = appendField(b, e)
	}
	if len(b) > MaxLine {
		return fmt.Errorf("curvefile: the reading at %g s would make a line longer than %d bytes", timeS, MaxLine)
	}
	b = append(b, '\n')
	w.buf = b
	if _, err := w.w.Write(b); err != nil {
		return fmt.Errorf("curvefile: writing reading at %g s: %w", timeS, err)
	}
	w.rows++
	return nil
}

// WriteCurve writes a whole curve, its metadata and extra columns included.
func WriteCurve(w io.Writer, c *Curve) error {
	names := make([]string, len(c.Extra))
	for i, col := range c.Extra {
		names[i] = col.Name
		if len(col.Values) != len(c.Time) {
			return fmt.Errorf("curvefile: column %q has %d values for %d readings", col.Name, len(col.Values), len(c.Time))
		}
	}
	if len(c.Temp) != len(c.Time) {
		return fmt.Errorf("curvefile: %d temperatures for %d times", len(c.Temp), len(c.Time))
	}
	if len(c.Time) == 0 {
		return errors.New("curvefile: a curve without readings (Read refuses a header without readings)")
	}
	bw := bufio.NewWriter(w)
	cw, err := NewWriter(bw, c.Meta, names...)
	if err != nil {
		return err
	}
	vals := make([]string, len(c.Extra))
	for i := range c.Time {
		for j, col := range c.Extra {
			vals[j] = col.Values[i]
		}
		if err := cw.Write(c.Time[i], c.Temp[i], vals...); err != nil {
			return err
		}
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("curvefile: %w", err)
	}
	return nil
}

// appendField appends s, quoted when Read would otherwise split or trim it.
func appendField(b []byte, s string) []byte {
	if !strings.ContainsAny(s, ",;\t\"") && strings.TrimLeft(s, " ") == s && strings.TrimRight(s, " ") == s {
		return append(b, s...)
	}
	b = append(b, '"')
	b = append(b, strings.ReplaceAll(s, `"`, `""`)...)
	return append(b, '"')
}
