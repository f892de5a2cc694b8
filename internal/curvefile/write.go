package curvefile

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// Writer appends readings to a curve file in the project's format: the
// metadata lines, the header row "time_s,temp_c[,extra...]", then one
// reading a line. Numbers are written in the shortest form that reads back
// to the same float64, so a written curve reads back reading for reading.
//
// Writer buffers nothing: each Write goes straight to the underlying writer
// (wrap it in a bufio.Writer yourself where that is wanted), so a raw log
// loses nothing that was written before a crash.
type Writer struct {
	w     io.Writer
	extra int
	buf   []byte
}

// NewWriter writes the metadata and the header row and returns a Writer for
// the readings. Metadata keys and values must not hold line breaks; extra
// names the further columns after time_s and temp_c. Names and extra
// values holding a separator (',' ';' tab), a double quote or leading or
// trailing blanks are written quoted ("a,b" and "" for a quote inside), as
// Read expects; line breaks are refused.
func NewWriter(w io.Writer, meta []Meta, extra ...string) (*Writer, error) {
	var b strings.Builder
	for _, m := range meta {
		if strings.ContainsAny(m.Key, "\r\n:") || m.Key == "" || strings.ContainsAny(m.Value, "\r\n") {
			return nil, fmt.Errorf("curvefile: metadata %q: key must be non-empty without ':' or line breaks, value without line breaks", m.Key)
		}
		fmt.Fprintf(&b, "# %s: %s\n", m.Key, m.Value)
	}
	b.WriteString("time_s,temp_c")
	for _, e := range extra {
		if strings.ContainsAny(e, "\r\n") || strings.TrimSpace(e) == "" {
			return nil, fmt.Errorf("curvefile: column name %q must be non-empty without line breaks", e)
		}
		b.WriteString(",")
		b.Write(appendField(nil, e))
	}
	b.WriteString("\n")
	if _, err := io.WriteString(w, b.String()); err != nil {
		return nil, fmt.Errorf("curvefile: writing header: %w", err)
	}
	return &Writer{w: w, extra: len(extra)}, nil
}

// Write appends one reading: time in s, temperature in °C, and one value
// for each extra column (text without line breaks; quoted where needed).
func (w *Writer) Write(timeS, tempC float64, extra ...string) error {
	if len(extra) != w.extra {
		return fmt.Errorf("curvefile: %d extra values for %d extra columns", len(extra), w.extra)
	}
	b := w.buf[:0]
	b = strconv.AppendFloat(b, timeS, 'f', -1, 64)
	b = append(b, ',')
	b = strconv.AppendFloat(b, tempC, 'f', -1, 64)
	for _, e := range extra {
		if strings.ContainsAny(e, "\r\n") {
			return fmt.Errorf("curvefile: extra value %q holds a line break", e)
		}
		b = append(b, ',')
		b = appendField(b, e)
	}
	b = append(b, '\n')
	w.buf = b
	if _, err := w.w.Write(b); err != nil {
		return fmt.Errorf("curvefile: writing reading at %g s: %w", timeS, err)
	}
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
