package sim

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// Output is one simulated cup.
type Output struct {
	Time  []float64 // logger clock, s
	Temp  []float64 // logger view: lagged thermocouple with noise, spikes, mains pickup, quantisation, °C
	Clean []float64 // noiseless logger view (lagged thermocouple), °C
	// Wall is the radial cup's second thermocouple near the wall (at
	// Truth.WallTCRadiusMm, through the same lag), noiseless, at the logger's
	// times; nil for a lumped cup.
	Wall []float64
	// FractionSolid is the mass-averaged solid fraction of the whole cup at
	// the logger's times (0 before the pour).
	FractionSolid []float64
	// CentreFractionSolid is the solid fraction where the centre
	// thermocouple sits (radial cup: the centre zone; lumped cup: the
	// core) at the logger's times (0 before the pour): the local fraction
	// a two-thermocouple analysis reads.
	CentreFractionSolid []float64
	// Open is true where the logger saw an open thermocouple (nil when the
	// thermocouple never opened); Temp there holds OpenReadingC.
	Open   []bool
	Truth  Truth
	Meta   []curvefile.Meta // curve-file metadata, "simulated: true" included
	Params Params           // the parameters with defaults filled in
}

// Simulate runs one cup. It panics on parameters that Validate rejects
// (check them first where they come from a user).
func Simulate(p Params) Output {
	p = p.withDefaults()
	if err := p.Validate(); err != nil {
		panic(err.Error())
	}
	f, m := p.run()
	out := Output{Params: p}
	// Where the recording stops.
	total := p.PourAtS + float64(len(f.tc)-1)*f.step
	stopS, openS := total, math.Inf(1)
	pulled := p.Fault == FaultPulledEarly
	if p.Fault == FaultOpen || pulled {
		at := p.FaultAtS
		if at == 0 {
			at = midPlateau(m.truth(f, len(f.tc)), p.PourAtS+float64(len(f.tc))*f.step/2)
		}
		if pulled {
			stopS = math.Min(at, total)
		} else {
			openS = at
		}
	}
	nFine := len(f.tc)
	if end := min(stopS, openS); end < total {
		nFine = max(0, int((end-p.PourAtS)/f.step)+1)
	}
	out.Truth = m.truth(f, nFine)

	rate := p.Logger.RateHz
	n := int(math.Floor(stopS*rate+1e-9)) + 1
	out.Time = make([]float64, n)
	out.Temp = make([]float64, n)
	out.Clean = make([]float64, n)
	out.FractionSolid = make([]float64, n)
	out.CentreFractionSolid = make([]float64, n)
	if f.wallTC != nil {
		out.Wall = make([]float64, n)
	}
	rng := rand.New(rand.NewPCG(p.Seed, p.Seed^0x9e3779b97f4a7c15))
	lg := p.Logger
	mainsHz := lg.MainsHz
	if mainsHz == 0 {
		mainsHz = 50 + 0.1*(rng.Float64()-0.5)
	}
	phase := 2 * math.Pi * rng.Float64()
	for k := range n {
		t := float64(k) / rate
		out.Time[k] = math.Round(t*1e6) / 1e6
		c := p.AmbientC
		if t >= p.PourAtS {
			u := (t - p.PourAtS) / f.step
			i := min(int(u), len(f.tc)-2)
			a := u - float64(i)
			c = f.tc[i] + a*(f.tc[i+1]-f.tc[i])
			out.FractionSolid[k] = f.fs[i] + a*(f.fs[i+1]-f.fs[i])
			out.CentreFractionSolid[k] = f.fsCore[i] + a*(f.fsCore[i+1]-f.fsCore[i])
			if out.Wall != nil {
				out.Wall[k] = f.wallTC[i] + a*(f.wallTC[i+1]-f.wallTC[i])
			}
		} else if out.Wall != nil {
			out.Wall[k] = p.AmbientC
		}
		out.Clean[k] = c
		v := c + lg.NoiseC*rng.NormFloat64() + lg.MainsC*math.Sin(2*math.Pi*mainsHz*t+phase)
		if lg.SpikeRate > 0 && rng.Float64() < lg.SpikeRate {
			s := lg.SpikeMinC + (lg.SpikeMaxC-lg.SpikeMinC)*rng.Float64()
			if rng.Float64() < 0.5 {
				s = -s
			}
			v += s
		}
		if lg.QuantC > 0 {
			v = math.Round(v/lg.QuantC) * lg.QuantC
		}
		if t >= openS {
			if out.Open == nil {
				out.Open = make([]bool, n)
			}
			out.Open[k] = true
			v = OpenReadingC
		}
		out.Temp[k] = math.Round(v*1e4) / 1e4
	}
	out.Meta = p.meta(out.Truth)
	return out
}

