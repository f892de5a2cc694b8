package tui

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// radialBatches is a SIMULATED radial grey-iron cup with a wall
// thermocouple (internal/sim, CupRadial) as the acquirer sends it: the
// sample on channel 1 names channel 2 as its wall thermocouple, the file's
// metadata places the two, and the end comes after the last reading.
func radialBatches(t testing.TB) []Batch {
	t.Helper()
	p, err := sim.Preset(sim.GreyIron, 0.5, 3)
	if err != nil {
		t.Fatal(err)
	}
	p.Cup, p.Logger.RateHz = sim.CupRadial, 10
	out := sim.Simulate(p)
	pair := curvefile.Pair{WallChannel: "2", WallMm: math.Round(out.Truth.WallTCRadiusMm*100) / 100}
	meta := append([]curvefile.Meta{{Key: "sample", Value: "L-2405 cup 2"}, {Key: "alloy", Value: sim.GreyIron}, {Key: "operator", Value: "Odile Flintcaster"}}, pair.Meta()...)
	st := feed.Status{Port: "sim:deck", Connected: true, ReadingsPerS: 10, Channels: map[string]feed.ChannelStatus{"1": {Recording: true, Sample: 1}, "2": {WallOf: "1"}}}
	var bs []Batch
	for i := 0; i < len(out.Time); i += 10 {
		var b Batch
		if i == 0 {
			b.Items = append(b.Items, feed.Item{Kind: feed.KindDeviceInfo, Channel: "1", TimeS: out.Time[0], Meta: meta},
				feed.Item{Kind: feed.KindStarted, Channel: "1", TimeS: out.Time[0], Sample: 1, StartS: out.Time[0],
					Meta: meta, Path: "/data/L-2405-cup2.partial.csv", Wall: "2"})
		}
		for k := i; k < min(i+10, len(out.Time)); k++ {
			ts := math.Round(out.Time[k]*1e6) / 1e6
			c := feed.Reading{TimeS: ts, TempC: out.Temp[k], Channel: "1"}
			w := feed.Reading{TimeS: ts, TempC: out.Wall[k], Channel: "2"}
			b.Items = append(b.Items, feed.Item{Kind: feed.KindReading, Channel: "1", TimeS: ts, Reading: c},
				feed.Item{Kind: feed.KindReading, Channel: "2", TimeS: ts, Reading: w})
		}
		b.Status = st
		bs = append(bs, b)
	}
	last := &bs[len(bs)-1]
	last.Items = append(last.Items, feed.Item{Kind: feed.KindEnded, Channel: "1", TimeS: out.Time[len(out.Time)-1], Sample: 1,
		Path: "/data/L-2405-cup2.csv", Text: "freezing done"})
	last.Status.Channels = map[string]feed.ChannelStatus{"1": {Sample: 1}, "2": {WallOf: "1"}}
	return bs
}

// realModel is a dashboard on a tracker with the real analyser and the
// real judge (assess.FromResult), for screens whose figures are the
// record's own.
func realModel(t testing.TB, w, h int) Model {
	t.Helper()
	book, err := limits.Parse([]byte(constructedLimits), "constructed.toml")
	if err != nil {
		t.Fatal(err)
	}
	mem := &Memory{Clock: fixedClock}
	f := newTestFeed(sample.Config{Limits: book}, mem)
	m := New(Options{Feed: f, Title: "test deck", Styles: asciiStyles(), Limits: book, Records: mem, Clock: fixedClock})
	return runCmds(m.resize(w, h), nil)
}

// The f key on a finished cup shows its fs(t): the Newtonian path, and the
// Fourier path as well for a cup with a wall thermocouple, with the
// fraction solid at each point beside it; f again gives the curve back.
func TestFractionScreens(t *testing.T) {
	sizes := []struct{ w, h int }{{80, 24}, {120, 40}}
	screens := []struct {
		name string
		make func(t *testing.T, w, h int) Model
	}{
		{"live-fs-one-tc", func(t *testing.T, w, h int) Model {
			return play(testModel(t, w, h), constructedBatches("1", 230, 10, 5))
		}},
		{"live-fs-two-tc", func(t *testing.T, w, h int) Model { return play(realModel(t, w, h), radialBatches(t)) }},
	}
	for _, sz := range sizes {
		for _, sc := range screens {
			name := sc.name + "-" + strconv.Itoa(sz.w) + "x" + strconv.Itoa(sz.h)
			t.Run(name, func(t *testing.T) {
				m := sc.make(t, sz.w, sz.h)
				before := m.View()
				m = press(m, "f")
				v := m.View()
				checkScreen(t, v, sz.w, sz.h)
				if !strings.Contains(v, "fs against s · Newtonian") {
					t.Errorf("no Newtonian fs(t):\n%s", stripANSI(v))
				}
				checkGolden(t, name, v)
				if back := press(m, "f").View(); back != before {
					t.Errorf("f twice does not give the curve back:\n%s", stripANSI(back))
				}
			})
		}
	}
}

