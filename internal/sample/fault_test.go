package sample

import (
	"slices"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// The sample's thermocouple fault: an open circuit the device reports is
// the fault from its first reading; readings pegged at the top of type K's
// range (1372 °C, NIST Monograph 175; up-scale burnout, practice) are the
// fault once they have held PeggedS, dated from the first of them; a pour
// peak above PeggedMinC that moves is none. The next sample starts clear.
func TestThermocoupleFault(t *testing.T) {
	pour := func(s *source) {
		s.feedCurve("1", idle(5), 5)
		s.pour("1", nil)
	}
	t.Run("reported open", func(t *testing.T) {
		s := newSource(t, Config{})
		pour(s)
		s.feedCurve("1", []float64{1300, 1299, 1298}, 3)
		at := s.clock
		s.apply(feed.Item{Kind: feed.KindReading, Channel: "1", TimeS: at, Reading: feed.Reading{TimeS: at, Channel: "1", Flags: feed.FlagOpen}})
		f := s.snap("1").Fault
		if f.Kind != FaultOpen || f.TimeS != 0.3 {
			t.Fatalf("fault %+v, want open at 0.3 s (the fourth reading of the sample)", f)
		}
		s.feedCurve("1", []float64{1297}, 1)
		if f := s.snap("1").Fault; f.Kind != FaultOpen || f.TimeS != 0.3 {
			t.Fatalf("a valid reading after the fault cleared it: %+v", f)
		}
	})
	t.Run("pegged", func(t *testing.T) {
		s := newSource(t, Config{})
		pour(s)
		s.feedCurve("1", []float64{1300, 1290, 1280}, 3)
		s.feedCurve("1", slices.Repeat([]float64{sim.OpenReadingC}, 20), 5) // 1.9 s
		if f := s.snap("1").Fault; f.Kind != FaultNone {
			t.Fatalf("fault %+v after 1.9 s of pegged readings, want none yet", f)
		}
		s.feedCurve("1", []float64{sim.OpenReadingC}, 1)
		f := s.snap("1").Fault
		if f.Kind != FaultPegged || f.TimeS != 0.3 || f.ValueC != sim.OpenReadingC {
			t.Fatalf("fault %+v, want pegged at %d °C from 0.3 s", f, sim.OpenReadingC)
		}
		s.end("1", "stopped by hand")
		s.feedCurve("1", idle(3), 3)
		s.pour("1", nil)
		if f := s.snap("1").Fault; f.Kind != FaultNone {
			t.Fatalf("the next sample starts with fault %+v", f)
		}
	})
	t.Run("a hot pour that moves", func(t *testing.T) {
		s := newSource(t, Config{})
		pour(s)
		var v []float64
		for i := range 60 {
			v = append(v, 1420-0.05*float64(i%3)-float64(i)/100)
		}
		s.feedCurve("1", v, 6)
		if f := s.snap("1").Fault; f.Kind != FaultNone {
			t.Fatalf("fault %+v on a moving reading above %g °C", f, float64(PeggedMinC))
		}
	})
}

// The snapshot says how long the channel has been silent (the source's
// status) and whether the sample, or before any the device, is simulated.
func TestSilentAndSimulated(t *testing.T) {
	s := newSource(t, Config{})
	u := s.obey(s.tr.Apply(feed.Batch{
		Items:  []feed.Item{{Kind: feed.KindDeviceInfo, Meta: []curvefile.Meta{{Key: "simulated", Value: "true"}}}},
		Status: feed.Status{Connected: true, Channels: map[string]feed.ChannelStatus{"1": {SilentS: 4.5}}},
	}))
	if len(u.Channels) != 0 {
		t.Fatalf("a device line made channels %v", u.Channels)
	}
	s.feedCurve("1", idle(2), 2)
	u = s.obey(s.tr.Apply(feed.Batch{Status: feed.Status{Channels: map[string]feed.ChannelStatus{"1": {SilentS: 4.5}}}}))
	if sn := u.Channels[0]; sn.SilentS != 4.5 || !sn.Simulated {
		t.Fatalf("snapshot silent %g s simulated %v, want 4.5 s and true (the device said simulated=true)", sn.SilentS, sn.Simulated)
	}
	s.next["1"] = append(s.next["1"], curvefile.Meta{Key: "simulated", Value: "true"})
	s.pour("1", nil)
	if !s.snap("1").Simulated {
		t.Fatal("a sample whose file says simulated: true is not marked simulated")
	}
}
