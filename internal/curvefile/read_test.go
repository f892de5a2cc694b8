package curvefile

import (
	"bytes"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"
)

// The files below are constructed examples of what loggers write; the
// readings are invented, the decorations are the ones the reader promises
// to accept.
func TestReadDialects(t *testing.T) {
	tests := []struct {
		name    string
		in      string
		time    []float64
		temp    []float64
		meta    []Meta
		extra   []Column
		skipped int
	}{
		{
			name: "own format",
			in:   "# alloy: grey-iron\n# sample: L-2417 cup 1\ntime_s,temp_c\n0.000,1310.5\n0.100,1309.25\n",
			time: []float64{0, 0.1}, temp: []float64{1310.5, 1309.25},
			meta: []Meta{{"alloy", "grey-iron"}, {"sample", "L-2417 cup 1"}},
		},
		{
			name: "semicolon decimal comma, decorated header, CRLF",
			in:   "Time [s];Temperature (°C)\r\n0,0;1310,5\r\n0,5;1309,75\r\n",
			time: []float64{0, 0.5}, temp: []float64{1310.5, 1309.75},
		},
		{
			name: "tab separated, degC, decimal comma",
			in:   "t (s)\tT degC\n1\t700,25\n2\t699,5\n",
			time: []float64{1, 2}, temp: []float64{700.25, 699.5},
		},
		{
			name: "upper case with BOM and lone CR",
			in:   "\xEF\xBB\xBFTIME_S,TEMP_C\r0.5,660.3\r1.0,660.2\r",
			time: []float64{0.5, 1}, temp: []float64{660.3, 660.2},
		},
		{
			name: "headerless two columns",
			in:   "0.0,1300\n0.25,1299.5\n",
			time: []float64{0, 0.25}, temp: []float64{1300, 1299.5},
		},
		{
			name: "headerless semicolon decimal comma",
			in:   "0,25;1300,5\n0,5;1299\n",
			time: []float64{0.25, 0.5}, temp: []float64{1300.5, 1299},
		},
		{
			name: "headerless blank separated",
			in:   "  0.0   1300\n0.5 1299.5  \n",
			time: []float64{0, 0.5}, temp: []float64{1300, 1299.5},
		},
		{
			name: "quoted decimal comma in a comma file",
			in:   "\"time_s\",\"temp_c\"\n\"0,1\",\"1250,5\"\n\"0,2\",\"1250,25\"\n",
			time: []float64{0.1, 0.2}, temp: []float64{1250.5, 1250.25},
		},
		{
			name: "blank lines and comments are counted",
			in:   "# alloy: al-si7mg\n# logged on the holder H3 stand\n\ntime_s,temp_c\n\n0,720\n  \n1,719\n",
			time: []float64{0, 1}, temp: []float64{720, 719},
			meta:    []Meta{{"alloy", "al-si7mg"}},
			skipped: 4,
		},
		{
			name: "metadata keys lower-cased and trimmed, values trimmed",
			in:   "#  Operator :  Odile Flintcaster  \n# Cold_Junction_C: 24.5\ntime_s,temp_c\n0,1\n",
			time: []float64{0}, temp: []float64{1},
			meta: []Meta{{"operator", "Odile Flintcaster"}, {"cold_junction_c", "24.5"}},
		},
		{
			name: "extra columns kept in order, trailing separator",
			in:   "time_s,temp_c,ch,note,\n0,1300,1,pour,\n0.1,1299,1,,\n",
			time: []float64{0, 0.1}, temp: []float64{1300, 1299},
			extra: []Column{{"ch", []string{"1", "1"}}, {"note", []string{"pour", ""}}},
		},
		{
			name: "columns in another order, milliseconds",
			in:   "flags;Temp [°C];Time [ms]\nok;1300,0;0\nok;1299,5;250\n",
			time: []float64{0, 0.25}, temp: []float64{1300, 1299.5},
			extra: []Column{{"flags", []string{"ok", "ok"}}},
		},
		{
			name: "time backwards and repeated is kept",
			in:   "time_s,temp_c\n1,10\n1,11\n0.5,12\n",
			time: []float64{1, 1, 0.5}, temp: []float64{10, 11, 12},
		},
		{
			name: "exponents, signs, many digits",
			in:   "time_s,temp_c\n1e-1,+1.2345678901234567e3\n-0,-40\n",
			time: []float64{0.1, math.Copysign(0, -1)}, temp: []float64{1234.5678901234567, -40},
		},
		{
			name: "blanks around fields, before a text column and after the last number",
			in:   "time_s, temp_c , note\n0,  1300 ,  pour here\n 0.5\t,1299.5,\tx \n1 , 1299  ,y\n",
			time: []float64{0, 0.5, 1}, temp: []float64{1300, 1299.5, 1299},
			extra: []Column{{"note", []string{"pour here", "x", "y"}}},
		},
		{
			name: "tab separated with spaces beside the tabs",
			in:   "time_s\ttemp_c\n0 \t 1300\n0.5\t  1299.5  \n",
			time: []float64{0, 0.5}, temp: []float64{1300, 1299.5},
		},
		{
			name: "quoted names with doubled quotes",
			in:   "time_s,temp_c,\"say \"\"hi\"\"\"\n0,1,\" a,b \"\n",
			time: []float64{0}, temp: []float64{1},
			extra: []Column{{`say "hi"`, []string{" a,b "}}},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			c, err := Read(strings.NewReader(tt.in), "cup.csv")
			if err != nil {
				t.Fatal(err)
			}
			if !sameFloats(c.Time, tt.time) || !sameFloats(c.Temp, tt.temp) {
				t.Errorf("time %v temp %v, want %v %v", c.Time, c.Temp, tt.time, tt.temp)
			}
			if len(c.Meta) != 0 || len(tt.meta) != 0 {
				if !reflect.DeepEqual(c.Meta, tt.meta) {
					t.Errorf("meta %q, want %q", c.Meta, tt.meta)
				}
			}
			if len(c.Extra) != 0 || len(tt.extra) != 0 {
				if !reflect.DeepEqual(c.Extra, tt.extra) {
					t.Errorf("extra %q, want %q", c.Extra, tt.extra)
				}
			}
			if c.Skipped != tt.skipped {
				t.Errorf("skipped %d, want %d", c.Skipped, tt.skipped)
			}
			if c.Name != "cup.csv" {
				t.Errorf("name %q", c.Name)
			}
		})
	}
}

