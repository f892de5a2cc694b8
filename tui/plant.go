package tui

import (
	"fmt"

	tea "github.com/charmbracelet/bubbletea"
)

// PlantLink is the state of the link to the plant database, as the
// status line shows it (docs/plant-database.md, "When the link is down").
type PlantLink struct {
	Tried  bool   // a forwarding attempt has been made
	Up     bool   // the last attempt reached the plant and sent everything
	Queued int    // results waiting in the deck's outbox
	Text   string // the state in words, for the log (no secrets)
}

// PlantWatch gives the link's state now and a channel closed at its next
// change (the commands build it from store.Forwarder).
type PlantWatch func() (PlantLink, <-chan struct{})

// plantMsg is a change of the plant link's state.
type plantMsg struct {
	link PlantLink
	next <-chan struct{}
}

// watchPlant waits for the link's next change (at once the first time).
func watchPlant(w PlantWatch, changed <-chan struct{}) tea.Cmd {
	if w == nil {
		return nil
	}
	return func() tea.Msg {
		if changed != nil {
			<-changed
		}
		l, next := w()
		return plantMsg{link: l, next: next}
	}
}

// plantPart is the status line's word on the plant link ("" without a
// plant database); short, its narrowest form, so that line 2 keeps its
// counts at 80 columns.
func (m Model) plantPart(short bool) string {
	if m.opt.Plant == nil {
		return ""
	}
	l := m.plant
	switch {
	case !l.Tried:
		return m.st.Status.Render("plant …")
	case l.Up && l.Queued == 0:
		return m.st.Status.Render("plant ok")
	case l.Up:
		return m.st.Status.Render(fmt.Sprintf("plant sending %d", l.Queued))
	case short:
		return m.st.StatusBad.Render(fmt.Sprintf("PLANT DOWN (%d)", l.Queued))
	default:
		return m.st.StatusBad.Render(fmt.Sprintf("PLANT DOWN %d queued", l.Queued))
	}
}
