package tui

import (
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// The decimated trace stays bounded and keeps every reading's extremes:
// the lowest and highest values of any run of buckets are those of the
// readings they cover (property test, fixed seed).
func TestTraceBoundedKeepsExtremes(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	tr := newTrace()
	var vals []float64
	for i := 0; i < 100_000; i++ {
		v := 1200 + 50*math.Sin(float64(i)/500) + rng.NormFloat64()
		if i == 54_321 {
			v = 1400 // one narrow spike must survive decimation
		}
		vals = append(vals, v)
		tr.add(float64(i)/10, v)
	}
	if tr.len() > maxBuckets {
		t.Fatalf("trace has %d buckets, bound %d", tr.len(), maxBuckets)
	}
	lo, hi, _ := tr.bounds(math.Inf(-1))
	wantLo, wantHi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		wantLo, wantHi = math.Min(wantLo, v), math.Max(wantHi, v)
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

// The live slope of a straight line is its gradient (exact for least
// squares), and it waits for four readings.
func TestSlopeOfLine(t *testing.T) {
	var ts, vs []float64
	s := slope{w: 2}
	for i := 0; i < 50; i++ {
		ts = append(ts, float64(i)*0.1)
		vs = append(vs, 1250-1.5*float64(i)*0.1)
		_, d, ok := s.next(ts, vs, i)
		if i < 3 && ok {
			t.Fatalf("slope from %d readings", i+1)
		}
		if i >= 3 && (!ok || math.Abs(d+1.5) > 1e-9) {
			t.Fatalf("slope %g at %d, want -1.5 °C/s", d, i)
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

// Replay feeds a whole (constructed) file straight to the end through the
// live path: one sample, every reading, the file's metadata in the form.
func TestReplayToEnd(t *testing.T) {
	tt, v := constructedCurve(230, 10)
	c := &curvefile.Curve{Time: tt, Temp: v, Meta: []curvefile.Meta{{Key: "sample", Value: "L-2417 cup 1"}, {Key: "alloy", Value: "grey-iron"}}}
	r := NewReplay(c, "/x/L-2417.csv", "1", 50)
	r.SkipToEnd()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go r.Run(ctx)
	m := testModel(t, 100, 30)
	var done []Entry
	for b := range r.Batches() {
		done = append(done, m.live.batch(b)...)
		if len(done) > 0 {
			cancel()
		}
	}
	if len(done) != 1 {
		t.Fatalf("%d samples finished, want 1", len(done))
	}
	e := done[0]
	if len(e.Time) != len(tt) || e.Meta.Sample != "L-2417 cup 1" || e.Meta.Alloy != "grey-iron" || e.Path != "/x/L-2417.csv" {
		t.Errorf("replayed %d of %d readings, meta %+v, path %q", len(e.Time), len(tt), e.Meta, e.Path)
	}
}
