package solidpath

import (
	"fmt"
	"math"
	"slices"
)

// Newtonian is the one-thermocouple method: the cup is taken to have one
// temperature, so that its heat balance reads
//
//	dT/dt = Z(T) + (L/c)·dfs/dt,   Z(T) = −K·(T − T∞)
//
// with Z the cooling the cup would show without latent heat, the zero
// curve, in the form of Newton's law of cooling, K = hA/(ρcV) and T∞ the
// room temperature (Options.AmbientC). K is fitted by least squares to T'
// over the solid stretch after the end of freezing (ZeroNewtonSolid), or,
// where the recording stops before the cup has cooled as a solid, over the
// liquid stretch before freezing begins (ZeroNewtonLiquid). The solid is
// preferred: the liquid stretch follows the pour, while the filling still
// stirs the melt and the cold cup wall soaks up extra heat, so it cools
// faster than Newton's law with the K of the rest of the test
// (Zero.LiquidMisfit says by how much). The latent heat is
//
//	L = c·∫(dT/dt − Z)dt = c·[T(t_e) − T(t_s) − ∫Z dt]
//
// from the start of freezing t_s (the last reading before the first bend
// of the curve at which T' is still on Z, within three times its scatter
// there) to t_e (the first reading after the end of freezing at which T'
// is back on Z), and fs(t) is the share of that area released by t. The
// integral form needs T' only to fit Z and to find t_s and t_e, so the
// area itself carries no derivative noise.
//
// Method: Upadhya, Stefanescu, Lieu and Yeager, AFS Trans. 97 (1989) 61
// (memory; their exact fitting of the zero curve was not checked: this is
// the heat balance the method rests on, docs/sources.md §5). The bias: a
// real cup is not at one temperature, and the extra heat its cold wall
// takes up early in freezing is not in a zero curve from the solid, so in
// sand cups L comes out low: an apparent latent heat (measured on
// simulated cups in docs/solidification.md).
func Newtonian(t, temp []float64, ev Events, opt Options) (Path, error) {
	o, err := prepare(t, ev, opt, temp)
	if err != nil {
		return Path{}, err
	}
	return newtonian(t, smoothOf(t, temp, o.SlopeS/2), ev, o)
}

// newtonian is Newtonian on a checked, smoothed curve.
func newtonian(t []float64, lf smoothed, ev Events, o Options) (Path, error) {
	k := knee(t, lf.slope, ev, o)
	liq, sol := liquidSpan(t, k, ev, o), solidSpan(t, lf.slope, ev, o)
	z, err := fitNewton(t, lf.local, liq, sol, o)
	if err != nil {
		return Path{}, err
	}
	zeros := make([]float64, len(t))
	for i, v := range lf.x {
		zeros[i] = -z.K * (v - z.AmbientC)
	}
	is := startIndex(lf.slope, zeros, k, z.RMS)
	ie := endIndex(t, lf.slope, zeros, ev, z.RMS)
	p, err := buildPath(t, lf.value, zeros, is, ie, ev, o)
	if err != nil {
		return Path{}, err
	}
	p.Method, p.Zero = MethodNewtonian, z
	return p, nil
}

// prepare checks the inputs and fills the option defaults.
func prepare(t []float64, ev Events, opt Options, series ...[]float64) (Options, error) {
	if err := checkCurve(t, series...); err != nil {
		return Options{}, err
	}
	o := opt.withDefaults()
	switch {
	case !(o.SpecificHeat >= 0) || math.IsInf(o.SpecificHeat, 0):
		return Options{}, fmt.Errorf("%w: specific heat %g J/(kg K)", ErrOptions, o.SpecificHeat)
	case !(o.SlopeS > 0) || !(o.SettleS >= 0):
		return Options{}, fmt.Errorf("%w: slope window %g s, settling time %g s", ErrOptions, o.SlopeS, o.SettleS)
	case math.IsNaN(ev.ArrestS) || math.IsNaN(ev.EndS):
		return Options{}, fmt.Errorf("%w: the first arrest and the end of freezing are both needed", ErrEvents)
	case !(ev.ArrestS < ev.EndS) || ev.ArrestS < t[0] || ev.EndS > t[len(t)-1]:
		return Options{}, fmt.Errorf("%w: first arrest %.1f s and end of freezing %.1f s are not in order on the curve (%.1f–%.1f s)",
			ErrEvents, ev.ArrestS, ev.EndS, t[0], t[len(t)-1])
	}
	return o, nil
}

