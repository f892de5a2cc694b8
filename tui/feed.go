// Package tui is the melt-deck dashboard: a bubbletea program that shows
// each cup's cooling curve live, its characteristic points as they settle,
// the verdict against the alloy's limits, the shift's history and the
// limits themselves.
//
// The dashboard does no device I/O of its own. Readings arrive from a
// Source (the acquirer, or a curve-file replay) in batches over a channel;
// a tea.Cmd waits on that channel and is re-armed after each message, so the
// screen is redrawn once per batch and acquisition never waits on it.
package tui

import (
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"

	tea "github.com/charmbracelet/bubbletea"
)

// Source is what the dashboard needs of an acquirer. *acquire.Acquirer
// satisfies it; so does the curve-file Replay.
type Source interface {
	// Batches delivers readings, events and status; it is closed when
	// acquisition ends.
	Batches() <-chan Batch
	// SetMeta hands the sample form to the acquirer for the next raw log of
	// the channel.
	SetMeta(channel string, meta []curvefile.Meta)
	// Start and Stop begin and end a sample by hand.
	Start(channel string)
	Stop(channel string)
}

// speeder is implemented by sources whose pace can be changed (Replay).
type speeder interface {
	SetSpeed(x float64)
	Speed() float64
	SkipToEnd()
}

// batchMsg carries one batch from the source to the model.
type batchMsg struct{ b Batch }

// feedClosedMsg says the source's channel was closed.
type feedClosedMsg struct{}

// frameEvery is the shortest time between two deliveries of readings to
// the model, so the screen is redrawn at most 30 times a second however
// fast the acquirer hands readings over (it delivers within a few
// milliseconds of a line's arrival).
const frameEvery = 33 * time.Millisecond

// waitBatch returns the command that waits for the next batch. The model
// re-arms it after every batchMsg. Batches that arrive within frameEvery of
// the first are merged into one message (readings and events in order, the
// latest status), so nothing is dropped and the view redraws once per
// merged batch.
func waitBatch(ch <-chan Batch) tea.Cmd {
	if ch == nil {
		return nil
	}
	return func() tea.Msg {
		b, ok := <-ch
		if !ok {
			return feedClosedMsg{}
		}
		deadline := time.NewTimer(frameEvery)
		defer deadline.Stop()
		for {
			select {
			case more, ok := <-ch:
				if !ok {
					// Deliver what came; the next wait reports the close.
					return batchMsg{b}
				}
				b = mergeBatch(b, more)
			case <-deadline.C:
				return batchMsg{b}
			}
		}
	}
}

// mergeBatch appends next to b: readings and events in order, the newer
// status.
func mergeBatch(b, next Batch) Batch {
	b.Readings = append(b.Readings, next.Readings...)
	b.Events = append(b.Events, next.Events...)
	b.Status = next.Status
	return b
}
