package tui

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/store"
)

// firstMetric is the trend's metric when it opens (the others follow in
// the registry's order, assess.Metrics).
const firstMetric = "undercooling_c"

// curveLoadedMsg carries an opened sample's curve (read from its file
// where the history has none) and the T′ the analysis finds its points on.
type curveLoadedMsg struct {
	id     int64
	t, v   []float64
	st, sd []float64
	err    error
}

// historyPane lists the shift's samples, newest first, with a trend of one
// metric across them and the alloy's limit bands; enter opens a sample.
type historyPane struct {
	st      *Styles
	keys    *KeyMap
	book    *limits.Book
	read    CurveReader
	all     []Entry                      // newest first
	vals    map[int64]map[string]float64 // each entry's metrics, computed once
	alloys  []string
	alloy   int // 0 = all alloys, else index+1 into alloys
	metric  int
	sel     int
	open    *Entry
	opened  cup // the opened sample drawn as a finished cup, once its curve is in
	w, h    int
	errText string
}

func newHistoryPane(st *Styles, keys *KeyMap, book *limits.Book, read CurveReader) historyPane {
	return historyPane{st: st, keys: keys, book: book, read: read}
}

func (p historyPane) SetSize(w, h int) historyPane {
	p.w, p.h = w, h
	return p.redraw()
}

// setBook takes a saved limits book (the trend's bands).
func (p historyPane) setBook(b *limits.Book) historyPane { p.book = b; return p }

// redraw draws the opened cup's charts for View.
func (p historyPane) redraw() historyPane {
	if p.open != nil && len(p.opened.snap.T) > 0 {
		if cw, ch, ok := p.opened.layout(p.st, p.w, p.h); ok {
			p.opened.redraw(p.st, cw, ch)
		}
	}
	return p
}

func (p historyPane) filterName() string {
	if p.alloy == 0 || p.alloy > len(p.alloys) {
		return ""
	}
	return p.alloys[p.alloy-1]
}

func (p historyPane) shown() []Entry {
	f := p.filterName()
	if f == "" {
		return p.all
	}
	var out []Entry
	for _, e := range p.all {
		if e.Meta.Get("alloy") == f {
			out = append(out, e)
		}
	}
	return out
}

// metrics are the registry's metrics (assess.Metrics) that some sample
// shown has a value of, from firstMetric on in the registry's order.
func (p historyPane) metrics() []string {
	seen := map[string]bool{}
	for _, e := range p.shown() {
		for k := range p.vals[e.ID] {
			seen[k] = true
		}
	}
	var out []string
	start := 0
	for _, m := range assess.Metrics() {
		if seen[m.Name] {
			if m.Name == firstMetric {
				start = len(out)
			}
			out = append(out, m.Name)
		}
	}
	return append(out[start:], out[:start]...)
}

func (p historyPane) metricName() string {
	ms := p.metrics()
	if len(ms) == 0 {
		return ""
	}
	return ms[p.metric%len(ms)]
}

func (p *historyPane) setEntries(es []Entry) {
	var selID int64 = -1
	if old := p.shown(); p.sel < len(old) {
		selID = old[p.sel].ID
	}
	p.all = es
	p.vals = make(map[int64]map[string]float64, len(es))
	for _, e := range es {
		p.vals[e.ID] = metricValues(e.Record) // once a load, not once a frame
	}
	set := map[string]bool{}
	for _, e := range es {
		if a := e.Meta.Get("alloy"); a != "" {
			set[a] = true
		}
	}
	p.alloys = nil // a new slice: the pane is a value
	for a := range set {
		p.alloys = append(p.alloys, a)
	}
	sort.Strings(p.alloys)
	// the selection stays on its sample when newer ones come in above it
	for i, e := range p.shown() {
		if e.ID == selID {
			p.sel = i
		}
	}
	if n := len(p.shown()); p.sel >= n {
		p.sel = max(0, n-1)
	}
}