// sameFloats compares bit for bit (so -0 and 0 differ).
func sameFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

func TestReadErrors(t *testing.T) {
	long := "time_s,temp_c\n0,1\n" + strings.Repeat("9", MaxLine+10) + "\n"
	tests := []struct {
		name, in string
		line     int
		want     string
	}{
		{"empty", "", 1, "empty file"},
		{"only comments", "# alloy: grey-iron\n\n", 2, "no header and no readings"},
		{"header only", "# alloy: grey-iron\ntime_s,temp_c\n\n", 2, "no readings"},
		{"not a number", "time_s,temp_c\n0,1\n0.1,abc\n", 3, `"abc" is not a finite number`},
		{"NaN", "time_s,temp_c\n0,NaN\n", 2, `"NaN" is not a finite number`},
		{"Inf", "time_s,temp_c\n0,+Inf\n", 2, "not a finite number"},
		{"overflow", "time_s,temp_c\n0,1e999\n", 2, "not a finite number"},
		{"hex", "time_s,temp_c\n0,0x10\n", 2, "not a finite number"},
		{"two decimal marks", "time_s;temp_c\n0;1,2.5\n", 2, "not a finite number"},
		{"too few fields", "time_s,temp_c,ch\n0,1,a\n0.1,2\n", 3, "2 fields where the header has 3 columns"},
		{"unquoted decimal comma", "time_s,temp_c\n0,1300\n0,1,1299,5\n", 3, "decimal comma"},
		{"headerless decimal comma in comma file", "0,1,1299,5\n", 1, "decimal comma must be quoted"},
		{"headerless three columns", "0;1;2\n", 1, "must have two columns"},
		{"empty value", "time_s,temp_c\n0,\n", 2, `column "temp_c" is empty`},
		{"invalid UTF-8", "time_s,temp_c\n0,1\n\xff\xfe,2\n", 3, "invalid UTF-8"},
		{"UTF-16", "\xff\xfet\x00i\x00", 1, "UTF-16"},
		{"UTF-16 without BOM", "t\x00i\x00m\x00e\x00", 1, "UTF-16"},
		{"huge line", long, 3, "longer than"},
		{"huge line of numbers, blanks after a separator", "time_s,temp_c\n0,1\n1," + strings.Repeat(" ", MaxLine) + "2\n", 3, "longer than"},
		{"huge line of numbers, blanks after a number", "time_s,temp_c\n0,1\n1" + strings.Repeat(" ", MaxLine) + ",2\n3,4\n", 3, "longer than"},
		{"huge line of numbers, blank separated", "0 1\n1" + strings.Repeat("\t", MaxLine) + "2\n", 2, "longer than"},
		{"no time column", "seconds_since_boot,temp_c\n0,1\n", 1, "no time column"},
		{"no temperature column", "time_s,pressure\n0,1\n", 1, "no temperature column"},
		{"rankine", "time_s,Temp [°R]\n0,1\n", 1, `temperatures must be in °C, °F or K (unit "r" not accepted)`},
		{"two time columns", "time_s,Time [s],temp_c\n0,0,1\n", 1, "two time columns"},
		{"unclosed quote", "time_s,temp_c\n0,\"1\n", 2, "quote is not closed"},
		{"text after quote", "time_s,temp_c\n0,\"1\"x\n", 2, "after a closing quote"},
		{"emf without type", "# cold_junction_c: 25\ntime_s,emf_mv\n0,1\n", 2, "# thermocouple: TYPE"},
		{"emf unknown type", "# thermocouple: Q\n# cold_junction_c: 25\ntime_s,emf_mv\n0,1\n", 1, `unknown type "Q"`},
		{"emf without cold junction", "# thermocouple: K\ntime_s,emf_mv\n0,1\n", 2, "cold-junction temperature"},
		{"emf bad cold junction", "# thermocouple: K\n# cold_junction_c: warm\ntime_s,emf_mv\n0,1\n", 2, `"warm" is not a number`},
		{"emf out of range", "# thermocouple: K\n# cold_junction_c: 25\ntime_s,emf_mv\n0,1\n0.1,70\n", 5, "type K"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(tt.in), "deck/L-2417.csv")
			if err == nil {
				t.Fatal("no error")
			}
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("%T %v is not a *ParseError", err, err)
			}
			if pe.Line != tt.line || pe.File != "deck/L-2417.csv" {
				t.Errorf("error at %s:%d, want line %d: %v", pe.File, pe.Line, tt.line, err)
			}
			prefix := "deck/L-2417.csv:" + strconv.Itoa(tt.line) + ": "
			if !strings.HasPrefix(err.Error(), prefix) || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %q, want prefix %q and %q", err, prefix, tt.want)
			}
		})
	}
}

