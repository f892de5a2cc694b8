package sim

import (
	"math"
)

// stepS is the integration step, s. Explicit Euler on the heat balance is
// stable and free of overshoot while 2·rate/ΔT_kinetic·step < 1; the
// fastest kinetics here (pure metals, ≈0.02 °C growth undercooling at
// ≈1.5 °C/s) need a step below ≈6 ms (derived).
const stepS = 0.005

// coreFrac is the share of the cup's metal in the core lump around the
// thermocouple (a central cylinder of ≈55 % of the cup's radius) (derived).
const coreFrac = 0.3

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
	scheilExp  float64 // e = 1/(k − 1), the Scheil rule's exponent
	lever      bool    // lever rule (true) or Scheil
	primaryLaw law

	eutectic    float64 // growth reference temperature of the eutectic (or freezing point), °C
	eutRange    float64 // the reference falls by this much as the eutectic fraction goes 0 → 1, °C
	eutecticLaw law

	tst, tmst float64 // iron eutectics, °C (0 for other alloys)

	kSolid, kLiquid float64 // core–shell conductance through solid and liquid, W/K

	front      bool       // radial cup: the solid grows from the wall as a front (pure metals)
	mat        material   // the alloy's properties
	radial     *radialCup // the radial cup's parameters; nil: the lumped cup
	rings      *rings     // the radial cup's geometry, once integrated
	radialLast []lump     // the radial cup's zones at the end of the run

	// step is the lumped cup's integration step, s: stepS, or the coarser
	// one a fit asks for (Kinetics.StepS). The radial cup keeps stepS.
	step float64

	last state // the state at the end of the run

	// from, when set, is the saved run this run resumes from; save, when
	// set, keeps this run's state before the eutectic (Saved)
	from, save *Saved
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

// dfraction is d(fraction)/dT, K⁻¹ (0 above the liquidus): lever rule
// −C0/((1 − k)·Cl²·s), Scheil e·(Cl/C0)^(e−1)/(C0·s) with e = 1/(k − 1),
// s the liquidus slope.
func (m *cup) dfraction(t float64) float64 {
	if t >= m.liquidus {
		return 0
	}
	cl := (m.lineTm - t) / m.lineSlope
	if m.lever {
		return -m.c0 / ((1 - m.partition) * cl * cl * m.lineSlope)
	}
	e := 1 / (m.partition - 1)
	return e * math.Pow(cl/m.c0, e-1) / (m.c0 * m.lineSlope)
}

// scheilAnchor is the Scheil rule's power p = (Cl/C0)^e, e = 1/(k − 1),
// taken exactly (math.Pow) at one temperature Tₐ of a radial cup's zone:
// nearby, fractionAt evaluates the power from it by the binomial series
//
//	p(T) = p(Tₐ)·(1 + u)^e,  u = (Tₐ − T)/(lineTm − Tₐ) = Cl(T)/Cl(Tₐ) − 1,
//	(1 + u)^e = Σⱼ C(e, j)·uʲ, j = 0 … 5,
//
// exact to rounding while |u| ≤ scheilSeriesU: the first term left out is
// C(e, 6)·u⁶, below 2·10⁻¹⁸ of p for Al-Si (e ≈ −1.15; derived), against
// the 1.1·10⁻¹⁶ of a double's rounding (a test holds it to 1e-14 of the
// closed form). A zone's temperature moves by hundredths of a kelvin a
// step, so the anchor is taken again only every tenth of a kelvin or so
// (every few steps while the primary phase freezes), where the power was
// taken several times a zone and step before.
type scheilAnchor struct {
	t, p float64 // °C, (Cl/C0)^e there
	inv  float64 // 1/(lineTm − t), K⁻¹
	set  bool
}

// scheilSeriesU bounds |u| of the anchor's series; beyond it the anchor
// is taken again at the new temperature (1e-3 of Cl is 0.05–0.1 K for
// Al-Si7Mg between liquidus and eutectic).
const scheilSeriesU = 1e-3