// fitNewton fits K of Z = −K·(T − T∞) on the solid stretch, else the
// liquid one: K = −Σ(T − T∞)·T' / Σ(T − T∞)².
func fitNewton(t []float64, lf local, liq, sol span, o Options) (Zero, error) {
	z := Zero{Liquid: liq.window(t), Solid: sol.window(t), AmbientC: o.AmbientC, LiquidMisfit: math.NaN()}
	use := sol
	switch {
	case z.Solid.OK:
		z.Form = ZeroNewtonSolid
	case z.Liquid.OK:
		z.Form, use = ZeroNewtonLiquid, liq
	default:
		return Zero{}, fmt.Errorf("%w: neither a liquid stretch before freezing nor a solid one after it lasts %d s",
			ErrNoZero, minStretchS)
	}
	var sxy, sxx float64
	for i := use.lo; i < use.hi; i++ {
		x := lf.value[i] - z.AmbientC
		sxy += x * lf.slope[i]
		sxx += x * x
	}
	z.K = -sxy / sxx
	if !(z.K > 0) || math.IsInf(z.K, 0) {
		return Zero{}, fmt.Errorf("%w: the %s stretch (%.1f–%.1f s) does not cool toward the room temperature %.0f °C",
			ErrNoZero, map[bool]string{true: "solid", false: "liquid"}[z.Solid.OK], t[use.lo], t[use.hi-1], z.AmbientC)
	}
	resid := func(s span) (sum, ss float64) {
		for i := s.lo; i < s.hi; i++ {
			r := lf.slope[i] + z.K*(lf.value[i]-z.AmbientC)
			sum += r
			ss += r * r
		}
		return sum, ss
	}
	_, ss := resid(use)
	z.RMS = math.Sqrt(ss / float64(use.hi-use.lo))
	if z.Form == ZeroNewtonSolid && z.Liquid.OK {
		sum, _ := resid(liq)
		z.LiquidMisfit = sum / float64(liq.hi-liq.lo)
	}
	return z, nil
}

// deltaFloor is the smallest departure of T' from the zero curve taken
// for latent heat, °C/s.
const deltaFloor = 0.005

// startIndex is the start of freezing: the last reading at or before the
// knee k at which T' is no more than 3·rms above the zero curve (the first
// reading of the curve when it never is).
func startIndex(d, zeros []float64, k int, rms float64) int {
	h := max(3*rms, deltaFloor)
	for i := k; i > 0; i-- {
		if d[i]-zeros[i] <= h {
			return i
		}
	}
	return 0
}

// endIndex is the end of the heat release: the first reading at or after
// the end of freezing at which T' is back within 3·rms of the zero curve
// from below, or has crossed it (the last reading when it never is).
func endIndex(t, d, zeros []float64, ev Events, rms float64) int {
	h := max(3*rms, deltaFloor)
	for i := index(t, ev.EndS); i < len(t); i++ {
		if d[i]-zeros[i] >= -h {
			return i
		}
	}
	return len(t) - 1
}

// released integrates T' − Z from reading is to ie in the integral form
// T(t) − T(t_s) − ∫Z dt (trapezoids on the readings) and turns the area
// into the share released so far, into dst (reused when large enough): the
// solid does not remelt, so the share never falls (the area dips where the
// centre, last to freeze, cools faster than the zero curve at the end of
// freezing). It returns the share and the whole area, °C.
func released(dst, t, sm, zeros []float64, is, ie int) ([]float64, float64, error) {
	if ie-is < 3 {
		return nil, 0, fmt.Errorf("%w: freezing from %.1f s to %.1f s is too short to integrate", ErrNoHeat, t[is], t[ie])
	}
	n := ie - is + 1
	if cap(dst) < n {
		dst = make([]float64, n)
	}
	dst = dst[:n]
	var integral float64 // ∫Z dt from t_s
	for k := range n {
		i := is + k
		if k > 0 {
			integral += 0.5 * (zeros[i] + zeros[i-1]) * (t[i] - t[i-1])
		}
		dst[k] = sm[i] - sm[is] - integral
	}
	total := dst[n-1]
	if !(total > 0) {
		return nil, 0, fmt.Errorf("%w: T' stays on or below the zero curve from %.1f s to %.1f s", ErrNoHeat, t[is], t[ie])
	}
	top, inv := 0.0, 1/total
	for k, a := range dst {
		top = max(top, min(a*inv, 1))
		dst[k] = top
	}
	dst[n-1] = 1
	return dst, total, nil
}

// buildPath is the path from reading is to ie with the zero curve zeros.
func buildPath(t, sm, zeros []float64, is, ie int, ev Events, o Options) (Path, error) {
	fs, total, err := released(nil, t, sm, zeros, is, ie)
	if err != nil {
		return Path{}, err
	}
	latent := o.SpecificHeat * total
	if o.SpecificHeat == 0 {
		latent = math.NaN()
	}
	p := Path{StartS: t[is], EndS: t[ie], SpecificHeat: o.SpecificHeat, LatentJPerKg: latent,
		Time: slices.Clone(t[is : ie+1]), TempC: slices.Clone(sm[is : ie+1]), FS: fs}
	for _, m := range ev.Marks {
		if math.IsNaN(m.TimeS) {
			continue
		}
		p.Points = append(p.Points, PointFS{Key: m.Key, TimeS: m.TimeS, TempC: interp(t, sm, m.TimeS), FS: p.At(m.TimeS)})
	}
	return p, nil
}