// midPlateau is three quarters of the way from the eutectic maximum to the
// end of freezing on the curve (late on the plateau, so the maximum has
// settled), or else.
func midPlateau(tr Truth, or float64) float64 {
	if tr.EutecticMax.OK && tr.Solidus.OK {
		return tr.EutecticMax.TimeS + 0.75*(tr.Solidus.TimeS-tr.EutecticMax.TimeS)
	}
	return or
}

// run integrates the cup model with its defaults filled in.
func (p Params) run() (fine, cup) {
	f, m, _ := p.runFrom(nil, nil)
	return f, m
}

// runFrom is run, resumed from the saved run from where it fits
// (Saved.fits; resumed says so), keeping its own run in save when save is
// not nil.
func (p Params) runFrom(from, save *Saved) (f fine, m cup, resumed bool) {
	m = p.model()
	if p.Fault == FaultShortPour {
		// A third of a cup, poured barely above the first arrest.
		m.mass /= 3
		d := math.Cbrt(4 * m.mass / m.rho / math.Pi)
		m.area, m.areaTop = 1.5*math.Pi*d*d, math.Pi*d*d/4
		m.pour = math.Max(m.liquidus, m.eutectic) + 25
	}
	dur := 0.0
	if p.DurationS > 0 {
		dur = math.Max(p.DurationS-p.PourAtS, m.step)
	}
	est := int(dur/m.step) + 2
	if dur == 0 {
		est = int(400 / m.step)
	}
	f = fine{offset: p.PourAtS, step: m.step, tc: make([]float64, 0, est), temp: make([]float64, 0, est), fs: make([]float64, 0, est), fsCore: make([]float64, 0, est), shell: make([]float64, 0, est)}
	if m.radial != nil {
		f.wallTC = make([]float64, 0, est)
	}
	maxS := dur
	if maxS == 0 {
		maxS = 1800
	}
	if from.fits(&m, p.FillS, p.Logger.LagS, p.PourAtS, maxS) {
		f, m.from, resumed = from.resumeFine(est), from, true
	}
	if save != nil {
		save.key, save.atC, save.fillS, save.lagS, save.offset = eutecticFree(m), m.eutectic, p.FillS, p.Logger.LagS, p.PourAtS
		m.save = save
	}
	var last state
	record := func(s *state) {
		f.tc = append(f.tc, s.tc)
		f.temp = append(f.temp, s.core.temp)
		f.shell = append(f.shell, s.shell.temp)
		f.fs = append(f.fs, s.fs)
		f.fsCore = append(f.fsCore, s.core.fs)
		last = *s
	}
	if m.radial != nil {
		m.integrateRadial(dur, p.FillS, p.Logger.LagS, func(s *state) {
			record(s)
			f.wallTC = append(f.wallTC, s.wallTC)
		})
	} else {
		m.integrate(dur, p.FillS, p.Logger.LagS, record)
	}
	f.primOn, f.eutOn, f.endT = last.primOn, last.eutOn, last.endT
	m.last = last
	if save != nil {
		save.cut(f)
		m.save = nil
	}
	m.from = nil
	return f, m, resumed
}

// truth reads the characteristic points off the first n fine steps.
func (m *cup) truth(f fine, n int) Truth {
	tr := Truth{EutecticC: m.eutectic, StableEutecticC: m.tst, MetastableEutecticC: m.tmst}
	if m.primary {
		tr.EquilibriumLiquidusC = m.liquidus
	}
	tr.FinalFractionSolid = m.last.fs
	tr.LatentHeatJPerKg, tr.SpecificHeatJPerKgK = m.latent, m.c
	tr.Cup = CupLumped
	tr.CupRadiusMm = 500 * math.Cbrt(4*m.mass/m.rho/math.Pi)
	if m.rings != nil {
		tr.Cup, tr.Zones = CupRadial, len(m.rings.mass)
		tr.WallTCRadiusMm = 1000 * m.rings.nodeRadius(m.rings.wallTC)
		tr.CupRadiusMm = 1000 * m.rings.radius
	}
	tr.LatentJPerKg = m.last.released / m.mass
	tr.EutecticCellsPerM3 = m.last.core.eut.m0
	if m.last.endT >= 0 {
		tr.FreezingEndS = f.offset + m.last.endT
	}
	f.points(n, &tr)
	fs := func(p Point) float64 {
		if !p.OK {
			return 0
		}
		u := (p.TimeS - f.offset) / f.step
		i := max(0, min(int(u), len(f.fs)-2))
		a := u - float64(i)
		return f.fs[i] + a*(f.fs[i+1]-f.fs[i])
	}
	tr.FractionSolid = PointFractions{LiquidusMin: fs(tr.LiquidusMin), Liquidus: fs(tr.Liquidus), EutecticStart: fs(tr.EutecticStart),
		EutecticMin: fs(tr.EutecticMin), EutecticMax: fs(tr.EutecticMax), Solidus: fs(tr.Solidus)}
	return tr
}

