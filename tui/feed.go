// Package tui is the melt-deck dashboard: a bubbletea program that shows
// each cup's cooling curve live, its characteristic points as they settle,
// the verdict against the alloy's limits, the shift's history and the
// limits themselves.
//
// The dashboard does no device I/O and keeps no sample state of its own:
// the sample tracker's updates (internal/sample, run by a session) arrive
// over a channel; a tea.Cmd waits on that channel and is re-armed after
// each message, so the screen is redrawn once per update and acquisition
// never waits on it. The model is a value: its panes hold the tracker's
// snapshots (never changed once made), View writes nothing, and every side
// effect (the log, the operator's requests, saving limits) is a command.
package tui

import (
	"time"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// Feed is what the dashboard needs of a live session (internal/session):
// the sample tracker's updates, and the operator's requests.
type Feed interface {
	// Updates delivers the tracker's updates; it is closed when the
	// session ends.
	Updates() <-chan sample.Update
	// SetForm hands the sample form to the tracker: it names the channel's
	// next sample.
	SetForm(channel string, m sample.Meta)
	// SetLimits hands a saved limits book to the tracker.
	SetLimits(b *limits.Book)
	// Start and Stop begin and end a sample by hand.
	Start(channel string)
	Stop(channel string)
}

// Pacer is implemented by sources whose pace can be changed (a replay).
type Pacer interface {
	SetSpeed(x float64)
	Speed() float64
	SkipToEnd()
}

// updateMsg carries one (merged) update of the tracker to the model.
type updateMsg struct{ u sample.Update }

// feedClosedMsg says the session's channel was closed.
type feedClosedMsg struct{}

// frameEvery is the shortest time between two deliveries of updates to
// the model, so the screen is redrawn at most 30 times a second however
// fast the tracker hands them over.
const frameEvery = 33 * time.Millisecond

// pacer remembers when updates were last handed to the model, so that
// deliveries are at least frameEvery apart. One waitUpdate runs at a time,
// and the model handles its message before the next starts, so the field
// needs no lock.
type pacer struct{ last time.Time }

// waitUpdate returns the command that waits for the next update. The model
// re-arms it after every updateMsg. An update that comes frameEvery or more
// after the last delivery is handed over at once (with whatever else is
// already waiting); one that comes sooner waits out the rest of the frame,
// and what arrives meanwhile is merged into it (events and finished samples
// in order, the latest status and channels). Nothing is dropped, and the
// view redraws at most 30 times a second.
func waitUpdate(ch <-chan sample.Update, p *pacer) tea.Cmd {
	if ch == nil {
		return nil
	}
	return func() tea.Msg {
		u, ok := <-ch
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
					u = sample.Merge(u, more)
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
				u = sample.Merge(u, more)
			default:
				drained = true
			}
		}
		p.last = time.Now()
		return updateMsg{u}
	}
}