func (p historyPane) Update(msg tea.Msg) (historyPane, tea.Cmd) {
	switch msg := msg.(type) {
	case historyLoadedMsg:
		if msg.err != nil {
			p.errText = msg.err.Error()
			return p, nil
		}
		p.errText = ""
		p.setEntries(msg.entries)
	case curveLoadedMsg:
		if p.open != nil && p.open.ID == msg.id {
			if msg.err != nil {
				p.errText = msg.err.Error()
				return p, nil
			}
			e := *p.open
			e.Time, e.Temp = msg.t, msg.v
			p.open = &e
			p.opened = openedCup(e, msg.st, msg.sd)
			return p.redraw(), nil
		}
	case tea.KeyMsg:
		if p.open != nil {
			if key.Matches(msg, p.keys.Back) {
				p.open = nil
				p.errText = ""
			}
			return p, nil
		}
		n := len(p.shown())
		switch {
		case key.Matches(msg, p.keys.Up):
			p.sel = max(0, p.sel-1)
		case key.Matches(msg, p.keys.Down):
			p.sel = min(max(n-1, 0), p.sel+1)
		case key.Matches(msg, p.keys.Alloy):
			p.alloy = (p.alloy + 1) % (len(p.alloys) + 1)
			p.sel = 0
		case key.Matches(msg, p.keys.Metric):
			p.metric++
		case key.Matches(msg, p.keys.MetricBack):
			p.metric += max(len(p.metrics()), 1) - 1
		case key.Matches(msg, p.keys.Open) && n > 0:
			e := p.shown()[p.sel]
			p.open, p.opened = &e, cup{}
			return p, openCurve(p.read, p.book, e)
		}
	}
	return p, nil
}

// CurveReader reads a stored sample's curve file (curvefile.ReadFile).
type CurveReader func(path string) (*curvefile.Curve, error)

// openCurve is the command that gives an opened sample's curve, read from
// its file where the history has none, and its T′ as the analysis finds it
// (the sample's detector options, assess.Options).
func openCurve(read CurveReader, book *limits.Book, e Entry) tea.Cmd {
	return func() tea.Msg {
		in := assess.Input{Alloy: e.Record.Alloy, Limits: book, Time: e.Time, Temp: e.Temp}
		if len(in.Time) == 0 {
			if read == nil {
				return curveLoadedMsg{id: e.ID, err: fmt.Errorf("no curve reader to open %s", e.Path)}
			}
			c, err := read(e.Path)
			if err != nil {
				return curveLoadedMsg{id: e.ID, err: err}
			}
			in.Time, in.Temp, in.Meta = c.Time, c.Temp, c.Meta
		}
		st, sd := sample.Slope(in.Time, in.Temp, assess.Options(in))
		return curveLoadedMsg{id: e.ID, t: in.Time, v: in.Temp, st: st, sd: sd}
	}
}

// openedCup draws a stored sample the way the live view draws a finished
// one, from its record's points.
func openedCup(e Entry, st, sd []float64) cup {
	s := sample.Snapshot{Channel: e.Channel, State: sample.Done, Meta: e.Meta, T: e.Time, V: e.Temp, SlopeT: st, SlopeD: sd,
		Result: resultFromRecord(e.Record), Path: e.Path, Simulated: e.Simulated}
	rec := e.Record
	s.Record = &rec
	if n := len(e.Time); n > 0 {
		s.ElapsedS = e.Time[n-1] // no reading "now": a stored sample has none
	}
	return newCup(s)
}

func (p historyPane) View() string {
	if p.open != nil {
		return p.detail()
	}
	es := p.shown()
	filter := "all alloys"
	if f := p.filterName(); f != "" {
		filter = f
	}
	head := p.st.Title.Render("SAMPLES") + p.st.Muted.Render(fmt.Sprintf("  %d shown · %s · newest first", len(es), filter))
	if len(es) == 0 {
		msg := "No finished samples yet this shift."
		if p.errText != "" {
			msg = p.errText
		}
		return box(head+"\n\n"+p.st.Muted.Render(msg), p.w, p.h)
	}
	trendH := 0
	if p.h >= 14 {
		trendH = max(7, p.h*2/5)
	}
	listH := p.h - 2 - trendH
	cols := "  " + fmt.Sprintf("%-5s %-5s %-3s %-18s %-13s %-9s %8s %7s", "#", "time", "cup", "sample", "alloy", "verdict", "eut.min", "recal.")
	lines := []string{head, p.st.Label.Render(clip(cols, p.w))}
	start := 0
	if rows := listH - 1; rows > 0 && p.sel >= rows {
		start = p.sel - rows + 1
	}
	for i := start; i < len(es) && len(lines) < listH+1; i++ {
		e := es[i]
		row := fmt.Sprintf("%-5d %-5s %-3s %-18s %-13s %-9s %8s %7s", e.ID, e.At.Format("15:04"), e.Channel,
			cut(sampleName(e.Meta), 18), cut(escape.Line(e.Meta.Get("alloy")), 13), e.Record.Verdict,
			fmtOpt(e.Record.EutecticMinC, "%.1f"), fmtOpt(e.Record.RecalescenceC, "%.1f"))
		row = selectRow(p.st, row, i == p.sel, p.w)
		lines = append(lines, row)
	}
	out := box(strings.Join(lines, "\n"), p.w, p.h-trendH)
	if trendH > 0 {
		out += "\n" + p.trend(es, trendH)
	}
	return out
}

