package solidpath

import (
	"fmt"
	"math"
)

// Geometry places the two thermocouples of a cup, radii from the cup's
// axis in mm: the centre one (0 when it sits on the axis) and the one near
// the wall.
type Geometry struct {
	CentreMm, WallMm float64
}

func (g Geometry) check() error {
	if !(g.CentreMm >= 0) || !(g.WallMm > g.CentreMm) || math.IsInf(g.WallMm, 0) {
		return fmt.Errorf("%w: thermocouple radii centre %g mm, wall %g mm (the wall one must be further out)", ErrOptions, g.CentreMm, g.WallMm)
	}
	return nil
}

// fourierRounds is how many times the diffusivity a(fs) and fs are worked
// out in turn; the latent heat changes by well under 0.1 % after the third.
const fourierRounds = 5

// Fourier is the two-thermocouple method. Conduction inside the cup,
//
//	∂T/∂t = a·∇²T + (L/c)·∂fs/∂t,
//
// is read at the centre of a cylinder whose temperature is taken to vary
// with the square of the radius between the two thermocouples,
// T(r) = T_c + (T_w − T_c)·(r² − r_c²)/(r_w² − r_c²), so that
//
//	∇²T = 4·(T_w − T_c)/(r_w² − r_c²)
//
// (axial conduction neglected: a long cylinder). The zero curve is
// Z = a·∇²T: the measured gradient, not an assumed cooling law. The thermal
// diffusivity a is measured on the single-phase stretches, a = ΔT_c/∫∇²T dt
// over the liquid before freezing and over the solid after it (the integral
// form of T' = a·∇²T), and between them a(fs) = (1 − fs)·a_l + fs·a_s,
// worked out in turn with fs until both settle. With one stretch only, its
// a serves throughout. L = c·∫(T_c' − Z)dt from the start to the end of the
// heat release (found as for the Newtonian method), and fs(t) is the share
// released by t: the fraction solid near the centre thermocouple, where the
// heat balance is written.
//
// Method: Fraś, Kapturkiewicz, Burbielko and López, AFS Trans. 101 (1993)
// 505 (memory for the equations above, docs/sources.md §5). Assumptions: a
// radial temperature field of parabolic shape between the thermocouples
// (valid once the pour's stirring has died away and while the field is
// quasi-steady), radial heat flow only (a long cylinder, or insulated
// ends), one specific heat c for liquid and solid, and a diffusivity that
// changes linearly with the centre's fs. Its biases, measured on simulated
// cups (docs/solidification.md): the metal between the thermocouples
// freezes before the centre, so a(fs) at the centre's fs misses its
// conductivity, and heat leaves through the cup's bottom and open top as
// well, so L is off by up to ±10 % (it is within 2 % where liquid and solid
// conduct alike); a chill shell at the wall breaks the parabola (L up to
// 33 % high, and where the shell recalesces before the centre's eutectic
// the fs at the eutectic start 0.06–0.115 low: Zero.Inflow, the parabola
// check, is then above MaxInflow); a pure metal, freezing from the wall
// inward around an isothermal liquid pool, is outside the method (L about
// 28 % low).
func Fourier(t, centre, wall []float64, g Geometry, ev Events, opt Options) (Path, error) {
	o, err := prepare(t, ev, opt, centre, wall)
	if err != nil {
		return Path{}, err
	}
	if err := g.check(); err != nil {
		return Path{}, err
	}
	return fourier(t, smoothOf(t, centre, o.SlopeS/2), smoothOf(t, wall, o.SlopeS/2), g, ev, o)
}

