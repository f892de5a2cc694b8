package sim

import (
	"fmt"
	"image/color"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// TestPlotCups draws SIMULATED cups for a person to look at: the centre
// and wall thermocouples with dT/dt of the centre, and the truth's points,
// one PNG per cup in $UNDERCOOL_PLOT_DIR (skipped when it is not set).
//
//	UNDERCOOL_PLOT_DIR=/tmp/cups go test ./internal/sim -run TestPlotCups
func TestPlotCups(t *testing.T) {
	dir := os.Getenv("UNDERCOOL_PLOT_DIR")
	if dir == "" {
		t.Skip("set UNDERCOOL_PLOT_DIR to draw the simulated cups")
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	for _, c := range plotCases() {
		p, err := Preset(c.alloy, c.inoc, 1)
		if err != nil {
			t.Fatal(err)
		}
		p.Logger = Logger{RateHz: 10, LagS: 0.5}
		if c.mod != nil {
			c.mod(&p)
		}
		out := Simulate(p)
		if err := plotCup(filepath.Join(dir, c.name+".png"), c.name, out); err != nil {
			t.Fatal(err)
		}
		tr := out.Truth
		t.Logf("%s: liq %.2f eut start %.2f@%.1f min %.2f@%.1f max %.2f@%.1f sol %.2f@%.1f, centre − wall at the eutectic maximum %.1f °C", c.name,
			tr.Liquidus.TempC, tr.EutecticStart.TempC, tr.EutecticStart.TimeS, tr.EutecticMin.TempC, tr.EutecticMin.TimeS,
			tr.EutecticMax.TempC, tr.EutecticMax.TimeS, tr.Solidus.TempC, tr.Solidus.TimeS, maxGap(out))
	}
}

type plotCase struct {
	name, alloy string
	inoc        float64
	mod         func(*Params)
}

func plotCases() []plotCase {
	radial := func(r Radial) func(*Params) {
		return func(p *Params) { p.Cup, p.Radial = CupRadial, r }
	}
	var cs []plotCase
	for _, a := range []struct {
		alloy string
		inoc  float64
		mod   func(*Params)
	}{
		{GreyIron, 0.1, nil}, {GreyIron, 0.2, nil}, {GreyIron, 0.9, nil}, {DuctileIron, 0.5, nil}, {WhiteIron, 0, nil},
		{GreyIron, 0.6, func(p *Params) { p.C, p.CE = 0, 4.5 }},
		{AlSi7Mg, 0, nil}, {AlSi7Mg, 0.1, func(p *Params) { p.Modification = 0.8 }}, {AlSi7Mg, 0.9, func(p *Params) { p.Modification = 0.9 }},
		{PureSn, 0, nil}, {PureCu, 0, nil},
	} {
		name := a.alloy + fmt.Sprintf("-%.1f", a.inoc)
		if a.mod != nil {
			name += "-var"
		}
		for _, k := range []struct {
			kind string
			r    func(*Params)
		}{{"lumped", nil}, {"near", radial(NearlyLumped(a.alloy))}, {"radial", radial(Radial{})}, {"strong", radial(StrongGradient(a.alloy))}} {
			mod := func(p *Params) {
				if a.mod != nil {
					a.mod(p)
				}
				if k.r != nil {
					k.r(p)
				}
			}
			cs = append(cs, plotCase{name: name + "-" + k.kind, alloy: a.alloy, inoc: a.inoc, mod: mod})
		}
	}
	return cs
}

// maxGap is the difference between the centre and the wall thermocouple
// at the centre's eutectic maximum, °C (0 for a lumped cup).
func maxGap(out Output) float64 {
	for i := range out.Wall {
		if out.Time[i] >= out.Truth.EutecticMax.TimeS {
			return out.Clean[i] - out.Wall[i]
		}
	}
	return 0
}

func plotCup(path, title string, out Output) error {
	top, bot := plot.New(), plot.New()
	top.Title.Text = title + " (SIMULATED)"
	top.Y.Label.Text = "°C"
	bot.Y.Label.Text = "dT/dt, °C/s"
	bot.X.Label.Text = "s"
	xy := func(t, v []float64) plotter.XYs {
		pts := make(plotter.XYs, len(t))
		for i := range t {
			pts[i].X, pts[i].Y = t[i], v[i]
		}
		return pts
	}
	line := func(p *plot.Plot, pts plotter.XYs, c color.Color) {
		l, _ := plotter.NewLine(pts)
		l.Color = c
		p.Add(l)
	}
	line(top, xy(out.Time, out.Clean), color.RGBA{R: 200, A: 255})
	if out.Wall != nil {
		line(top, xy(out.Time, out.Wall), color.RGBA{B: 200, A: 255})
	}
	d := make([]float64, len(out.Clean))
	for i := 1; i < len(d)-1; i++ {
		d[i] = (out.Clean[i+1] - out.Clean[i-1]) / (out.Time[i+1] - out.Time[i-1])
	}
	line(bot, xy(out.Time[1:len(d)-1], d[1:len(d)-1]), color.RGBA{R: 200, A: 255})
	zero, _ := plotter.NewLine(plotter.XYs{{X: out.Time[0], Y: 0}, {X: out.Time[len(out.Time)-1], Y: 0}})
	bot.Add(zero)
	bot.Y.Min, bot.Y.Max = -4, 1.5
	tr := out.Truth
	var pts plotter.XYs
	for _, p := range []Point{tr.Liquidus, tr.LiquidusMin, tr.EutecticStart, tr.EutecticMin, tr.EutecticMax, tr.Solidus} {
		if p.OK {
			pts = append(pts, plotter.XY{X: p.TimeS, Y: p.TempC})
		}
	}
	if len(pts) > 0 {
		s, _ := plotter.NewScatter(pts)
		s.GlyphStyle.Shape = draw.CircleGlyph{}
		s.GlyphStyle.Radius = vg.Points(3)
		top.Add(s)
		// zoom on the freezing range
		lo, hi := pts[0].Y, pts[0].Y
		for _, q := range pts {
			lo, hi = min(lo, q.Y), max(hi, q.Y)
		}
		top.Y.Min, top.Y.Max = lo-30, hi+30
	}
	img := vgimg.New(10*vg.Inch, 8*vg.Inch)
	dc := draw.New(img)
	tiles := draw.Tiles{Rows: 2, Cols: 1, PadY: vg.Millimeter}
	canv := plot.Align([][]*plot.Plot{{top}, {bot}}, tiles, dc)
	top.Draw(canv[0][0])
	bot.Draw(canv[1][0])
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer f.Close()
	_, err = vgimg.PngCanvas{Canvas: img}.WriteTo(f)
	return err
}
