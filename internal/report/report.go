// Package report draws the page that goes into a ladle's quality record:
// a title with the sample, ladle, alloy and time; the cooling curve with
// its characteristic points marked and labelled; the T′ the analysis found
// them on (despiked, as the dashboard draws it) in a second panel on the
// same time axis; a block with the results,
// the verdict, its reasons and advice; and the caution that the advice
// defers to the shop's written procedures. PNG or SVG, by the file's
// extension (gonum/plot's vgimg and vgsvg back ends).
package report

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/atomicfile"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/forecast"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// Caution is the line every page carries.
const Caution = "Advice only — follow the shop's written procedures and its metallurgist."

// Info is what the page says about the sample beyond its curve and record.
type Info struct {
	Sample   string // sample id, e.g. "L-2417 cup 1"
	Ladle    string
	Alloy    string // overrides the record's alloy when set
	Furnace  string
	Operator string
	Time     time.Time // when the sample was taken; zero: not shown

	StoreID       int64  // records database id; 0: not stored
	CurvePath     string // the curve file
	CurveSHA256   string
	LimitsVersion string
	// Notes are extra lines for the text block, e.g. that the curve file
	// changed since the sample was stored.
	Notes []string
	// Simulated marks a sample from the simulator: the page carries a
	// SIMULATED banner, so that it is never taken for a measurement.
	Simulated bool
	// Detect are the detector options the sample was analysed with
	// (assess.Options); the zero value takes the record's family. The
	// dT/dt panel is the analyser's T′ under them.
	Detect arrest.Options
	// Predictions are the cup model's advice on the sample's additions
	// (internal/forecast), shown under "Estimate" with the caution that a
	// model estimate never replaces the shop's practice.
	Predictions []forecast.Prediction

	// Wall is the second thermocouple of a two-thermocouple cup at the
	// curve's readings, Radii the two thermocouples' radii (nil: one
	// thermocouple): the fs(T) panel then shows the Fourier path.
	Wall  []float64
	Radii solidpath.Geometry
}

// Page size: A4 portrait; PNG at DPI dots per inch (A4 at 150 dpi is
// 1240 × 1754 pixels: 210 mm and 297 mm over 25.4 mm per inch).
const (
	PageWidth  = 210 * vg.Millimeter
	PageHeight = 297 * vg.Millimeter
	DPI        = 150
)

