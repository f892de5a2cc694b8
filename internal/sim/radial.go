package sim

import (
	"fmt"
	"math"
)

// CupKind selects the cup model.
type CupKind string

// Cup kinds.
const (
	// CupLumped is the two-lump cup (core and shell), the default.
	CupLumped CupKind = ""
	// CupRadial is a cup of concentric zones with heat conduction between
	// neighbours: the wall freezes first and the centre last, so the centre
	// thermocouple sees the wall's arrests as shoulders in dT/dt before its
	// own (see doc.go).
	CupRadial CupKind = "radial"
)

// Radial are the parameters of the radial cup (Params.Cup = CupRadial).
// Zero fields take the defaults given. The cup size is Params.CupMassKg
// (a cylinder as high as wide). A nearly lumped cup has a low WallHW and
// high conductivities; a strong gradient (10–20 °C from the wall to the
// centre while freezing) a high WallHW, as a cup with a conductive wall
// would have (see StrongGradient).
type Radial struct {
	// Zones is the number of concentric zones of equal thickness, 5–40
	// (0: 8).
	Zones int
	// WallHW is the heat-transfer coefficient of the side wall, W/(m² K)
	// (0: the alloy's h, the lumped cup's value; a sand cup is ≈50–100,
	// fitted). The bottom and the open top keep the alloy's h.
	WallHW float64
	// LiquidK and SolidK are the effective thermal conductivities of the
	// liquid (with what convection adds) and of the solid, W/(m K) (0: the
	// alloy's values, see kinetics.go). A zone of solid fraction fs
	// conducts k = k_s + (k_l − k_s)·(1 − fs)².
	LiquidK, SolidK float64
	// WallNuclei multiplies the eutectic nucleation constant A in the
	// chill shell next to the cup wall (0: 1, no chill shell); above 1 the
	// shell's eutectic also starts at an onset undercooling of at most
	// wallOnsetK. The cup wall is a potent substrate: the shell freezes its
	// eutectic first, while the liquid inside, which nucleates on its own,
	// waits above its own eutectic undercooling; once the shell has frozen
	// and cools, the centre cools again, undercools and recalesces. The
	// centre thermocouple then sees a shoulder in dT/dt (a local maximum
	// below zero) tens of seconds before its own eutectic.
	WallNuclei float64
	// ShellFrac is the chill shell's thickness as a fraction of the cup's
	// radius: the zones that lie wholly outside (1 − ShellFrac)·R (0: the
	// wall zone alone).
	ShellFrac float64
}

// Defaults and bounds of the radial cup.
const (
	defaultZones = 8
	minZones     = 5
	maxZones     = 40
)

// StrongGradient returns radial-cup parameters that give the alloy's cup
// a wall-to-centre difference of about 10–20 °C while it freezes (between
// the centre and the wall thermocouple) and a chill shell three tenths (iron)
// to two fifths (Al-Si) of the radius thick, so that poorly nucleating
// melts show the wall-first shoulder before the centre's eutectic: a wall
// three times as conductive as a sand cup's, a liquid stirred by the pour
// (its effective conductivity several times the solid's) and a potent wall.
// The values are fitted to give that shape on the presets (a stress case for the
// detector, not a measured cup). NearlyLumped is the other end.
func StrongGradient(alloy string) Radial {
	switch {
	case isIron(alloy):
		return Radial{Zones: 12, WallHW: 140, LiquidK: 210, SolidK: 100, WallNuclei: 1e4, ShellFrac: 0.3}
	default:
		return Radial{Zones: 12, WallHW: 165, LiquidK: 150, SolidK: 110, WallNuclei: 1e4, ShellFrac: 0.42}
	}
}

// NearlyLumped returns radial-cup parameters whose wall-to-centre
// difference stays within about 1 °C: conductivities ten times the alloy's
// (fitted).
func NearlyLumped(alloy string) Radial {
	m := Params{Alloy: alloy}.material()
	return Radial{LiquidK: 10 * m.kLiquid, SolidK: 10 * m.k}
}

