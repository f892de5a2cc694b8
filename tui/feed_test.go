package tui

import (
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/acquire"
)

// Batches that arrive together are merged into one message: every reading
// and event kept in order, the newest status, so the screen redraws once.
func TestWaitBatchMergesWithoutLoss(t *testing.T) {
	ch := make(chan Batch, 64)
	for i := range 50 {
		ch <- Batch{
			Readings: []acquire.Reading{{TimeS: float64(i) / 200, TempC: 1300 - float64(i), Channel: "1"}},
			Status:   acquire.Status{Readings: i + 1},
		}
	}
	close(ch)
	msg := waitBatch(ch, &pacer{})()
	bm, ok := msg.(batchMsg)
	if !ok {
		t.Fatalf("first message %T, want batchMsg", msg)
	}
	if len(bm.b.Readings) != 50 {
		t.Fatalf("merged %d readings, want all 50", len(bm.b.Readings))
	}
	for i, r := range bm.b.Readings {
		if r.TempC != 1300-float64(i) {
			t.Fatalf("reading %d is %.1f °C, want %.1f: order lost", i, r.TempC, 1300-float64(i))
		}
	}
	if bm.b.Status.Readings != 50 {
		t.Errorf("status from batch %d, want the newest (50)", bm.b.Status.Readings)
	}
	if _, ok := waitBatch(ch, &pacer{})().(feedClosedMsg); !ok {
		t.Error("after the merged batch the closed feed must be reported")
	}
}

// Right after a delivery, the next one waits out the frame and merges
// what arrives meanwhile: at most 30 deliveries a second however fast the
// batches come.
func TestWaitBatchSpacesDeliveries(t *testing.T) {
	ch := make(chan Batch)
	go func() {
		for i := range 40 { // 40 batches 2 ms apart: 80 ms in all
			ch <- Batch{Readings: []acquire.Reading{{TimeS: float64(i), Channel: "1"}}}
			time.Sleep(2 * time.Millisecond)
		}
		close(ch)
	}()
	p := &pacer{last: time.Now()}
	var got, deliveries int
	var times []time.Time
	for {
		msg := waitBatch(ch, p)()
		bm, ok := msg.(batchMsg)
		if !ok {
			break
		}
		got += len(bm.b.Readings)
		deliveries++
		times = append(times, p.last)
	}
	if got != 40 {
		t.Fatalf("%d readings delivered, want all 40", got)
	}
	// (the last one comes when the feed closes, without waiting)
	for i := 1; i < len(times)-1; i++ {
		if d := times[i].Sub(times[i-1]); d < frameEvery {
			t.Errorf("deliveries %d and %d only %v apart, want about %v", i-1, i, d, frameEvery)
		}
	}
	t.Logf("40 batches in %d deliveries", deliveries)
}
