package tui

import (
	"fmt"
	"math"
	"strings"

	"github.com/NimbleMarkets/ntcharts/linechart"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
)

// SampleMeta is the sample form: what the operator says about the cup.
type SampleMeta struct {
	Sample, Alloy, Operator, Note string
}

// Analyzer is the analysis of a (growing) curve; live is true while more
// readings may follow. Nil uses each cup's own arrest.Analyzer (work space
// kept per cup, so live calls only process new readings). Tests may give a
// constructed one.
type Analyzer func(t, temp []float64, family arrest.Family, live bool) arrest.Result

// Judge turns a finished analysis into its record (assess.FromResult with
// the alloy's limits).
type Judge func(in assess.Input, res arrest.Result) assess.Record

// recentMax bounds the readings kept while waiting: the acquirer's sample
// starts up to its pre-trigger time (10 s by default) before the event.
const recentMax = 2048

// cup is one channel's sample: its whole curve, the decimated copies for
// drawing, the live analysis and, once known, the record.
type cup struct {
	id    string
	state State
	meta  SampleMeta  // the sample shown
	next  *SampleMeta // the form for the next sample, while one is recording

	t0         float64   // acquirer time of the sample start
	t, v       []float64 // the whole sample curve, s from t0 and °C
	temp, rate trace
	tempLC     *linechart.Model // charts kept between draws
	rateLC     *linechart.Model
	drawn      chartCache // the charts as last drawn
	sl         slope
	peakT      float64 // time of the highest reading so far (end of the pour transient)
	peakV      float64

	last    Reading
	hasLast bool
	recent  []Reading // readings before the start, for the pre-trigger

	ws      arrest.Analyzer // the cup's own analysis work space
	res     arrest.Result
	rec     *assess.Record
	path    string
	elapsed float64
}

func newCup(id string) *cup {
	return &cup{id: id, temp: newTrace(), rate: newTrace(), sl: slope{w: 2}, peakV: math.Inf(-1),
		tempLC: &linechart.Model{}, rateLC: &linechart.Model{}}
}

// busy reports whether a sample is being recorded.
func (c *cup) busy() bool { return c.state == StateRecording || c.state == StateFrozen }

// form is the sample form's current values for this cup: the next
// sample's while one is recording.
func (c *cup) form() SampleMeta {
	if c.busy() && c.next != nil {
		return *c.next
	}
	return c.meta
}

// setForm takes the sample form: for the sample shown, or for the next
// one while a sample is recording.
func (c *cup) setForm(m SampleMeta) {
	if c.busy() {
		c.next = &m
		return
	}
	c.meta, c.next = m, nil
}

// begin starts a new sample at acquirer time t0.
func (c *cup) begin(t0 float64) {
	if c.next != nil {
		c.meta, c.next = *c.next, nil
	}
	c.t0 = t0
	c.t, c.v = c.t[:0], c.v[:0] // the backing arrays are reused: the work space starts afresh
	c.ws.Reset()
	c.temp.reset()
	c.rate.reset()
	c.sl = slope{w: c.sl.w}
	c.peakT, c.peakV = 0, math.Inf(-1)
	c.res, c.rec, c.path, c.elapsed = arrest.Result{}, nil, "", 0
	c.state = StateRecording
	for _, r := range c.recent {
		if r.TimeS >= t0 {
			c.append(r)
		}
	}
	c.recent = c.recent[:0]
}

func usable(r Reading) bool {
	return r.Flags&(acquire.FlagOpen|acquire.FlagFault) == 0 && !math.IsNaN(r.TempC)
}

// take is one reading of this channel.
func (c *cup) take(r Reading) {
	c.last, c.hasLast = r, true
	if c.state != StateRecording && c.state != StateFrozen {
		if usable(r) {
			c.recent = append(c.recent, r)
			if len(c.recent) > recentMax {
				c.recent = append(c.recent[:0], c.recent[recentMax/2:]...)
			}
		}
		return
	}
	c.append(r)
}

func (c *cup) append(r Reading) {
	if !usable(r) {
		return
	}
	ts := r.TimeS - c.t0
	if n := len(c.t); n > 0 && ts <= c.t[n-1] {
		return // out of order or repeated: the analysis needs rising time
	}
	c.t = append(c.t, ts)
	c.v = append(c.v, r.TempC)
	c.temp.add(ts, r.TempC)
	if r.TempC > c.peakV {
		c.peakT, c.peakV = ts, r.TempC
	}
	if mid, d, ok := c.sl.next(c.t, c.v, len(c.t)-1); ok {
		c.rate.add(mid, d)
	}
	c.elapsed = ts
}

