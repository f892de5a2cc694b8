package sample

import (
	"testing"

	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// TestMarginByHostClock: once freezing has ended the sample is stopped
// 15 s later by the source's host clock (feed.Status.HostS) even when the
// device falls silent or its clock stalls. Before the fix the margin was
// counted in device time only, and `record` waited for its time limit
// (600 s) when the amplifier went quiet after freezing, against what the
// README says (15 s after the end of freezing).
func TestMarginByHostClock(t *testing.T) {
	for _, c := range []struct {
		name  string
		after func(s *source, host float64) []feed.Item // what the device sends each 0.5 s after freezing
	}{
		{"silent", func(*source, float64) []feed.Item { return nil }},
		{"clock stalled", func(s *source, _ float64) []feed.Item {
			r := feed.Reading{TimeS: s.clock, TempC: 1000, Channel: "1"} // the same device time, again and again
			return []feed.Item{{Kind: feed.KindReading, Channel: "1", TimeS: r.TimeS, Reading: r}}
		}},
	} {
		t.Run(c.name, func(t *testing.T) {
			s := newSource(t, Config{})
			s.obey(s.tr.SetForm("1", meta("alloy", "grey-iron")))
			temps := cup(t, sim.GreyIron, 7)
			var pre []feed.Reading
			for i := range 30 {
				pre = append(pre, feed.Reading{TimeS: float64(i) * 0.1, TempC: temps[i], Channel: "1"})
			}
			s.clock = 3
			s.pour("1", pre)
			// the device's time and the host's run together until freezing ends
			host := 3.0
			frozenHost := -1.0
			for _, v := range temps[30:] {
				r := feed.Reading{TimeS: s.clock, TempC: v, Channel: "1"}
				s.clock += 0.1
				host += 0.1
				s.obey(s.tr.Apply(feed.Batch{Items: []feed.Item{{Kind: feed.KindReading, Channel: "1", TimeS: r.TimeS, Reading: r}},
					Status: feed.Status{HostS: host}}))
				if s.snap("1").State == Frozen {
					frozenHost = host
					break
				}
			}
			if frozenHost < 0 {
				t.Fatal("freezing never ended on the simulated cup")
			}
			if len(s.stops) != 0 {
				t.Fatalf("stopped at freezing: %v", s.stops)
			}
			for host < frozenHost+30 && len(s.stops) == 0 {
				host += 0.5
				s.obey(s.tr.Apply(feed.Batch{Items: c.after(s, host), Status: feed.Status{HostS: host}}))
			}
			if len(s.stops) != 1 || s.stops[0].Reason != "freezing done" {
				t.Fatalf("stops %v", s.stops)
			}
			// stopped at the first batch at or after 15 s by the host's
			// clock (batches every 0.5 s: within 0.5 s of it)
			if waited := host - frozenHost; waited < DefaultFreezeMarginS || waited > DefaultFreezeMarginS+0.5 {
				t.Errorf("stopped %.1f s after freezing by the host clock, want %g", waited, float64(DefaultFreezeMarginS))
			}
		})
	}
}
