package curvefile

import (
	"math"
	"strings"
	"testing"
)

// OnTimes puts a second channel on the first channel's times: its reading
// where it read, the straight line between two readings that follow each
// other, NaN (a gap) before its first reading, after its last, next to a
// fault reading and across a silence longer than MaxWallStep.
func TestOnTimes(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		name      string
		tw, vw, t []float64
		want      []float64
	}{
		{"readings and lines between them", []float64{0, 1, 2, 4}, []float64{10, 12, 13, 17}, []float64{0, 0.5, 2, 3, 4},
			[]float64{10, 11, 13, 15, 17}},
		{"outside its readings", []float64{1, 2}, []float64{5, 6}, []float64{0.5, 1, 2, 2.5}, []float64{nan, 5, 6, nan}},
		{"a fault reading", []float64{0, 0.1, 0.2, 0.3}, []float64{1, nan, 3, 4}, []float64{0.05, 0.1, 0.15, 0.25}, []float64{nan, nan, nan, 3.5}},
		// median step 0.1 s: a step of more than 1 s is a silence
		{"a silence", []float64{0, 0.1, 0.2, 1.5, 1.6, 1.7}, []float64{0, 1, 2, 15, 16, 17}, []float64{0.15, 1, 1.65},
			[]float64{1.5, nan, 16.5}},
		// a 0.5 Hz logger: median step 2 s, so steps up to 5 s are drawn across
		{"a slow logger", []float64{0, 2, 4, 6}, []float64{0, 2, 4, 6}, []float64{1, 5}, []float64{1, 5}},
		{"no readings", nil, nil, []float64{1}, []float64{nan}},
	} {
		got := OnTimes(c.t, c.tw, c.vw)
		for i := range c.want {
			if math.IsNaN(c.want[i]) != math.IsNaN(got[i]) || !math.IsNaN(c.want[i]) && math.Abs(got[i]-c.want[i]) > 1e-12 {
				t.Errorf("%s: at %g s %g, want %g", c.name, c.t[i], got[i], c.want[i])
			}
		}
	}
}

// The metadata of a two-thermocouple cup read back as written; the
// simulator's earlier key stands for the wall radius; a bad radius is an
// error naming its key.
func TestPairOf(t *testing.T) {
	p := Pair{WallChannel: "2", CentreMm: 0.5, WallMm: 16.25}
	if got, err := PairOf(p.Meta()); err != nil || got != p {
		t.Errorf("read back %+v %v, want %+v", got, err, p)
	}
	if got, err := PairOf([]Meta{{Key: "sim_wall_tc_radius_mm", Value: "15.8"}}); err != nil || got != (Pair{WallMm: 15.8}) {
		t.Errorf("simulator file: %+v %v", got, err)
	}
	if got, err := PairOf(nil); err != nil || got != (Pair{}) {
		t.Errorf("nothing: %+v %v", got, err)
	}
	if _, err := PairOf([]Meta{{Key: KeyWallRadius, Value: "-3"}}); err == nil || !strings.Contains(err.Error(), KeyWallRadius) {
		t.Errorf("a negative radius: %v", err)
	}
}

// The wall column reads as numbers, NaN where empty, and a value that is
// no temperature is an error naming the file, the reading and its time.
func TestWallColumn(t *testing.T) {
	c, err := Read(strings.NewReader("# tc_wall_radius_mm: 16\ntime_s;temp_c;wall_tc_c\n0;25;24,5\n0,1;640;\n0,2;650;600,25\n"), "cup.csv")
	if err != nil {
		t.Fatal(err)
	}
	w, err := c.Wall()
	if err != nil || len(w) != 3 || w[0] != 24.5 || !math.IsNaN(w[1]) || w[2] != 600.25 {
		t.Fatalf("Wall: %v %v", w, err)
	}
	c.Extra[0].Values[1] = "hot"
	if _, err := c.Wall(); err == nil || !strings.Contains(err.Error(), `cup.csv: column wall_tc_c, reading 2 (0.1 s): "hot"`) {
		t.Errorf("a bad value: %v", err)
	}
	c.Extra = nil
	if w, err := c.Wall(); w != nil || err != nil {
		t.Errorf("no column: %v %v", w, err)
	}
}
