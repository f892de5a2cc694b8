package tui

import (
	"fmt"
	"math"
	"strings"

	"github.com/NimbleMarkets/ntcharts/canvas"
	"github.com/NimbleMarkets/ntcharts/canvas/graph"
	"github.com/NimbleMarkets/ntcharts/linechart"
	"github.com/charmbracelet/lipgloss"
)

// mark is a labelled point drawn on a chart (a characteristic point).
type mark struct {
	x, y float64
	r    rune
}

// level is a horizontal line across a chart (a limit, or zero rate).
type level struct {
	y     float64
	r     rune
	style lipgloss.Style
}

// plot describes one chart: a base ntcharts linechart with float X, our
// own braille drawing of a decimated trace, marks and levels.
type plot struct {
	w, h       int
	x0, x1     float64
	y0, y1     float64
	yFmt, xFmt string
	line       lipgloss.Style
	tr         *trace    // drawn as a braille line, bucket by bucket
	xs, ys     []float64 // or points joined by a braille line (trend)
	marks      []mark
	levels     []level
	// niceX widens x1 so that the labels, every xStep columns, fall on
	// round values (multiples of 10 × a round step per column).
	niceX bool
}

// xStep is the columns between X-axis labels.
const xStep = 10

// perColumn are the round x steps per column niceX chooses from.
var perColumn = []float64{0.1, 0.2, 0.25, 0.5, 1, 1.5, 2, 3, 5, 6, 10, 12, 15, 20, 30, 60, 120}

// graphWidth is the plotting width that linechart will leave beside the
// Y labels (their widest text and the axis).
func (p plot) graphWidth() int {
	lw := max(len(fmt.Sprintf(p.yFmt, p.y0)), len(fmt.Sprintf(p.yFmt, p.y1)))
	return p.w - lw - 1
}

// roundX widens [x0, x1] to a whole number of round steps per column.
func (p plot) roundX() plot {
	gw := p.graphWidth()
	if gw < 1 {
		return p
	}
	need := (p.x1 - p.x0) / float64(gw)
	for _, c := range perColumn {
		if c >= need {
			p.x1 = p.x0 + c*float64(gw)
			return p
		}
	}
	return p
}

// padRange widens [lo, hi] by a fraction and to at least minSpan.
func padRange(lo, hi, frac, minSpan float64) (float64, float64) {
	if hi-lo < minSpan {
		c := (lo + hi) / 2
		lo, hi = c-minSpan/2, c+minSpan/2
	}
	d := (hi - lo) * frac
	return lo - d, hi + d
}

// render draws the plot and returns it as w×h cells of text.
func (p plot) render(st *Styles) string {
	if p.w < 12 || p.h < 4 {
		return strings.Repeat(strings.Repeat(" ", max(p.w, 0))+"\n", max(p.h-1, 0)) + strings.Repeat(" ", max(p.w, 0))
	}
	if !(p.x1 > p.x0) {
		p.x1 = p.x0 + 1
	}
	if !(p.y1 > p.y0) {
		p.y1 = p.y0 + 1
	}
	if p.niceX {
		p = p.roundX()
	}
	yFmt, xFmt := p.yFmt, p.xFmt
	ySteps := max(1, (p.h-2)/3)
	xf := func(_ int, v float64) string { return fmt.Sprintf(xFmt, v) }
	yf := func(_ int, v float64) string { return fmt.Sprintf(yFmt, v) }
	n := linechart.New(p.w, p.h, p.x0, p.x1, p.y0, p.y1,
		linechart.WithXYSteps(xStep, ySteps),
		linechart.WithStyles(st.Axis, st.Axis, p.line),
		linechart.WithXLabelFormatter(xf),
		linechart.WithYLabelFormatter(yf),
	)
	lc := &n
	lc.DrawXYAxisAndLabel()
	for _, l := range p.levels {
		if l.y < p.y0 || l.y > p.y1 {
			continue
		}
		lc.DrawRuneLineWithStyle(canvas.Float64Point{X: p.x0, Y: l.y}, canvas.Float64Point{X: p.x1, Y: l.y}, l.r, l.style)
	}
	gw, gh := lc.GraphWidth(), lc.GraphHeight()
	g := graph.NewBrailleGrid(gw, gh, p.x0, p.x1, p.y0, p.y1)
	clampY := func(v float64) float64 { return math.Max(p.y0, math.Min(p.y1, v)) }
	pt := func(x, y float64) canvas.Point { return g.GridPoint(canvas.Float64Point{X: x, Y: clampY(y)}) }
	line := func(a, b canvas.Point) {
		dx, dy := b.X-a.X, b.Y-a.Y
		n := max(abs(dx), abs(dy))
		if n == 0 {
			g.Set(a)
			return
		}
		for i := 0; i <= n; i++ {
			g.Set(canvas.Point{X: a.X + (dx*i+sign(dx)*n/2)/n, Y: a.Y + (dy*i+sign(dy)*n/2)/n})
		}
	}
	if tr := p.tr; tr != nil && tr.len() > 0 {
		prev := pt(tr.t[0], tr.last[0])
		for i := range tr.t {
			lo, hi := pt(tr.t[i], tr.lo[i]), pt(tr.t[i], tr.hi[i])
			line(lo, hi)
			if i > 0 {
				line(prev, pt(tr.t[i], math.Max(tr.lo[i], math.Min(tr.hi[i], tr.last[i-1]))))
			}
			prev = pt(tr.t[i], tr.last[i])
		}
	}
	for i := range p.xs {
		q := pt(p.xs[i], p.ys[i])
		if i == 0 {
			g.Set(q)
			continue
		}
		line(pt(p.xs[i-1], p.ys[i-1]), q)
	}
	graph.DrawBraillePatterns(&lc.Canvas, canvas.Point{X: lc.Origin().X + 1, Y: 0}, g.BraillePatterns(), p.line)
	for _, m := range p.marks {
		if m.x < p.x0 || m.x > p.x1 || m.y < p.y0 || m.y > p.y1 {
			continue
		}
		// Place the mark in the cell of its braille dot, so it sits on the line.
		q := g.GridPoint(canvas.Float64Point{X: m.x, Y: m.y})
		lc.Canvas.SetCell(canvas.Point{X: lc.Origin().X + 1 + q.X/2, Y: q.Y / 4}, canvas.NewCellWithStyle(m.r, st.Mark))
	}
	return renderCanvas(st, &lc.Canvas)
}