func (r Radial) validate() error {
	switch {
	case r.Zones != 0 && (r.Zones < minZones || r.Zones > maxZones):
		return fmt.Errorf("sim: radial cup zones %d is outside %d..%d", r.Zones, minZones, maxZones)
	case r.WallHW < 0 || r.WallHW > 5000 || math.IsNaN(r.WallHW):
		return fmt.Errorf("sim: radial cup wall heat-transfer coefficient %g W/(m² K) is outside 0..5000", r.WallHW)
	case r.LiquidK < 0 || r.LiquidK > 5000 || math.IsNaN(r.LiquidK) || r.SolidK < 0 || r.SolidK > 5000 || math.IsNaN(r.SolidK):
		return fmt.Errorf("sim: radial cup conductivities %g and %g W/(m K) are outside 0..5000", r.LiquidK, r.SolidK)
	case r.WallNuclei < 0 || r.WallNuclei > 1e9 || math.IsNaN(r.WallNuclei):
		return fmt.Errorf("sim: radial cup wall nuclei factor %g is outside 0..1e9", r.WallNuclei)
	case r.ShellFrac < 0 || r.ShellFrac > 0.9 || math.IsNaN(r.ShellFrac):
		return fmt.Errorf("sim: radial cup chill shell %g of the radius is outside 0..0.9", r.ShellFrac)
	}
	return nil
}

// radialCup is the resolved radial model.
type radialCup struct {
	zones    int
	wallH    float64 // W/(m² K)
	kL, kS   float64 // W/(m K)
	wallNucl float64 // the chill shell's factor on the eutectic A (1: no shell)
	shell    float64 // the chill shell's thickness, fraction of the radius
}

func (r Radial) resolve(mat material) *radialCup {
	c := &radialCup{zones: r.Zones, wallH: r.WallHW, kL: r.LiquidK, kS: r.SolidK}
	if c.zones == 0 {
		c.zones = defaultZones
	}
	if c.wallH == 0 {
		c.wallH = mat.h
	}
	if c.kL == 0 {
		c.kL = mat.kLiquid
	}
	if c.kS == 0 {
		c.kS = mat.k
	}
	c.wallNucl, c.shell = r.WallNuclei, r.ShellFrac
	if c.wallNucl == 0 {
		c.wallNucl = 1
	}
	return c
}

// wallOnsetK is the largest onset undercooling of eutectic nucleation in
// the chill shell on a potent cup wall (Radial.WallNuclei above 1), K
// (fitted).
const wallOnsetK = 0.3

// rings is the geometry of the radial cup: a cylinder of radius R and
// height H = 2R cut into N annular zones of thickness Δr = R/N, zone i
// spanning r_i = i·Δr to r_{i+1}, its node (where its temperature sits) at
// ρ_i = (i + ½)·Δr.
type rings struct {
	radius, height float64   // m
	mass           []float64 // kg per zone
	face           []float64 // area of a zone's top (and bottom) face, m²
	side           float64   // area of the side wall, m²
	// lnIn[i] = ln(r_{i+1}/ρ_i) and lnOut[i] = ln(ρ_{i+1}/r_{i+1}): the two
	// halves of the conduction path from node i to node i+1
	lnIn, lnOut []float64
	wallTC      int // zone of the wall thermocouple
}

// shellFrom is the first zone of a chill shell of thickness frac·R: the
// zones whose inner radius is at least (1 − frac)·R, and at least the wall
// zone.
func shellFrom(n int, frac float64) int {
	for i := range n {
		if float64(i)/float64(n) >= 1-frac-1e-9 {
			return i
		}
	}
	return n - 1
}

// wallTCZone is the zone of the wall thermocouple: the zone that holds
// r = 0.8·R (its node at 0.81·R with 8 zones), near the wall but not in the
// wall zone itself.
func wallTCZone(n int) int { return min(int(0.8*float64(n)), n-2) }

func newRings(mass, rho float64, n int) rings {
	d := math.Cbrt(4 * mass / rho / math.Pi)
	g := rings{radius: d / 2, height: d, mass: make([]float64, n), face: make([]float64, n),
		lnIn: make([]float64, n-1), lnOut: make([]float64, n-1), wallTC: wallTCZone(n)}
	dr := g.radius / float64(n)
	g.side = math.Pi * d * g.height
	for i := range n {
		ri, ro := float64(i)*dr, float64(i+1)*dr
		g.face[i] = math.Pi * (ro*ro - ri*ri)
		g.mass[i] = rho * g.face[i] * g.height
		if i < n-1 {
			node, next := (float64(i)+0.5)*dr, (float64(i)+1.5)*dr
			g.lnIn[i] = math.Log(ro / node)
			g.lnOut[i] = math.Log(next / ro)
		}
	}
	return g
}