// TestReadEMF converts raw EMF logs. Reference: NIST SRD 60 type K table,
// E(1000 °C) = 41.276 mV and E(25 °C) = 1.000 mV, so 40.276 mV with the cold
// junction at 25 °C is 1000 °C (within 0.03 °C: the mV are table-rounded to
// 0.001 mV, about 0.025 °C for type K at 1000 °C).
func TestReadEMF(t *testing.T) {
	tests := []struct {
		name, in string
		extra    []string
	}{
		{"metadata cold junction", "# thermocouple: K\n# cold_junction_c: 25\ntime_s,emf_mv\n0,40.276\n1,40.276\n", []string{"emf_mv"}},
		{"type K spelled out, decimal comma", "# thermocouple: type k\n# cold_junction_c: 25,0\nTime [s];EMF [mV]\n0;40,276\n1;40,276\n", []string{"emf_mv"}},
		{"cj column", "# thermocouple: K\ntime_s,emf_mv,cj_c\n0,40.276,25\n1,40.276,25\n", []string{"emf_mv", "cj_c"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			c, err := Read(strings.NewReader(tt.in), "raw.csv")
			if err != nil {
				t.Fatal(err)
			}
			for _, v := range c.Temp {
				if math.Abs(v-1000) > 0.03 {
					t.Errorf("temp %.4f °C, want 1000 ± 0.03 (NIST SRD 60 type K)", v)
				}
			}
			var names []string
			for _, col := range c.Extra {
				names = append(names, col.Name)
			}
			if !reflect.DeepEqual(names, tt.extra) || c.Extra[0].Values[0] != "40.276" {
				t.Errorf("extra %q", c.Extra)
			}
		})
	}
	// With a temperature column present the EMF is kept as text, not converted.
	c, err := Read(strings.NewReader("time_s,temp_c,emf_mv\n0,999,40.276\n"), "both.csv")
	if err != nil || c.Temp[0] != 999 || c.Extra[0].Name != "emf_mv" {
		t.Errorf("temp column with EMF: %v %v", c, err)
	}
}

