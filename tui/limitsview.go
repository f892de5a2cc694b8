package tui

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/textinput"
	tea "github.com/charmbracelet/bubbletea"

	"github.com/undercool-foundry/undercool/internal/limits"
)

// LimitsSaver writes the edited book (keeping a backup and logging the
// change with its time) and says where it went.
type LimitsSaver func(ctx context.Context, b *limits.Book) (string, error)

// limitsSavedMsg is the answer of a save: the book saved, which becomes
// the one in use.
type limitsSavedMsg struct {
	book  *limits.Book
	saved map[string]map[limitRow]*float64 // the edits it holds
	where string
	err   error
}

// bound names one editable number of a metric's limit.
type bound int

const (
	passMin bound = iota
	passMax
	margMin
	margMax
)

var boundNames = [...]string{"pass min", "pass max", "marginal min", "marginal max"}

func (b bound) of(l *limits.Limit) **float64 {
	switch b {
	case passMin:
		return &l.PassMin
	case passMax:
		return &l.PassMax
	case margMin:
		return &l.MarginalMin
	default:
		return &l.MarginalMax
	}
}

// limitRow is one editable number: a metric's bound.
type limitRow struct {
	metric string
	b      bound
}

// limitsPane shows an alloy's limits and edits them with validation. The
// book it shows is the one in use, never changed: edits are pending until
// saved, and a save works on its own copy of the book (editBook), which the
// model swaps in when the save says it is written. Edits made while a save
// runs stay pending for the next one.
type limitsPane struct {
	st     *Styles
	keys   *KeyMap
	book   *limits.Book
	save   LimitsSaver
	saving bool
	alloys []string
	alloy  int
	sel    int
	// pending edits, applied to the book only when saved
	pending map[string]map[limitRow]*float64
	editing bool
	input   textinput.Model
	msg     string
	msgBad  bool
	w, h    int
}

func newLimitsPane(st *Styles, keys *KeyMap, book *limits.Book, save LimitsSaver) limitsPane {
	in := textinput.New()
	in.CharLimit = 12
	in.Prompt = "new value: "
	return limitsPane{st: st, keys: keys, book: book, save: save, alloys: book.Names(), input: in,
		pending: map[string]map[limitRow]*float64{}}
}

func (p limitsPane) SetSize(w, h int) limitsPane { p.w, p.h = w, h; return p }

func (p limitsPane) alloyName() string {
	if len(p.alloys) == 0 {
		return ""
	}
	return p.alloys[p.alloy%len(p.alloys)]
}

func (p limitsPane) rows() []limitRow {
	al, ok := p.book.Alloy(p.alloyName())
	if !ok {
		return nil
	}
	var names []string
	for n := range al.Metrics {
		names = append(names, n)
	}
	sort.Strings(names)
	var rs []limitRow
	for _, n := range names {
		for b := passMin; b <= margMax; b++ {
			rs = append(rs, limitRow{n, b})
		}
	}
	return rs
}

// value is the row's value with pending edits applied.
func (p limitsPane) value(r limitRow) (*float64, bool) {
	if m, ok := p.pending[p.alloyName()]; ok {
		if v, ok := m[r]; ok {
			return v, true
		}
	}
	al, _ := p.book.Alloy(p.alloyName())
	l := al.Metrics[r.metric]
	if l == nil {
		return nil, false
	}
	return *r.b.of(l), false
}

// check validates a metric's four bounds: each bound pair in order and the
// marginal band holding the pass band.
func (p limitsPane) check(metric string) error {
	get := func(b bound) *float64 { v, _ := p.value(limitRow{metric, b}); return v }
	pmin, pmax, mmin, mmax := get(passMin), get(passMax), get(margMin), get(margMax)
	lt := func(a, b *float64) bool { return a != nil && b != nil && *a > *b }
	switch {
	case lt(pmin, pmax):
		return fmt.Errorf("%s: pass min %g is above pass max %g", metric, *pmin, *pmax)
	case lt(mmin, mmax):
		return fmt.Errorf("%s: marginal min %g is above marginal max %g", metric, *mmin, *mmax)
	case pmin == nil && mmin != nil:
		return fmt.Errorf("%s: the pass band is open below but the marginal band is not", metric)
	case pmax == nil && mmax != nil:
		return fmt.Errorf("%s: the pass band is open above but the marginal band is not", metric)
	case lt(mmin, pmin):
		return fmt.Errorf("%s: marginal min %g must not be above pass min %g", metric, *mmin, *pmin)
	case lt(pmax, mmax):
		return fmt.Errorf("%s: marginal max %g must not be below pass max %g", metric, *mmax, *pmax)
	}
	return nil
}