// nodeRadius is ρ_i, m.
func (g *rings) nodeRadius(i int) float64 {
	return (float64(i) + 0.5) * g.radius / float64(len(g.mass))
}

// conductance between nodes i and i+1 with zone conductivities ki, ko,
// W/K: the series resistance of the two cylindrical shells,
// G = 2πH / (ln(r_{i+1}/ρ_i)/k_i + ln(ρ_{i+1}/r_{i+1})/k_{i+1}).
func (g *rings) conductance(i int, ki, ko float64) float64 {
	return 2 * math.Pi * g.height / (g.lnIn[i]/ki + g.lnOut[i]/ko)
}

// zoneK is a zone's conductivity at solid fraction fs,
// k = k_s + (k_l − k_s)·(1 − fs)², the lumped cup's smooth form.
func (r *radialCup) zoneK(fs float64) float64 {
	x := 1 - fs
	return r.kS + (r.kL-r.kS)*x*x
}

// A pure metal has no constitutional undercooling ahead of its solid: it
// freezes from the wall inward as a front (columnar growth), so in the
// radial cup a zone takes the grains of its outer neighbour once that has
// begun to freeze (cup.front). Alloys nucleate per zone (equiaxed
// eutectic cells).

// zoneLoss is the heat a zone loses to the cup and the room, W: through
// its bottom and top faces h(1 + w)·2a·(T − T∞) plus the top's radiation
// ε·σ·a·(T⁴ − T∞⁴), and for the wall zone through the side wall
// h_wall(1 + w)·A_side·(T − T∞). With every zone at one temperature and
// h_wall = h this is the lumped cup's heatLoss.
func (m *cup) zoneLoss(g *rings, i int, w, temp float64) float64 {
	tk, ak := temp+kelvin, m.ambient+kelvin
	q := m.h*(1+w)*2*g.face[i]*(temp-m.ambient) + m.eps*sigmaSB*g.face[i]*(tk*tk*tk*tk-ak*ak*ak*ak)
	if i == len(g.mass)-1 {
		q += m.radial.wallH * (1 + w) * g.side * (temp - m.ambient)
	}
	return q
}

// substeps is how many equal steps one m.step takes so that explicit Euler
// on the conduction stays stable with room to spare: a zone's heat
// capacity over the conductance to its neighbours (at the larger of the two
// conductivities) must exceed 2.5 steps (derived: stable below 2).
func (m *cup) substeps(g *rings) int {
	k := max(m.radial.kL, m.radial.kS)
	worst := math.Inf(1)
	for i := range g.mass {
		var gsum float64
		if i > 0 {
			gsum += g.conductance(i-1, k, k)
		}
		if i < len(g.mass)-1 {
			gsum += g.conductance(i, k, k)
		}
		worst = min(worst, g.mass[i]*m.c/gsum)
	}
	return max(1, int(math.Ceil(2.5*m.step/worst)))
}

// radialState is the radial cup's own state besides what state reports.
type radialState struct {
	zones      []lump
	primMax    []float64 // largest primary undercooling each zone reached, K
	eutMax     []float64 // largest eutectic undercooling each zone reached, K
	flow, loss []float64 // work space: heat into each zone this step, W
	latent     []float64 // work space: latent heat each zone released this step, J
	shellLaw   law       // the chill shell's eutectic nucleation law
	shellFrom  int       // its first zone
}

