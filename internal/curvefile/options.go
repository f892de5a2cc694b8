package curvefile

import (
	"fmt"
	"io"
	"strconv"
	"strings"
)

// Options say which columns of a curve file hold the time and the
// temperature, and in which units, where the header does not say so in a
// way Read recognises: a logger export whose header reads "Date", "Time",
// "AI:2  Analog Input", "MT2   Time", a table with one temperature column
// per sample ("time,Sn100,Sn90,..."), or a file without a header whose
// temperature comes first. The zero Options read a file as Read does.
//
// On the command line the same options are --time-column, --temp-column,
// --time-unit and --temp-unit (ColumnHint).
type Options struct {
	// TimeColumn and TempColumn name a column by its header text or by its
	// position. A number (1, 2, ...) is a position, the first column being
	// 1; any other text is matched against the header names without regard
	// to case or runs of blanks, either whole or without a unit decoration
	// ("mt2 time" matches "MT2   Time" and "MT2 Time (s)"). A named column
	// wins over one the reader would pick by itself, which is then kept as
	// an extra column. In a file without a header only positions name
	// columns. Empty: the reader finds the column itself.
	TimeColumn, TempColumn string
	// TimeUnit is the time column's unit: s, ms or min. TempUnit is the
	// temperature column's: C, F or K (also written °C, degC, celsius,
	// °F, fahrenheit, kelvin). Given, a unit overrides what the header
	// says; not given, a column whose header names no unit is read in s
	// and °C.
	TimeUnit, TempUnit string
}

// ColumnHint is the advice that errors about the columns end with: how to
// name the time and temperature columns and their units.
const ColumnHint = "name the columns with --time-column and --temp-column (header text, or the position from 1) and their units with --time-unit s|ms|min and --temp-unit C|F|K"

// Read reads one curve file with the options; name labels it in errors.
func (o Options) Read(r io.Reader, name string) (*Curve, error) {
	if err := o.Check(); err != nil {
		return nil, fmt.Errorf("curvefile: %s: %w", name, err)
	}
	size, exact := sizeHint(r)
	return read(r, name, o, size, exact)
}

// ReadFile reads the curve file at path with the options. Anything that
// is not a regular file (a directory, a FIFO, a device, a socket) is
// refused before it is opened for reading, so that a FIFO without a writer
// cannot block; see the package's ReadFile.
func (o Options) ReadFile(path string) (*Curve, error) {
	if err := o.Check(); err != nil {
		return nil, fmt.Errorf("curvefile: %s: %w", path, err)
	}
	f, size, err := openRegular(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return read(f, path, o, size, size >= 0)
}

// Check reports whether the units are known and the column names usable.
func (o Options) Check() error {
	if _, err := o.timeScale(); err != nil {
		return err
	}
	if _, _, err := o.tempUnit(); err != nil {
		return err
	}
	for _, c := range []struct{ what, spec string }{{"time", o.TimeColumn}, {"temperature", o.TempColumn}} {
		if c.spec != "" && strings.TrimSpace(c.spec) == "" {
			return fmt.Errorf("the %s column is named by blanks only", c.what)
		}
		if n, isPos := position(c.spec); isPos && n < 1 {
			return fmt.Errorf("the %s column's position %q: positions start at 1", c.what, c.spec)
		}
	}
	if o.TimeColumn != "" && o.TimeColumn == o.TempColumn {
		return fmt.Errorf("the time and the temperature column are both named %q", o.TimeColumn)
	}
	return nil
}

// IsZero reports whether no option is set.
func (o Options) IsZero() bool { return o == Options{} }

// timeScale is TimeUnit as the number of its units in a second (0: not
// given).
func (o Options) timeScale() (float64, error) {
	if o.TimeUnit == "" {
		return 0, nil
	}
	if s, ok := timeUnits[cleanUnit(strings.ToLower(strings.TrimSpace(o.TimeUnit)))]; ok {
		return s, nil
	}
	return 0, fmt.Errorf("time unit %q is not known (s, ms or min)", o.TimeUnit)
}

// tempUnit is TempUnit (ok false: not given).
func (o Options) tempUnit() (u tempUnit, ok bool, err error) {
	if o.TempUnit == "" {
		return unitC, false, nil
	}
	if u, ok := tempUnits[cleanUnit(strings.ToLower(strings.TrimSpace(o.TempUnit)))]; ok {
		return u, true, nil
	}
	return unitC, false, fmt.Errorf("temperature unit %q is not known (C, F or K)", o.TempUnit)
}

// position reads a column spec that is a number; isPos is false for a
// name.
func position(spec string) (n int, isPos bool) {
	s := strings.TrimSpace(spec)
	if s == "" || strings.Trim(s, "0123456789") != "" {
		return 0, false
	}
	n, err := strconv.Atoi(s)
	if err != nil {
		return 1 << 30, true // more columns than any line can hold
	}
	return n, true
}

// resolve finds the column a spec names among the names of the header
// (header true) or of a first reading line's fields, and returns its
// index, or -1 when spec is empty.
func resolve(what, spec string, names []string, header bool) (int, error) {
	if spec == "" {
		return -1, nil
	}
	if n, isPos := position(spec); isPos {
		if n > len(names) {
			if len(names) == MaxColumns {
				return 0, fmt.Errorf("--%s-column %s: only the first %d columns are read", what, spec, MaxColumns)
			}
			if header {
				return 0, fmt.Errorf("--%s-column %s: the header has %d columns", what, spec, len(names))
			}
			return 0, fmt.Errorf("--%s-column %s: the first reading line has %d fields", what, spec, len(names))
		}
		return n - 1, nil
	}
	if !header {
		return 0, fmt.Errorf("--%s-column %q: the file has no header row, so name its columns by position (1, 2, ...)", what, spec)
	}
	want := foldName(spec)
	wantBase, _ := splitUnit(want)
	var whole, base []int
	for i, n := range names {
		f := foldName(n)
		if f == want {
			whole = append(whole, i)
		}
		if b, _ := splitUnit(f); b == wantBase {
			base = append(base, i)
		}
	}
	found := whole
	if len(found) == 0 {
		found = base
	}
	switch len(found) {
	case 1:
		return found[0], nil
	case 0:
		return 0, fmt.Errorf("--%s-column %q: no such column in the header (%s)", what, spec, listNames(names))
	}
	return 0, fmt.Errorf("--%s-column %q: %d columns match (%s); name it by position", what, spec, len(found), listNames(pick(names, found)))
}

// foldName is a header name or spec lower-cased, trimmed, with runs of
// blanks made one space.
func foldName(s string) string {
	return strings.Join(strings.Fields(strings.ToLower(s)), " ")
}

func pick(names []string, idx []int) []string {
	out := make([]string, len(idx))
	for i, j := range idx {
		out[i] = names[j]
	}
	return out
}

// listNames quotes the first few names, for an error message.
func listNames(names []string) string {
	const most = 12
	var b strings.Builder
	b.WriteString("columns: ")
	for i, n := range names {
		if i == most {
			fmt.Fprintf(&b, ", … %d more", len(names)-most)
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%d %q", i+1, n)
	}
	return b.String()
}