// renderCanvas turns a canvas into text. Unlike canvas.View, which runs
// lipgloss over every cell, it writes each run of cells that share colour
// and weight between one cached pair of escape sequences: the same text for
// a small part of the work.
func renderCanvas(st *Styles, c *canvas.Model) string {
	var sb strings.Builder
	w, h := c.Width(), c.Height()
	sb.Grow(w * h * 4)
	for y := 0; y < h; y++ {
		var cur runKey
		open := false
		for x := 0; x < w; x++ {
			cell := c.Cell(canvas.Point{X: x, Y: y})
			r := cell.Rune
			if r == 0 {
				r = ' '
			}
			if r == ' ' && open {
				sb.WriteRune(r) // a space looks the same in any colour
				continue
			}
			k := runKey{fg: cell.Style.GetForeground(), bold: cell.Style.GetBold()}
			if !open || k != cur {
				if open {
					sb.WriteString(st.runStyle(cur, cell.Style)[1])
				}
				sb.WriteString(st.runStyle(k, cell.Style)[0])
				cur, open = k, true
			}
			sb.WriteRune(r)
		}
		if open {
			sb.WriteString(st.runStyle(cur, lipgloss.Style{})[1])
		}
		if y < h-1 {
			sb.WriteByte('\n')
		}
	}
	return sb.String()
}

// runKey is what tells chart cells' looks apart.
type runKey struct {
	fg   lipgloss.TerminalColor
	bold bool
}

// runStyle gives the escape sequences that open and close a run of cells
// drawn with s: found once for the dashboard's own chart styles when the
// styles are built (chartStyles), else afresh (nothing is stored while
// drawing: the view writes nothing).
func (st *Styles) runStyle(k runKey, s lipgloss.Style) [2]string {
	if v, ok := st.runs[k]; ok {
		return v
	}
	return runEscapes(s)
}

// runEscapes renders a marker with s and splits the text around it.
func runEscapes(s lipgloss.Style) [2]string {
	out := s.Render("\x00")
	i := strings.IndexByte(out, 0)
	return [2]string{out[:i], out[i+1:]}
}

// chartStyles finds the run escapes of every style the charts draw with.
func (st *Styles) chartStyles() {
	st.runs = map[runKey][2]string{}
	for _, s := range []lipgloss.Style{{}, st.Axis, st.Curve, st.Rate, st.Mark, st.Limit, st.Muted} {
		st.runs[runKey{fg: s.GetForeground(), bold: s.GetBold()}] = runEscapes(s)
	}
}

func abs(v int) int {
	if v < 0 {
		return -v
	}
	return v
}

func sign(v int) int {
	switch {
	case v < 0:
		return -1
	case v > 0:
		return 1
	}
	return 0
}