// The figures beside the fs(t) chart are the record's: for the two-thermocouple
// cup the Fourier path gives the record's fs_at_* (its fs_method), and the
// Newtonian and Fourier latent heats are the record's. The path is worked
// out once, on the first press, and kept while the sample is shown.
func TestFractionFiguresAreTheRecords(t *testing.T) {
	m := play(realModel(t, 120, 40), radialBatches(t))
	m = press(m, "f")
	c := m.live.cups[0]
	rec := c.rec()
	if c.fs == nil || rec == nil {
		t.Fatal("no fs(t) worked out for the finished cup")
	}
	if rec.FSMethod != "fourier" {
		t.Fatalf("record's fs by %q, want fourier (two thermocouples)", rec.FSMethod)
	}
	s := c.fs.solid
	if s.Newtonian == nil || s.Fourier == nil {
		t.Fatalf("paths: Newtonian %v (%v), Fourier %v (%v)", s.Newtonian != nil, s.NewtonianErr, s.Fourier != nil, s.FourierErr)
	}
	v := stripANSI(m.View())
	for _, x := range []struct {
		name string
		rec  *float64
		key  string
		sym  string
	}{
		{"fs_at_eutectic_min", rec.FSAtEutecticMin, "eutectic_min", "U"},
		{"fs_at_eutectic_max", rec.FSAtEutecticMax, "eutectic_max", "R"},
		{"fs_at_end_of_freezing", rec.FSAtEndOfFreezing, "end_of_freezing", "S"},
	} {
		if x.rec == nil {
			t.Errorf("%s is null in the record", x.name)
			continue
		}
		want := fmt.Sprintf("%s %.2f", x.sym, *x.rec)
		if !strings.Contains(v, want) {
			t.Errorf("%s: %q not on the screen:\n%s", x.name, want, v)
		}
	}
	for name, l := range map[string]*float64{"Newtonian": rec.LatentHeatNewtonianJPerKg, "Fourier": rec.LatentHeatFourierJPerKg} {
		if l == nil {
			t.Errorf("%s latent heat null in the record", name)
			continue
		}
		if want := fmt.Sprintf("L %.0f kJ/kg", *l/1000); !strings.Contains(v, want) {
			t.Errorf("%s latent heat: %q not on the screen:\n%s", name, want, v)
		}
	}
	kept := c.fs
	m = play(m, []Batch{{Status: feed.Status{Port: "sim:deck", Connected: true}}}) // an update while DONE
	if m.live.cups[0].fs != kept {
		t.Error("the fs(t) path was worked out again on an update")
	}
	if got := assess.SolidPaths(assess.Input{Family: c.snap.Family, Time: c.snap.T, Temp: c.snap.V, Wall: c.snap.Wall, Radii: c.snap.Radii}, *rec); got.Fourier == nil ||
		got.Fourier.LatentJPerKg != s.Fourier.LatentJPerKg {
		t.Error("the dashboard's Fourier path differs from assess.SolidPaths of the same sample")
	}
}

// f before the sample is finished says what it is for and changes nothing.
func TestFractionKeyWhileRecording(t *testing.T) {
	m := play(testModel(t, 80, 24), constructedBatches("1", 100, 10, 5)[:140])
	before := m.live.cups[0].drawn.text
	m = press(m, "f")
	if !strings.Contains(stripANSI(m.View()), "fs(t) is shown for a finished (DONE) cup") {
		t.Errorf("no word on the f key while recording:\n%s", stripANSI(m.View()))
	}
	if m.live.cups[0].fs != nil || m.live.cups[0].drawn.text != before {
		t.Error("the f key while recording changed the cup")
	}
}