func parseBound(s string) (*float64, error) {
	s = strings.TrimSpace(strings.ReplaceAll(s, ",", "."))
	if s == "" || s == "-" || s == "—" {
		return nil, nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return nil, fmt.Errorf("%q is not a number (leave it empty for no bound)", s)
	}
	return &v, nil
}

func (p limitsPane) Update(msg tea.Msg) (limitsPane, tea.Cmd) {
	switch msg := msg.(type) {
	case limitsSavedMsg:
		p.saving = false
		if msg.err != nil {
			p.msg, p.msgBad = "not saved: "+msg.err.Error(), true
			return p, nil
		}
		p.book, p.alloys = msg.book, msg.book.Names()
		p.pending = dropSaved(p.pending, msg.saved)
		p.msg, p.msgBad = "saved to "+msg.where, false
		return p, nil
	case tea.KeyMsg:
		rows := p.rows()
		if p.editing {
			switch {
			case msg.Type == tea.KeyEnter:
				v, err := parseBound(p.input.Value())
				if err != nil {
					p.msg, p.msgBad = err.Error(), true
					return p, nil
				}
				r := rows[p.sel]
				before := p.pending
				p.pending = clonePending(p.pending) // a new map: the pane is a value
				if p.pending[p.alloyName()] == nil {
					p.pending[p.alloyName()] = map[limitRow]*float64{}
				}
				p.pending[p.alloyName()][r] = v
				if err := p.check(r.metric); err != nil {
					p.pending = before
					p.msg, p.msgBad = err.Error(), true
					return p, nil
				}
				p.editing = false
				p.input.Blur()
				p.msg, p.msgBad = "changed; press w to write the limits file", false
			case msg.Type == tea.KeyEsc:
				p.editing = false
				p.input.Blur()
				p.msg = ""
			default:
				var cmd tea.Cmd
				p.input, cmd = p.input.Update(msg)
				return p, cmd
			}
			return p, nil
		}
		// one screen row per metric, its four bounds across it: ↑ ↓ move
		// between metrics, ← → between bounds
		switch {
		case key.Matches(msg, p.keys.Up):
			if p.sel >= boundsPerMetric {
				p.sel -= boundsPerMetric
			}
		case key.Matches(msg, p.keys.Down):
			if p.sel+boundsPerMetric < len(rows) {
				p.sel += boundsPerMetric
			}
		case key.Matches(msg, p.keys.Left):
			if p.sel%boundsPerMetric > 0 {
				p.sel--
			}
		case key.Matches(msg, p.keys.Right):
			if p.sel%boundsPerMetric < boundsPerMetric-1 && p.sel+1 < len(rows) {
				p.sel++
			}
		case key.Matches(msg, p.keys.Alloy):
			p.alloy = (p.alloy + 1) % max(1, len(p.alloys))
			p.sel = 0
		case key.Matches(msg, p.keys.Edit) && len(rows) > 0:
			v, _ := p.value(rows[p.sel])
			p.input.Prompt = boundPrompt(rows[p.sel])
			p.input.SetValue(fmtBound(v))
			p.input.CursorEnd()
			p.editing = true
			p.msg = ""
			return p, p.input.Focus()
		case key.Matches(msg, p.keys.Save):
			return p.commit()
		}
	}
	return p, nil
}

// commit saves the pending edits: on a copy of the book, checked whole,
// by a command; the copy comes back in limitsSavedMsg.
func (p limitsPane) commit() (limitsPane, tea.Cmd) {
	switch {
	case p.save == nil:
		p.msg, p.msgBad = "this session has no limits file to write", true
		return p, nil
	case p.saving:
		p.msg, p.msgBad = "a save is under way: press w again when it is done", true
		return p, nil
	}
	edited, n, err := editBook(p.book, p.pending)
	if err != nil {
		p.msg, p.msgBad = "not saved: "+err.Error(), true
		return p, nil
	}
	if n == 0 {
		p.msg, p.msgBad = "nothing changed", false
		return p, nil
	}
	if err := edited.Validate(); err != nil {
		p.msg, p.msgBad = "not saved: "+err.Error(), true
		return p, nil
	}
	saved := clonePending(p.pending)
	save := p.save
	p.saving = true
	p.msg, p.msgBad = "saving…", false
	return p, func() tea.Msg {
		where, err := save(context.Background(), edited)
		return limitsSavedMsg{book: edited, saved: saved, where: where, err: err}
	}
}

// boundPrompt names the bound being edited, in words and with its unit:
// "eutectic recalescence, pass max (°C): ".
func boundPrompt(r limitRow) string {
	label, unit := r.metric, ""
	if m, ok := limits.Metric(r.metric); ok {
		label, unit = m.Label, m.Unit
	}
	if unit != "" {
		unit = " (" + unit + ")"
	}
	return fmt.Sprintf("%s, %s%s: ", label, boundNames[r.b], unit)
}