// analyse reruns the analysis on the curve: live while it may still grow,
// the offline answer once it has ended.
func (c *cup) analyse(an Analyzer, live bool) {
	if len(c.t) == 0 {
		return
	}
	fam := familyOf(c.meta.Alloy)
	if an != nil {
		c.res = an(c.t, c.v, fam, live)
		return
	}
	c.res = c.ws.Analyze(c.t, c.v, arrest.Options{Family: fam, Live: live})
}

// finish gives the sample its record.
func (c *cup) finish(an Analyzer, judge Judge, path string) assess.Record {
	c.analyse(an, false)
	in := assess.Input{File: path, Alloy: c.meta.Alloy, Family: familyOf(c.meta.Alloy), Time: c.t, Temp: c.v}
	rec := judge(in, c.res)
	c.rec, c.path, c.state = &rec, path, StateDone
	return rec
}

// stateWord is the sample state in the dashboard's own words.
func (c *cup) stateWord() string {
	switch c.state {
	case StateRecording:
		if c.res.EutecticMin.OK || c.res.Liquidus.OK {
			return "FREEZING"
		}
		return "RECORDING"
	case StateFrozen:
		return "FROZEN · FINISHING"
	case StateDone:
		return "DONE"
	default:
		return "WAITING FOR POUR"
	}
}

// reading is the big current reading and a word on faults.
func (c *cup) reading() (big, note string) {
	if !c.hasLast {
		return "----", "no reading yet"
	}
	switch {
	case c.last.Flags&acquire.FlagOpen != 0:
		return "----", "THERMOCOUPLE OPEN"
	case c.last.Flags&acquire.FlagFault != 0:
		return "----", "DEVICE FAULT"
	}
	return fmt.Sprintf("%6.1f", c.last.TempC), ""
}

// pointRow is one characteristic point for the list beside the curve.
type pointRow struct {
	sym   rune
	label string
	p     arrest.Point
}

func (c *cup) points() []pointRow {
	r := c.res
	return []pointRow{
		{'P', "pour peak", r.PourPeak},
		{'A', "liquidus", r.Liquidus},
		{'U', "eutectic min", r.EutecticMin},
		{'R', "eutectic max", r.EutecticMax},
		{'S', "end of freezing", r.Solidus},
	}
}

func (c *cup) marks() []mark {
	var ms []mark
	for _, p := range c.points() {
		if p.p.OK {
			ms = append(ms, mark{x: p.p.TimeS, y: p.p.TempC, r: p.sym})
		}
	}
	return ms
}

// view draws the cup in w×h cells.
func (c *cup) view(st *Styles, w, h int) string {
	if w < 20 || h < 8 {
		return lipgloss.NewStyle().Width(max(w, 1)).Height(max(h, 1)).Render(c.id)
	}
	if w >= 72 && h >= 16 {
		return c.viewWide(st, w, h)
	}
	return c.viewTall(st, w, h)
}

// header is the cup's name and sample, and its alloy and operator: one
// line when wide enough, else two.
func (c *cup) header(st *Styles, w int) string {
	first := st.Title.Render("CUP " + c.id)
	if c.meta.Sample != "" {
		first += "  " + st.Value.Render(c.meta.Sample)
	}
	var parts []string
	if c.meta.Alloy != "" {
		parts = append(parts, st.Value.Render(c.meta.Alloy))
	}
	if c.meta.Operator != "" {
		parts = append(parts, st.Muted.Render(c.meta.Operator))
	}
	second := strings.Join(parts, st.Muted.Render(" · "))
	if second == "" {
		second = st.Muted.Render("no alloy set (s: sample form)")
	}
	if lipgloss.Width(first)+3+lipgloss.Width(second) <= w {
		return first + st.Muted.Render(" · ") + second
	}
	return clip(first, w) + "\n" + clip(second, w)
}

func (c *cup) bigBlock(st *Styles) string {
	big, note := c.reading()
	digits := st.Big.Render(bigText(strings.TrimSpace(big)))
	unit := st.Value.Render("°C")
	stateLine := st.State.Render(c.stateWord())
	if c.state == StateRecording || c.state == StateFrozen || c.state == StateDone {
		stateLine += st.Muted.Render(fmt.Sprintf("  %3.0f s", c.elapsed))
	}
	if note != "" {
		stateLine = st.Error.Render(note) + "  " + stateLine
	}
	return lipgloss.JoinVertical(lipgloss.Left, lipgloss.JoinHorizontal(lipgloss.Bottom, digits, " ", unit), stateLine)
}

func fmtPoint(p arrest.Point) string {
	if !p.OK {
		return "   —"
	}
	return fmt.Sprintf("%6.1f °C %4.0f s", p.TempC, p.TimeS)
}