// TestRoundTrip writes constructed curves with the Writer and reads them
// back reading for reading, exact to the bit.
func TestRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for n := range 20 {
		c := &Curve{Meta: []Meta{{"alloy", "ductile-iron"}, {"sample", "L-2417, cup 2"}, {"operator", "Tobin Quenchmoor"}}}
		col := Column{Name: "note; raw"}
		for i := range 50 + n*10 {
			c.Time = append(c.Time, float64(i)*0.1+rng.Float64()*1e-3)
			c.Temp = append(c.Temp, 1400*rng.Float64()-rng.NormFloat64()*1e-9)
			col.Values = append(col.Values, []string{"", "ok", `say "x"`, " padded ", "a,b;c\td"}[i%5])
		}
		c.Extra = []Column{col}
		var buf bytes.Buffer
		if err := WriteCurve(&buf, c); err != nil {
			t.Fatal(err)
		}
		got, err := Read(iotest.HalfReader(&buf), "rt.csv")
		if err != nil {
			t.Fatal(err)
		}
		if !sameFloats(got.Time, c.Time) || !sameFloats(got.Temp, c.Temp) {
			t.Fatal("readings differ after a round trip")
		}
		if !reflect.DeepEqual(got.Meta, c.Meta) || !reflect.DeepEqual(got.Extra, c.Extra) {
			t.Fatalf("meta/extra differ: %q %q", got.Meta, got.Extra)
		}
	}
}

func TestReadFile(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "L-2417.csv")
	if err := os.WriteFile(p, []byte("time_s,temp_c\n0,1\nx,2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadFile(p); err == nil || !strings.HasPrefix(err.Error(), p+":3: ") {
		t.Errorf("ReadFile error %v", err)
	}
	if _, err := ReadFile(filepath.Join(dir, "missing.csv")); err == nil || !strings.Contains(err.Error(), "missing.csv") {
		t.Errorf("missing file: %v", err)
	}
}

// TestReadOneByte reads through a reader that returns one byte at a time
// (line ends split across reads).
func TestReadOneByte(t *testing.T) {
	in := "# alloy: pure-zn\r\ntime_s;temp_c\r\n0;419,5\r\r\n1;419,527\r\n"
	c, err := Read(iotest.OneByteReader(strings.NewReader(in)), "zn.csv")
	if err != nil {
		t.Fatal(err)
	}
	if !sameFloats(c.Temp, []float64{419.5, 419.527}) || c.Skipped != 1 {
		t.Errorf("temp %v skipped %d", c.Temp, c.Skipped)
	}
	if _, err := Read(iotest.DataErrReader(strings.NewReader("time_s,temp_c\n0,1")), "x"); err != nil {
		t.Errorf("DataErrReader: %v", err)
	}
	_, err = Read(iotest.ErrReader(errors.New("cable pulled")), "x")
	if err == nil || !strings.Contains(err.Error(), "cable pulled") {
		t.Errorf("read error %v", err)
	}
}

