package thermocouple

import (
	"encoding/csv"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"testing"
)

// tablePath is the NIST table excerpt (columns type, temp_c, emf_mv,
// source); every row names its own source: "NIST SRD 60 table type_x.tab"
// for one-degree table entries, "computed from ITS-90 reference function at
// <metal> fixed point" for the ITS-90 fixed points (Preston-Thomas,
// Metrologia 27 (1990) 3).
const tablePath = "../../testdata/its90/its90-table-values.csv"

type tableRow struct {
	typ    string
	tempC  float64
	emfMV  float64
	source string
	line   int
}

func readTable(t *testing.T) []tableRow {
	t.Helper()
	f, err := os.Open(tablePath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(recs[0], ","); got != "type,temp_c,emf_mv,source" {
		t.Fatalf("header %q", got)
	}
	var rows []tableRow
	for i, r := range recs[1:] {
		tc, err1 := strconv.ParseFloat(r[1], 64)
		mv, err2 := strconv.ParseFloat(r[2], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("line %d: %v %v", i+2, err1, err2)
		}
		rows = append(rows, tableRow{r[0], tc, mv, r[3], i + 2})
	}
	if len(rows) < 100 {
		t.Fatalf("only %d rows", len(rows))
	}
	return rows
}

func lookup(t testing.TB, name string) Type {
	t.Helper()
	ty, err := Lookup(name)
	if err != nil {
		t.Fatal(err)
	}
	return ty
}

// TestNISTTable checks the reference functions against every row of the
// NIST SRD 60 excerpt. Tolerances: table entries are printed to 0.001 mV,
// so the function must agree within half a unit of that last digit,
// 0.0005 mV (plus 1e-9 for float rounding); the fixed-point rows are printed
// to 1e-6 mV and must agree within 1e-6 mV.
func TestNISTTable(t *testing.T) {
	types := map[string]int{}
	for _, r := range readTable(t) {
		ty := lookup(t, r.typ)
		got, err := ty.EMF(r.tempC, 0)
		if err != nil {
			t.Errorf("line %d: %v", r.line, err)
			continue
		}
		tol := 0.0005 + 1e-9 // NIST SRD 60 table: 0.001 mV resolution
		if strings.HasPrefix(r.source, "computed") {
			tol = 1e-6 // printed to 1e-6 mV
		}
		if math.Abs(got-r.emfMV) > tol {
			t.Errorf("line %d: type %s E(%g °C) = %.6f mV, table %.6f mV (%s)", r.line, r.typ, r.tempC, got, r.emfMV, r.source)
		}
		types[r.typ]++
	}
	if len(types) != 8 {
		t.Errorf("table covers %d types, want 8", len(types))
	}
}

// TestFixedPoints inverts the computed fixed-point rows of the table: the
// ITS-90 freezing points (Preston-Thomas, Metrologia 27 (1990) 3):
// Sn 231.928, Zn 419.527, Al 660.323, Ag 961.78, Au 1064.18 °C, and the
// Hg triple point −38.8344 °C and Ga melting point 29.7646 °C. Tolerance
// 0.001 °C (the EMF is printed to 1e-6 mV, worth at most 2e-4 °C here).
func TestFixedPoints(t *testing.T) {
	n := 0
	for _, r := range readTable(t) {
		if !strings.HasPrefix(r.source, "computed") {
			continue
		}
		got, err := lookup(t, r.typ).Temp(r.emfMV, 0)
		if err != nil {
			t.Errorf("line %d: %v", r.line, err)
			continue
		}
		if math.Abs(got-r.tempC) > 0.001 {
			t.Errorf("line %d: type %s t(%g mV) = %.5f °C, fixed point %g °C", r.line, r.typ, r.emfMV, got, r.tempC)
		}
		n++
	}
	// Zn, Al and Ag appear for several types; make sure they were all seen.
	if n < 25 {
		t.Errorf("only %d fixed-point rows", n)
	}
}

// TestRoundTrip draws temperatures over each type's whole inverse range
// (fixed seeds) plus the range ends and checks t(E(t)) within 0.001 °C,
// with and without a cold junction.
func TestRoundTrip(t *testing.T) {
	n := 20000
	if testing.Short() {
		n = 2000
	}
	for i, ty := range Types() {
		rng := rand.New(rand.NewPCG(90, uint64(i)))
		lo, hi := ty.InverseRange()
		worst := 0.0
		ts := []float64{lo, hi, (lo + hi) / 2}
		for range n {
			ts = append(ts, lo+(hi-lo)*rng.Float64())
		}
		for _, tc := range ts {
			for _, cj := range []float64{0, 25} {
				e, err := ty.EMF(tc, cj)
				if err != nil {
					t.Fatalf("%s: EMF(%g, %g): %v", ty, tc, cj, err)
				}
				back, err := ty.Temp(e, cj)
				if err != nil {
					t.Fatalf("%s: Temp(%g, %g) for %g °C: %v", ty, e, cj, tc, err)
				}
				worst = math.Max(worst, math.Abs(back-tc))
			}
		}
		if worst > 0.001 {
			t.Errorf("%s: worst round trip error %.3g °C > 0.001 °C", ty, worst)
		}
		t.Logf("%s: %g..%g °C, worst |t(E(t)) − t| = %.2g °C", ty, lo, hi, worst)
	}
}

// TestMonotonic checks every 0.01 °C that each reference function rises
// over the inverse range (what the bracketed solve relies on).
func TestMonotonic(t *testing.T) {
	step := 0.01
	if testing.Short() {
		step = 0.1
	}
	for _, ty := range Types() {
		lo, hi := ty.InverseRange()
		prev := ty.s.ref(lo)
		for x := lo + step; x <= hi; x += step {
			e := ty.s.ref(x)
			if e <= prev {
				t.Fatalf("%s: E not rising at %g °C", ty, x)
			}
			prev = e
		}
	}
}

// TestColdJunction: worked cases from the NIST SRD 60 type K table
// (E(1000 °C) = 41.276 mV, E(25 °C) = 1.000 mV): a type K thermocouple at
// 1000 °C with its cold junction at 25 °C reads 40.276 mV.
func TestColdJunction(t *testing.T) {
	tests := []struct {
		typ        string
		emf, cj, t float64
		tol        float64 // °C; the mV values are table-rounded to 0.001 mV
	}{
		{"K", 40.276, 25, 1000, 0.02},         // 41.276 − 1.000 (NIST SRD 60 type_k.tab); 0.001 mV ≈ 0.025 °C
		{"K", 41.276, 0, 1000, 0.02},          // NIST SRD 60 type_k.tab
		{"J", 57.953 - 1.277, 25, 1000, 0.02}, // NIST SRD 60 type_j.tab: E(1000)=57.953, E(25)=1.277
		{"S", 9.587 - 0.143, 25, 1000, 0.15},  // NIST SRD 60 type_s.tab; S: ~0.012 mV/°C
		{"T", 0, 25, 25, 1e-9},                // no EMF: measuring junction at the cold-junction temperature
		{"K", 0, 0, 0, 1e-9},
	}
	for _, tt := range tests {
		ty := lookup(t, tt.typ)
		got, err := ty.Temp(tt.emf, tt.cj)
		if err != nil {
			t.Errorf("%s Temp(%g, %g): %v", tt.typ, tt.emf, tt.cj, err)
			continue
		}
		if math.Abs(got-tt.t) > tt.tol {
			t.Errorf("%s Temp(%g mV, cj %g °C) = %.4f °C, want %g ± %g", tt.typ, tt.emf, tt.cj, got, tt.t, tt.tol)
		}
	}
	// EMF with a cold junction is the difference of the reference values.
	k := lookup(t, "K")
	e, err := k.EMF(1000, 25)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(e-40.276) > 0.001 { // NIST SRD 60: 41.276 − 1.000, each rounded to 0.001 mV
		t.Errorf("K EMF(1000, 25) = %.4f mV, want 40.276", e)
	}
}

func TestOutOfRange(t *testing.T) {
	tests := []struct {
		name string
		call func() error
		want []string
	}{
		{"K hot", func() error { _, err := lookup(t, "K").EMF(1400, 0); return err }, []string{"type K", "1400 °C", "-270 °C to 1372 °C"}},
		{"K cold", func() error { _, err := lookup(t, "K").EMF(-271, 0); return err }, []string{"type K", "-271"}},
		{"K cj", func() error { _, err := lookup(t, "K").EMF(100, 1500); return err }, []string{"cold junction", "1500"}},
		{"K NaN", func() error { _, err := lookup(t, "K").EMF(math.NaN(), 0); return err }, []string{"NaN"}},
		{"K emf high", func() error { _, err := lookup(t, "K").Temp(60, 0); return err }, []string{"type K", "EMF 60 mV", "54.8864 mV"}},
		{"K emf high with cj", func() error { _, err := lookup(t, "K").Temp(54.5, 25); return err }, []string{"type K", "cold junction at 25 °C"}},
		{"J emf low", func() error { _, err := lookup(t, "J").Temp(-9, 0); return err }, []string{"type J", "-210 °C"}},
		{"B low", func() error { _, err := lookup(t, "B").Temp(0.001, 0); return err }, []string{"type B", "double-valued", "50 °C"}},
		{"B at cj", func() error { _, err := lookup(t, "B").Temp(0, 25); return err }, []string{"type B"}},
		{"S emf NaN", func() error { _, err := lookup(t, "S").Temp(math.NaN(), 0); return err }, []string{"type S", "NaN"}},
	}
	for _, tt := range tests {
		err := tt.call()
		if err == nil {
			t.Errorf("%s: no error", tt.name)
			continue
		}
		var re *RangeError
		if !errors.As(err, &re) {
			t.Errorf("%s: %T is not a *RangeError", tt.name, err)
		}
		for _, w := range tt.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: %q does not mention %q", tt.name, err, w)
			}
		}
	}
	// The range ends themselves are accepted (NIST SRD 60 type_k.tab: 1372 °C = 54.886 mV).
	if _, err := lookup(t, "K").EMF(1372, 0); err != nil {
		t.Error(err)
	}
	if v, err := lookup(t, "K").Temp(54.886, 0); err != nil || math.Abs(v-1372) > 0.03 {
		t.Errorf("K Temp(54.886) = %v, %v", v, err)
	}
}

