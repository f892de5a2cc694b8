package sample

import (
	"math"
	"reflect"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/sim"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// A cup with two thermocouples, as the acquirer sends it: the sample on
// the centre's channel names its wall thermocouple's channel, whose
// readings from then on are the sample's wall readings. The finished
// sample holds the wall curve on its times, as its file does, and its
// record is the offline one of the same readings with the wall (the
// Fourier path and the coherency point); a wall thermocouple gone silent
// leaves the centre's sample whole, its Fourier figures null with the
// reason. The wall channel starts no sample of its own.
func TestTwoThermocoupleCup(t *testing.T) {
	p, err := sim.Preset(sim.AlSi7Mg, 0.6, 5)
	if err != nil {
		t.Fatal(err)
	}
	p.Cup, p.Logger.RateHz = sim.CupRadial, 10
	out := sim.Simulate(p) // a SIMULATED radial cup
	pair := curvefile.Pair{WallChannel: "2", WallMm: math.Round(out.Truth.WallTCRadiusMm*100) / 100}
	for _, silentFrom := range []int{-1, 1200} {
		s := newSource(t, Config{})
		s.obey(s.tr.SetForm("1", meta("sample", "L-2420 cup 1", "alloy", sim.AlSi7Mg)))
		reading := func(i int, ch string, v float64) feed.Reading {
			return feed.Reading{TimeS: math.Round((10+float64(i)*0.1)*1e6) / 1e6, TempC: v, Channel: ch}
		}
		var pre, wallPre []feed.Reading
		for i := range 30 {
			pre = append(pre, reading(i, "1", out.Temp[i]))
			wallPre = append(wallPre, reading(i, "2", out.Wall[i]))
		}
		s.n["1"], s.rec["1"] = 1, 1
		fileMeta := append([]curvefile.Meta{{Key: "channel", Value: "1"}}, append(pair.Meta(), s.nextMeta("1")...)...)
		s.apply(feed.Item{Kind: feed.KindStarted, Channel: "1", Sample: 1, Path: "/curves/1.partial.csv", Meta: fileMeta,
			Pre: pre, StartS: pre[0].TimeS, Wall: "2", WallPre: wallPre})
		for i := 30; i < len(out.Time) && s.rec["1"] != 0; i += 7 {
			var items []feed.Item
			for k := i; k < min(i+7, len(out.Time)); k++ {
				c := reading(k, "1", out.Temp[k])
				items = append(items, feed.Item{Kind: feed.KindReading, Channel: "1", TimeS: c.TimeS, Reading: c})
				if silentFrom < 0 || k < silentFrom {
					w := reading(k, "2", out.Wall[k])
					items = append(items, feed.Item{Kind: feed.KindReading, Channel: "2", TimeS: w.TimeS, Reading: w})
				}
			}
			k := len(s.stops)
			s.apply(items...)
			if len(s.stops) > k {
				s.end("1", "freezing done")
			}
		}
		fs := s.finished()
		if len(fs) != 1 || fs[0].Channel != "1" {
			t.Fatalf("finished %d samples, want the centre's one", len(fs))
		}
		f := fs[0]
		if len(f.Wall) != len(f.T) {
			t.Fatalf("wall curve of %d readings for %d", len(f.Wall), len(f.T))
		}
		for i := range f.T {
			want := out.Wall[i]
			if silentFrom >= 0 && i >= silentFrom {
				want = math.NaN() // no wall reading there: a gap, never a guess
			}
			if f.Wall[i] != want && !(math.IsNaN(want) && math.IsNaN(f.Wall[i])) {
				t.Fatalf("silent from %d: wall at reading %d %v, sent %v", silentFrom, i, f.Wall[i], want)
			}
		}
		in, notes := assess.Input{File: f.Path, Alloy: sim.AlSi7Mg, Time: f.T, Temp: f.V,
			Meta: fileMeta}.WithWall(f.Wall)
		if len(notes) != 0 || in.Radii != (solidpath.Geometry{WallMm: pair.WallMm}) {
			t.Fatalf("WithWall: %q, %+v", notes, in.Radii)
		}
		if offline := assess.Assess(in); !reflect.DeepEqual(f.Record, offline) {
			t.Errorf("silent from %d: the live record differs from the offline one:\n live %+v\n offl %+v", silentFrom, f.Record, offline)
		}
		rec := f.Record
		switch {
		case silentFrom < 0 && (rec.FSMethod != solidpath.MethodFourier || rec.LatentHeatFourierJPerKg == nil || rec.CoherencyC == nil):
			t.Errorf("fs by %q, Fourier L %v, coherency %v", rec.FSMethod, rec.LatentHeatFourierJPerKg, rec.CoherencyC)
		case silentFrom >= 0 && (rec.FSMethod != solidpath.MethodNewtonian || rec.LatentHeatFourierJPerKg != nil || rec.LatentHeatNewtonianJPerKg == nil ||
			!strings.Contains(strings.Join(rec.Warnings, "\n"), "the wall thermocouple has no reading at")):
			t.Errorf("wall silent: fs by %q, Fourier L %v, Newtonian L %v, warnings %q", rec.FSMethod, rec.LatentHeatFourierJPerKg, rec.LatentHeatNewtonianJPerKg, rec.Warnings)
		}
		if sn := s.snap("2"); sn.State != Waiting || sn.Sample != 0 || !sn.HasLast {
			t.Errorf("the wall channel: %v, sample %d", sn.State, sn.Sample)
		}
		if sn := s.snap("1"); sn.WallChannel != "2" || len(sn.Wall) != len(sn.T) {
			t.Errorf("the centre's snapshot: wall channel %q, %d wall readings", sn.WallChannel, len(sn.Wall))
		}
	}
}
