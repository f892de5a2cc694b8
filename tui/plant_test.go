package tui

import (
	"bytes"
	"strings"
	"testing"
)

// The status line says how the link to the plant database stands, at 80
// columns too, and the log gets each change: the deck keeps working when
// the link is down and the operator can see it (issue "Plant-wide records").
func TestPlantLinkOnStatusLine(t *testing.T) {
	states := []struct {
		link PlantLink
		want string // at 120 columns; at 80 the shortest form
	}{
		{PlantLink{}, "plant …"},
		{PlantLink{Tried: true, Up: false, Queued: 3, Text: "plant: link down since 06:15:00 (cannot reach the server), 3 queued"}, "PLANT DOWN 3 queued"},
		{PlantLink{Tried: true, Up: true, Queued: 2, Text: "plant: linked, 2 queued"}, "plant sending 2"},
		{PlantLink{Tried: true, Up: true, Text: "plant: linked, nothing queued"}, "plant ok"},
	}
	i := 0
	changed := make(chan struct{})
	close(changed) // the next watch returns at once (its message is not fed back)
	watch := func() (PlantLink, <-chan struct{}) { return states[i].link, changed }
	for _, w := range []int{80, 120} {
		var log bytes.Buffer
		m := New(Options{Title: "plant", Styles: asciiStyles(), Clock: fixedClock, Log: &log, Plant: watch}).resize(w, 24)
		for i = range states {
			l, next := watch()
			tm, cmd := m.Update(plantMsg{link: l, next: next})
			m = tm.(Model)
			line := strings.Split(m.View(), "\n")[1]
			want := states[i].want
			if w == 80 && want == "PLANT DOWN 3 queued" {
				want = "PLANT DOWN (3)"
			}
			if !strings.Contains(line, want) || !strings.Contains(line, "reconn") {
				t.Errorf("%d columns, %+v: status line %q, want %q and the reconnections", w, l, line, want)
			}
			m = runCmds(m, cmd)
			if i > 0 && !strings.Contains(log.String(), states[i].link.Text) {
				t.Errorf("%d columns: the log lacks %q:\n%s", w, states[i].link.Text, log.String())
			}
		}
	}
	// Without a plant database the line says nothing of one.
	m := New(Options{Title: "deck", Styles: asciiStyles(), Clock: fixedClock}).resize(80, 24)
	if line := strings.Split(m.View(), "\n")[1]; strings.Contains(line, "plant") || strings.Contains(line, "PLANT") {
		t.Errorf("no plant database: %q", line)
	}
}
