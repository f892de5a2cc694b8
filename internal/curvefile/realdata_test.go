package curvefile

import (
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
)

// The measured curves from public repositories that are kept beside the
// repository (with their provenance and licences); they are never copied
// into it.
const realData = "../../../shared/realdata"

// realFile is the path of a measured file, or skips the test with the
// reason where the set is not there.
func realFile(t *testing.T, rel string) string {
	t.Helper()
	p := filepath.Join(realData, rel)
	if _, err := os.Stat(p); err != nil {
		t.Skipf("measured curves not available (%v): they live beside the repository in ../shared/realdata", err)
	}
	return p
}

// TestRealTemperatureFirst reads the Al-Si logger files that hold two
// tab-separated columns without a header, the temperature first and the
// time second (a 5 Hz logger: time rises by 0.2 s a line, the
// temperature falls with arrests and a recalescence). The reader swaps the
// columns and says so. Reference: the data set's own converted copy of
// each file (`*_clean.csv`, time_s,temp_C, made by the set's curator
// from column 2 and column 1), read reading for reading, exactly.
func TestRealTemperatureFirst(t *testing.T) {
	for _, name := range []string{"beforeA", "afterA"} {
		t.Run(name, func(t *testing.T) {
			c, err := ReadFile(realFile(t, "joebee-alsi-before-after/"+name+".txt"))
			if err != nil {
				t.Fatal(err)
			}
			ref, err := ReadFile(realFile(t, "joebee-alsi-before-after/"+name+"_clean.csv"))
			if err != nil {
				t.Fatal(err)
			}
			if !sameFloats(c.Time, ref.Time) || !sameFloats(c.Temp, ref.Temp) {
				t.Fatalf("%d readings from %.1f s / %.1f °C, the curator's copy %d from %.1f s / %.1f °C",
					len(c.Time), c.Time[0], c.Temp[0], len(ref.Time), ref.Time[0], ref.Temp[0])
			}
			if len(c.Notes) != 1 || !strings.Contains(c.Notes[0], "second column as the time") {
				t.Errorf("notes %q, want one saying the columns were swapped", c.Notes)
			}
			// Named by position, the columns read the same without a note.
			named, err := Options{TimeColumn: "2", TempColumn: "1"}.ReadFile(realFile(t, "joebee-alsi-before-after/"+name+".txt"))
			if err != nil || !sameFloats(named.Time, ref.Time) || !sameFloats(named.Temp, ref.Temp) || len(named.Notes) != 0 {
				t.Errorf("--time-column 2 --temp-column 1: %v, notes %q", err, named.Notes)
			}
		})
	}
}

// TestRealLoggerHeader reads the Al-Si files of a data-logger export whose
// header names its columns without units ("Date", "Time" (a clock time),
// "AI:2  Analog Input" (°C), "MT2   Time" (s), tab-separated, jittered
// time steps of 0.04–1.3 s). Without options it is refused with a hint
// naming them; with the columns named it reads, and equals the data set's
// own converted copy (`*B_clean.csv`: time_s from "MT2 Time", temp_C from
// the analog input) reading for reading. The date and clock time are
// kept as extra columns.
func TestRealLoggerHeader(t *testing.T) {
	for _, name := range []string{"beforeB", "afterB"} {
		t.Run(name, func(t *testing.T) {
			path := realFile(t, "joebee-alsi-before-after/"+name+".txt")
			_, err := ReadFile(path)
			var pe *ParseError
			if !errors.As(err, &pe) || pe.Line != 1 || !strings.Contains(err.Error(), "--temp-column") || !strings.Contains(err.Error(), `"AI:2  Analog Input"`) {
				t.Errorf("without options: %v", err)
			}
			ref, err := ReadFile(realFile(t, "joebee-alsi-before-after/"+name+"_clean.csv"))
			if err != nil {
				t.Fatal(err)
			}
			for _, opt := range []Options{
				{TimeColumn: "MT2 Time", TempColumn: "ai:2 analog input", TimeUnit: "s", TempUnit: "°C"},
				{TimeColumn: "4", TempColumn: "3"},
			} {
				c, err := opt.ReadFile(path)
				if err != nil {
					t.Fatalf("%+v: %v", opt, err)
				}
				if !sameFloats(c.Time, ref.Time) || !sameFloats(c.Temp, ref.Temp) {
					t.Fatalf("%+v: %d readings, the curator's copy %d", opt, len(c.Time), len(ref.Time))
				}
				if len(c.Extra) != 2 || c.Extra[0].Name != "Date" || c.Extra[1].Name != "Time" || !clock.MatchString(c.Extra[1].Values[0]) {
					t.Errorf("%+v: extra columns %q", opt, names(c.Extra))
				}
			}
			// the time steps are uneven (0.04–1.3 s over the two files)
			c, _ := Options{TimeColumn: "4", TempColumn: "3"}.ReadFile(path)
			lo, hi := 1e9, 0.0
			for i := 1; i < len(c.Time); i++ {
				d := c.Time[i] - c.Time[i-1]
				lo, hi = min(lo, d), max(hi, d)
			}
			if lo > 0.1 || hi < 0.5 {
				t.Errorf("time steps %.3f–%.3f s, want uneven steps between 0.04 and 1.3 s", lo, hi)
			}
		})
	}
}