func (c *cup) pointList(st *Styles) []string {
	var lines []string
	for _, p := range c.points() {
		lines = append(lines, st.Mark.Render(string(p.sym))+" "+st.Label.Render(fmt.Sprintf("%-16s", p.label))+st.Value.Render(fmtPoint(p.p)))
	}
	rc := "   —"
	if c.res.RecalescenceOK {
		rc = fmt.Sprintf("%6.1f °C", c.res.Recalescence)
	}
	lines = append(lines, "  "+st.Label.Render(fmt.Sprintf("%-16s", "recalescence"))+st.Value.Render(rc))
	return lines
}

// compactPoints is the point list in two lines for narrow cups.
func (c *cup) compactPoints(st *Styles, w int) []string {
	var parts []string
	for _, p := range c.points() {
		v := "—"
		if p.p.OK {
			v = fmt.Sprintf("%.1f", p.p.TempC)
		}
		parts = append(parts, st.Mark.Render(string(p.sym))+" "+st.Value.Render(v))
	}
	rc := "—"
	if c.res.RecalescenceOK {
		rc = fmt.Sprintf("%.1f", c.res.Recalescence)
	}
	parts = append(parts, st.Label.Render("recal ")+st.Value.Render(rc))
	return wrapParts(parts, "  ", w)
}

// wrapParts joins styled parts into lines no wider than w.
func wrapParts(parts []string, sep string, w int) []string {
	var lines []string
	cur := ""
	for _, p := range parts {
		switch {
		case cur == "":
			cur = p
		case lipgloss.Width(cur)+len(sep)+lipgloss.Width(p) <= w:
			cur += sep + p
		default:
			lines = append(lines, cur)
			cur = p
		}
	}
	if cur != "" {
		lines = append(lines, cur)
	}
	return lines
}

// verdictLines is the verdict with its reasons and advice, or what the
// cup is waiting for.
func (c *cup) verdictLines(st *Styles, w int, boxed bool) []string {
	if c.rec == nil {
		if c.state == StateWaiting {
			return []string{st.Muted.Render("Press s to fill in the sample form.")}
		}
		return []string{st.Muted.Render("Verdict when freezing is done.")}
	}
	v := c.rec.Verdict
	lines := []string{st.verdictStyle(v).Render("VERDICT  " + verdictWord(v))}
	if boxed {
		// A solid bar of the verdict's colour inside its own border shape:
		// readable across the deck; the word and the border stay without colour.
		lines = strings.Split(st.verdictBox(v).Render(st.verdictStyle(v).Reverse(true).Padding(0, 1).Render(verdictWord(v))), "\n")
	}
	for _, r := range recordReasons(c.rec) {
		lines = append(lines, wrapText(st.Value, "• "+r, w)...)
	}
	for _, a := range recordAdvice(c.rec) {
		lines = append(lines, wrapText(st.Value, "→ "+a, w)...)
	}
	return lines
}

// verdictWord is the verdict as shown: our words, upper case.
func verdictWord(v string) string {
	switch v {
	case assess.VerdictPass:
		return "PASS"
	case assess.VerdictMarginal:
		return "MARGINAL"
	case assess.VerdictFail:
		return "FAIL"
	case assess.VerdictInvalid:
		return "INVALID · RE-SAMPLE"
	case assess.VerdictUnchecked:
		return "NO LIMITS SET"
	}
	return strings.ToUpper(v)
}

// wrapText wraps plain text to w cells and styles each line.
func wrapText(s lipgloss.Style, text string, w int) []string {
	if w < 8 {
		w = 8
	}
	var lines []string
	for _, l := range strings.Split(lipgloss.NewStyle().Width(w).Render(text), "\n") {
		lines = append(lines, s.Render(strings.TrimRight(l, " ")))
	}
	return lines
}

func (c *cup) tempPlot(st *Styles, w, h int) plot {
	x1 := math.Max(60, c.elapsed*1.05)
	// The scale follows the metal from the pour peak on; the rise from room
	// temperature runs off the bottom rather than squash the arrests.
	lo, hi, ok := c.temp.bounds(c.peakT)
	if !ok {
		lo, hi = 0, 1400
		if c.hasLast && usable(c.last) {
			lo, hi = c.last.TempC-50, c.last.TempC+50
		}
	}
	lo, hi = padRange(lo, hi, 0.05, 20)
	return plot{w: w, h: h, x0: 0, x1: x1, y0: math.Floor(lo/10) * 10, y1: math.Ceil(hi/10) * 10,
		yFmt: "%6.0f", xFmt: "%.0fs", line: st.Curve, tr: &c.temp, marks: c.marks(), niceX: true, lc: c.tempLC}.roundX()
}