func fmtBound(v *float64) string {
	if v == nil {
		return ""
	}
	return strconv.FormatFloat(*v, 'g', -1, 64)
}

// boundsPerMetric is the bounds of a metric: pass min and max, marginal
// min and max (rows holds them in that order, metric by metric).
const boundsPerMetric = 4

// limitsCell is the width of a bound's column.
const limitsCell = 10

func (p limitsPane) View() string {
	src := p.book.Source
	if src == "" {
		src = "built-in examples"
	}
	st := p.st
	head := st.Title.Render("LIMITS ") + st.Value.Render(p.alloyName()) + st.Muted.Render("  from "+src+"  (a: next alloy)")
	lines := []string{clip(head, p.w), st.Muted.Render(clip("Examples only until your metallurgist sets them. Empty: no bound. *: not written.", p.w))}
	rows := p.rows()
	if len(rows) == 0 {
		lines = append(lines, "", st.Muted.Render("This alloy has no metric limits."))
		return box(strings.Join(lines, "\n"), p.w, p.h)
	}
	lw := max(p.w-2-boundsPerMetric*limitsCell, 12)
	cols := "  " + fmt.Sprintf("%-*s", lw, "metric")
	for _, n := range []string{"pass min", "pass max", "marg. min", "marg. max"} {
		cols += fmt.Sprintf("%*s", limitsCell, n)
	}
	lines = append(lines, st.Label.Render(clip(cols, p.w)))
	// below the table: the selected metric's advice in full, the prompt
	// and the message
	al, _ := p.book.Alloy(p.alloyName())
	cur := rows[min(p.sel, len(rows)-1)]
	var advice []string
	if l := al.Metrics[cur.metric]; l != nil {
		for _, a := range [][2]string{{"when low: ", l.Low}, {"when high: ", l.High}, {"when missing: ", l.Missing}} {
			if a[1] != "" {
				advice = append(advice, wrapText(st.Value, a[0]+a[1], p.w)...)
			}
		}
	}
	foot := 2 // the prompt and the message
	metrics := len(rows) / boundsPerMetric
	tableH := max(min(metrics, p.h-len(lines)-foot-1-min(len(advice), 3)), 1)
	start := 0
	if at := p.sel / boundsPerMetric; at >= tableH {
		start = at - tableH + 1
	}
	for k := start; k < metrics && k-start < tableH; k++ {
		r0 := rows[k*boundsPerMetric]
		name := r0.metric
		if mi, ok := limits.Metric(name); ok {
			name = mi.Label
			if mi.Unit != "" {
				name += " (" + mi.Unit + ")"
			}
		}
		row := fmt.Sprintf("%-*s", lw, cut(name, lw))
		for b := range boundsPerMetric {
			i := k*boundsPerMetric + b
			v, changed := p.value(rows[i])
			val := fmtBound(v)
			if val == "" {
				val = "—"
			}
			if changed {
				val += " *"
			}
			if i == p.sel {
				val = "[" + val + "]" // the bound being edited: marked without colour too
			}
			row += fmt.Sprintf("%*s", limitsCell, val)
		}
		lines = append(lines, selectRow(st, row, k == p.sel/boundsPerMetric, p.w))
	}
	room := p.h - len(lines) - foot - 1
	if len(advice) > room {
		advice = append(advice[:max(room-1, 0):max(room-1, 0)], st.Muted.Render("…"))
	}
	if room > 0 {
		lines = append(lines, "")
		lines = append(lines, advice...)
	}
	for len(lines) < p.h-foot {
		lines = append(lines, "")
	}
	if p.editing {
		lines = append(lines, p.input.View())
	} else {
		lines = append(lines, st.Muted.Render(clip("enter: edit "+strings.TrimSuffix(boundPrompt(cur), ": "), p.w)))
	}
	if p.msgBad {
		lines = append(lines, st.Error.Render(clip(p.msg, p.w)))
	} else {
		lines = append(lines, st.Muted.Render(clip(p.msg, p.w)))
	}
	return box(strings.Join(lines, "\n"), p.w, p.h)
}

func (p limitsPane) ShortHelp() []key.Binding {
	if p.editing {
		return []key.Binding{p.keys.Done, p.keys.Back}
	}
	return []key.Binding{p.keys.Edit, p.keys.Save, p.keys.Alloy}
}

func (p limitsPane) FullHelp() [][]key.Binding {
	return [][]key.Binding{{p.keys.Up, p.keys.Down, p.keys.Left, p.keys.Right, p.keys.Edit, p.keys.Save, p.keys.Alloy}}
}