// Write draws the page for one sample into path: PNG for ".png", SVG for
// ".svg" (case-insensitive). The file is written whole or not at all.
func Write(path string, c *curvefile.Curve, rec assess.Record, info Info) error {
	ext := strings.ToLower(filepath.Ext(path))
	if ext != ".png" && ext != ".svg" {
		return fmt.Errorf("report %s: the file name must end in .png or .svg", path)
	}
	if c == nil || len(c.Time) < 2 || len(c.Time) != len(c.Temp) {
		return fmt.Errorf("report %s: the curve has no readings to draw", path)
	}
	var (
		vc     vg.CanvasWriterTo
		canvas vg.Canvas
	)
	if ext == ".png" {
		img := vgimg.NewWith(vgimg.UseWH(PageWidth, PageHeight), vgimg.UseDPI(DPI), vgimg.UseBackgroundColor(color.White))
		vc, canvas = vgimg.PngCanvas{Canvas: img}, img
	} else {
		svg := vgsvg.New(PageWidth, PageHeight)
		vc, canvas = svg, svg
	}
	if err := drawPage(draw.New(textCanvas{canvas.(vg.CanvasSizer)}), c, rec, info); err != nil {
		return fmt.Errorf("report %s: %w", path, err)
	}
	// whole or not at all, readable by the group as any document is (0644
	// less what the user's umask takes away)
	if err := atomicfile.Write(path, 0o644, func(w io.Writer) error { _, err := vc.WriteTo(w); return err }); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// textCanvas writes every text with visible escapes for control
// characters (package escape): the page shows text from curve files and
// the records, and XML 1.0 allows no C0 control in an SVG file.
type textCanvas struct{ vg.CanvasSizer }

func (c textCanvas) FillString(f font.Face, pt vg.Point, s string) {
	c.CanvasSizer.FillString(f, pt, escape.Line(s))
}

// page layout, from the top
const (
	cautionLine  = 5 * vg.Millimeter  // the estimate's caution above the page's
	estimateRoom = 16 * vg.Millimeter // the panels give up this much for the estimate
	margin       = 14 * vg.Millimeter
	titleHeight  = 30 * vg.Millimeter
	plotsHeight  = 102 * vg.Millimeter // the curve and its derivative
	pathHeight   = 40 * vg.Millimeter  // the fs(T) panel and the solidification figures
)

var ink = color.Gray{Y: 0x20}

func style(size vg.Length, bold bool) draw.TextStyle {
	f := font.Font{Typeface: "Liberation", Variant: "Sans", Size: size}
	if bold {
		f.Weight = xfont.WeightBold
	}
	return text.Style{Color: ink, Font: f, Handler: plot.DefaultTextHandler}
}

func drawPage(dc draw.Canvas, c *curvefile.Curve, rec assess.Record, info Info) error {
	top := dc.Max.Y - margin
	left, right := dc.Min.X+margin, dc.Max.X-margin

	// title block
	title := "Thermal analysis record"
	if info.Sample != "" {
		title += " — sample " + info.Sample
	}
	big := style(15, true)
	dc.FillText(big, vg.Point{X: left, Y: top - big.Font.Size}, title)
	alloy := info.Alloy
	if alloy == "" {
		alloy = rec.Alloy
	}
	var facts []string
	for _, f := range [][2]string{{"ladle", info.Ladle}, {"alloy", alloy}, {"furnace", info.Furnace}, {"operator", info.Operator}} {
		if f[1] != "" {
			facts = append(facts, f[0]+" "+f[1])
		}
	}
	if !info.Time.IsZero() {
		facts = append(facts, "poured "+info.Time.UTC().Format("2006-01-02 15:04 UTC"))
	}
	mid := style(10.5, false)
	y := top - big.Font.Size - 7*vg.Millimeter
	dc.FillText(mid, vg.Point{X: left, Y: y}, strings.Join(facts, "  ·  "))
	small := style(8, false)
	y -= 5.5 * vg.Millimeter
	var src []string
	if info.StoreID != 0 {
		src = append(src, fmt.Sprintf("record #%d", info.StoreID))
	}
	if info.CurvePath != "" {
		src = append(src, "curve "+info.CurvePath)
	}
	if len(src) > 0 {
		dc.FillText(small, vg.Point{X: left, Y: y}, strings.Join(src, "  ·  "))
	}
	tiny := style(6.5, false)
	if info.CurveSHA256 != "" {
		// in full, in small type: what a later check of the file compares
		dc.FillText(tiny, vg.Point{X: left, Y: y - 3.8*vg.Millimeter}, "curve file SHA-256 "+info.CurveSHA256)
	}
	if ch := chemistryLine(rec); ch != "" {
		dc.FillText(tiny, vg.Point{X: left, Y: y - 7.3*vg.Millimeter}, ch)
	}
	if info.Simulated {
		drawBanner(dc, right, dc.Max.Y-3*vg.Millimeter, "SIMULATED — not a measurement") // in the top margin, clear of the title
	}

	// the two panels
	temp, deriv, err := curvePlots(c, rec, info.Detect)
	if err != nil {
		return err
	}
	plots := dc
	plots.Max.Y = top - titleHeight
	plots.Min.Y = plots.Max.Y - plotsHeight
	if len(info.Predictions) > 0 {
		plots.Min.Y += estimateRoom // the estimate's lines need the room
	}
	plots.Min.X, plots.Max.X = left-4*vg.Millimeter, right
	cells := plot.Align([][]*plot.Plot{{temp}, {deriv}}, draw.Tiles{Rows: 2, Cols: 1, PadY: 9 * vg.Millimeter}, plots)
	temp.Draw(cells[0][0])
	deriv.Draw(cells[1][0])

	// the solidification path: fs(T) on the left, its figures on the right
	row := dc
	row.Max.Y = plots.Min.Y - 9*vg.Millimeter
	row.Min.Y = row.Max.Y - pathHeight
	split := left + 0.55*(right-left)
	row.Min.X, row.Max.X = left-4*vg.Millimeter, split
	path, pathErr := assess.SolidPath(assess.Input{File: c.Name, Time: c.Time, Temp: c.Temp, Wall: info.Wall, Radii: info.Radii}, rec)
	fp, err := pathPlot(path)
	if err != nil {
		return err
	}
	fp.Draw(row)
	drawPathFigures(dc, split+8*vg.Millimeter, right, row.Max.Y-4*vg.Millimeter, rec, path, pathErr)

	// the text block
	drawResults(dc, left, right, row.Min.Y-8*vg.Millimeter, rec, info)
	dc.FillText(style(9.5, true), vg.Point{X: left, Y: dc.Min.Y + margin}, Caution)
	if len(info.Predictions) > 0 {
		// The estimate's caution stands with the page's, always shown.
		dc.FillText(style(8.5, true), vg.Point{X: left, Y: dc.Min.Y + margin + cautionLine}, forecast.Caution)
	}
	return nil
}

// drawBanner writes text in bold in a red frame whose top right corner is
// at (right, top).
func drawBanner(dc draw.Canvas, right, top vg.Length, text string) {
	st := style(12, true)
	st.Color = bannerColour
	w, h := st.Width(text), st.Font.Size
	pad := 2 * vg.Millimeter
	x0, y1 := right-w-2*pad, top
	box := []vg.Point{{X: x0, Y: y1}, {X: right, Y: y1}, {X: right, Y: y1 - h - 2*pad}, {X: x0, Y: y1 - h - 2*pad}, {X: x0, Y: y1}}
	dc.StrokeLines(draw.LineStyle{Color: bannerColour, Width: vg.Points(1.5)}, box)
	dc.FillText(st, vg.Point{X: x0 + pad, Y: y1 - pad - h*0.8}, text)
}

var bannerColour = color.RGBA{R: 0xB3, G: 0x26, B: 0x1E, A: 0xFF}

// pathPlot draws fs(T), the fraction solid against the centre
// temperature, falling temperature to the right as the cup freezes; an
// empty panel saying so when there is no path.
func pathPlot(p *solidpath.Path) (*plot.Plot, error) {
	fp := plot.New()
	fp.Title.Text = "Fraction solid fs(T)"
	fp.X.Label.Text = "temperature, °C"
	fp.Y.Label.Text = "fs"
	fp.Add(plotter.NewGrid())
	fp.Y.Min, fp.Y.Max = 0, 1
	if p != nil && len(p.TempC) > 1 {
		pts := make(plotter.XYs, len(p.TempC))
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := range p.TempC {
			pts[i] = plotter.XY{X: p.TempC[i], Y: p.FS[i]}
			lo, hi = min(lo, p.TempC[i]), max(hi, p.TempC[i])
		}
		line, err := plotter.NewLine(pts)
		if err != nil {
			return nil, fmt.Errorf("drawing fs(T): %w", err)
		}
		line.Color, line.Width = curveColour, vg.Points(1.1)
		fp.Add(line)
		pad := max((hi-lo)*0.05, 0.5)
		// the temperature falls as the cup freezes: high on the left
		fp.X.Min, fp.X.Max = lo-pad, hi+pad
		fp.X.Scale = reversed{}
		fp.Title.Text += " — " + p.Method
	} else {
		fp.X.Min, fp.X.Max = 0, 1
		fp.Title.Text += " — not available"
	}
	fp.Title.TextStyle = style(11, true)
	for _, ax := range []*plot.Axis{&fp.X, &fp.Y} {
		ax.Label.TextStyle.Font = style(9.5, false).Font
		ax.Tick.Label.Font = style(8.5, false).Font
		ax.Tick.Marker = niceTicks{}
	}
	return fp, nil
}

// reversed is a linear axis scale that runs from its maximum to its
// minimum.
type reversed struct{}

func (reversed) Normalize(lo, hi, x float64) float64 { return (hi - x) / (hi - lo) }

// drawPathFigures writes the solidification figures of the record beside
// the fs(T) panel (whose title names the method): fs at the points, the latent heats with the
// specific heat, the coherency point (those the record has), or why there
// are none.
func drawPathFigures(dc draw.Canvas, x, right, y vg.Length, rec assess.Record, p *solidpath.Path, pathErr error) {
	head, body := style(10, true), style(9, false)
	line := 4.0 * vg.Millimeter
	dc.FillText(head, vg.Point{X: x, Y: y}, "Solidification path")
	y -= 6 * vg.Millimeter
	if p == nil {
		for _, l := range wrap(body, "not available: "+strings.TrimPrefix(fmt.Sprint(pathErr), "assess: "), right-x) {
			dc.FillText(body, vg.Point{X: x, Y: y}, l)
			y -= line
		}
		return
	}
	f := func(v *float64, format string) string {
		if v == nil {
			return ""
		}
		return fmt.Sprintf(format, *v)
	}
	kj := func(v *float64) *float64 {
		if v == nil {
			return nil
		}
		k := *v / 1000
		return &k
	}
	for _, l := range [][2]string{
		{"fs at the liquidus", f(rec.FSAtLiquidus, "%.2f")},
		{"fs at the eutectic start", f(rec.FSAtEutecticStart, "%.2f")},
		{"fs at the eutectic minimum", f(rec.FSAtEutecticMin, "%.2f")},
		{"fs at the eutectic maximum", f(rec.FSAtEutecticMax, "%.2f")},
		{"latent heat, Newtonian (apparent)", f(kj(rec.LatentHeatNewtonianJPerKg), "%.0f kJ/kg")},
		{"latent heat, Fourier", f(kj(rec.LatentHeatFourierJPerKg), "%.0f kJ/kg")},
		{"specific heat used", f(rec.SpecificHeatJPerKgK, "%.0f J/(kg K)")},
		{"dendrite coherency", f(rec.CoherencyC, "%.1f °C")},
		{"fs at coherency", f(rec.FSAtCoherency, "%.2f")},
	} {
		if l[1] == "" {
			continue
		}
		dc.FillText(body, vg.Point{X: x, Y: y}, l[0])
		dc.FillText(body, vg.Point{X: right - 24*vg.Millimeter, Y: y}, l[1])
		y -= line
	}
}

// mark is one characteristic point to draw.
type mark struct {
	name  string
	t, c  *float64
	above bool // label above the point (a maximum) or below (a minimum)
}

func marks(rec assess.Record) []mark {
	ms := []mark{
		{"pour peak", rec.PourPeakS, rec.PourPeakC, true},
		{"liquidus min", rec.LiquidusMinS, rec.LiquidusMinC, false},
		{"liquidus", rec.LiquidusS, rec.LiquidusC, true},
		{"eutectic start", rec.EutecticStartS, rec.EutecticStartC, true},
		{"eutectic min", rec.EutecticMinS, rec.EutecticMinC, false},
		{"eutectic max", rec.EutecticMaxS, rec.EutecticMaxC, true},
		{"end of freezing", rec.SolidusS, rec.SolidusC, false},
	}
	return slices.DeleteFunc(ms, func(m mark) bool { return m.t == nil || m.c == nil })
}

var (
	curveColour = color.RGBA{R: 0x1f, G: 0x4e, B: 0x9a, A: 0xff}
	derivColour = color.RGBA{R: 0x8a, G: 0x3b, B: 0x12, A: 0xff}
	markColour  = color.RGBA{R: 0xb0, G: 0x10, B: 0x30, A: 0xff}
	gridColour  = color.Gray{Y: 0xc8}
)

func curvePlots(c *curvefile.Curve, rec assess.Record, detect arrest.Options) (*plot.Plot, *plot.Plot, error) {
	tp := plot.New()
	tp.Title.Text = "Cooling curve"
	tp.Y.Label.Text = "temperature, °C"
	tp.Add(plotter.NewGrid())
	pts := make(plotter.XYs, len(c.Time))
	for i := range c.Time {
		pts[i] = plotter.XY{X: c.Time[i], Y: c.Temp[i]}
	}
	line, err := plotter.NewLine(pts)
	if err != nil {
		return nil, nil, fmt.Errorf("drawing the curve: %w", err)
	}
	line.Color, line.Width = curveColour, vg.Points(1.1)
	tp.Add(line)
	tp.Y.Min, tp.Y.Max = tempRange(c, rec)

	dp := plot.New()
	dp.Title.Text = "Cooling rate dT/dt (as analysed, despiked)"
	dp.X.Label.Text = "time, s"
	dp.Y.Label.Text = "dT/dt, °C/s"
	dp.Add(plotter.NewGrid())
	if detect == (arrest.Options{}) {
		detect.Family = arrest.Family(rec.Family)
	}
	dt, d := sample.Slope(c.Time, c.Temp, detect)
	dpts := make(plotter.XYs, 0, len(d))
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, v := range d {
		if !math.IsNaN(v) {
			dpts = append(dpts, plotter.XY{X: dt[i], Y: v})
			lo, hi = min(lo, v), max(hi, v)
		}
	}
	if len(dpts) > 1 {
		dl, err := plotter.NewLine(dpts)
		if err != nil {
			return nil, nil, fmt.Errorf("drawing the derivative: %w", err)
		}
		dl.Color, dl.Width = derivColour, vg.Points(1)
		dp.Add(dl)
		// the pour transient dwarfs the arrests: show the range after it,
		// clipping the pour's spike
		dp.Y.Min, dp.Y.Max = derivRange(dt, d, rec.PourPeakS, lo, hi)
	}
	zero, _ := plotter.NewLine(plotter.XYs{{X: c.Time[0], Y: 0}, {X: c.Time[len(c.Time)-1], Y: 0}})
	zero.Color, zero.Dashes = gridColour, []vg.Length{vg.Points(3), vg.Points(2)}
	dp.Add(zero)

	ms := marks(rec)
	if len(ms) > 0 {
		xy := make(plotter.XYs, len(ms))
		labels := make([]string, len(ms))
		for i, m := range ms {
			xy[i] = plotter.XY{X: *m.t, Y: *m.c}
			labels[i] = fmt.Sprintf("%s %s °C", m.name, fixed(*m.c, 1))
		}
		sc, err := plotter.NewScatter(xy)
		if err != nil {
			return nil, nil, fmt.Errorf("drawing the points: %w", err)
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: markColour, Radius: vg.Points(3.2), Shape: draw.CircleGlyph{}}
		tp.Add(sc)
		// maxima are labelled above their point, minima below, so that
		// neighbouring points (eutectic min and max) do not overprint; a
		// point in the last quarter of the time axis has its label to its
		// left, so that it never runs off the panel
		tEnd := c.Time[0] + 0.75*(c.Time[len(c.Time)-1]-c.Time[0])
		for _, side := range [][2]bool{{true, false}, {false, false}, {true, true}, {false, true}} {
			above, left := side[0], side[1]
			var lxy plotter.XYs
			var ltext []string
			for i, m := range ms {
				if m.above == above && (*m.t > tEnd) == left {
					lxy, ltext = append(lxy, xy[i]), append(ltext, labels[i])
				}
			}
			if len(lxy) == 0 {
				continue
			}
			lb, err := plotter.NewLabels(plotter.XYLabels{XYs: lxy, Labels: ltext})
			if err != nil {
				return nil, nil, fmt.Errorf("labelling the points: %w", err)
			}
			for i := range lb.TextStyle {
				lb.TextStyle[i] = style(8, false)
				lb.TextStyle[i].Color = markColour
				if left {
					lb.TextStyle[i].XAlign = draw.XRight
				}
			}
			lb.Offset = vg.Point{X: vg.Points(5), Y: vg.Points(5)}
			if left {
				lb.Offset.X = -vg.Points(5)
			}
			if !above {
				lb.Offset.Y = -vg.Points(13)
			}
			tp.Add(lb)
		}
		// the same instants on the derivative, as thin vertical lines
		for _, m := range ms {
			v, _ := plotter.NewLine(plotter.XYs{{X: *m.t, Y: dp.Y.Min}, {X: *m.t, Y: dp.Y.Max}})
			if v != nil {
				v.Color, v.Width = markColour, vg.Points(0.5)
				v.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
				dp.Add(v)
			}
		}
	}
	// one time axis for both panels, the same fonts and ticks throughout
	t0, t1 := c.Time[0], c.Time[len(c.Time)-1]
	for _, p := range []*plot.Plot{tp, dp} {
		p.X.Min, p.X.Max = t0, t1
		p.Title.TextStyle = style(11, true)
		for _, ax := range []*plot.Axis{&p.X, &p.Y} {
			ax.Label.TextStyle.Font = style(9.5, false).Font
			ax.Tick.Label.Font = style(8.5, false).Font
			ax.Tick.Marker = niceTicks{}
		}
	}
	return tp, dp, nil
}

// niceTicks marks an axis every 1, 2, 2.5 or 5 × 10ⁿ units, about eight
// labelled ticks a panel, labelled without trailing zeros.
type niceTicks struct{}

func (niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) {
		return []plot.Tick{{Value: lo, Label: fmt.Sprintf("%g", lo)}}
	}
	raw := (hi - lo) / 8
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := 10 * mag
	for _, m := range []float64{1, 2, 2.5, 5} {
		if m*mag >= raw {
			step = m * mag
			break
		}
	}
	var ts []plot.Tick
	for v := math.Ceil(lo/step) * step; v <= hi+step*1e-9; v += step {
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		ts = append(ts, plot.Tick{Value: v, Label: strconvG(v)})
		if minor := v + step/2; minor < hi {
			ts = append(ts, plot.Tick{Value: minor})
		}
	}
	return ts
}

