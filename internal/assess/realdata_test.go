package assess

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// realData is ../shared/realdata beside the repository root: measured
// curves from public repositories (see SOURCES.md there), never copied
// into the repository.
func realData(t *testing.T, parts ...string) string {
	t.Helper()
	p := filepath.Join(append([]string{"..", "..", "..", "shared", "realdata"}, parts...)...)
	if _, err := os.Stat(p); err != nil {
		t.Skipf("measured curves not here (%v): they live in ../shared/realdata beside the repository", err)
	}
	return p
}

// column reads one column of a CSV with a time column first, up to its
// first blank cell.
func column(t *testing.T, path, name string) (time, temp []float64) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := -1
	for i, h := range rows[0] {
		if strings.TrimPrefix(strings.TrimSpace(h), "\ufeff") == name {
			col = i
		}
	}
	if col < 0 {
		t.Fatalf("%s: no column %s", path, name)
	}
	for _, r := range rows[1:] {
		ts, err1 := strconv.ParseFloat(strings.TrimSpace(r[0]), 64)
		v, err2 := strconv.ParseFloat(strings.TrimSpace(r[col]), 64)
		if err1 != nil || err2 != nil || math.IsNaN(v) {
			break
		}
		time, temp = append(time, ts), append(temp, v)
	}
	return time, temp
}

// TestRealTinCheckCup: a measured pure-tin curve (M. Mignard, Eutectic-Sn-Bi,
// MIT licence; K thermocouple, AD8495 with its nominal linear law, 1 Hz)
// judged as the pure-sn check cup reports the thermocouple's offset from
// the ITS-90 tin point, 231.928 °C (Preston-Thomas, Metrologia 27 (1990) 3).
// The author read the plateau as 230.31 °C (PhaseData.csv), which is also
// the plateau's raw reading; an independent Savitzky–Golay read puts it near
// 230.25–230.43 °C. Tolerance ±0.3 °C on the plateau (the spread of those
// reads), hence on the offset. The undercooling below the plateau lies
// between the smoothed read (229.35 → 230.43 °C, 1.1 K: the smoothing fills
// the three-reading dip) and the raw readings (228.51 °C at 75 s, plateau
// 230.31 °C: 1.8 K).
func TestRealTinCheckCup(t *testing.T) {
	tm, temp := column(t, realData(t, "mignard-snbi-arduino", "EutecticData.csv"), "Sn100")
	rec := Assess(Input{File: "Sn100", Alloy: "pure-sn", Time: tm, Temp: temp})
	if rec.Family != "pure" || rec.Verdict == VerdictInvalid {
		t.Fatalf("family %s, verdict %s, problems %q", rec.Family, rec.Verdict, rec.Problems)
	}
	near(t, "plateau", rec.PlateauC, 230.31, 0.3)
	near(t, "offset", rec.FixedPointErrorC, 230.31-231.928, 0.3)
	if u := rec.FixedPointUndercoolingC; u == nil || *u < 1.1 || *u > 1.85 {
		t.Errorf("undercooling below the plateau %v, want 1.1–1.85 °C", u)
	}
	// −1.6 °C lies within the type K class 2 tolerance at 232 °C, ±2.2 °C.
	if rec.Verdict != VerdictPass || !strings.HasPrefix(rec.Reasons[0], "a check of the thermocouple and amplifier, not of metal") {
		t.Errorf("verdict %s, reasons %q", rec.Verdict, rec.Reasons)
	}
}
