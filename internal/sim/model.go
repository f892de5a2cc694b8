package sim

import (
	"math"
)

// stepS is the integration step, s. Explicit Euler on the heat balance is
// stable and free of overshoot while 2·rate/ΔT_kinetic·step < 1; the
// fastest kinetics here (pure metals, ≈0.02 °C growth undercooling at
// ≈1.5 °C/s) need a step below ≈6 ms (derived).
const stepS = 0.005

// law is one nucleation-and-growth law: Oldfield nucleation
// N = A·(ΔT − ΔT₀)^n above the onset undercooling ΔT₀, growth u = μ·ΔT².
type law struct {
	A   float64 // m⁻³ K⁻ⁿ
	N   float64 // exponent n
	DT0 float64 // onset undercooling ΔT₀, K
	Mu  float64 // growth coefficient μ, m s⁻¹ K⁻²
}

// cup is the resolved model of one sample: geometry, properties, phase
// temperatures and kinetics.
type cup struct {
	mass, rho    float64 // kg, kg/m³
	c, latent    float64 // J/(kg K), J/kg
	h, area      float64 // W/(m² K), m²
	eps, areaTop float64 // emissivity, m²
	ambient      float64 // °C

	pour float64 // °C

	primary    bool    // a primary phase freezes on a liquidus above the eutectic
	liquidus   float64 // equilibrium liquidus, °C
	lineTm     float64 // liquidus line T = lineTm − lineSlope·Cl
	lineSlope  float64
	c0         float64 // solute of the liquidus line in the alloy, wt %
	partition  float64 // k
	lever      bool    // lever rule (true) or Scheil
	primaryLaw law

	eutectic    float64 // growth reference temperature of the eutectic (or freezing point), °C
	eutRange    float64 // the reference falls by this much as the eutectic fraction goes 0 → 1, °C
	eutecticLaw law

	tst, tmst float64 // iron eutectics, °C (0 for other alloys)

	last state // the state at the end of the run
}

// fraction gives the equilibrium solid fraction of the primary phase at
// temperature T on the liquidus line: lever rule fs = (Cl − C0)/((1 − k)·Cl)
// or Scheil fs = 1 − (Cl/C0)^(1/(k−1)), with Cl = (lineTm − T)/lineSlope.
func (m *cup) fraction(t float64) float64 {
	if t >= m.liquidus {
		return 0
	}
	cl := (m.lineTm - t) / m.lineSlope
	if m.lever {
		return (cl - m.c0) / ((1 - m.partition) * cl)
	}
	return 1 - math.Pow(cl/m.c0, 1/(m.partition-1))
}

// heatLoss is h(t)·A·(T − T∞) + ε·σ·A_top·(T⁴ − T∞⁴), W, with t the time
// since the pour.
func (m *cup) heatLoss(t, temp float64) float64 {
	h := m.h * (1 + math.Exp(-t/25))
	tk, ak := temp+kelvin, m.ambient+kelvin
	return h*m.area*(temp-m.ambient) + m.eps*sigmaSB*m.areaTop*(tk*tk*tk*tk-ak*ak*ak*ak)
}

// grains integrates one population of grains with the moment equations.
type grains struct {
	m0, m1, m2, m3 float64 // moments Σ N_i R_i^k, m^(k−3)
	maxDT          float64 // largest undercooling reached, K
	frac           float64 // JMAK fraction 1 − exp(−(4π/3)·M3)
}

// step advances the population by dt at undercooling dT.
func (g *grains) step(l *law, dT, dt float64) {
	if dT <= 0 {
		return
	}
	if dT > g.maxDT {
		if dT > l.DT0 {
			lo := math.Max(g.maxDT-l.DT0, 0)
			// Oldfield: N(ΔT) = A·(ΔT−ΔT₀)^n; nuclei appear only in the
			// untransformed liquid.
			g.m0 += l.A * (math.Pow(dT-l.DT0, l.N) - math.Pow(lo, l.N)) * (1 - g.frac)
		}
		g.maxDT = dT
	}
	if g.m0 == 0 {
		return
	}
	u := l.Mu * dT * dT * dt
	g.m3 += 3 * u * g.m2
	g.m2 += 2 * u * g.m1
	g.m1 += u * g.m0
	g.frac = -math.Expm1(-4 * math.Pi / 3 * g.m3)
}

// state is the model's state at one step.
type state struct {
	t        float64 // s since the pour
	temp     float64 // metal, °C
	tc       float64 // thermocouple junction, °C
	fp       float64 // primary solid fraction (of the whole)
	fs       float64 // total solid fraction
	prim     grains
	eut      grains
	released float64 // latent heat released, J
	lost     float64 // heat lost, J
	primOn   float64 // time the first primary nucleus appeared, s (−1 before)
	eutOn    float64 // time the first eutectic nucleus appeared, s (−1 before)
	endT     float64 // time fs reached 0.9999, s (−1 before)
}

// integrate runs the cup from the pour for durS seconds (or, when durS is
// 0, until 40 s after the end of freezing, at most 1800 s) and calls emit
// after each step with the state. fillS is the filling time and lagS the
// thermocouple time constant.
func (m *cup) integrate(durS, fillS, lagS float64, emit func(*state)) {
	s := state{temp: m.pour, tc: m.ambient, primOn: -1, eutOn: -1, endT: -1}
	maxS := durS
	if maxS == 0 {
		maxS = 1800
	}
	full := -math.Expm1(-stepS / lagS)
	mc := m.mass * m.c
	emit(&s)
	for s.t < maxS-stepS/2 {
		dt := stepS
		// Kinetics at the current temperature.
		if m.primary {
			s.prim.step(&m.primaryLaw, m.liquidus-s.temp, dt)
			if s.primOn < 0 && s.prim.m0 > 0 {
				s.primOn = s.t
			}
			if fp := s.prim.frac * m.fraction(s.temp); fp > s.fp {
				s.fp = fp
			}
		}
		s.eut.step(&m.eutecticLaw, m.eutectic-m.eutRange*s.eut.frac-s.temp, dt)
		if s.eutOn < 0 && s.eut.m0 > 0 {
			s.eutOn = s.t
		}
		fs := s.fp + (1-s.fp)*s.eut.frac
		if fs < s.fs { // never remelt
			fs = s.fs
		}
		q := m.heatLoss(s.t, s.temp) * dt
		l := m.mass * m.latent * (fs - s.fs)
		s.temp += (l - q) / mc
		s.fs = fs
		s.released += l
		s.lost += q
		s.t += dt
		if s.endT < 0 && s.fs >= 0.9999 {
			s.endT = s.t
		}
		// Thermocouple: wetting rises linearly while the cup fills.
		w := 1.0
		a := full
		if s.t < fillS {
			w = s.t / fillS
			a = -math.Expm1(-w * dt / lagS)
		}
		s.tc += (s.temp - s.tc) * a
		emit(&s)
		if durS == 0 && s.endT >= 0 && s.t > s.endT+40 {
			break
		}
	}
}