// integrateRadial runs the radial cup from the pour for durS seconds (or,
// when durS is 0, until 40 s after the end of freezing, at most 1800 s) and
// calls emit after each step of m.step with the state: core is the centre
// zone (the thermocouple's), shell the wall zone, wallTC the wall
// thermocouple, primOn and eutOn the first nuclei of the centre zone. Each
// zone i of mass m_i obeys
//
//	m_i·c·dT_i/dt = G_{i−1}·(T_{i−1} − T_i) + G_i·(T_{i+1} − T_i) − Q_i(t, T_i) + m_i·L·dfs_i/dt
//
// with the conductances G of rings.conductance and the losses Q_i of
// zoneLoss. Nuclei are per zone: a zone's count is fixed by the largest
// undercooling it reached itself (once the wall is mushy, grains born there
// no longer travel to the centre), so the centre undercools and
// recalesces on its own after the wall has.
func (m *cup) integrateRadial(durS, fillS, lagS float64, emit func(*state)) {
	g := newRings(m.mass, m.rho, m.radial.zones)
	n := len(g.mass)
	rs := radialState{zones: make([]lump, n), primMax: make([]float64, n), eutMax: make([]float64, n),
		flow: make([]float64, n), loss: make([]float64, n), latent: make([]float64, n), shellLaw: m.eutecticLaw, shellFrom: n}
	if m.radial.wallNucl != 1 {
		rs.shellLaw.A *= m.radial.wallNucl
		rs.shellLaw.DT0 = min(rs.shellLaw.DT0, wallOnsetK)
		rs.shellFrom = shellFrom(n, m.radial.shell)
	}
	for i := range rs.zones {
		rs.zones[i].temp = m.pour
	}
	m.rings = &g
	s := state{core: rs.zones[0], shell: rs.zones[n-1], tc: m.ambient, wallTC: m.ambient, wall: 1, primOn: -1, eutOn: -1, endT: -1}
	sub := m.substeps(&g)
	dt := m.step / float64(sub)
	wallStep := math.Exp(-dt / wallS)
	maxS := durS
	if maxS == 0 {
		maxS = 1800
	}
	full := -math.Expm1(-m.step / lagS)
	emitted := 1
	if sv := m.from; sv != nil {
		s, emitted = sv.s, sv.n
		copy(rs.zones, sv.zones)
		copy(rs.primMax, sv.primMax)
		copy(rs.eutMax, sv.eutMax)
	} else {
		emit(&s)
	}
	for s.t < maxS-m.step/2 {
		m.save.keep(&s, &rs, emitted)
		emitted++
		for range sub {
			m.radialStep(&g, &rs, &s, dt)
			s.wall *= wallStep
		}
		s.t += m.step
		var fs float64
		for i := range rs.zones {
			fs += g.mass[i] * rs.zones[i].fs
		}
		s.fs = fs / m.mass
		if s.endT < 0 && s.fs >= 0.9999 {
			s.endT = s.t
		}
		c := &rs.zones[0]
		if s.primOn < 0 && c.prim.m0 > 0 {
			s.primOn = s.t - m.step
		}
		if s.eutOn < 0 && c.eut.m0 > 0 {
			s.eutOn = s.t - m.step
		}
		// Thermocouples: wetting rises linearly while the cup fills.
		a := full
		if s.t < fillS {
			a = -math.Expm1(-s.t / fillS * m.step / lagS)
		}
		s.tc += (c.temp - s.tc) * a
		s.wallTC += (rs.zones[g.wallTC].temp - s.wallTC) * a
		s.core, s.shell = *c, rs.zones[n-1]
		emit(&s)
		if durS == 0 && s.endT >= 0 && s.t > s.endT+40 {
			break
		}
	}
	m.radialLast = rs.zones
}

// radialStep advances every zone by dt: first the sensible heat
// (conduction between neighbours and the losses), then each zone's
// nucleation and growth at its own new temperature, with the latent heat
// taken in at once (freezeZone). Taking the latent heat after the
// sensible heat, and the primary phase's implicitly, keeps the small
// centre zone from overshooting back and forth across its liquidus line.
func (m *cup) radialStep(g *rings, rs *radialState, s *state, dt float64) {
	n := len(rs.zones)
	for i := range rs.zones {
		rs.loss[i] = m.zoneLoss(g, i, s.wall, rs.zones[i].temp)
		rs.flow[i] = -rs.loss[i]
		s.lost += rs.loss[i] * dt
	}
	for i := range n - 1 {
		a, b := &rs.zones[i], &rs.zones[i+1]
		q := g.conductance(i, m.radial.zoneK(a.fs), m.radial.zoneK(b.fs)) * (a.temp - b.temp)
		rs.flow[i] -= q
		rs.flow[i+1] += q
	}
	for i := range rs.zones {
		rs.zones[i].temp += rs.flow[i] * dt / (g.mass[i] * m.c)
	}
	for i := range rs.zones {
		z := &rs.zones[i]
		var bp float64
		if m.primary {
			bp = births(&m.primaryLaw, m.liquidus-z.temp, &rs.primMax[i])
		}
		law := &m.eutecticLaw
		if i >= rs.shellFrom {
			law = &rs.shellLaw
		}
		be := births(law, m.eutUnder(z), &rs.eutMax[i])
		if m.front && i < n-1 {
			// a pure metal's solid grows inward from the wall as a front: a
			// zone whose outer neighbour has begun to freeze takes its grains
			if o := &rs.zones[i+1]; o.eut.frac > 0 && o.eut.m0 > z.eut.m0 {
				be += o.eut.m0 - z.eut.m0
			}
		}
		s.released += g.mass[i] * m.freezeZone(z, bp, be, dt)
	}
}

