package tui

import (
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// Updates that arrive together are merged into one message: every event
// kept in order, the newest status and channels, so the screen redraws
// once.
func TestWaitUpdateMergesWithoutLoss(t *testing.T) {
	ch := make(chan sample.Update, 64)
	for i := range 50 {
		ch <- sample.Update{
			Events:   []sample.Event{{Kind: sample.EventWarning, TimeS: float64(i)}},
			Status:   feed.Status{Readings: i + 1},
			Channels: []sample.Snapshot{{Channel: "1", ElapsedS: float64(i)}},
		}
	}
	close(ch)
	msg := waitUpdate(ch, &pacer{})()
	um, ok := msg.(updateMsg)
	if !ok {
		t.Fatalf("first message %T, want updateMsg", msg)
	}
	if len(um.u.Events) != 50 {
		t.Fatalf("merged %d events, want all 50", len(um.u.Events))
	}
	for i, e := range um.u.Events {
		if e.TimeS != float64(i) {
			t.Fatalf("event %d at %.1f s: order lost", i, e.TimeS)
		}
	}
	if um.u.Status.Readings != 50 || um.u.Channels[0].ElapsedS != 49 {
		t.Errorf("status from update %d, channels %v, want the newest", um.u.Status.Readings, um.u.Channels)
	}
	if _, ok := waitUpdate(ch, &pacer{})().(feedClosedMsg); !ok {
		t.Error("after the merged update the closed feed must be reported")
	}
}

// Right after a delivery, the next one waits out the frame and merges
// what arrives meanwhile: at most 30 deliveries a second however fast the
// updates come.
func TestWaitUpdateSpacesDeliveries(t *testing.T) {
	ch := make(chan sample.Update)
	go func() {
		for i := range 40 { // 40 updates 2 ms apart: 80 ms in all
			ch <- sample.Update{Events: []sample.Event{{TimeS: float64(i)}}}
			time.Sleep(2 * time.Millisecond)
		}
		close(ch)
	}()
	p := &pacer{last: time.Now()}
	var got, deliveries int
	var times []time.Time
	for {
		msg := waitUpdate(ch, p)()
		um, ok := msg.(updateMsg)
		if !ok {
			break
		}
		got += len(um.u.Events)
		deliveries++
		times = append(times, p.last)
	}
	if got != 40 {
		t.Fatalf("%d events delivered, want all 40", got)
	}
	// (the last one comes when the feed closes, without waiting)
	for i := 1; i < len(times)-1; i++ {
		if d := times[i].Sub(times[i-1]); d < frameEvery {
			t.Errorf("deliveries %d and %d only %v apart, want about %v", i-1, i, d, frameEvery)
		}
	}
	t.Logf("40 updates in %d deliveries", deliveries)
}