// detail is an opened sample as its record holds it: when it was taken,
// by whom, its figures with their units, its verdict in big letters with
// the reasons and advice, and the limits version it was judged by; its
// curve and T′ beside it once read (wide screens).
func (p historyPane) detail() string {
	e := *p.open
	c := p.opened
	if len(c.snap.T) == 0 {
		c = openedCup(e, nil, nil)
	}
	w := p.w
	wide := p.w >= 72 && p.h >= 16
	if wide {
		w = wideLeft
	}
	st := p.st
	title := st.Title.Render("SAMPLE ") + st.Value.Render(sampleName(e.Meta))
	if e.Simulated {
		title += " " + st.Error.Render("[SIMULATED]")
	}
	lines := []string{clip(title, w)}
	lines = append(lines, clip(st.Label.Render("taken ")+st.Value.Render(e.At.Format("2006-01-02 15:04"))+st.Muted.Render(" · cup "+e.Channel), w))
	var who []string
	for _, k := range []string{"alloy", "operator", "furnace"} {
		if v := e.Meta.Get(k); v != "" {
			who = append(who, escape.Line(v))
		}
	}
	lines = append(lines, wrapText(st.Value, strings.Join(who, " · "), w)...)
	lines = append(lines, strings.Split(c.verdictBig(st, w), "\n")...)
	lim := escape.Line(e.Record.LimitsVersion)
	if lim == "" {
		lim = "none"
	}
	lines = append(lines, st.verdictStyle(e.Record.Verdict).Render(verdictWord(e.Record.Verdict))+st.Muted.Render(clip(" · limits "+lim, w-lipgloss.Width(verdictWord(e.Record.Verdict)))))
	lines = append(lines, figureLines(st, &e.Record, w)...)
	lines = append(lines, c.verdictLines(st, w)...)
	left := box(moreHint(st, strings.Split(strings.Join(lines, "\n"), "\n"), p.h, true), w, p.h)
	if !wide {
		return left
	}
	var right string
	switch {
	case len(p.opened.snap.T) > 0:
		right = p.opened.charts(st, p.w-wideLeft-1, p.h)
	case p.errText != "":
		right = box(strings.Join(wrapText(st.Error, "The curve cannot be drawn: "+p.errText, p.w-wideLeft-1), "\n")+"\n"+
			st.Muted.Render("The figures are the record's, as stored."), p.w-wideLeft-1, p.h)
	default:
		right = box(st.Muted.Render("Reading "+e.Path+" …"), p.w-wideLeft-1, p.h)
	}
	return lipgloss.JoinHorizontal(lipgloss.Top, left, " ", right)
}

// figureLines are the record's figures, one a line, in words with their
// units (the metric registry's labels and decimals).
func figureLines(st *Styles, r *assess.Record, w int) []string {
	var out []string
	for _, m := range assess.Metrics() {
		v, ok := m.Value(r)
		if !ok {
			continue
		}
		val := m.Format(v)
		lw := max(w-len([]rune(val))-1, 4)
		out = append(out, st.Label.Render(fmt.Sprintf("%-*s", lw, cut(m.Label, lw)))+" "+st.Value.Render(val))
	}
	return out
}

func cut(s string, n int) string {
	r := []rune(s)
	if len(r) > n {
		return string(r[:n-1]) + "…"
	}
	return s
}

func fmtOpt(v *float64, f string) string {
	if v == nil {
		return "—"
	}
	return fmt.Sprintf(f, *v)
}