func TestLookup(t *testing.T) {
	for _, n := range []string{"K", "k", " type K ", "Type k"} {
		if ty, err := Lookup(n); err != nil || ty.Name() != "K" {
			t.Errorf("Lookup(%q) = %v, %v", n, ty, err)
		}
	}
	if _, err := Lookup("Q"); err == nil || !strings.Contains(err.Error(), "B E J K N R S T") {
		t.Errorf("Lookup(Q): %v", err)
	}
	var got []string
	for _, ty := range Types() {
		got = append(got, ty.Name())
	}
	if strings.Join(got, "") != "BEJKNRST" {
		t.Errorf("Types() = %v", got)
	}
	// Reference ranges (NIST Monograph 175): K −270..1372, B 0..1820, S −50..1768.1.
	ranges := map[string][2]float64{"K": {-270, 1372}, "B": {0, 1820}, "S": {-50, 1768.1}, "T": {-270, 400}}
	for n, r := range ranges {
		lo, hi := lookup(t, n).TempRange()
		if lo != r[0] || hi != r[1] {
			t.Errorf("%s range %g..%g, want %g..%g", n, lo, hi, r[0], r[1])
		}
	}
	if lo, _ := lookup(t, "B").InverseRange(); lo != 50 {
		t.Errorf("B inverse from %g °C", lo)
	}
	var zero Type
	if _, err := zero.EMF(0, 0); err == nil {
		t.Error("zero Type gave no error")
	}
}