// TestParseNumExact compares the fast path with strconv.ParseFloat on
// random decimal texts (fixed seed).
func TestParseNumExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for range 100000 {
		var b []byte
		if rng.IntN(2) == 0 {
			b = append(b, '-')
		}
		for range 1 + rng.IntN(18) {
			b = append(b, byte('0'+rng.IntN(10)))
		}
		if rng.IntN(3) > 0 {
			b = append(b, '.')
			for range rng.IntN(18) {
				b = append(b, byte('0'+rng.IntN(10)))
			}
		}
		if rng.IntN(4) == 0 {
			b = append(b, 'e')
			b = append(b, []byte(strconv.Itoa(rng.IntN(30)))...)
		}
		got, ok := parseNum(b, false)
		want, err := strconv.ParseFloat(string(b), 64)
		if !ok || err != nil || math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("%s: got %v %v, strconv %v %v", b, got, ok, want, err)
		}
	}
}

// TestClassify checks the header decorations the reader promises to accept.
func TestClassify(t *testing.T) {
	tests := []struct {
		name  string
		role  role
		scale float64
		unit  tempUnit
	}{
		{"time_s", roleTime, 1, unitC}, {"Time", roleTime, 1, unitC}, {"TIME [s]", roleTime, 1, unitC}, {"t (s)", roleTime, 1, unitC},
		{"t[s]", roleTime, 1, unitC}, {"Time/s", roleTime, 1, unitC}, {"time_ms", roleTime, 1000, unitC}, {"Time [ms]", roleTime, 1000, unitC},
		{"elapsed (min)", roleTime, 1.0 / 60, unitC}, {"Elapsed time [sec]", roleTime, 1, unitC},
		{"temp_c", roleTemp, 0, unitC}, {"Temperature (°C)", roleTemp, 0, unitC}, {"T degC", roleTemp, 0, unitC}, {"Temp(C)", roleTemp, 0, unitC},
		{"T[°C]", roleTemp, 0, unitC}, {"temperature/°C", roleTemp, 0, unitC}, {"Temp °C", roleTemp, 0, unitC}, {"temp_degc", roleTemp, 0, unitC},
		{"surface℃", roleExtra, 0, unitC}, {"temperature℃", roleTemp, 0, unitC},
		{"Temp [°F]", roleTemp, 0, unitF}, {"temp_f", roleTemp, 0, unitF}, {"Temperature (degF)", roleTemp, 0, unitF},
		{"temperature℉", roleTemp, 0, unitF}, {"Temp °F", roleTemp, 0, unitF}, {"surface℉", roleExtra, 0, unitC},
		{"T [K]", roleTemp, 0, unitK}, {"temp_k", roleTemp, 0, unitK}, {"Temperature (kelvin)", roleTemp, 0, unitK},
		{"emf_mv", roleEMF, 0, unitC}, {"EMF [mV]", roleEMF, 0, unitC}, {"mV", roleEMF, 0, unitC}, {"voltage (mV)", roleEMF, 0, unitC},
		{"cj_c", roleCJ, 0, unitC}, {"CJ [°C]", roleCJ, 0, unitC}, {"cold junction (°C)", roleCJ, 0, unitC}, {"CJ (°F)", roleCJ, 0, unitF},
		{"ch", roleExtra, 0, unitC}, {"flags", roleExtra, 0, unitC}, {"Temp [°R]", roleExtra, 0, unitC}, {"pressure [bar]", roleExtra, 0, unitC},
	}
	for _, tt := range tests {
		r, scale, unit := classify(tt.name)
		if r != tt.role || (r == roleTime && scale != tt.scale) || unit != tt.unit {
			t.Errorf("classify(%q) = %v, %v, %v; want %v, %v, %v", tt.name, r, scale, unit, tt.role, tt.scale, tt.unit)
		}
	}
}