func strconvG(v float64) string {
	s := fmt.Sprintf("%.6g", v)
	if s == "-0" {
		return "0"
	}
	return s
}

// tempRange gives the y range of the curve panel: from a little below the
// lowest reading after the pour peak (or the lowest point found) to a
// little above the pour peak, so that the arrests fill the panel rather
// than the climb from room temperature.
func tempRange(c *curvefile.Curve, rec assess.Record) (float64, float64) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, tc := range c.Temp {
		if rec.PourPeakS == nil || c.Time[i] >= *rec.PourPeakS {
			lo, hi = min(lo, tc), max(hi, tc)
		}
	}
	for _, m := range marks(rec) {
		lo, hi = min(lo, *m.c), max(hi, *m.c)
	}
	pad := max((hi-lo)*0.06, 2)
	return lo - pad, hi + pad
}

// derivRange gives the y range of the derivative panel: the range of
// dT/dt from 3 s after the pour peak (the whole curve when there is none,
// its 2nd to 98th percentile) widened by a tenth, within the data's range,
// so that the arrests stay readable beside the pour transient.
func derivRange(t, d []float64, pourS *float64, lo, hi float64) (float64, float64) {
	v := make([]float64, 0, len(d))
	for i, x := range d {
		if !math.IsNaN(x) && (pourS == nil || t[i] > *pourS+3) {
			v = append(v, x)
		}
	}
	if len(v) < 10 {
		return lo, hi
	}
	sort.Float64s(v)
	a, b := v[0], v[len(v)-1]
	if pourS == nil {
		a, b = v[len(v)/50], v[len(v)-1-len(v)/50]
	}
	pad := max((b-a)*0.1, 0.05)
	return max(lo, min(a-pad, 0)), min(hi, max(b+pad, 0))
}