// clock is a time of day as the logger writes it.
var clock = regexp.MustCompile(`^\d\d:\d\d:\d\d$`)

func names(cols []Column) []string {
	var out []string
	for _, c := range cols {
		out = append(out, c.Name)
	}
	return out
}

// TestRealManyColumns reads the Sn-Bi table: a UTF-8 byte-order mark, CR
// LF, a header "time,Sn100,Sn90,...,Sn0" (one temperature column per
// alloy, °C, 1 Hz) and each column padded with blanks once its record
// stopped. Without a column named it is refused with the hint; with one
// named, its readings are those of the column up to its padding, the
// padding rows are skipped and noted. Reference: the count and the last
// value of each column from a plain split of the file's lines.
func TestRealManyColumns(t *testing.T) {
	path := realFile(t, "mignard-snbi-arduino/EutecticData.csv")
	if _, err := ReadFile(path); err == nil || !strings.Contains(err.Error(), "--temp-column") || !strings.Contains(err.Error(), `"Sn100"`) {
		t.Errorf("without a column named: %v", err)
	}
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	rows := strings.Split(strings.TrimSpace(strings.TrimPrefix(string(raw), "\ufeff")), "\r\n")
	header := strings.Split(rows[0], ",")
	for j, col := range header[1:] {
		j++
		var want []string // the column's values up to its padding
		for _, r := range rows[1:] {
			if v := strings.Split(r, ",")[j]; v != "" {
				want = append(want, v)
			}
		}
		c, err := Options{TempColumn: col}.ReadFile(path)
		if err != nil {
			t.Fatalf("%s: %v", col, err)
		}
		if len(c.Temp) != len(want) || c.Time[0] != 0 || c.Time[len(c.Time)-1] != float64(len(want)-1) {
			t.Errorf("%s: %d readings to %v s, want %d", col, len(c.Temp), c.Time[len(c.Time)-1], len(want))
			continue
		}
		if last, _ := parseNum([]byte(want[len(want)-1]), false); c.Temp[len(c.Temp)-1] != last {
			t.Errorf("%s: last reading %v, want %v", col, c.Temp[len(c.Temp)-1], last)
		}
		pad := len(rows) - 1 - len(want)
		switch {
		case pad == 0 && len(c.Notes) != 0:
			t.Errorf("%s: no padding, notes %q", col, c.Notes)
		case pad > 0 && (c.Skipped != pad || len(c.Notes) != 1 || !strings.Contains(c.Notes[0], "padding")):
			t.Errorf("%s: %d padding rows, skipped %d, notes %q", col, pad, c.Skipped, c.Notes)
		}
		if len(c.Extra) != len(header)-2 || slices.Contains(names(c.Extra), col) {
			t.Errorf("%s: extra columns %q", col, names(c.Extra))
		}
	}
}

// TestRealSlowLogger reads the Pb-Sn teaching-lab curves: a '#' comment
// line that is not metadata, "time_s,temp_C", one reading every 20 s.
func TestRealSlowLogger(t *testing.T) {
	for _, name := range []string{"PbSn_Pb", "PbSn_Sn", "PbSn_Sn30", "PbSn_Sn61p9", "PbSn_Sn80"} {
		c, err := ReadFile(realFile(t, "cn-lab-pbsn-stepcooling/"+name+".csv"))
		if err != nil {
			t.Fatal(err)
		}
		if len(c.Time) < 30 || c.Skipped != 1 || len(c.Meta) != 0 {
			t.Errorf("%s: %d readings, %d skipped, meta %q", name, len(c.Time), c.Skipped, c.Meta)
		}
		for i := range c.Time {
			if c.Time[i] != float64(20*i) {
				t.Fatalf("%s: reading %d at %v s, want %d (20 s steps)", name, i, c.Time[i], 20*i)
			}
		}
	}
}