func BenchmarkTemp(b *testing.B) {
	k := lookup(b, "K")
	var sink float64
	e := 0.0
	for b.Loop() {
		v, _ := k.Temp(e, 25)
		sink += v
		e += 0.001
		if e > 50 {
			e = 0
		}
	}
	_ = sink
}

func BenchmarkEMF(b *testing.B) {
	k := lookup(b, "K")
	var sink float64
	tc := 0.0
	for b.Loop() {
		v, _ := k.EMF(tc, 25)
		sink += v
		tc += 0.01
		if tc > 1300 {
			tc = 0
		}
	}
	_ = sink
}

// TestSlope checks the analytic dE/dt used by the Newton steps against a
// central difference (h = 1e-3 °C; agreement within 1e-6 mV/°C).
func TestSlope(t *testing.T) {
	for _, ty := range Types() {
		lo, hi := ty.TempRange()
		for x := lo + 1; x < hi-1; x += 7.3 {
			_, d := ty.s.refSlope(x)
			h := 1e-3
			fd := (ty.s.ref(x+h) - ty.s.ref(x-h)) / (2 * h)
			if math.Abs(d-fd) > 1e-6 {
				t.Errorf("%s: slope at %g °C = %g, central difference %g", ty, x, d, fd)
			}
		}
	}
}