// result is one line of the results block: a metric of the registry
// (assess.Metrics) and its value.
type result struct {
	m assess.Metric
	v float64
}

// resultLines are the registry's metrics the record has a value of, in
// the registry's order, less the solidification path's (fraction solid,
// latent heat: beside the fs(T) panel, drawPathFigures).
func resultLines(rec assess.Record) []result {
	var rs []result
	for _, m := range assess.Metrics() {
		if strings.HasPrefix(m.Name, "fs_") || strings.HasPrefix(m.Name, "latent_heat_") {
			continue
		}
		if v, ok := m.Value(&rec); ok {
			rs = append(rs, result{m, v})
		}
	}
	return rs
}

// fixed writes v with d decimals; a value that rounds to zero is "0.0",
// never "-0.0".
func fixed(v float64, d int) string {
	s := strconv.FormatFloat(v, 'f', d, 64)
	if strings.Trim(s, "-0.") == "" {
		return strings.TrimPrefix(s, "-")
	}
	return s
}

// verdictWords are the verdicts as the page writes them.
var verdictWords = map[string]string{assess.VerdictPass: "PASS", assess.VerdictMarginal: "MARGINAL", assess.VerdictFail: "FAIL",
	assess.VerdictInvalid: "INVALID · RE-SAMPLE", assess.VerdictUnchecked: "NO LIMITS SET"}