// trend draws the metric across the samples shown, oldest on the left, with
// the alloy's pass band (solid) and marginal band (dotted) where set, and
// for a single alloy its SPC centre line and control limits.
func (p historyPane) trend(es []Entry, h int) string {
	name := p.metricName()
	var xs, ys []float64
	for i := len(es) - 1; i >= 0; i-- {
		if v, ok := p.vals[es[i].ID][name]; ok {
			xs = append(xs, float64(len(xs)+1))
			ys = append(ys, v)
		}
	}
	label := name
	if mi, ok := limits.Metric(name); ok {
		label = mi.Label
		if mi.Unit != "" {
			label += " (" + mi.Unit + ")"
		}
	}
	title := p.st.Label.Render("trend: ") + p.st.Value.Render(label) + p.st.Muted.Render("  (m/M: next/previous metric, a: alloy)")
	if len(ys) == 0 {
		return box(title+"\n"+p.st.Muted.Render("no values"), p.w, h)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, y := range ys {
		lo, hi = math.Min(lo, y), math.Max(hi, y)
	}
	var levels []level
	alloy := p.filterName()
	if alloy == "" && len(p.alloys) == 1 {
		alloy = p.alloys[0] // one alloy this shift: its bands apply to all
	}
	if al, ok := p.book.Alloy(alloy); ok && al.Metrics != nil {
		if lm := al.Metrics[name]; lm != nil {
			for _, b := range []struct {
				v *float64
				r rune
			}{{lm.PassMin, '─'}, {lm.PassMax, '─'}, {lm.MarginalMin, '·'}, {lm.MarginalMax, '·'}} {
				if b.v != nil {
					levels = append(levels, level{y: *b.v, r: b.r, style: p.st.Limit})
					lo, hi = math.Min(lo, *b.v), math.Max(hi, *b.v)
				}
			}
		}
	}
	// Simple SPC for one alloy: an individuals chart, centre line at the
	// mean and control limits at ±3σ with σ = MR̄/1.128 (store.ComputeSPC).
	// Mixed alloys get none: their values do not come from one process.
	// Drawn only where the chart has rows enough to place the lines.
	if alloy != "" && len(ys) >= 3 && h-1 >= 10 {
		if spc := store.ComputeSPC(ys); !math.IsNaN(spc.UCL) {
			// drawn first, so that a limit on the same row stays on top
			levels = append([]level{{y: spc.Mean, r: '╌', style: p.st.Muted},
				{y: spc.UCL, r: '┄', style: p.st.Muted}, {y: spc.LCL, r: '┄', style: p.st.Muted}}, levels...)
			lo, hi = math.Min(lo, spc.LCL), math.Max(hi, spc.UCL)
			if note := p.st.Muted.Render(fmt.Sprintf("  SPC mean %.1f ╌, limits %.1f…%.1f ┄", spc.Mean, spc.LCL, spc.UCL)); lipgloss.Width(title+note) <= p.w {
				title += note
			}
		}
	}
	lo, hi = padRange(lo, hi, 0.1, 1)
	pl := plot{w: p.w, h: h - 1, x0: 0, x1: math.Max(float64(len(xs))+0.5, 5.5), y0: lo, y1: hi,
		yFmt: "%7.1f", xFmt: "%.0f", line: p.st.Curve, xs: xs, ys: ys, levels: levels, niceX: true}
	var ms []mark
	for i := range xs {
		ms = append(ms, mark{x: xs[i], y: ys[i], r: '●'})
	}
	pl.marks = ms
	return title + "\n" + pl.render(p.st)
}

func (p historyPane) ShortHelp() []key.Binding {
	if p.open != nil {
		return []key.Binding{p.keys.Back, p.keys.Verdict}
	}
	return []key.Binding{p.keys.Open, p.keys.Alloy, p.keys.Metric, p.keys.MetricBack}
}

func (p historyPane) FullHelp() [][]key.Binding {
	return [][]key.Binding{{p.keys.Up, p.keys.Down, p.keys.Open, p.keys.Back}, {p.keys.Alloy, p.keys.Metric, p.keys.MetricBack}}
}

// metricValues gives a record's value of every metric of the registry
// that it has.
func metricValues(r assess.Record) map[string]float64 {
	out := map[string]float64{}
	for _, m := range assess.Metrics() {
		if v, ok := m.Value(&r); ok {
			out[m.Name] = v
		}
	}
	return out
}