// meta is the curve-file metadata of a simulated cup.
func (p Params) meta(tr Truth) []curvefile.Meta {
	g := func(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
	md := []curvefile.Meta{{Key: "alloy", Value: p.Alloy}}
	add := func(k, v string) {
		if v != "" {
			md = append(md, curvefile.Meta{Key: k, Value: v})
		}
	}
	add("sample", p.Sample)
	add("ladle", p.Ladle)
	add("operator", p.Operator)
	add("thermocouple", "K")
	add("simulated", "true")
	add("note", "SIMULATED cup from the undercool cup model, not a measurement")
	add("seed", strconv.FormatUint(p.Seed, 10))
	if isIron(p.Alloy) {
		add("sim_c_pct", g(p.C))
		add("sim_si_pct", g(p.Si))
		add("sim_p_pct", g(p.P))
		add("sim_ce", g(math.Round(CarbonEquivalent(p.C, p.Si, p.P)*1000)/1000))
	}
	if p.Alloy == AlSi7Mg {
		add("sim_si_pct", g(p.Si))
		add("sim_mg_pct", g(p.Mg))
		add("sim_fe_pct", g(p.Fe))
		add("sim_modification", g(p.Modification))
	}
	add("sim_inoculation", g(p.Inoculation))
	add("sim_hold_min", g(p.HoldMin))
	add("sim_pour_c", g(p.PourC))
	add("sim_cup_kg", g(p.CupMassKg))
	add("sim_rate_hz", g(p.Logger.RateHz))
	add("sim_noise_c", g(p.Logger.NoiseC))
	add("sim_lag_s", g(p.Logger.LagS))
	if p.Logger.SpikeRate > 0 {
		add("sim_spikes", g(p.Logger.SpikeRate)+" of "+g(p.Logger.SpikeMinC)+"–"+g(p.Logger.SpikeMaxC)+" °C")
	}
	add("sim_quant_c", g(p.Logger.QuantC))
	add("sim_mains_c", g(p.Logger.MainsC))
	add("sim_fault", string(p.Fault))
	for _, a := range p.additionMeta() {
		add("sim_addition", a)
	}
	if p.Cup == CupRadial {
		r := p.Radial.resolve(p.material())
		add("sim_cup", string(CupRadial))
		add("sim_zones", strconv.Itoa(r.zones))
		add("sim_wall_h_w_per_m2k", g(r.wallH))
		add("sim_k_liquid_w_per_mk", g(r.kL))
		add("sim_k_solid_w_per_mk", g(r.kS))
		if r.wallNucl != 1 {
			add("sim_wall_nuclei", g(r.wallNucl))
			add("sim_chill_shell", g(r.shell))
		}
		add("sim_wall_tc_radius_mm", g(math.Round(tr.WallTCRadiusMm*100)/100))
		// the two thermocouples as every two-thermocouple curve file
		// places them (docs/curve-files.md, "Two thermocouples in one cup")
		add(curvefile.KeyCentreRadius, "0")
		add(curvefile.KeyWallRadius, g(math.Round(tr.WallTCRadiusMm*100)/100))
	}
	return md
}

// Curve is the output as a curve file's content: metadata, time and
// temperature, a "wall_tc_c" column with the radial cup's noiseless wall
// thermocouple, and a "fault" column ("open" where the thermocouple was
// open) when the thermocouple opened.
func (o Output) Curve(name string) *curvefile.Curve {
	c := &curvefile.Curve{Name: name, Meta: o.Meta, Time: o.Time, Temp: o.Temp}
	if o.Wall != nil {
		col := curvefile.Column{Name: "wall_tc_c", Values: make([]string, len(o.Wall))}
		for i, v := range o.Wall {
			col.Values[i] = strconv.FormatFloat(math.Round(v*1e4)/1e4, 'f', -1, 64)
		}
		c.Extra = append(c.Extra, col)
	}
	if o.Open != nil {
		col := curvefile.Column{Name: "fault", Values: make([]string, len(o.Time))}
		for i, open := range o.Open {
			if open {
				col.Values[i] = "open"
			}
		}
		c.Extra = append(c.Extra, col)
	}
	return c
}

// TruthJSON is the truth as indented JSON with a final newline (the
// FILE.truth.json beside a simulated curve file).
func (o Output) TruthJSON() ([]byte, error) {
	b, err := json.MarshalIndent(o.Truth, "", "  ")
	if err != nil {
		return nil, fmt.Errorf("sim: truth: %w", err)
	}
	return append(b, '\n'), nil
}
