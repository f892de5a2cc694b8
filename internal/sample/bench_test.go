package sample

import (
	"testing"

	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// BenchmarkTrackerReading is the tracker's work for one reading of a
// recording cup at 10 Hz, one reading a batch (as a live amplifier feeds
// it): the growing-curve analysis, the freezing decision and the update,
// averaged over a whole SIMULATED grey-iron cup (internal/sim) from its
// pour to the margin after freezing.
func BenchmarkTrackerReading(b *testing.B) {
	p, err := sim.Preset(sim.GreyIron, 0.8, 3)
	if err != nil {
		b.Fatal(err)
	}
	p.Logger.RateHz = 10
	temps := sim.Simulate(p).Temp
	mk := func() *Tracker {
		tr := New(Config{Meta: Meta{{Key: "alloy", Value: "grey-iron"}}})
		tr.Apply(feed.Batch{Items: []feed.Item{{Kind: feed.KindStarted, Channel: "1", Sample: 1}}})
		return tr
	}
	tr := mk()
	i := 0
	for b.Loop() {
		if i == len(temps) {
			tr, i = mk(), 0
		}
		r := feed.Reading{TimeS: float64(i) / 10, TempC: temps[i], Channel: "1"}
		tr.Apply(feed.Batch{Items: []feed.Item{{Kind: feed.KindReading, Channel: "1", TimeS: r.TimeS, Reading: r}}})
		i++
	}
}
