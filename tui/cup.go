package tui

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// cup is one channel as the dashboard shows it: the tracker's snapshot
// (a value: its slices are never changed) and its charts as last drawn.
type cup struct {
	snap  sample.Snapshot
	drawn chartCache // drawn in Update, read by View
}

func newCup(s sample.Snapshot) cup { return cup{snap: s} }

func (c *cup) id() string                 { return c.snap.Channel }
func (c *cup) state() sample.State        { return c.snap.State }
func (c *cup) res() arrest.Result         { return c.snap.Result }
func (c *cup) rec() *assess.Record        { return c.snap.Record }
func (c *cup) elapsed() float64           { return c.snap.ElapsedS }
func (c *cup) busy() bool                 { return c.snap.State.Busy() }
func (c *cup) last() (feed.Reading, bool) { return c.snap.Last, c.snap.HasLast }

// meta is the sample shown: the one recording or finished, else (before
// the first pour) the one to come.
func (c *cup) meta() sample.Meta {
	if c.snap.State == sample.Waiting {
		return c.snap.Next
	}
	return c.snap.Meta
}

// form is what the sample form opens with: the next sample's values over
// the last sample's (so that a cup number is quickly changed).
func (c *cup) form() sample.Meta { return c.snap.Meta.Merge(c.snap.Next) }

// stateWord is the sample state in the dashboard's own words.
func (c *cup) stateWord() string {
	switch c.state() {
	case sample.Recording:
		if r := c.res(); r.EutecticMin.OK || r.Liquidus.OK {
			return "FREEZING"
		}
		return "RECORDING"
	case sample.Frozen:
		return "FROZEN · FINISHING"
	case sample.Done:
		return "DONE"
	case sample.Waiting:
		if c.snap.WallOf != "" {
			return "WALL TC OF CUP " + c.snap.WallOf // its readings go into that cup's sample
		}
	}
	return "WAITING FOR POUR"
}

// reading is the big current reading and a word on faults.
func (c *cup) reading() (big, note string) {
	r, ok := c.last()
	if !ok {
		return "----", "no reading yet"
	}
	switch {
	case r.Flags&feed.FlagOpen != 0:
		return "----", "THERMOCOUPLE OPEN"
	case r.Flags&feed.FlagFault != 0:
		return "----", "DEVICE FAULT"
	}
	return fmt.Sprintf("%6.1f", r.TempC), ""
}

// pointRow is one characteristic point for the list beside the curve.
type pointRow struct {
	sym   rune
	label string
	p     arrest.Point
}

func (c *cup) points() []pointRow { return pointsOf(c.snap.Result) }

func pointsOf(r arrest.Result) []pointRow {
	return []pointRow{
		{'P', "pour peak", r.PourPeak},
		{'A', "liquidus", r.Liquidus},
		{'B', "eutectic start", r.EutecticStart},
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
		return lipgloss.NewStyle().Width(max(w, 1)).Height(max(h, 1)).Render(c.id())
	}
	if w >= 72 && h >= 16 {
		return c.viewWide(st, w, h)
	}
	return c.viewTall(st, w, h)
}

