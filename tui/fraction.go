package tui

import (
	"fmt"
	"math"
	"strings"

	"github.com/charmbracelet/bubbles/key"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// fraction is a finished cup's solidification path for the fs(t) chart
// (docs/solidification.md): worked out once, when the key first asks for
// it, from the sample's curves and its record's points (assess.SolidPaths,
// the same figures as the record's), never while drawing.
type fraction struct {
	sample int  // the sample it was worked out for
	on     bool // the chart shows fs(t) instead of the temperature curve
	solid  solidpath.Solidification
}

// fractionOf works out the solidification path of a finished snapshot:
// the Newtonian path from the centre curve and, for a cup with a wall
// thermocouple, the Fourier path.
func fractionOf(s *sample.Snapshot) *fraction {
	in := assess.Input{File: s.Path, Family: s.Family, Time: s.T, Temp: s.V}
	if s.Wall != nil {
		in.Wall, in.Radii = s.Wall, s.Radii
	}
	return &fraction{sample: s.Sample, on: true, solid: assess.SolidPaths(in, *s.Record)}
}

// showsFraction reports whether the cup's charts are its fs(t).
func (c *cup) showsFraction() bool {
	return c.fs != nil && c.fs.on && c.state() == sample.Done && c.fs.sample == c.snap.Sample
}

// keepFraction carries the path of the old cup over to its new snapshot
// while that is still the same finished sample.
func (c *cup) keepFraction(old *cup) {
	if old.fs != nil && c.state() == sample.Done && old.fs.sample == c.snap.Sample {
		c.fs = old.fs
	}
}

// toggleFraction switches each finished cup shown between its temperature
// curve and its fs(t); false when no cup shown is finished.
func (p livePane) toggleFraction() (livePane, bool) {
	cups := append([]cup(nil), p.cups...)
	any := false
	for _, i := range p.shown() {
		c := &cups[i]
		if c.state() != sample.Done || c.rec() == nil {
			continue
		}
		any = true
		switch {
		case c.fs == nil || c.fs.sample != c.snap.Sample:
			c.fs = fractionOf(&c.snap)
		default:
			f := *c.fs // a new value: the model's copies keep theirs
			f.on = !f.on
			c.fs = &f
		}
	}
	p.cups = cups
	return p.redraw(), any
}

// fsPath is one method's fs(t) as the chart draws it.
type fsPath struct {
	name string
	p    *solidpath.Path
	err  error
}

// fractionPaths are the paths to draw: the Newtonian one, and the Fourier
// one where the cup has a wall thermocouple.
func (c *cup) fractionPaths() []fsPath {
	s := c.fs.solid
	out := []fsPath{{"Newtonian", s.Newtonian, s.NewtonianErr}}
	if c.snap.WallChannel != "" {
		out = append(out, fsPath{"Fourier", s.Fourier, s.FourierErr})
	}
	return out
}

// fsSymbols are the point letters of the fs marks, as on the curve.
var fsSymbols = map[string]rune{
	solidpath.KeyLiquidus:      'A',
	solidpath.KeyEutecticStart: 'E',
	solidpath.KeyEutecticMin:   'U',
	solidpath.KeyEutecticMax:   'R',
	solidpath.KeyEndOfFreezing: 'S',
}

// drawFraction draws fs(t) of each method in w×h cells: per method a title,
// the fraction solid at each point and the latent heat, and its chart
// against the same seconds as the temperature curve, the points marked.
// Where the rows do not hold a chart for each method, the figures of all
// come first and then one chart, of the path the record's fs comes from
// (solidpath.Solidification.Best), its title marked "(chart)".
func (c *cup) drawFraction(st *Styles, w, h int) string {
	paths := c.fractionPaths()
	room, drawn := h, 0
	for _, fp := range paths {
		room -= len(c.fractionHead(st, fp, w, false))
		if fp.p != nil {
			drawn++
		}
	}
	var lines []string
	switch {
	case drawn > 0 && room/drawn >= 4:
		left := drawn
		for _, fp := range paths {
			lines = append(lines, c.fractionHead(st, fp, w, false)...)
			if fp.p != nil {
				ph := room / left
				lines = append(lines, c.fractionChart(st, fp.p, w, ph)...)
				room, left = room-ph, left-1
			}
		}
	case drawn > 0 && room >= 4:
		best := c.fs.solid.Best()
		for _, fp := range paths {
			lines = append(lines, c.fractionHead(st, fp, w, drawn > 1 && fp.p == best)...)
		}
		lines = append(lines, c.fractionChart(st, best, w, room)...)
	default:
		for _, fp := range paths {
			lines = append(lines, c.fractionHead(st, fp, w, false)...)
		}
	}
	return strings.Join(boxLines(lines, h), "\n")
}

// fractionHead is one method's title and figures (or why it has none).
func (c *cup) fractionHead(st *Styles, fp fsPath, w int, charted bool) []string {
	title := "fs against s · " + fp.name
	if charted {
		title += " (chart)"
	}
	lines := []string{st.Label.Render(title)}
	if fp.p == nil {
		return append(lines, wrapText(st.Muted, "not worked out: "+fsReason(fp.err), w)...)
	}
	var parts []string
	for _, pt := range fp.p.Points {
		if r, ok := fsSymbols[pt.Key]; ok {
			parts = append(parts, st.Mark.Render(string(r))+" "+st.Value.Render(fmt.Sprintf("%.2f", pt.FS)))
		}
	}
	if l := fp.p.LatentJPerKg; !math.IsNaN(l) {
		parts = append(parts, st.Label.Render("L ")+st.Value.Render(fmt.Sprintf("%.0f kJ/kg", l/1000))+
			st.Muted.Render(fmt.Sprintf(" (c %.0f J/kg K)", fp.p.SpecificHeat)))
	}
	return append(lines, wrapParts(parts, "  ", w)...)
}

// fractionChart is fs(t) of one path in w×h cells, from the first reading
// to the last (0 before the heat release starts, 1 after it has ended),
// the points marked where they sit on it.
func (c *cup) fractionChart(st *Styles, p *solidpath.Path, w, h int) []string {
	t := append(append([]float64{0}, p.Time...), math.Max(c.elapsed(), p.EndS))
	fs := append(append([]float64{0}, p.FS...), 1)
	tr := traceOf(t, fs)
	var ms []mark
	for _, pt := range p.Points {
		if r, ok := fsSymbols[pt.Key]; ok {
			ms = append(ms, mark{x: pt.TimeS, y: pt.FS, r: r})
		}
	}
	x1 := c.tempPlot(st, w, h).x1 // the temperature chart's seconds, so a toggle keeps the axis
	pl := plot{w: w, h: h, x0: 0, x1: x1, y0: 0, y1: 1, yFmt: "%6.2f", xFmt: "%.0fs", line: st.Curve, tr: &tr, marks: ms, niceX: true}
	return strings.Split(pl.render(st), "\n")
}

// fsReason is an error's words for the screen, without the package prefix.
func fsReason(err error) string {
	if err == nil {
		return "not available"
	}
	s := err.Error()
	for _, p := range []string{"assess: ", "solidpath: "} {
		s = strings.TrimPrefix(s, p)
	}
	return s
}

// boxLines pads or cuts lines to exactly h.
func boxLines(lines []string, h int) []string {
	if len(lines) > h {
		return lines[:max(h, 0)]
	}
	for len(lines) < h {
		lines = append(lines, "")
	}
	return lines
}

// toggleFraction is the Fraction key on the live screen.
func (m Model) toggleFraction() Model {
	var any bool
	if m.live, any = m.live.toggleFraction(); !any {
		m.flash = "fs(t) is shown for a finished (DONE) cup"
	}
	return m
}

// fractionKey is the Fraction key for the help line while a finished cup
// is shown.
func (p livePane) fractionKey() []key.Binding {
	for _, i := range p.shown() {
		if p.cups[i].state() == sample.Done {
			return []key.Binding{p.keys.Fraction}
		}
	}
	return nil
}