func drawResults(dc draw.Canvas, left, right, y vg.Length, rec assess.Record, info Info) {
	head := style(13, true)
	verdict := verdictWords[rec.Verdict]
	if verdict == "" {
		verdict = strings.ToUpper(rec.Verdict)
	}
	if verdict == "" {
		verdict = "NONE"
	}
	if rec.Provisional {
		verdict += " (provisional)"
	}
	dc.FillText(head, vg.Point{X: left, Y: y}, "Verdict: "+verdict)
	lim := info.LimitsVersion
	if lim == "" {
		lim = rec.LimitsVersion
	}
	body := style(9, false)
	line := 4.6 * vg.Millimeter
	if lim != "" || rec.LimitsSource != "" {
		dc.FillText(body, vg.Point{X: left + 75*vg.Millimeter, Y: y + 1*vg.Millimeter},
			strings.TrimSpace("limits "+lim+" "+paren(rec.LimitsSource)))
	}
	y -= 8 * vg.Millimeter

	// results in two columns
	rs := resultLines(rec)
	half := (len(rs) + 1) / 2
	colW := (right - left) / 2
	for i, r := range rs {
		x, row := left, i
		if i >= half {
			x, row = left+colW, i-half
		}
		val := r.m.Format(r.v)
		yy := y - vg.Length(row)*line
		dc.FillText(body, vg.Point{X: x, Y: yy}, r.m.Label)
		dc.FillText(body, vg.Point{X: x + colW - 24*vg.Millimeter, Y: yy}, val)
	}
	y -= vg.Length(half)*line + 3*vg.Millimeter

	// notes, problems, reasons, withheld, the estimate, advice, warnings: as many lines as fit
	bottom := dc.Min.Y + margin + 8*vg.Millimeter
	label := style(9, true)
	var estimates []string
	for _, p := range info.Predictions {
		estimates = append(estimates, p.Text)
	}
	var withheld []string
	for _, w := range rec.Withheld {
		name := w.Metric
		if m, ok := limits.Metric(w.Metric); ok {
			name = m.Label
		}
		withheld = append(withheld, fmt.Sprintf("%s: %s as computed, withheld (not to be acted on): %s", name, fixed(w.Value, 2), w.Why))
	}
	if len(estimates) > 0 {
		bottom += cautionLine
	}
	for _, sec := range []struct {
		name  string
		lines []string
	}{
		// the notes first (what the page was drawn from: a curve file
		// changed since it was stored, a simulated cup), and the model's
		// estimate for this ladle before the general advice (it is what
		// the page was asked for, --advise)
		{"Notes", info.Notes}, {"Problems", rec.Problems}, {"Reasons", rec.Reasons}, {"Withheld", withheld},
		{"Estimate", estimates}, {"Advice", rec.Advice}, {"Warnings", rec.Warnings},
	} {
		for i, l := range sec.lines {
			// The line, wrapped, must end above the bottom with room for
			// the note that more follows.
			wls := wrap(body, l, right-left-24*vg.Millimeter)
			if y-vg.Length(len(wls))*line < bottom {
				dc.FillText(body, vg.Point{X: left, Y: y}, "… (more in the record's JSON: undercool history --json)")
				return
			}
			if i == 0 {
				dc.FillText(label, vg.Point{X: left, Y: y}, sec.name)
			}
			for _, wl := range wls {
				dc.FillText(body, vg.Point{X: left + 24*vg.Millimeter, Y: y}, wl)
				y -= line
			}
		}
	}
}