// fractionAt is fraction(t) and dfraction(t) at once, for the zone whose
// Scheil anchor is a: fs = 1 − p, dfs/dT = e·p/(Cl·s) = e·p/(lineTm − T)
// with p from the anchor (scheilAnchor), s the liquidus slope. The lever
// rule is taken directly.
func (m *cup) fractionAt(a *scheilAnchor, t float64) (f, df float64) {
	if t >= m.liquidus {
		return 0, 0
	}
	if m.lever {
		return m.fraction(t), m.dfraction(t)
	}
	e := m.scheilExp
	u := (a.t - t) * a.inv
	if !a.set || math.Abs(u) > scheilSeriesU {
		a.t, a.inv, a.set = t, 1/(m.lineTm-t), true
		a.p = math.Pow((m.lineTm-t)/m.lineSlope/m.c0, e)
		u = 0
	}
	// Horner form of Σⱼ C(e, j)·uʲ, j ≤ 5
	s := 1 + (e-4)*0.2*u
	s = 1 + (e-3)*0.25*u*s
	s = 1 + (e-2)*(1.0/3)*u*s
	s = 1 + (e-1)*0.5*u*s
	s = 1 + e*u*s
	p := a.p * s
	return 1 - p, e * p / (m.lineTm - t)
}

// wallS is the time constant of the cold cup wall's extra heat uptake after
// the pour, s (derived; treat as fitted).
const wallS = 25

// heatLoss is h·(1 + w)·A·(T − T∞) + ε·σ·A_top·(T⁴ − T∞⁴), W, with
// w = exp(−t/wallS) the wall-soaking term at time t since the pour.
func (m *cup) heatLoss(w, temp float64) float64 {
	tk, ak := temp+kelvin, m.ambient+kelvin
	return m.h*(1+w)*m.area*(temp-m.ambient) + m.eps*sigmaSB*m.areaTop*(tk*tk*tk*tk-ak*ak*ak*ak)
}

// grains integrates one population of grains with the moment equations.
type grains struct {
	m0, m1, m2, m3 float64 // moments Σ N_i R_i^k, m^(k−3)
	frac           float64 // JMAK fraction 1 − exp(−(4π/3)·M3)
}

// births is the number density of nuclei (m⁻³) born when the largest
// undercooling reached rises from *maxDT to dT: Oldfield,
// N(ΔT) = A·(ΔT − ΔT₀)^n, so the count is fixed by the largest undercooling.
func births(l *law, dT float64, maxDT *float64) float64 {
	if dT <= *maxDT {
		return 0
	}
	var n float64
	if dT > l.DT0 {
		lo := math.Max(*maxDT-l.DT0, 0)
		n = l.A * (powN(dT-l.DT0, l.N) - powN(lo, l.N))
	}
	*maxDT = dT
	return n
}

func powN(x, n float64) float64 {
	if n == 2 {
		return x * x
	}
	return math.Pow(x, n)
}

// step adds the births dN (per m³ of the whole; they appear only in the
// untransformed liquid) and grows the population by dt at undercooling dT.
func (g *grains) step(l *law, dN, dT, dt float64) {
	g.m0 += dN * (1 - g.frac)
	if dT <= 0 || g.m0 == 0 || g.frac == 1 {
		return
	}
	u := l.Mu * dT * dT * dt
	g.m3 += 3 * u * g.m2
	g.m2 += 2 * u * g.m1
	g.m1 += u * g.m0
	if x := 4 * math.Pi / 3 * g.m3; x < 40 {
		g.frac = -math.Expm1(-x)
	} else {
		g.frac = 1 // 1 − e⁻⁴⁰ rounds to 1
	}
}

// lump is one part of the cup with its own temperature and grains.
type lump struct {
	temp float64 // °C
	fp   float64 // primary solid fraction of the lump
	fs   float64 // solid fraction of the lump
	prim grains
	eut  grains
	// scheil is the Scheil rule's anchor of a radial cup's zone
	// (fractionAt); the two-lump cup takes fraction directly, once a lump
	// and step
	scheil scheilAnchor
}

// freeze advances the lump's kinetics by dt at its temperature, with the
// births bp (primary) and be (eutectic) of this step, and returns the
// increase of its solid fraction.
func (m *cup) freeze(l *lump, bp, be, dt float64) float64 {
	if m.primary {
		l.prim.step(&m.primaryLaw, bp, m.liquidus-l.temp, dt)
		if l.prim.frac > 0 {
			if fp := l.prim.frac * m.fraction(l.temp); fp > l.fp {
				l.fp = fp
			}
		}
	}
	l.eut.step(&m.eutecticLaw, be, m.eutUnder(l), dt)
	fs := l.fp + (1-l.fp)*l.eut.frac
	if fs <= l.fs { // never remelt
		return 0
	}
	d := fs - l.fs
	l.fs = fs
	return d
}

// eutUnder is the lump's eutectic undercooling, K.
func (m *cup) eutUnder(l *lump) float64 {
	return m.eutectic - m.eutRange*l.eut.frac - l.temp
}