func (c *cup) ratePlot(st *Styles, w, h int, x1 float64) plot {
	lo, hi, ok := c.rate.bounds(c.peakT + 3)
	if !ok {
		lo, hi = -5, 1
	}
	lo, hi = math.Min(lo, 0), math.Max(hi, 0)
	lo, hi = padRange(lo, hi, 0.1, 1)
	return plot{w: w, h: h, x0: 0, x1: x1, y0: lo, y1: hi, yFmt: "%+6.1f", xFmt: "%.0fs", line: st.Rate, tr: &c.rate,
		levels: []level{{y: 0, r: '·', style: st.Axis}}, niceX: true, lc: c.rateLC}
}

// chartEveryS is how far, in the sample's own seconds, the curve must have
// grown before the charts are drawn again. A cup curve spans minutes, so a
// chart column holds a second or more: a finer step changes no visible dot,
// while drawing the charts is most of a redraw's cost.
const chartEveryS = 0.5

// chartCache is the charts' text as last drawn, with what it was drawn for.
type chartCache struct {
	key  chartKey
	atS  float64 // c.elapsed when drawn
	text string
}

// chartKey is what redraws the charts at once when it changes.
type chartKey struct {
	w, h  int
	st    *Styles
	state State
	t0    float64 // a new sample
	marks int     // a point settled
	n     int     // readings, while there are too few for a trend to show
	lastC int     // the reading in 10 °C steps, while no curve is drawn (it sets the scale)
}

// charts draws the curve and its rate, reusing the last drawing while the
// sample has grown by less than chartEveryS and nothing else changed.
func (c *cup) charts(st *Styles, w, h int) string {
	key := chartKey{w: w, h: h, st: st, state: c.state, t0: c.t0, marks: len(c.marks()), n: min(len(c.t), 50)}
	if len(c.t) == 0 && c.hasLast {
		key.lastC = int(math.Floor(c.last.TempC / 10))
	}
	if d := c.drawn; d.text != "" && d.key == key && c.elapsed >= d.atS && c.elapsed-d.atS < chartEveryS {
		return d.text
	}
	text := c.drawCharts(st, w, h)
	c.drawn = chartCache{key: key, atS: c.elapsed, text: text}
	return text
}

func (c *cup) drawCharts(st *Styles, w, h int) string {
	// The curve comes first: the rate chart is drawn only when both get
	// a readable height.
	if h < 12 {
		tp := c.tempPlot(st, w, h-1)
		return st.Label.Render("°C against s") + "\n" + tp.render(st)
	}
	rh := max(4, (h-2)/3)
	th := h - 2 - rh
	tp := c.tempPlot(st, w, th)
	return strings.Join([]string{
		st.Label.Render("°C against s"), tp.render(st),
		st.Label.Render("dT/dt °C/s"), c.ratePlot(st, w, rh, tp.x1).render(st),
	}, "\n")
}

// viewWide: facts on the left, charts on the right.
func (c *cup) viewWide(st *Styles, w, h int) string {
	lw := 35
	left := []string{c.header(st, lw), c.bigBlock(st), ""}
	left = append(left, c.pointList(st)...)
	left = append(left, c.verdictLines(st, lw, true)...)
	leftS := box(strings.Join(left, "\n"), lw, h)
	return lipgloss.JoinHorizontal(lipgloss.Top, leftS, " ", c.charts(st, w-lw-1, h))
}

// viewTall: everything stacked, for narrow cups side by side.
func (c *cup) viewTall(st *Styles, w, h int) string {
	top := []string{c.header(st, w), c.bigBlock(st)}
	bottom := c.compactPoints(st, w)
	bottom = append(bottom, c.verdictLines(st, w, false)...)
	if len(bottom) > 4 {
		bottom = bottom[:4]
	}
	used := lipgloss.Height(strings.Join(top, "\n")) + len(bottom)
	ch := h - used
	mid := ""
	if ch >= 5 {
		mid = c.charts(st, w, ch)
	} else {
		mid = strings.Repeat("\n", max(ch-1, 0))
	}
	return box(strings.Join(append(append(top, mid), bottom...), "\n"), w, h)
}

// box pads or cuts a block to exactly w×h cells.
func box(s string, w, h int) string {
	lines := strings.Split(s, "\n")
	if len(lines) > h {
		lines = lines[:h]
	}
	for len(lines) < h {
		lines = append(lines, "")
	}
	for i, l := range lines {
		lines[i] = fit(l, w)
	}
	return strings.Join(lines, "\n")
}

// fit cuts or pads a styled line to exactly w cells.
func fit(l string, w int) string {
	n := ansi.StringWidth(l)
	switch {
	case n > w:
		return ansi.Truncate(l, w, "")
	case n < w:
		return l + strings.Repeat(" ", w-n)
	}
	return l
}

// clip cuts a styled line to w cells.
func clip(s string, w int) string {
	if lipgloss.Width(s) <= w {
		return s
	}
	return ansiTruncate(s, w)
}
