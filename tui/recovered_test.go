package tui

import (
	"context"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
)

// A sample the acquirer recovered after a crash is judged by the tracker
// and kept in the history like any finished sample, without becoming a
// cup on screen or changing the form's values.
func TestRecoveredSampleIsKept(t *testing.T) {
	tm, v := constructedCurve(240, 5)
	c := &curvefile.Curve{Meta: []curvefile.Meta{{Key: "alloy", Value: "grey-iron"}, {Key: "sample", Value: "L-2417 cup 1"},
		{Key: "operator", Value: "Tobin Quenchmoor"}, {Key: "interrupted", Value: "true"}}, Time: tm, Temp: v}
	m := testModel(t, 100, 30)
	m = play(m, []Batch{{Items: []feed.Item{{Kind: feed.KindRecovered, Channel: "1", Path: "/data/L-2417-cup1.csv", Curve: c, Text: "recovered"}}}})
	es, _ := m.opt.Records.List(context.Background(), "", 10)
	if len(es) != 1 || es[0].Path != "/data/L-2417-cup1.csv" || es[0].Meta.Get("operator") != "Tobin Quenchmoor" || len(es[0].Time) != len(tm) {
		t.Fatalf("history after recovery: %+v", es)
	}
	if len(m.hist.all) != 1 {
		t.Errorf("the history pane shows %d samples", len(m.hist.all))
	}
	if len(m.live.cups) != 0 || m.flash != "recovered" {
		t.Errorf("a recovered sample became a cup (%d) or went unsaid (%q)", len(m.live.cups), m.flash)
	}
}

// The charts are drawn again once the sample has grown by chartEveryS of
// its own time, or at once when a point settles or the size changes; in
// between the last drawing is reused.
func TestChartsRedrawnBySampleTime(t *testing.T) {
	m := testModel(t, 120, 40)
	bs := constructedBatches("1", 120, 10, 1) // one reading a batch, 0.1 s apart
	m = play(m, bs[:300])
	redraws := 0
	for _, b := range bs[300:320] {
		at := m.live.cups[0].drawn.atS
		m = play(m, []Batch{b})
		c := m.live.cups[0]
		switch {
		case c.drawn.atS != at && c.elapsed()-at < chartEveryS:
			t.Fatalf("charts redrawn after %.1f s of sample time, want reuse below %.1f s", c.elapsed()-at, chartEveryS)
		case c.drawn.atS == at && c.elapsed()-at >= chartEveryS:
			t.Fatalf("charts not redrawn after %.1f s of sample time", c.elapsed()-at)
		case c.drawn.atS != at:
			redraws++
		}
	}
	if redraws < 3 {
		t.Fatalf("%d redraws in 2 s of sample time", redraws)
	}
	old := m.live.cups[0].drawn.key
	m = m.resize(100, 30)
	if m.live.cups[0].drawn.key == old {
		t.Errorf("charts not redrawn for the new size (key %+v)", m.live.cups[0].drawn.key)
	}
	// View draws from what Update drew, and keeps nothing itself.
	before := m.live.cups[0].drawn
	_ = m.View()
	if m.live.cups[0].drawn != before {
		t.Error("View changed the model")
	}
}