// freezeZone advances a zone's kinetics by dt at its temperature, with the
// births bp (primary) and be (eutectic) of this step, raises its
// temperature by the latent heat released, L·Δfs/c, and returns that heat,
// J/kg. The primary solid inside the grain envelopes follows the liquidus
// line at the new temperature (primaryTemp, implicit). The eutectic grows
// explicitly; what of its heat would lift the zone above the eutectic's
// growth reference (where growth stops) is held back, the zone's fs kept
// below its kinetic value by as much, and released in the following steps.
func (m *cup) freezeZone(z *lump, bp, be, dt float64) float64 {
	var released float64
	if m.primary && z.eut.frac < 1 {
		z.prim.step(&m.primaryLaw, bp, m.liquidus-z.temp, dt)
		if z.prim.frac > 0 {
			t, f := m.primaryTemp(&z.scheil, z.temp, z.prim.frac, z.fp, z.eut.frac)
			if fp := z.prim.frac * f; fp > z.fp {
				d := (fp - z.fp) * (1 - z.eut.frac)
				released += m.latent * d
				z.fp, z.fs, z.temp = fp, z.fs+d, t
			}
		}
	}
	z.eut.step(&m.eutecticLaw, be, m.eutUnder(z), dt)
	if d := z.fp + (1-z.fp)*z.eut.frac - z.fs; d > 0 {
		z.fs += d
		z.temp += m.latent * d / m.c
		released += m.latent * d
		if over := (z.temp - (m.eutectic - m.eutRange*z.eut.frac)) * m.c / m.latent; over > 0 {
			back := min(over, d)
			z.fs -= back
			z.temp -= m.latent * back / m.c
			released -= m.latent * back
		}
	}
	return released
}

// primaryTemp is the temperature T ≥ t0 at which a zone at t0 (after its
// sensible heat) settles once its primary solid follows the liquidus line:
// c·(T − t0) = L·(1 − fe)·(F·fraction(T) − fp), with F the envelopes'
// fraction, fp the primary solid already there and fe the eutectic
// fraction, by Newton's method (g(T) is increasing and convex), to 1e-9 K
// or at most six steps. It returns t0 when no primary solid would form,
// and the equilibrium fraction at the temperature returned.
//
// Fraction and slope come from the zone's Scheil anchor (fractionAt): the
// Scheil rule's math.Pow in every zone, every step and every Newton step
// was most of an Al-Si radial cup's cost.
func (m *cup) primaryTemp(a *scheilAnchor, t0, envelopes, fp, fe float64) (temp, frac float64) {
	f, df := m.fractionAt(a, t0)
	if envelopes*f <= fp {
		return t0, f
	}
	k := m.latent * (1 - fe) / m.c
	t := t0
	for i := range 6 {
		if i > 0 {
			f, df = m.fractionAt(a, t)
		}
		gv := t - t0 - k*(envelopes*f-fp)
		dg := 1 - k*envelopes*df
		next := t - gv/dg
		if next < t0 {
			next = t0
		} else if next > m.liquidus {
			next = m.liquidus
		}
		if math.Abs(next-t) < 1e-9 {
			return next, f + df*(next-t) // the rest of f's Taylor series is below 1e-17
		}
		t = next
	}
	return t, f
}
