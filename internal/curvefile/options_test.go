package curvefile

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"reflect"
	"runtime"
	"strings"
	"testing"
)

// TestReadOptions names columns and units of constructed logger exports
// (invented readings; the layouts are those loggers write).
func TestReadOptions(t *testing.T) {
	tests := []struct {
		name      string
		opt       Options
		in        string
		time      []float64
		temp      []float64
		extra     []string
		converted string
	}{
		{
			name: "header without units, named by text (case and blanks ignored)",
			opt:  Options{TimeColumn: "mt2 time", TempColumn: "AI:2 Analog Input"},
			in:   "Date\tTime\tAI:2  Analog Input\tMT2   Time\n02-Jan-26\t07:10:00\t712.5\t10.25\n02-Jan-26\t07:10:00\t711.75\t10.5\n",
			time: []float64{10.25, 10.5}, temp: []float64{712.5, 711.75}, extra: []string{"Date", "Time"},
		},
		{
			name: "named by position",
			opt:  Options{TimeColumn: "4", TempColumn: "3"},
			in:   "Date\tTime\tAI:2  Analog Input\tMT2   Time\n02-Jan-26\t07:10:00\t712.5\t10.25\n",
			time: []float64{10.25}, temp: []float64{712.5}, extra: []string{"Date", "Time"},
		},
		{
			name: "named without its unit decoration, the decoration's units read",
			opt:  Options{TimeColumn: "zeit", TempColumn: "probe a"},
			in:   "Zeit (ms);Probe A (°F);Probe B (°F)\n0;2372;2000\n500;2354;1990\n",
			time: []float64{0, 0.5}, temp: []float64{1300, 1290}, extra: []string{"Probe B (°F)"}, converted: "°F",
		},
		{
			name: "units given override the header",
			opt:  Options{TempColumn: "ch1", TempUnit: "kelvin", TimeUnit: "min"},
			in:   "time,ch1\n0,933.473\n0.5,933.473\n",
			time: []float64{0, 30}, temp: []float64{660.323, 660.323}, converted: "K",
		},
		{
			name: "a named temperature column wins over the reader's own pick",
			opt:  Options{TempColumn: "T2"},
			in:   "time_s,temp_c,T2 [°C]\n0,24.5,1301\n0.1,24.5,1300.5\n",
			time: []float64{0, 0.1}, temp: []float64{1301, 1300.5}, extra: []string{"temp_c"},
		},
		{
			name: "a named time column wins over a clock-time column",
			opt:  Options{TimeColumn: "elapsed_ms", TimeUnit: "ms"},
			in:   "Time,elapsed_ms,temp_c\n07:10:00,0,700\n07:10:00,250,699.5\n",
			time: []float64{0, 0.25}, temp: []float64{700, 699.5}, extra: []string{"Time"},
		},
		{
			name: "no header, named by position, further columns kept",
			opt:  Options{TimeColumn: "2", TempColumn: "1"},
			in:   "1300,0.0,1\n1299.5,0.2,1\n",
			time: []float64{0, 0.2}, temp: []float64{1300, 1299.5}, extra: []string{"column 3"},
		},
		{
			name: "no header, only the temperature named: the time is the first other column",
			opt:  Options{TempColumn: "1"},
			in:   "1300;0,0\n1299,5;0,2\n",
			time: []float64{0, 0.2}, temp: []float64{1300, 1299.5},
		},
		{
			name: "no header, units only",
			opt:  Options{TimeUnit: "ms", TempUnit: "F"},
			in:   "0,2372\n500,2354\n",
			time: []float64{0, 0.5}, temp: []float64{1300, 1290}, converted: "°F",
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			c, err := tt.opt.Read(strings.NewReader(tt.in), "logger.txt")
			if err != nil {
				t.Fatal(err)
			}
			if !sameFloats(c.Time, tt.time) || !closeFloats(c.Temp, tt.temp, 1e-9) {
				t.Errorf("time %v temp %v, want %v %v", c.Time, c.Temp, tt.time, tt.temp)
			}
			if got := names(c.Extra); !reflect.DeepEqual(got, tt.extra) {
				t.Errorf("extra columns %q, want %q", got, tt.extra)
			}
			if got := c.Get("converted_from"); got != tt.converted {
				t.Errorf("converted_from %q, want %q", got, tt.converted)
			}
		})
	}
}

// closeFloats compares within tol (unit conversions round).
func closeFloats(a, b []float64, tol float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if d := a[i] - b[i]; d > tol || d < -tol {
			return false
		}
	}
	return true
}

