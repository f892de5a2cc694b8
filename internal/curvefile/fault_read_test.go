package curvefile

import (
	"bytes"
	"errors"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestFaultReadBadInput holds the bad inputs of the fault catalogue that
// TestReadErrors does not: binary data, UTF-16 big-endian, files with
// nothing in them but a byte-order mark or blanks, -Inf and lower-case
// nan, non-finite times, a short row, a time or temperature column in
// units the format does not take, a 2 MiB line without any line end. Each
// is refused with a *ParseError naming the file and the line.
func TestFaultReadBadInput(t *testing.T) {
	tests := []struct {
		name, in string
		line     int
		want     string
	}{
		{"binary (PNG signature)", "\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00\x01\x00", 1, "invalid UTF-8"},
		{"binary (NUL bytes)", "\x00\x00\x00\x01\x00\x00\x00\x02", 1, "NUL bytes"},
		{"UTF-16 big-endian with BOM", "\xfe\xff\x00t\x00i\x00m\x00e", 1, "UTF-16"},
		{"UTF-16 big-endian without BOM", "\x00t\x00i\x00m\x00e\x00_\x00s", 1, "UTF-16 or binary"},
		{"Latin-1 degree sign in the header", "time_s,Temp [\xb0C]\n0,1\n", 1, "invalid UTF-8"},
		{"only a byte-order mark", "\xef\xbb\xbf", 1, "no header and no readings"},
		{"only blanks", "   \n\t\n", 2, "no header and no readings"},
		{"minus infinity", "time_s,temp_c\n0,1300\n0.1,-Inf\n", 3, `"-Inf" is not a finite number`},
		{"lower-case nan", "time_s,temp_c\n0,nan\n", 2, `"nan" is not a finite number`},
		{"infinite time", "time_s,temp_c\ninf,1300\n", 2, `column "time_s": "inf" is not a finite number`},
		{"time overflows float64", "time_s,temp_c\n1e400,1300\n", 2, `"1e400" is not a finite number`},
		{"too many fields", "time_s;temp_c\n0;1300;2\n", 2, "3 fields where the header has 2 columns"},
		{"a row with one field", "time_s,temp_c\n0,1300\n0.1\n", 3, "fields where the header has 2 columns"},
		{"wrong separator in a row", "time_s,temp_c\n0;1300\n", 2, `"0;1300" is not a finite number`},
		{"missing temperature column", "time_s\n0\n", 1, "no temperature column"},
		{"missing time column", "temp_c\n1300\n", 1, "no time column"},
		{"headerless single column", "1300\n1299\n", 1, "must have two columns"},
		{"time in hours", "time_h,temp_c\n0,1300\n", 1, "no time column"},
		{"rankine", "time_s,T [R]\n0,2832\n", 1, `unit "r" not accepted`},
		{"reaumur", "Time [min],Temp [°Ré]\n0,1040\n", 1, `unit "ré" not accepted`},
		{"2 MiB without a line end", strings.Repeat("7", 2*MaxLine), 1, "longer than"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			c, err := Read(strings.NewReader(tt.in), "deck/L-2417.csv")
			if err == nil || c != nil {
				t.Fatalf("accepted: %v %+v", err, c)
			}
			var pe *ParseError
			if !errors.As(err, &pe) || pe.File != "deck/L-2417.csv" || pe.Line != tt.line {
				t.Fatalf("error %v (%T), want a *ParseError at deck/L-2417.csv:%d", err, err, tt.line)
			}
			prefix := "deck/L-2417.csv:" + strconv.Itoa(tt.line) + ": "
			if !strings.HasPrefix(err.Error(), prefix) || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %q, want prefix %q and %q", err, prefix, tt.want)
			}
		})
	}
}

// TestFaultReadRandomBinary feeds random bytes (fixed seeds) to Read: it
// never panics, and whatever it refuses it refuses with a *ParseError that
// names the file and a line inside the data.
func TestFaultReadRandomBinary(t *testing.T) {
	rng := rand.New(rand.NewPCG(2417, 3))
	for i := range 200 {
		b := make([]byte, 1+rng.IntN(4096))
		for j := range b {
			b[j] = byte(rng.UintN(256))
		}
		c, err := Read(bytes.NewReader(b), "garbage.bin")
		if err == nil {
			continue // random bytes that happen to form a curve are fine
		}
		var pe *ParseError
		if c != nil || !errors.As(err, &pe) || pe.File != "garbage.bin" || pe.Line < 1 || pe.Line > bytes.Count(b, []byte{'\n'})+bytes.Count(b, []byte{'\r'})+1 {
			t.Fatalf("case %d: %v (%T), line out of the data or no *ParseError", i, err, err)
		}
	}
}

// TestFaultReadTimeOrder: time going backwards and repeated timestamps
// are kept as read, reading for reading (judging them is the analysis'
// job; `undercool analyze` reports them, see cmd/undercool
// TestFaultAnalyzeTimeOrder).
func TestFaultReadTimeOrder(t *testing.T) {
	in := "time_s,temp_c\n0,1300\n0.1,1299.5\n0.1,1299.4\n0.05,1299.3\n0.2,1299\n"
	c, err := Read(strings.NewReader(in), "order.csv")
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(c.Time, []float64{0, 0.1, 0.1, 0.05, 0.2}) || !sameFloats(c.Temp, []float64{1300, 1299.5, 1299.4, 1299.3, 1299}) {
		t.Errorf("readings changed: %v %v", c.Time, c.Temp)
	}
}

// TestFaultReadFileEmptyAndDirectory: an empty file on disk and a
// directory given as a curve file are refused with their path.
func TestFaultReadFileEmptyAndDirectory(t *testing.T) {
	dir := t.TempDir()
	empty := filepath.Join(dir, "L-2417-empty.csv")
	if err := os.WriteFile(empty, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadFile(empty); err == nil || err.Error() != empty+":1: empty file" {
		t.Errorf("empty file: %v", err)
	}
	if _, err := ReadFile(dir); err == nil || !strings.Contains(err.Error(), dir) {
		t.Errorf("directory: %v", err)
	}
}
