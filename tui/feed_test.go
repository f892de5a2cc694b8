package tui

import (
	"testing"

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
	msg := waitBatch(ch)()
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
	if _, ok := waitBatch(ch)().(feedClosedMsg); !ok {
		t.Error("after the merged batch the closed feed must be reported")
	}
}