// state is the model's state at one step.
type state struct {
	t        float64 // s since the pour
	core     lump    // the centre of the cup, where the thermocouple sits
	shell    lump    // the rest, next to the cup wall
	tc       float64 // thermocouple junction, °C
	wallTC   float64 // radial cup: the wall thermocouple's junction, °C
	fs       float64 // solid fraction of the whole cup
	released float64 // latent heat released, J
	lost     float64 // heat lost through the cup wall, J
	primMax  float64 // largest primary undercooling reached, K
	eutMax   float64 // largest eutectic undercooling reached, K
	wall     float64 // exp(−t/25 s), the cup wall's soaking term
	primOn   float64 // time the first primary nucleus appeared in either lump (radial cup: in the centre zone), s (−1 before)
	eutOn    float64 // time the first eutectic nucleus appeared in either lump (radial cup: in the centre zone), s (−1 before)
	endT     float64 // time fs of the whole cup reached 0.9999, s (−1 before)
}

// conductance between core and shell, W/K: K_s + (K_l − K_s)·(1 − f̄)²,
// liquid convection giving way to conduction through the solid as the mean
// solid fraction f̄ grows (a smooth form, fitted).
func (m *cup) conductance(s *state) float64 {
	x := 1 - s.fs
	return m.kSolid + (m.kLiquid-m.kSolid)*x*x
}

// integrate runs the cup from the pour for durS seconds (or, when durS is
// 0, until 40 s after the end of freezing, at most 1800 s) and calls emit
// after each step with the state. fillS is the filling time and lagS the
// thermocouple time constant.
//
// The cup is two lumps: the core (mass fraction coreFrac, holding the
// thermocouple) exchanges heat only with the shell, the shell loses it to
// the cup wall:
//
//	m_c·c·dT_c/dt = −K·(T_c − T_s) + m_c·L·dfs_c/dt
//	m_s·c·dT_s/dt = −Q(t, T_s) + K·(T_c − T_s) + m_s·L·dfs_s/dt
//
// so the centre freezes last and, once it has, its temperature falls fast
// toward the shell's: the end-of-freezing dip of dT/dt.
func (m *cup) integrate(durS, fillS, lagS float64, emit func(*state)) {
	s := state{core: lump{temp: m.pour}, shell: lump{temp: m.pour}, tc: m.ambient, wall: 1, primOn: -1, eutOn: -1, endT: -1}
	wallStep := math.Exp(-m.step / wallS)
	maxS := durS
	if maxS == 0 {
		maxS = 1800
	}
	full := -math.Expm1(-m.step / lagS)
	mCore, mShell := m.mass*coreFrac, m.mass*(1-coreFrac)
	emitted := 1
	if m.from != nil {
		s, emitted = m.from.s, m.from.n
	} else {
		emit(&s)
	}
	for s.t < maxS-m.step/2 {
		m.save.keep(&s, nil, emitted)
		emitted++
		dt := m.step
		// Nuclei are born from the largest undercooling anywhere in the
		// cup (convection carries them through the liquid).
		var bp float64
		if m.primary {
			bp = births(&m.primaryLaw, m.liquidus-math.Min(s.core.temp, s.shell.temp), &s.primMax)
		}
		be := births(&m.eutecticLaw, math.Max(m.eutUnder(&s.core), m.eutUnder(&s.shell)), &s.eutMax)
		dc, ds := m.freeze(&s.core, bp, be, dt), m.freeze(&s.shell, bp, be, dt)
		if s.primOn < 0 && s.core.prim.m0+s.shell.prim.m0 > 0 {
			s.primOn = s.t
		}
		if s.eutOn < 0 && s.core.eut.m0+s.shell.eut.m0 > 0 {
			s.eutOn = s.t
		}
		q := m.heatLoss(s.wall, s.shell.temp) * dt
		s.wall *= wallStep
		x := m.conductance(&s) * (s.core.temp - s.shell.temp) * dt
		lc, ls := mCore*m.latent*dc, mShell*m.latent*ds
		s.core.temp += (lc - x) / (mCore * m.c)
		s.shell.temp += (ls + x - q) / (mShell * m.c)
		s.fs = coreFrac*s.core.fs + (1-coreFrac)*s.shell.fs
		s.released += lc + ls
		s.lost += q
		s.t += dt
		if s.endT < 0 && s.fs >= 0.9999 {
			s.endT = s.t
		}
		// Thermocouple: wetting rises linearly while the cup fills.
		a := full
		if s.t < fillS {
			a = -math.Expm1(-s.t / fillS * dt / lagS)
		}
		s.tc += (s.core.temp - s.tc) * a
		emit(&s)
		if durS == 0 && s.endT >= 0 && s.t > s.endT+40 {
			break
		}
	}
}