// fourier is Fourier on checked, smoothed curves and a checked geometry.
func fourier(t []float64, lc, lw smoothed, g Geometry, ev Events, o Options) (Path, error) {
	rc, rw := g.CentreMm/1000, g.WallMm/1000
	lap := make([]float64, len(t))
	for i := range lap {
		lap[i] = 4 * (lw.value[i] - lc.value[i]) / (rw*rw - rc*rc)
	}
	k := knee(t, lc.slope, ev, o)
	liq, sol := liquidSpan(t, k, ev, o), solidSpan(t, lc.slope, ev, o)
	z := Zero{Form: ZeroDiffusivity, Liquid: liq.window(t), Solid: sol.window(t)}
	diff := func(s span) float64 {
		var area float64
		for i := s.lo + 1; i < s.hi; i++ {
			area += 0.5 * (lap[i] + lap[i-1]) * (t[i] - t[i-1])
		}
		return (lc.value[s.hi-1] - lc.value[s.lo]) / area
	}
	switch {
	case z.Liquid.OK && z.Solid.OK:
		z.DiffLiquid, z.DiffSolid = diff(liq), diff(sol)
	case z.Liquid.OK:
		z.DiffLiquid = diff(liq)
		z.DiffSolid = z.DiffLiquid
	case z.Solid.OK:
		z.DiffSolid = diff(sol)
		z.DiffLiquid = z.DiffSolid
	default:
		return Path{}, fmt.Errorf("%w: neither a liquid stretch before the first arrest nor a solid one after the end of freezing lasts %d s",
			ErrNoZero, minStretchS)
	}
	if !(z.DiffLiquid > 0) || !(z.DiffSolid > 0) || math.IsInf(z.DiffLiquid, 0) || math.IsInf(z.DiffSolid, 0) {
		return Path{}, fmt.Errorf("%w: the thermal diffusivity reads %.3g m²/s (liquid) and %.3g m²/s (solid); the wall thermocouple must read below the centre while the cup cools",
			ErrNoZero, z.DiffLiquid, z.DiffSolid)
	}
	z.RMS = zeroRMS(lc.slope, lap, z, liq, sol)
	zeros := make([]float64, len(t))
	for i := range zeros {
		zeros[i] = z.DiffLiquid * lap[i]
	}
	// a(fs) and fs in turn: the share released with the zero curve of the
	// round before gives the next round's a(fs).
	var share []float64
	for range fourierRounds - 1 {
		is := startIndex(lc.slope, zeros, k, z.RMS)
		ie := endIndex(t, lc.slope, zeros, ev, z.RMS)
		var err error
		if share, _, err = released(share, t, lc.value, zeros, is, ie); err != nil {
			return Path{}, err
		}
		for i := range zeros {
			fs := 0.0
			switch {
			case i > ie:
				fs = 1
			case i >= is:
				fs = share[i-is]
			}
			zeros[i] = ((1-fs)*z.DiffLiquid + fs*z.DiffSolid) * lap[i]
		}
	}
	p, err := buildPath(t, lc.value, zeros, startIndex(lc.slope, zeros, k, z.RMS), endIndex(t, lc.slope, zeros, ev, z.RMS), ev, o)
	if err != nil {
		return Path{}, err
	}
	p.Method, p.Zero = MethodFourier, z
	p.Zero.Inflow = inflow(t, lc.value, zeros, index(t, p.StartS), index(t, p.EndS), ev.EutecticS)
	return p, nil
}

// MaxInflow is the largest Zero.Inflow at which the Fourier fs is taken to
// hold: above it the parabolic field failed for long enough before the
// eutectic to carry the fs there off by more than 0.05 (measured on the
// simulated radial cups, docs/solidification.md).
const MaxInflow = 0.01

// inflow is the check of where the parabola holds. A cup loses its heat
// through its surface, so a parabolic field that cools it has the wall
// thermocouple below the centre; where it reads above the centre while the
// cup freezes (∇²T > 0, Z > 0: the two readings say conduction heats the
// centre), the metal between them releases heat faster than the centre
// (a chill shell recalescing first) and the field has its maximum between
// the centre and the surface: no parabola through the two readings
// describes it. inflow is ∫max(Z, 0)dt from the start of the release
// (reading is) to the end of the primary freezing (eutS, Events.EutecticS:
// the eutectic minimum with EventsOf; the release's end ie where it is not
// known), over the
// whole release's area T(t_e) − T(t_s) − ∫Z dt: the share
// of the centre's latent heat that the failed parabola moves, 0 where the
// wall stays below the centre.
func inflow(t, sm, zeros []float64, is, ie int, eutS float64) float64 {
	stop := ie
	if !math.IsNaN(eutS) {
		stop = min(max(index(t, eutS), is), ie)
	}
	var in, z float64
	for i := is + 1; i <= ie; i++ {
		zi := 0.5 * (zeros[i] + zeros[i-1]) * (t[i] - t[i-1])
		z += zi
		if i <= stop {
			in += max(zi, 0)
		}
	}
	return in / (sm[ie] - sm[is] - z)
}

// zeroRMS is the scatter of T' about a·∇²T over the single-phase
// stretches, °C/s.
func zeroRMS(d, lap []float64, z Zero, liq, sol span) float64 {
	var ss, n float64
	add := func(s span, a float64) {
		for i := s.lo; i < s.hi; i++ {
			r := d[i] - a*lap[i]
			ss += r * r
			n++
		}
	}
	if z.Liquid.OK {
		add(liq, z.DiffLiquid)
	}
	if z.Solid.OK {
		add(sol, z.DiffSolid)
	}
	return math.Sqrt(ss / n)
}
