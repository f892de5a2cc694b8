package tui

import (
	"sort"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
)

// livePane shows one or two cups side by side.
type livePane struct {
	st    *Styles
	keys  *KeyMap
	cups  map[string]*cup
	order []string // channel ids in the order first seen
	first int      // index in order of the first cup shown
	w, h  int
	an    Analyzer
	judge Judge
	// prefill is the form's values for cups not seen yet.
	prefill SampleMeta
}

// sampleDoneMsg says a sample finished (or was recovered after a crash);
// the model stores it.
type sampleDoneMsg struct {
	e         Entry
	recovered bool
}

func newLivePane(st *Styles, keys *KeyMap, an Analyzer, judge Judge, prefill SampleMeta) livePane {
	return livePane{st: st, keys: keys, cups: map[string]*cup{}, an: an, judge: judge, prefill: prefill}
}

func (p livePane) SetSize(w, h int) livePane { p.w, p.h = w, h; return p }

func (p *livePane) cup(id string) *cup {
	if id == "" {
		id = "1"
	}
	c, ok := p.cups[id]
	if !ok {
		c = newCup(id)
		c.meta = p.prefill
		p.cups[id] = c
		p.order = append(p.order, id)
	}
	return c
}

// shown is the cups on screen: at most two.
func (p *livePane) shown() []*cup {
	var cs []*cup
	for i := 0; i < len(p.order) && len(cs) < 2; i++ {
		cs = append(cs, p.cups[p.order[(p.first+i)%len(p.order)]])
	}
	return cs
}

// recording reports whether any cup is recording a sample.
func (p *livePane) recording() bool {
	for _, c := range p.cups {
		if c.busy() {
			return true
		}
	}
	return false
}

// applyInfo takes sample form data from a device information line. It
// fills the form of the channel's next sample (a recording cup keeps its
// own until it is done).
func (p *livePane) applyInfo(ev Event) {
	var m SampleMeta
	any := false
	get := func(k string, dst *string) {
		if v, ok := ev.Info[k]; ok {
			*dst, any = v, true
		}
	}
	get("ladle", &m.Sample)
	get("sample", &m.Sample)
	get("alloy", &m.Alloy)
	get("operator", &m.Operator)
	get("note", &m.Note)
	if !any {
		return
	}
	merge := func(c *cup) {
		base := c.meta
		if c.busy() {
			if c.next != nil {
				base = *c.next
			}
		}
		for _, kv := range [][2]*string{{&base.Sample, &m.Sample}, {&base.Alloy, &m.Alloy}, {&base.Operator, &m.Operator}, {&base.Note, &m.Note}} {
			if *kv[1] != "" {
				*kv[0] = *kv[1]
			}
		}
		c.setForm(base)
		p.prefill = base
	}
	if ev.Channel != "" || len(p.order) == 0 {
		merge(p.cup(ev.Channel))
		return
	}
	for _, id := range p.order {
		merge(p.cups[id])
	}
}

// batch takes one batch: readings and events merged in time order, then
// one analysis per cup that grew. It returns the samples that finished.
func (p *livePane) batch(b Batch) []Entry {
	evs := append([]Event(nil), b.Events...)
	sort.SliceStable(evs, func(i, j int) bool { return evs[i].TimeS < evs[j].TimeS })
	grew := map[*cup]bool{}
	var done []Entry
	apply := func(ev Event) {
		switch ev.Kind {
		case EventDeviceInfo:
			p.applyInfo(ev)
		case EventSampleStarted:
			p.cup(ev.Channel).begin(ev.TimeS)
			grew[p.cup(ev.Channel)] = true
		case EventSampleFrozen:
			c := p.cup(ev.Channel)
			if c.state == StateRecording {
				c.state = StateFrozen
			}
		case EventSampleDone:
			c := p.cup(ev.Channel)
			if c.state == StateRecording || c.state == StateFrozen {
				rec := c.finish(p.an, p.judge, ev.Path)
				delete(grew, c)
				done = append(done, Entry{Channel: c.id, Meta: c.meta, Record: rec, Path: ev.Path,
					Time: append([]float64(nil), c.t...), Temp: append([]float64(nil), c.v...)})
			}
		}
	}
	k := 0
	for _, r := range b.Readings {
		// An event at the same time as a reading comes before it, except
		// the end of a sample, whose last reading it follows.
		for k < len(evs) && (evs[k].TimeS < r.TimeS || evs[k].TimeS == r.TimeS && evs[k].Kind != EventSampleDone) {
			apply(evs[k])
			k++
		}
		c := p.cup(r.Channel)
		c.take(r)
		if c.state == StateRecording || c.state == StateFrozen {
			grew[c] = true
		}
	}
	for ; k < len(evs); k++ {
		apply(evs[k])
	}
	for id, s := range b.Status.Channels {
		c := p.cup(id)
		if s == StateWaiting && c.state == StateDone {
			continue // keep showing the finished sample until the next pour
		}
		if s == StateFrozen && c.state == StateRecording {
			c.state = s
		}
	}
	for c := range grew {
		c.analyse(p.an, true)
	}
	return done
}

func (p livePane) Update(msg tea.Msg) (livePane, tea.Cmd) {
	switch msg := msg.(type) {
	case batchMsg:
		var cmds []tea.Cmd
		for _, e := range p.batch(msg.b) {
			cmds = append(cmds, func() tea.Msg { return sampleDoneMsg{e: e} })
		}
		return p, tea.Batch(cmds...)
	case tea.KeyMsg:
		if key.Matches(msg, p.keys.Channel) && len(p.order) > 2 {
			p.first = (p.first + 1) % len(p.order)
		}
	}
	return p, nil
}

func (p livePane) View() string {
	cs := p.shown()
	if len(cs) == 0 {
		msg := p.st.State.Render("WAITING FOR THE DEVICE") + "\n\n" +
			p.st.Muted.Render("No readings yet. Check the cable, the port and the amplifier's power.")
		return lipgloss.Place(p.w, p.h, lipgloss.Center, lipgloss.Center, msg)
	}
	if len(cs) == 1 {
		return cs[0].view(p.st, p.w, p.h) // already exactly w×h
	}
	lw := (p.w - 1) / 2
	rw := p.w - 1 - lw
	sep := strings.TrimSuffix(strings.Repeat(p.st.Axis.Render("│")+"\n", p.h), "\n")
	return lipgloss.JoinHorizontal(lipgloss.Top, box(cs[0].view(p.st, lw, p.h), lw, p.h), sep, box(cs[1].view(p.st, rw, p.h), rw, p.h))
}

func (p livePane) ShortHelp() []key.Binding {
	return []key.Binding{p.keys.Form, p.keys.Start, p.keys.Stop}
}

func (p livePane) FullHelp() [][]key.Binding {
	return [][]key.Binding{{p.keys.Form, p.keys.Start, p.keys.Stop, p.keys.Channel}}
}

// activeCup is the cup the form and the start/stop keys act on.
func (p *livePane) activeCup() *cup {
	if cs := p.shown(); len(cs) > 0 {
		return cs[0]
	}
	return p.cup("1")
}

// judgeWith is the default Judge: assess.FromResult.
func judgeWith() Judge {
	return func(in assess.Input, res arrest.Result) assess.Record { return assess.FromResult(in, res) }
}
