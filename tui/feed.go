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

// pacer remembers when readings were last handed to the model, so that
// deliveries are at least frameEvery apart. One waitBatch runs at a time,
// and the model handles its message before the next starts, so the field
// needs no lock.
type pacer struct{ last time.Time }

// waitBatch returns the command that waits for the next batch. The model
// re-arms it after every batchMsg. A batch that comes frameEvery or more
// after the last delivery is handed over at once (with whatever else is
// already waiting); one that comes sooner waits out the rest of the frame,
// and what arrives meanwhile is merged into it (readings and events in
// order, the latest status). Nothing is dropped, and the view redraws at
// most 30 times a second.
func waitBatch(ch <-chan Batch, p *pacer) tea.Cmd {
	if ch == nil {
		return nil
	}
	return func() tea.Msg {
		b, ok := <-ch
		if !ok {
			return feedClosedMsg{}
		}
		if wait := frameEvery - time.Since(p.last); wait > 0 {
			deadline := time.NewTimer(wait)
			defer deadline.Stop()
		collect:
			for {
				select {
				case more, ok := <-ch:
					if !ok {
						break collect // deliver what came; the next wait reports the close
					}
					b = mergeBatch(b, more)
				case <-deadline.C:
					break collect
				}
			}
		}
		for drained := false; !drained; {
			select {
			case more, ok := <-ch:
				if !ok {
					drained = true
					break
				}
				b = mergeBatch(b, more)
			default:
				drained = true
			}
		}
		p.last = time.Now()
		return batchMsg{b}
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