// TestReadOptionErrors: columns that cannot be found, or are named twice,
// units that are not known; each error names the file and line, and says
// what to do.
func TestReadOptionErrors(t *testing.T) {
	tests := []struct {
		name string
		opt  Options
		in   string
		line int
		want string
	}{
		{"no such column", Options{TempColumn: "AI:3"}, "Date\tAI:2\tMT2 Time\n1\t2\t3\n", 1, `--temp-column "AI:3": no such column in the header (columns: 1 "Date", 2 "AI:2", 3 "MT2 Time")`},
		{"two match", Options{TempColumn: "probe"}, "time_s,probe [°C],Probe (°F)\n0,1,2\n", 1, "2 columns match"},
		{"position beyond the header", Options{TempColumn: "5"}, "time_s,a\n0,1\n", 1, "the header has 2 columns"},
		{"position beyond the first line", Options{TempColumn: "3"}, "0,1\n", 1, "the first reading line has 2 fields"},
		{"a name in a file without a header", Options{TempColumn: "T"}, "0,1\n", 1, "no header row, so name its columns by position"},
		{"time and temperature both column 1", Options{TimeColumn: "1", TempColumn: "a"}, "a,b\n0,1\n", 1, "both column 1"},
		{"unknown unit on the named column", Options{TempColumn: "probe"}, "time_s,probe [°R]\n0,1\n", 1, "give the unit with --temp-unit"},
		{"unknown time unit on the named column", Options{TimeColumn: "t"}, "t (h),temp_c\n0,1\n", 1, "give the unit with --time-unit"},
		{"without options: the hint", Options{}, "Date\tTime\tAI:2  Analog Input\tMT2   Time\n1\t2\t3\t4\n", 1, "no temperature column"},
		{"without options, wide headerless: the hint", Options{}, "1,2,3\n", 1, "--time-column"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := tt.opt.Read(strings.NewReader(tt.in), "logger.txt")
			var pe *ParseError
			if !errors.As(err, &pe) || pe.File != "logger.txt" || pe.Line != tt.line || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %v, want logger.txt:%d and %q", err, tt.line, tt.want)
			}
			if tt.opt.IsZero() && !strings.Contains(err.Error(), ColumnHint) {
				t.Errorf("error %v does not end with the hint", err)
			}
		})
	}
	for _, o := range []Options{{TimeUnit: "h"}, {TempUnit: "R"}, {TempColumn: "0"}, {TempColumn: "  "}, {TimeColumn: "x", TempColumn: "x"}} {
		if err := o.Check(); err == nil {
			t.Errorf("%+v: Check accepts it", o)
		}
		if _, err := o.Read(strings.NewReader("time_s,temp_c\n0,1\n"), "x.csv"); err == nil || !strings.HasPrefix(err.Error(), "curvefile: x.csv: ") {
			t.Errorf("%+v: Read error %v", o, err)
		}
	}
}

// TestReadPadding: rows at the end without a temperature (blank or NaN)
// are padding, dropped and noted; elsewhere they stay errors.
func TestReadPadding(t *testing.T) {
	c, err := Read(strings.NewReader("time_s,temp_c,note\n0,1300,a\n1,1299,b\n2,,c\n3,NaN,\n4,nan,d\n"), "pad.csv")
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(c.Time, []float64{0, 1}) || c.Skipped != 3 || len(c.Extra[0].Values) != 2 {
		t.Errorf("time %v skipped %d extra %q", c.Time, c.Skipped, c.Extra)
	}
	if len(c.Notes) != 1 || !strings.Contains(c.Notes[0], "pad.csv:4-6: the last 3 rows have no temperature in column \"temp_c\"") {
		t.Errorf("notes %q", c.Notes)
	}
	for _, tt := range []struct{ in, want string }{
		{"time_s,temp_c\n0,1\n1,\n2,3\n", `pad.csv:3: column "temp_c" is empty`},
		{"time_s,temp_c\n0,1\n1,NaN\n2,3\n", `pad.csv:3: column "temp_c": "NaN" is not a finite number`},
		{"time_s,temp_c\n0,1\n,\n", ""}, // a blank time with the blank temperature: padding
		{"time_s,temp_c\n0,1\nNaN,2\n", `pad.csv:3: column "time_s": "NaN" is not a finite number`},
		{"time_s,temp_c\n0,1\nx,\n", `pad.csv:3: column "time_s": "x" is not a finite number`},
		{"time_s,temp_c\n0,\n", `pad.csv:2: column "temp_c" is empty`}, // nothing but padding
	} {
		_, err := Read(strings.NewReader(tt.in), "pad.csv")
		if tt.want == "" && err != nil || tt.want != "" && (err == nil || !strings.HasPrefix(err.Error(), tt.want)) {
			t.Errorf("%q: %v, want %q", tt.in, err, tt.want)
		}
	}
}