// Temperatures in °F and K are converted to °C on reading, and the
// metadata say so. References, tolerance 1e-9 °C: the ITS-90 fixed points,
// listed in both T90/K and t90/°C (Preston-Thomas, Metrologia 27 (1990) 3,
// Table 1: zinc 692.677 K = 419.527 °C, aluminium 933.473 K = 660.323 °C,
// silver 1234.93 K = 961.78 °C, copper 1357.77 K = 1084.62 °C); for °F the
// conversion of NIST SP 811 (2008), B.8, t/°C = (t/°F − 32)/1.8, at its
// worked points 32 °F = 0 °C, 212 °F = 100 °C and −40 °F = −40 °C (practice),
// 2372 °F = 1300 °C, and aluminium's 660.323 °C = 1220.5814 °F (the same
// formula, computed here).
func TestReadConvertsFahrenheitAndKelvin(t *testing.T) {
	tests := []struct {
		name, in, unit string
		want           []float64
	}{
		{"kelvin", "time_s,T [K]\n0,692.677\n1,933.473\n2,1234.93\n3,1357.77\n", "K", []float64{419.527, 660.323, 961.78, 1084.62}},
		{"kelvin, own-style name", "time_s;temp_k\n0;933,473\n", "K", []float64{660.323}},
		{"fahrenheit", "Time [s],Temp [°F]\n0,32\n1,212\n2,-40\n3,2372\n4,1220.5814\n", "°F", []float64{0, 100, -40, 1300, 660.323}},
		{"fahrenheit, degF", "time_s\tTemperature (degF)\n0\t2372\n", "°F", []float64{1300}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			c, err := Read(strings.NewReader(tt.in), "deck/L-2431.csv")
			if err != nil {
				t.Fatal(err)
			}
			if len(c.Temp) != len(tt.want) {
				t.Fatalf("%d readings, want %d", len(c.Temp), len(tt.want))
			}
			for i, w := range tt.want {
				if math.Abs(c.Temp[i]-w) > 1e-9 {
					t.Errorf("reading %d: %.12g °C, want %g", i, c.Temp[i], w)
				}
			}
			if got := c.Get("converted_from"); got != tt.unit {
				t.Errorf("converted_from %q, want %q", got, tt.unit)
			}
		})
	}
	// a cold junction in °F: 77 °F is 25 °C exactly, so the EMF file reads
	// as the same file with cj_c 25
	emf := func(cj string, v string) *Curve {
		c, err := Read(strings.NewReader("# thermocouple: K\ntime_s,emf_mv,"+cj+"\n0,40.276,"+v+"\n1,20.0,"+v+"\n"), "raw.csv")
		if err != nil {
			t.Fatal(err)
		}
		return c
	}
	f, c := emf("CJ (°F)", "77"), emf("cj_c", "25")
	if !slices.Equal(f.Temp, c.Temp) || f.Get("converted_from") != "°F" || c.Get("converted_from") != "" {
		t.Errorf("cold junction in °F read %v (%q), in °C %v", f.Temp, f.Get("converted_from"), c.Temp)
	}
	// NIST SRD 60, type K: E(1000 °C) = 41.276 mV and E(25 °C) = 1.000 mV, so
	// 40.276 mV over a 25 °C junction is 1000 °C within the tables' 0.001 mV
	// (about 0.025 °C here)
	if math.Abs(f.Temp[0]-1000) > 0.03 {
		t.Errorf("40.276 mV over 77 °F: %.3f °C, want 1000", f.Temp[0])
	}
	if vals := f.Extra[len(f.Extra)-1]; vals.Name != "cj_c" || vals.Values[0] != "25" {
		t.Errorf("the cold junction is kept as %q %v, want cj_c in °C", vals.Name, vals.Values)
	}
}