// header is the cup's name and sample, and its alloy and operator: one
// line when wide enough, else two.
func (c *cup) header(st *Styles, w int) string {
	m := c.meta()
	first := st.Title.Render("CUP " + c.id())
	if s := sampleName(m); s != "" {
		first += "  " + st.Value.Render(s)
	}
	var parts []string
	if a := m.Get("alloy"); a != "" {
		parts = append(parts, st.Value.Render(escape.Line(a)))
	}
	if o := m.Get("operator"); o != "" {
		parts = append(parts, st.Muted.Render(escape.Line(o)))
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
	if c.state() != sample.Waiting {
		stateLine += st.Muted.Render(fmt.Sprintf("  %3.0f s", c.elapsed()))
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
	if r := c.res(); r.RecalescenceOK {
		rc = fmt.Sprintf("%6.1f °C", r.Recalescence)
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
	if r := c.res(); r.RecalescenceOK {
		rc = fmt.Sprintf("%.1f", r.Recalescence)
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
	rec := c.rec()
	if rec == nil {
		if c.state() == sample.Waiting {
			return []string{st.Muted.Render("Press s to fill in the sample form.")}
		}
		return []string{st.Muted.Render("Verdict when freezing is done.")}
	}
	v := rec.Verdict
	lines := []string{st.verdictStyle(v).Render("VERDICT  " + verdictWord(v))}
	if boxed {
		// A solid bar of the verdict's colour inside its own border shape:
		// readable across the deck; the word and the border stay without colour.
		lines = strings.Split(st.verdictBox(v).Render(st.verdictStyle(v).Reverse(true).Padding(0, 1).Render(verdictWord(v))), "\n")
	}
	for _, r := range recordReasons(rec) {
		lines = append(lines, wrapText(st.Value, "• "+r, w)...)
	}
	for _, a := range recordAdvice(rec) {
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

// peakS is the time of the highest reading of the curve (the end of the
// pour transient).
func peakS(t, v []float64) float64 {
	at, hi := 0.0, math.Inf(-1)
	for i, x := range v {
		if x > hi {
			at, hi = t[i], x
		}
	}
	return at
}

func (c *cup) tempPlot(st *Styles, w, h int) plot {
	s := &c.snap
	x1 := math.Max(60, s.ElapsedS*1.05)
	tr := traceOf(s.T, s.V)
	// The scale follows the metal from the pour peak on; the rise from room
	// temperature runs off the bottom rather than squash the arrests.
	lo, hi, ok := tr.bounds(peakS(s.T, s.V))
	if !ok {
		lo, hi = 0, 1400
		if r, has := c.last(); has && r.Valid() {
			lo, hi = r.TempC-50, r.TempC+50
		}
	}
	lo, hi = padRange(lo, hi, 0.05, 20)
	return plot{w: w, h: h, x0: 0, x1: x1, y0: math.Floor(lo/10) * 10, y1: math.Ceil(hi/10) * 10,
		yFmt: "%6.0f", xFmt: "%.0fs", line: st.Curve, tr: &tr, marks: c.marks(), niceX: true}.roundX()
}

// ratePlot draws the T′ the analysis found the points on (despiked), with
// each point marked where it sits on T′: the crossings of zero.
func (c *cup) ratePlot(st *Styles, w, h int, x1 float64) plot {
	s := &c.snap
	tr := traceOf(s.SlopeT, s.SlopeD)
	lo, hi, ok := tr.bounds(peakS(s.T, s.V) + 3)
	if !ok {
		lo, hi = -5, 1
	}
	lo, hi = math.Min(lo, 0), math.Max(hi, 0)
	lo, hi = padRange(lo, hi, 0.1, 1)
	var ms []mark
	for _, p := range c.points() {
		if v, ok := valueAt(s.SlopeT, s.SlopeD, p.p.TimeS); p.p.OK && ok {
			ms = append(ms, mark{x: p.p.TimeS, y: v, r: p.sym})
		}
	}
	return plot{w: w, h: h, x0: 0, x1: x1, y0: lo, y1: hi, yFmt: "%+6.1f", xFmt: "%.0fs", line: st.Rate, tr: &tr,
		levels: []level{{y: 0, r: '·', style: st.Axis}}, marks: ms, niceX: true}
}

// valueAt interpolates (t, d) at time x; false outside it or on NaN.
func valueAt(t, d []float64, x float64) (float64, bool) {
	i := sort.SearchFloat64s(t, x)
	if i == 0 || i >= len(t) {
		return 0, false
	}
	a, b := d[i-1], d[i]
	if math.IsNaN(a) || math.IsNaN(b) || t[i] == t[i-1] {
		return 0, false
	}
	return a + (b-a)*(x-t[i-1])/(t[i]-t[i-1]), true
}

// chartEveryS is how far, in the sample's own seconds, the curve must have
// grown before the charts are drawn again. A cup curve spans minutes, so a
// chart column holds a second or more: a finer step changes no visible dot,
// while drawing the charts is most of a redraw's cost.
const chartEveryS = 0.5

// chartCache is the charts' text as last drawn, with what it was drawn for.
type chartCache struct {
	key  chartKey
	atS  float64 // the sample time drawn
	text string
}

// chartKey is what redraws the charts at once when it changes.
type chartKey struct {
	w, h   int
	st     *Styles
	state  sample.State
	sample int // a new sample
	marks  int // a point settled
	n      int // readings, while there are too few for a trend to show
	lastC  int // the reading in 10 °C steps, while no curve is drawn (it sets the scale)
}

func (c *cup) chartKey(st *Styles, w, h int) chartKey {
	k := chartKey{w: w, h: h, st: st, state: c.state(), sample: c.snap.Sample, marks: len(c.marks()), n: min(len(c.snap.T), 50)}
	if r, ok := c.last(); len(c.snap.T) == 0 && ok {
		k.lastC = int(math.Floor(r.TempC / 10))
	}
	return k
}

// charts draws the curve and its rate: the drawing of the last Update
// while the sample has grown by less than chartEveryS and nothing else
// changed, else afresh (nothing is kept: View writes nothing).
func (c *cup) charts(st *Styles, w, h int) string {
	if c.fresh(st, w, h) {
		return c.drawn.text
	}
	return c.drawCharts(st, w, h)
}

// fresh reports whether the charts as last drawn serve for size w×h.
func (c *cup) fresh(st *Styles, w, h int) bool {
	d := c.drawn
	return d.text != "" && d.key == c.chartKey(st, w, h) && c.elapsed() >= d.atS && c.elapsed()-d.atS < chartEveryS
}

// redraw keeps the charts for size w×h drawn for View, when they are due.
func (c *cup) redraw(st *Styles, w, h int) {
	if !c.fresh(st, w, h) {
		c.drawn = chartCache{key: c.chartKey(st, w, h), atS: c.elapsed(), text: c.drawCharts(st, w, h)}
	}
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

// layout is where the cup's charts go in w×h cells (the same sums as view),
// and whether it has any.
func (c *cup) layout(st *Styles, w, h int) (cw, ch int, ok bool) {
	switch {
	case w < 20 || h < 8:
		return 0, 0, false
	case w >= 72 && h >= 16:
		return w - wideLeft - 1, h, true
	}
	used := lipgloss.Height(strings.Join(c.tallTop(st, w), "\n")) + len(c.tallBottom(st, w))
	if h-used >= 5 {
		return w, h - used, true
	}
	return 0, 0, false
}

// wideLeft is the width of the facts column of a wide cup.
const wideLeft = 35

// viewWide: facts on the left, charts on the right.
func (c *cup) viewWide(st *Styles, w, h int) string {
	left := []string{c.header(st, wideLeft), c.bigBlock(st), ""}
	left = append(left, c.pointList(st)...)
	left = append(left, c.verdictLines(st, wideLeft, true)...)
	leftS := box(strings.Join(left, "\n"), wideLeft, h)
	return lipgloss.JoinHorizontal(lipgloss.Top, leftS, " ", c.charts(st, w-wideLeft-1, h))
}

func (c *cup) tallTop(st *Styles, w int) []string { return []string{c.header(st, w), c.bigBlock(st)} }

func (c *cup) tallBottom(st *Styles, w int) []string {
	bottom := c.compactPoints(st, w)
	bottom = append(bottom, c.verdictLines(st, w, false)...)
	if len(bottom) > 4 {
		bottom = bottom[:4]
	}
	return bottom
}

// viewTall: everything stacked, for narrow cups side by side.
func (c *cup) viewTall(st *Styles, w, h int) string {
	top, bottom := c.tallTop(st, w), c.tallBottom(st, w)
	mid := ""
	if cw, ch, ok := c.layout(st, w, h); ok {
		mid = c.charts(st, cw, ch)
	} else {
		used := lipgloss.Height(strings.Join(top, "\n")) + len(bottom)
		mid = strings.Repeat("\n", max(h-used-1, 0))
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