// chemistryLine says the analysis the figures were worked out with and
// where each element came from (the curve file's own analysis, the alloy's
// nominal one, the tellurium cup's estimate): "C 3.40 % (nominal) · Si
// 2.10 % (curve)".
func chemistryLine(rec assess.Record) string {
	els := make([]string, 0, len(rec.Chemistry))
	for el := range rec.Chemistry {
		els = append(els, el)
	}
	sort.Strings(els)
	var parts []string
	for _, el := range els {
		name := strings.TrimSuffix(el, "_pct")
		if len(name) > 0 {
			name = strings.ToUpper(name[:1]) + name[1:]
		}
		part := fmt.Sprintf("%s %s %%", name, fixed(rec.Chemistry[el], 2))
		if src := rec.ChemistrySource[el]; src != "" {
			part += " (" + src + ")"
		}
		parts = append(parts, part)
	}
	if len(parts) == 0 {
		return ""
	}
	return "the figures use " + strings.Join(parts, " · ")
}

func paren(s string) string {
	if s == "" {
		return ""
	}
	return "(" + s + ")"
}

// wrap breaks a line at spaces into lines no wider than w in style sty.
func wrap(sty draw.TextStyle, s string, w vg.Length) []string {
	var out []string
	cur := ""
	for _, word := range strings.Fields(s) {
		next := word
		if cur != "" {
			next = cur + " " + word
		}
		if cur != "" && sty.Width(next) > w {
			out = append(out, cur)
			next = word
		}
		cur = next
	}
	if cur != "" || len(out) == 0 {
		out = append(out, cur)
	}
	return out
}
