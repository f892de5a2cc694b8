package errdist

import (
	"math"
	"strings"
	"testing"
)

// The nearest-rank quantile as defined by Hyndman and Fan's definition 1
// (the inverse of the empirical distribution function; Amer. Statistician
// 50 (1996) 361, recalled), on small worked cases.
func TestQuantile(t *testing.T) {
	xs := []float64{15, 20, 35, 40, 50}
	for _, c := range []struct{ q, want float64 }{
		{0, 15}, {0.05, 15}, {0.3, 20}, {0.4, 20}, {0.5, 35}, {0.95, 50}, {1, 50},
	} {
		if got := Quantile(xs, c.q); got != c.want {
			t.Errorf("Quantile(%v, %g) = %g, want %g", xs, c.q, got, c.want)
		}
	}
	if !math.IsNaN(Quantile(nil, 0.5)) {
		t.Error("the quantile of no values is not NaN")
	}
	in := []float64{3, 1, 2}
	Quantile(in, 0.5)
	if in[0] != 3 || in[1] != 1 {
		t.Errorf("Quantile changed its input: %v", in)
	}
}

func TestRow(t *testing.T) {
	got := Row("solidus", []float64{-1, 0.5, 2}, 1, 4)
	for _, want := range []string{"solidus", "    3", "   1.000", "   2.000", "  -1.000", "(limit ±4.0)"} {
		if !strings.Contains(got, want) {
			t.Errorf("Row = %q, missing %q", got, want)
		}
	}
	if !strings.Contains(Row("pour_peak", nil, 0, 0), "(limit -)") {
		t.Error("a point without a tolerance shows no limit")
	}
}

func TestPointAdd(t *testing.T) {
	p := Point{Name: "eutectic_min", Tol: 0.6}
	for _, c := range []struct {
		got, want     float64
		gotOK, wantOK bool
		miss, null    bool
	}{
		{1150.2, 1150.0, true, true, false, false},
		{1151.0, 1150.0, true, true, true, false},
		{0, 1150.0, false, true, true, true},
		{1150.0, 0, true, false, true, true},
		{0, 0, false, false, false, false},
	} {
		miss, null := p.Add(c.got, c.gotOK, c.want, c.wantOK)
		if (miss != "") != c.miss || null != c.null {
			t.Errorf("Add(%g, %v, %g, %v) = %q, %v", c.got, c.gotOK, c.want, c.wantOK, miss, null)
		}
	}
	if len(p.Errs) != 2 || p.Nulls != 2 || math.Abs(p.Errs[1]-1) > 1e-9 {
		t.Errorf("errors %v, nulls %d", p.Errs, p.Nulls)
	}
	logged := Point{Name: "pour_peak"}
	if miss, _ := logged.Add(0, false, 1300, true); miss != "" || logged.Nulls != 1 {
		t.Errorf("a point without a tolerance is logged, not missed: %q, nulls %d", miss, logged.Nulls)
	}
}
