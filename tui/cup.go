package tui

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"unicode"

	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/forecast"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// cup is one channel as the dashboard shows it: the tracker's snapshot
// (a value: its slices are never changed) and its charts as last drawn.
type cup struct {
	snap   sample.Snapshot
	link   link                  // the source's connection, as of the snapshot
	advice []forecast.Prediction // the cup model's advice on the finished sample, once it came
	// soFar is the record of a recording sample's points so far (the
	// figures the deck decides on, before the verdict), made when a point
	// settles; soFarPoints the points it was made from
	soFar       *assess.Record
	soFarPoints int
	drawn       chartCache // drawn in Update, read by View
	fs          *fraction  // fs(t) once asked for (fraction.go); never changed, replaced
}

// link is the state of the source's connection as a cup shows it.
type link uint8

const (
	linkUp    link = iota // connected (a replay always is)
	linkLost              // the port is lost or not open
	linkEnded             // the session has ended
)

// linkOf is the connection a status describes.
func linkOf(s feed.Status, ended bool) link {
	switch {
	case ended:
		return linkEnded
	case s.Reconnecting || !s.Connected:
		return linkLost
	}
	return linkUp
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

// staleAfterS is how long a channel may go without a reading before its
// last one leaves the big slot: readings come several times a second, so
// three seconds of silence is a fault, not a pause.
const staleAfterS = 3

// alarm is what the big slot says instead of the temperature when none can
// be trusted: a word for big letters and the lines that explain it; ""
// while the reading stands. No reading for staleAfterS (or the port lost,
// or the session ended), the device reporting a fault, or the readings
// pegged at the top of the range (sample.FaultPegged) is each an alarm.
func (c *cup) alarm() (word string, lines []string) {
	r, ok := c.last()
	if !ok {
		return "", nil // no reading yet: the dashes and "no reading yet"
	}
	silent := c.snap.SilentS
	switch {
	case c.link != linkUp || silent >= staleAfterS:
		why := map[link]string{linkLost: "the port is lost; reconnecting", linkEnded: "the session has ended",
			linkUp: "the port is open but nothing arrives"}[c.link]
		at := r.TimeS
		if c.state() != sample.Waiting {
			at = c.elapsed()
		}
		last := "last reading: a fault"
		if r.Valid() {
			last = fmt.Sprintf("last reading %.1f °C at %.0f s", r.TempC, at)
		}
		lines = []string{fmt.Sprintf("no reading for %.0f s", silent), last, why}
		if c.link != linkEnded {
			lines = append(lines, "check cable, port and amplifier")
		}
		return "NO DATA", lines
	case r.Flags&feed.FlagOpen != 0:
		return "TC OPEN", []string{"open circuit" + c.faultSince(), "check the thermocouple and its plug"}
	case r.Flags&feed.FlagFault != 0:
		return "TC FAULT", []string{"the device reports a fault (short or out of range)" + c.faultSince()}
	case c.snap.Fault.Kind == sample.FaultPegged && r.TempC == c.snap.Fault.ValueC:
		return "TC FAULT", []string{fmt.Sprintf("stuck at %.1f °C%s", r.TempC, c.faultSince()),
			"an open thermocouple? (up-scale burnout)", "check the thermocouple and its plug"}
	}
	return "", nil
}

// faultSince is when the sample's thermocouple fault began, as text.
func (c *cup) faultSince() string {
	if f := c.snap.Fault; f.Kind != sample.FaultNone && c.state() != sample.Waiting {
		return fmt.Sprintf(" since %.0f s", f.TimeS)
	}
	return ""
}

// shownElapsed is the sample's time as the state line gives it: the time
// of its last reading, and while the readings have stopped, the silence
// after it too (the metal goes on freezing).
func (c *cup) shownElapsed() float64 {
	at := max(c.elapsed(), c.snap.NowS) // fault readings are not on the curve, but time passes
	if c.state().Busy() && c.link != linkEnded {
		return at + c.snap.SilentS
	}
	return at
}

// pointRow is one characteristic point for the list beside the curve.
type pointRow struct {
	sym   rune
	label string
	p     arrest.Point
}

func (c *cup) points() []pointRow { return pointsOfFamily(c.snap.Result, c.snap.Family) }

func pointsOf(r arrest.Result) []pointRow { return pointsOfFamily(r, "") }

// pointsOfFamily are the points in the words of the cup's family: a check
// cup of a pure metal has a plateau, not a eutectic.
func pointsOfFamily(r arrest.Result, f arrest.Family) []pointRow {
	u, m := "eutectic min", "eutectic max"
	if f == arrest.FamilyPure {
		u, m = "min before plateau", "plateau"
	}
	return []pointRow{
		{'P', "pour peak", r.PourPeak},
		{'A', "liquidus", r.Liquidus},
		{'U', u, r.EutecticMin},
		{'R', m, r.EutecticMax},
		{'S', "end of freezing", r.Solidus},
		{'B', "eutectic start", r.EutecticStart},
	}
}

// decisionMetrics are the figures the deck decides on, per family
// (practice): for iron the carbon equivalent, the eutectic undercooling and
// the chill margin; for the tellurium cup its carbon, silicon and carbon
// equivalent (the point of that cup); for Al-Si the α-Al nucleation
// undercooling and recalescence and the eutectic depression (grain
// refinement and modification); for a check cup the plateau and its offset
// from the ITS-90 fixed point.
var decisionMetrics = map[arrest.Family][]string{
	arrest.FamilyIron:     {"ce", "undercooling_c", "chill_margin_c"},
	arrest.FamilyWhite:    {"c_pct", "si_pct", "ce"},
	arrest.FamilyAluminum: {"alpha_undercooling_c", "alpha_recalescence_c", "eutectic_depression_c"},
	arrest.FamilyPure:     {"plateau_c", "fixed_point_error_c"},
}

// decisionLines are the record's decision figures in words with units, a
// figure withheld said so, wrapped to w.
func decisionLines(st *Styles, rec *assess.Record, w int) []string {
	var parts []string
	for _, name := range decisionMetrics[arrest.Family(rec.Family)] {
		mi, ok := limits.Metric(name)
		if !ok {
			continue
		}
		label := mi.Label
		if name == "ce" {
			label = "CE"
		}
		if name == "fixed_point_error_c" {
			label = "offset from the fixed point"
		}
		switch v, ok := assess.Value(rec, name); {
		case ok:
			parts = append(parts, st.Label.Render(label+" ")+st.Value.Render(mi.Format(v)))
		case withheld(rec, name):
			parts = append(parts, st.Label.Render(label+" ")+st.Muted.Render("withheld"))
		}
	}
	return wrapParts(parts, " · ", w)
}

// withheld reports whether the record withheld metric name.
func withheld(rec *assess.Record, name string) bool {
	for _, w := range rec.Withheld {
		if w.Metric == name {
			return true
		}
	}
	return false
}

func (c *cup) marks() []mark {
	var ms []mark
	for _, p := range c.points() {
		if p.p.OK {
			ms = append(ms, mark{x: p.p.TimeS, y: p.p.TempC, r: p.mark()})
		}
	}
	return ms
}

// mark is the point's letter on a chart: lower case while it is
// provisional (its arrest's shape not yet complete, it may still move),
// the capital once confirmed.
func (p pointRow) mark() rune {
	if p.p.Provisional {
		return unicode.ToLower(p.sym)
	}
	return p.sym
}

// provisional is what follows a provisional point's value in a list.
func (p pointRow) provisional() string {
	if p.p.OK && p.p.Provisional {
		return "?"
	}
	return ""
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
	if c.snap.Simulated {
		first += " " + st.Error.Render("[SIMULATED]") // never passed off as a measurement
	}
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

// bigBlock is the big slot and the state line under it: the verdict once
// the sample is done, else the alarm when no temperature can be trusted,
// else the current reading.
func (c *cup) bigBlock(st *Styles, w int) string {
	word, why := c.alarm()
	var out []string
	switch {
	case c.rec() != nil:
		out = append(out, c.verdictBig(st, w), c.stateLine(st, w))
		if word != "" {
			out = append(out, wrapText(st.Error, "⚠ "+word+": "+strings.Join(why, "; "), w)...)
		}
	case word != "":
		out = append(out, faultBox(st, word, w))
		for _, l := range why {
			out = append(out, wrapText(st.Error, "⚠ "+l, w)...)
		}
		out = append(out, c.stateLine(st, w))
	default:
		big, note := c.reading()
		digits := st.Big.Render(bigText(strings.TrimSpace(big)))
		line := c.stateLine(st, w)
		if note != "" {
			line = st.Error.Render(note) + "  " + line
		}
		out = append(out, lipgloss.JoinHorizontal(lipgloss.Bottom, digits, " ", st.Value.Render("°C")), line)
	}
	return strings.Join(out, "\n")
}

// stateLine is the sample's state and time; once done, its verdict in
// words (the big letters' text, and RE-SAMPLE for an invalid sample) and
// the reading now where it fits in w.
func (c *cup) stateLine(st *Styles, w int) string {
	line := st.State.Render(c.stateWord())
	if c.state() != sample.Waiting {
		line += st.Muted.Render(fmt.Sprintf(" %3.0f s", c.shownElapsed()))
	}
	if rec := c.rec(); rec != nil {
		line = st.verdictStyle(rec.Verdict).Render(verdictWord(rec.Verdict)) + st.Muted.Render(" · ") + line
		if r, ok := c.last(); ok && r.Valid() {
			if now := st.Muted.Render(fmt.Sprintf(" · %.1f °C now", r.TempC)); lipgloss.Width(line+now) <= w {
				line += now
			}
		}
	}
	return line
}

// faultBox is an alarm word in big letters in the fault frame (plain
// letters where w is too narrow for big ones).
func faultBox(st *Styles, word string, w int) string {
	if big, ok := bigWord(word, w-st.Fault.GetHorizontalFrameSize()); ok {
		return st.Fault.Render(big)
	}
	return st.Fault.Render(word)
}

// bigVerdict is the verdict's word for big letters.
func bigVerdict(v string) string {
	switch v {
	case assess.VerdictInvalid:
		return "INVALID" // the state line says RE-SAMPLE
	case assess.VerdictUnchecked:
		return "NO LIMITS"
	}
	return verdictWord(v)
}

// verdictBig is the verdict in big letters in its colour and border shape,
// or where w is too narrow for them, in a solid bar of its colour inside
// the same border.
func (c *cup) verdictBig(st *Styles, w int) string {
	v := c.rec().Verdict
	frame := st.verdictBox(v).Padding(0)
	if big, ok := bigWord(bigVerdict(v), w-frame.GetHorizontalFrameSize()); ok {
		return frame.Render(st.verdictStyle(v).Render(big))
	}
	return st.verdictBox(v).Render(st.verdictStyle(v).Reverse(true).Padding(0, 1).Render(verdictWord(v)))
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
		lines = append(lines, st.Mark.Render(string(p.mark()))+" "+st.Label.Render(fmt.Sprintf("%-16s", p.label))+st.Value.Render(fmtPoint(p.p))+st.Muted.Render(p.provisional()))
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
			v = fmt.Sprintf("%.1f", p.p.TempC) + p.provisional()
		}
		parts = append(parts, st.Mark.Render(string(p.mark()))+" "+st.Value.Render(v))
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

// verdictLines are what the verdict rests on, under the big verdict: the
// first advice in short form, the reasons, the figures withheld and the
// advice in full; or what the cup is waiting for.
func (c *cup) verdictLines(st *Styles, w int) []string {
	rec := c.rec()
	if rec == nil {
		if c.state() == sample.Waiting {
			return []string{st.Muted.Render("Press s to fill in the sample form.")}
		}
		lines := []string{st.Muted.Render("Verdict when freezing is done.")}
		if c.soFar != nil {
			lines = append(decisionLines(st, c.soFar, w), lines...)
		}
		return lines
	}
	var lines []string
	if a := recordAdvice(rec); len(a) > 0 {
		lines = append(lines, st.Mark.Render(cut("→ "+shortAdvice(a[0]), w)))
	}
	lines = append(lines, decisionLines(st, rec, w)...)
	for _, r := range recordReasons(rec) {
		lines = append(lines, wrapText(st.Value, "• "+r, w)...)
	}
	for _, x := range withheldLines(rec) {
		lines = append(lines, wrapText(st.Muted, x, w)...)
	}
	for _, a := range recordAdvice(rec) {
		lines = append(lines, wrapText(st.Value, "→ "+a, w)...)
	}
	if e, ok := estimateLine(rec, c.advice); ok {
		lines = append(lines, wrapText(st.Muted, "≈ "+e, w)...)
	}
	return lines
}

// shortAdvice is an advice line in short form: from its first "consider"
// to the end of that clause, else its first sentence. The advice in full
// follows it on screen.
func shortAdvice(a string) string {
	s := a
	if i := strings.Index(strings.ToLower(a), "consider"); i >= 0 {
		s = strings.ToUpper(a[i:i+1]) + a[i+1:]
	}
	end := len(s)
	for _, stop := range []string{". ", "; ", ", per ", ", following ", ", then ", ": "} {
		if i := strings.Index(s, stop); i > 0 && i < end {
			end = i
		}
	}
	return strings.TrimSuffix(s[:end], ".")
}

// withheldLines are the figures a failed check on the sample withheld
// (assess.Record.Withheld): shown as withheld, never as figures to act on.
func withheldLines(rec *assess.Record) []string {
	var out []string
	for _, w := range rec.Withheld {
		out = append(out, fmt.Sprintf("✗ %s withheld (%s)", metricLabel(w.Metric), w.Why))
	}
	return out
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

// beforeFault is the curve up to the sample's thermocouple fault (all of
// it when there is none): a pegged reading must not set the chart's scale.
func (c *cup) beforeFault() (t, v []float64) {
	s := &c.snap
	if s.Fault.Kind != sample.FaultPegged {
		return s.T, s.V
	}
	n := sort.SearchFloat64s(s.T, s.Fault.TimeS)
	return s.T[:n], s.V[:n]
}

func (c *cup) tempPlot(st *Styles, w, h int) plot {
	s := &c.snap
	x1 := math.Max(60, s.ElapsedS*1.05)
	ft, fv := c.beforeFault()
	tr := traceOf(ft, fv)
	// The scale follows the metal from the pour peak on; the rise from room
	// temperature runs off the bottom rather than squash the arrests.
	lo, hi, ok := tr.bounds(peakS(ft, fv))
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
	st0, sd0 := s.SlopeT, s.SlopeD
	if s.Fault.Kind == sample.FaultPegged {
		n := sort.SearchFloat64s(st0, s.Fault.TimeS)
		st0, sd0 = st0[:n], sd0[:n]
	}
	tr := traceOf(st0, sd0)
	lo, hi, ok := tr.bounds(peakS(c.beforeFault()) + 3)
	if !ok {
		lo, hi = -5, 1
	}
	lo, hi = math.Min(lo, 0), math.Max(hi, 0)
	lo, hi = padRange(lo, hi, 0.1, 1)
	var ms []mark
	for _, p := range c.points() {
		if v, ok := valueAt(s.SlopeT, s.SlopeD, p.p.TimeS); p.p.OK && ok {
			ms = append(ms, mark{x: p.p.TimeS, y: v, r: p.mark()})
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
	sample int  // a new sample
	marks  int  // a point settled
	n      int  // readings, while there are too few for a trend to show
	lastC  int  // the reading in 10 °C steps, while no curve is drawn (it sets the scale)
	fs     bool // fs(t) instead of the curve
}

func (c *cup) chartKey(st *Styles, w, h int) chartKey {
	k := chartKey{w: w, h: h, st: st, state: c.state(), sample: c.snap.Sample, marks: len(c.marks()), n: min(len(c.snap.T), 50), fs: c.showsFraction()}
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
	if c.showsFraction() {
		return c.drawFraction(st, w, h)
	}
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

// wideLeft is the width of the facts column of a wide cup: MARGINAL in
// big letters in its border fits.
const wideLeft = 37

// viewWide: facts on the left, charts on the right.
func (c *cup) viewWide(st *Styles, w, h int) string {
	left := []string{c.header(st, wideLeft), c.bigBlock(st, wideLeft), ""}
	verdict := c.verdictLines(st, wideLeft)
	used := lipgloss.Height(strings.Join(left, "\n"))
	if pl := c.pointList(st); c.rec() == nil || h-used >= len(pl)+len(verdict) {
		left = append(left, pl...)
	} else {
		// once done the verdict's reasons come before the points' detail
		left = append(left, c.compactPoints(st, wideLeft)...)
	}
	left = append(left, verdict...)
	leftS := box(moreHint(st, strings.Split(strings.Join(left, "\n"), "\n"), h, c.rec() != nil), wideLeft, h)
	return lipgloss.JoinHorizontal(lipgloss.Top, leftS, " ", c.charts(st, w-wideLeft-1, h))
}

// moreHint cuts lines to h, the last saying where the rest is (the
// verdict's key) when some of a verdict is cut off.
func moreHint(st *Styles, lines []string, h int, verdict bool) string {
	if len(lines) > h && verdict && h > 1 {
		lines = append(lines[:h-1:h-1], st.Mark.Render(fmt.Sprintf("▼ v: the whole verdict (%d lines more)", len(lines)-h+1)))
	}
	return strings.Join(lines, "\n")
}

func (c *cup) tallTop(st *Styles, w int) []string {
	return []string{c.header(st, w), c.bigBlock(st, w)}
}

// tallBottom is the points and the verdict's first lines, at most four.
func (c *cup) tallBottom(st *Styles, w int) []string {
	var bottom []string
	if c.rec() != nil {
		// once done: the advice and the figures decided on; the points are
		// marked on the chart, the rest is behind v
		return strings.Split(moreHint(st, c.verdictLines(st, w), 4, true), "\n")
	}
	bottom = append(c.compactPoints(st, w), c.verdictLines(st, w)...)
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
