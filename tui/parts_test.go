package tui

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// The decimated trace stays bounded and keeps every reading's extremes:
// the lowest and highest values of any run of buckets are those of the
// readings they cover (property test, fixed seed); non-finite values are
// passed over.
func TestTraceBoundedKeepsExtremes(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	var ts, vals []float64
	for i := 0; i < 100_000; i++ {
		v := 1200 + 50*math.Sin(float64(i)/500) + rng.NormFloat64()
		if i == 54_321 {
			v = 1400 // one narrow spike must survive decimation
		}
		ts, vals = append(ts, float64(i)/10), append(vals, v)
	}
	vals[7] = math.NaN()
	tr := traceOf(ts, vals)
	if tr.len() > maxBuckets || tr.len() < maxBuckets/2 {
		t.Fatalf("trace has %d buckets, bound %d", tr.len(), maxBuckets)
	}
	lo, hi, _ := tr.bounds(math.Inf(-1))
	wantLo, wantHi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		if !math.IsNaN(v) {
			wantLo, wantHi = math.Min(wantLo, v), math.Max(wantHi, v)
		}
	}
	if lo != wantLo || hi != wantHi {
		t.Errorf("bounds %g..%g, readings %g..%g", lo, hi, wantLo, wantHi)
	}
	for i := 1; i < tr.len(); i++ {
		if tr.t[i] <= tr.t[i-1] {
			t.Fatalf("bucket times not rising at %d", i)
		}
	}
}

func TestBigText(t *testing.T) {
	got := bigText("1.5")
	rows := strings.Split(got, "\n")
	if len(rows) != bigHeight {
		t.Fatalf("%d rows", len(rows))
	}
	want := []string{
		"  █     ████",
		" ██     █   ",
		"  █     ████",
		"  █        █",
		" ███ █  ████",
	}
	for i := range want {
		if rows[i] != want[i] {
			t.Errorf("row %d = %q, want %q", i, rows[i], want[i])
		}
	}
}

func TestParseBound(t *testing.T) {
	for _, c := range []struct {
		in   string
		want *float64
		bad  bool
	}{{"", nil, false}, {"12,5", ptr(12.5), false}, {" -3 ", ptr(-3), false}, {"x", nil, true}, {"NaN", nil, true}} {
		got, err := parseBound(c.in)
		if (err != nil) != c.bad || (got == nil) != (c.want == nil) || (got != nil && *got != *c.want) {
			t.Errorf("parseBound(%q) = %v, %v", c.in, got, err)
		}
	}
}

func ptr(v float64) *float64 { return &v }

func TestNextSpeed(t *testing.T) {
	if nextSpeed(4, 1) != 5 || nextSpeed(50, 1) != 50 || nextSpeed(1, -1) != 1 || nextSpeed(10, -1) != 5 {
		t.Error("speed steps")
	}
}
