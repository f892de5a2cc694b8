package tui

import (
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// livePane shows one or two cups side by side: the tracker's snapshots,
// in the order the channels were first seen.
type livePane struct {
	st   *Styles
	keys *KeyMap
	cups []cup
	book *limits.Book // judges the figures shown while a sample records
	// advice is the model's advice on each channel's last finished sample,
	// as it came (replaced, never changed: the pane is a value)
	advice map[string]adviceMsg
	first  int // index of the first cup shown
	w, h   int
}

func newLivePane(st *Styles, keys *KeyMap, book *limits.Book) livePane {
	return livePane{st: st, keys: keys, book: book}
}

func (p livePane) SetSize(w, h int) livePane {
	p.w, p.h = w, h
	return p.redraw()
}

// apply takes the tracker's latest snapshots and the state of the
// source's connection.
func (p livePane) apply(snaps []sample.Snapshot, l link) livePane {
	cups := make([]cup, len(snaps))
	for i, s := range snaps {
		cups[i] = newCup(s)
		cups[i].link = l
		cups[i].soFar, cups[i].soFarPoints = p.soFar(s)
		if a, ok := p.advice[s.Channel]; ok && a.sample == s.Sample && s.State == sample.Done {
			cups[i].advice = a.preds
		}
		for _, old := range p.cups {
			if old.id() == s.Channel {
				cups[i].drawn = old.drawn
				cups[i].keepFraction(&old)
			}
		}
	}
	p.cups = cups
	return p.redraw()
}

// soFar is the record of a recording sample's points so far, for the
// figures the deck decides on (CE from a settled liquidus, the eutectic
// undercooling from a settled minimum): worked out again only when a
// point settles, kept from the last snapshot otherwise; nil when the sample
// is not recording or has no point yet.
func (p livePane) soFar(s sample.Snapshot) (*assess.Record, int) {
	if !s.State.Busy() {
		return nil, 0
	}
	n := 0
	for _, pt := range pointsOf(s.Result) {
		if pt.p.OK && !pt.p.Provisional { // the figures follow confirmed points only
			n++
		}
	}
	if n == 0 {
		return nil, 0
	}
	for _, old := range p.cups {
		if old.id() == s.Channel && old.snap.Sample == s.Sample && old.soFar != nil && old.soFarPoints == n {
			return old.soFar, n
		}
	}
	in := assess.Input{Alloy: strings.TrimSpace(s.Meta.Get("alloy")), Limits: p.book, Family: s.Family}
	rec := assess.FromResult(in, s.Result)
	return &rec, n
}

// setBook takes a saved limits book.
func (p livePane) setBook(b *limits.Book) livePane { p.book = b; return p }

// setAdvice takes the model's advice on a finished sample.
func (p livePane) setAdvice(a adviceMsg) livePane {
	adv := make(map[string]adviceMsg, len(p.advice)+1)
	for k, v := range p.advice {
		adv[k] = v
	}
	adv[a.channel] = a
	p.advice = adv
	cups := append([]cup(nil), p.cups...)
	for i := range cups {
		if c := &cups[i]; c.id() == a.channel && c.snap.Sample == a.sample && c.state() == sample.Done {
			c.advice = a.preds
		}
	}
	p.cups = cups
	return p
}

// ended marks the session ended: no reading will come.
func (p livePane) ended() livePane {
	cups := append([]cup(nil), p.cups...)
	for i := range cups {
		cups[i].link = linkEnded
	}
	p.cups = cups
	return p
}

// shown is the indices of the cups on screen: at most two.
func (p livePane) shown() []int {
	var out []int
	for i := 0; i < len(p.cups) && len(out) < 2; i++ {
		out = append(out, (p.first+i)%len(p.cups))
	}
	return out
}

// sizes is the cells each cup shown gets.
func (p livePane) sizes() (w [2]int, h int) {
	if len(p.shown()) == 1 {
		return [2]int{p.w}, p.h
	}
	lw := (p.w - 1) / 2
	return [2]int{lw, p.w - 1 - lw}, p.h
}

// redraw draws the charts of the cups shown that are due, for View.
func (p livePane) redraw() livePane {
	ws, h := p.sizes()
	cups := append([]cup(nil), p.cups...)
	for k, i := range p.shown() {
		c := &cups[i]
		if cw, ch, ok := c.layout(p.st, ws[k], h); ok {
			c.redraw(p.st, cw, ch)
		}
	}
	p.cups = cups
	return p
}

// recording reports whether any cup is recording a sample.
func (p livePane) recording() bool {
	for i := range p.cups {
		if p.cups[i].busy() {
			return true
		}
	}
	return false
}

func (p livePane) Update(msg tea.Msg) (livePane, tea.Cmd) {
	if msg, ok := msg.(tea.KeyMsg); ok && key.Matches(msg, p.keys.Channel) && len(p.cups) > 2 {
		p.first = (p.first + 1) % len(p.cups)
		return p.redraw(), nil
	}
	return p, nil
}

func (p livePane) View() string {
	idx := p.shown()
	if len(idx) == 0 {
		msg := p.st.State.Render("WAITING FOR THE DEVICE") + "\n\n" +
			p.st.Muted.Render("No readings yet. Check the cable, the port and the amplifier's power.")
		return lipgloss.Place(p.w, p.h, lipgloss.Center, lipgloss.Center, msg)
	}
	ws, h := p.sizes()
	if len(idx) == 1 {
		c := p.cups[idx[0]]
		return c.view(p.st, ws[0], h) // already exactly w×h
	}
	a, b := p.cups[idx[0]], p.cups[idx[1]]
	sep := strings.TrimSuffix(strings.Repeat(p.st.Axis.Render("│")+"\n", p.h), "\n")
	return lipgloss.JoinHorizontal(lipgloss.Top, box(a.view(p.st, ws[0], h), ws[0], h), sep, box(b.view(p.st, ws[1], h), ws[1], h))
}

func (p livePane) ShortHelp() []key.Binding {
	return append([]key.Binding{p.keys.Form, p.keys.Start, p.keys.Stop}, p.fractionKey()...)
}

func (p livePane) FullHelp() [][]key.Binding {
	return [][]key.Binding{append([]key.Binding{p.keys.Form, p.keys.Start, p.keys.Stop, p.keys.Channel, p.keys.Verdict}, p.fractionKey()...)}
}

// activeCup is the cup the form and the start/stop keys act on: the first
// shown, else channel 1 before any reading.
func (p livePane) activeCup() cup {
	if idx := p.shown(); len(idx) > 0 {
		return p.cups[idx[0]]
	}
	return newCup(sample.Snapshot{Channel: "1"})
}