// TestReadSwappedColumns: a file without a header whose first column goes
// back while the second only rises is read with the columns swapped, and
// says so; otherwise the order stays.
func TestReadSwappedColumns(t *testing.T) {
	c, err := Read(strings.NewReader("700\t0\n699.5\t0.2\n699.5\t0.4\n700.1\t0.6\n"), "swap.txt")
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(c.Time, []float64{0, 0.2, 0.4, 0.6}) || !sameFloats(c.Temp, []float64{700, 699.5, 699.5, 700.1}) || len(c.Notes) != 1 {
		t.Errorf("time %v temp %v notes %q", c.Time, c.Temp, c.Notes)
	}
	for _, in := range []string{
		"0,700\n0.2,699\n0.4,698\n", // time first
		"0,5\n1,4\n0.5,3\n",         // neither rises: kept as read (the analysis reports it)
		"0,20\n0.1,21\n0.2,22\n",    // both rise: kept
		"700,0\n699,0.2\n",          // too short to tell
		"700,0\n699,0.2\n698,0.2\n", // the second repeats but never falls: still swapped
		"700,0\n699,0.2\n701,0.1\n", // the second goes back too: kept
	} {
		c, err := Read(strings.NewReader(in), "swap.csv")
		if err != nil {
			t.Fatal(err)
		}
		swappedNow := len(c.Notes) == 1
		want := in == "700,0\n699,0.2\n698,0.2\n"
		if swappedNow != want {
			t.Errorf("%q: swapped %v, want %v (time %v)", in, swappedNow, want, c.Time)
		}
	}
	// named columns are read as named
	c, err = Options{TempUnit: "C"}.Read(strings.NewReader("700\t0\n699.5\t0.2\n699\t0.4\n"), "swap.txt")
	if err != nil || c.Time[0] != 700 || len(c.Notes) != 0 {
		t.Errorf("with an option: %v %v %q", err, c.Time, c.Notes)
	}
}

// TestReadExtraColumnsBound: at most MaxExtraColumns extra columns are
// kept, the rest read past and noted; the memory Read takes does not grow
// with the columns it does not keep (issue: 500,000 empty columns in 200
// rows took 2.9 GB).
func TestReadExtraColumnsBound(t *testing.T) {
	wide := func(cols, rows int) []byte {
		var b bytes.Buffer
		b.WriteString("time_s,temp_c")
		for i := range cols {
			fmt.Fprintf(&b, ",x%d", i%10)
		}
		b.WriteByte('\n')
		for r := range rows {
			fmt.Fprintf(&b, "%d,%d", r, 1300-r)
			b.Write(bytes.Repeat([]byte{','}, cols))
			b.WriteByte('\n')
		}
		return b.Bytes()
	}
	c, err := Read(bytes.NewReader(wide(100, 3)), "wide.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(c.Extra) != MaxExtraColumns || len(c.Extra[63].Values) != 3 || len(c.Notes) != 1 ||
		c.Notes[0] != "wide.csv:1: 36 columns after the first 64 extra columns are not kept" {
		t.Errorf("%d extra columns, notes %q", len(c.Extra), c.Notes)
	}
	// A short row is still an error, even in the columns not kept.
	bad := append(wide(100, 1), []byte("1,2,,,\n")...)
	if _, err := Read(bytes.NewReader(bad), "wide.csv"); err == nil || !strings.Contains(err.Error(), "wide.csv:3: 5 fields where the header has 102 columns") {
		t.Errorf("short row: %v", err)
	}
	// Bytes allocated for 100,000 columns: 20 rows or 200 rows take the
	// same, within the kept columns' values (64 × 180 × 24 bytes).
	allocated := func(data []byte) uint64 {
		var before, after runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&before)
		if _, err := Read(bytes.NewReader(data), "wide.csv"); err != nil {
			t.Fatal(err)
		}
		runtime.ReadMemStats(&after)
		return after.TotalAlloc - before.TotalAlloc
	}
	few, many := wide(100_000, 20), wide(100_000, 200)
	a, b := allocated(few), allocated(many)
	if b > a+64*180*24+16*180*2+1<<20 {
		t.Errorf("allocated %d bytes for 20 rows of 100,000 columns, %d for 200 rows", a, b)
	}
	t.Logf("100,000 columns: %.1f MB allocated for 20 rows, %.1f MB for 200 rows (%.1f MB of text)", float64(a)/1e6, float64(b)/1e6, float64(len(many))/1e6)
}

// TestReadOpenFileAndSizes: a file ReadFile opens is read to its size
// without a read to find the end; an *os.File given to Read, perhaps read
// from before, is read to its end, whatever its size says.
func TestReadOpenFileAndSizes(t *testing.T) {
	path := t.TempDir() + "/cup.csv"
	text := "# note: constructed\ntime_s,temp_c\n0,1300\n0.1,1299.5\n0.2,1299\n"
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	c, err := ReadFile(path)
	if err != nil || !sameFloats(c.Time, []float64{0, 0.1, 0.2}) {
		t.Fatalf("ReadFile: %v %v", c, err)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := f.Read(make([]byte, len("# note: constructed\n"))); err != nil {
		t.Fatal(err)
	}
	c, err = Read(f, path)
	if err != nil || !sameFloats(c.Time, []float64{0, 0.1, 0.2}) || len(c.Meta) != 0 {
		t.Errorf("Read of a file read from before: %v %v", c, err)
	}
}
