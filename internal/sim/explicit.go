package sim

import (
	"errors"
	"fmt"
	"math"
	"strconv"
)

// Nucleation is one nucleation-and-growth law given explicitly:
// Oldfield's N = A·ΔTⁿ (Trans. ASM 59 (1966) 945, recalled; the count set
// by the largest undercooling reached, no onset undercooling) with growth
// u = μ·ΔT² (docs/sources.md §6).
type Nucleation struct {
	A  float64 // nucleation constant, m⁻³ K⁻ⁿ
	N  float64 // exponent n (Oldfield: ≈2)
	Mu float64 // growth coefficient μ, m s⁻¹ K⁻²
}

// Kinetics are the free parameters of the cup model that a least-squares fit
// to a measured curve adjusts: the eutectic's and the primary phase's
// nucleation and growth laws, the effective heat-transfer coefficient h of
// the cup wall and the thermocouple's time constant τ. EutecticC and
// LiquidusC shift the reference temperatures the chemistry gives, so that
// a fit does not need the melt's exact analysis.
type Kinetics struct {
	Eutectic *Nucleation // the eutectic's law; nil keeps the alloy's own
	Primary  *Nucleation // the primary phase's (austenite, α-Al); nil keeps the alloy's own
	H        float64     // heat-transfer coefficient of the cup wall, W m⁻² K⁻¹
	LagS     float64     // thermocouple time constant τ, s

	// EutecticC is the eutectic growth reference temperature, °C (0: the one
	// of the chemistry).
	EutecticC float64
	// LiquidusC is the equilibrium liquidus of the primary phase, °C (0: the
	// one of the chemistry). It moves the alloy along its liquidus line.
	LiquidusC float64
	// Conductance multiplies the lumped cup's core–shell conductance, solid
	// and liquid alike (0: 1): below 1 the centre lags the wall more, as
	// in a cup with a stronger gradient.
	Conductance float64
	// Radial, when set, runs the radial cup with these parameters instead
	// of the lumped one: H is
	// then the side wall's coefficient as well unless Radial.WallHW sets
	// it, and Conductance multiplies both conductivities.
	Radial *Radial
	// StepS is the integration step, s (0: the simulator's own 5 ms; at
	// most 50 ms). Iron and Al-Si cups, whose kinetics are slow, give the
	// same points to about 0.02 °C at 20 ms, four times faster; pure metals
	// need the 5 ms.
	StepS float64
}

func (k Kinetics) validate() error {
	positive := func(name string, v float64) error {
		if !(v > 0) || math.IsInf(v, 0) {
			return fmt.Errorf("sim: kinetics %s = %g must be positive and finite", name, v)
		}
		return nil
	}
	for _, l := range []*Nucleation{k.Eutectic, k.Primary} {
		if l == nil {
			continue
		}
		for _, err := range []error{positive("A", l.A), positive("n", l.N), positive("μ", l.Mu)} {
			if err != nil {
				return err
			}
		}
		if l.N > 10 {
			return fmt.Errorf("sim: kinetics n = %g is above 10", l.N)
		}
	}
	if err := errors.Join(positive("h", k.H), positive("τ", k.LagS)); err != nil {
		return err
	}
	if !(k.StepS >= 0 && k.StepS <= maxStepS) {
		return fmt.Errorf("sim: kinetics step %g s is outside 0..%g s", k.StepS, maxStepS)
	}
	if k.Conductance < 0 || k.Conductance > 1e3 || math.IsNaN(k.Conductance) {
		return fmt.Errorf("sim: kinetics conductance factor %g is outside 0..1000", k.Conductance)
	}
	if k.LagS > 30 || k.H > 5000 {
		return fmt.Errorf("sim: kinetics τ %g s or h %g W/(m² K) out of range (τ ≤ 30 s, h ≤ 5000)", k.LagS, k.H)
	}
	if math.IsNaN(k.EutecticC) || math.IsNaN(k.LiquidusC) || k.EutecticC < 0 || k.LiquidusC < 0 {
		return fmt.Errorf("sim: reference temperatures %g and %g °C must be 0 or positive", k.EutecticC, k.LiquidusC)
	}
	return nil
}

// Curve runs the cup of p (its alloy, chemistry, pour temperature and time,
// cup mass, fill time; lumped cup, no fault, no noise) with its own kinetics,
// heat loss and lag replaced by k, and returns the noiseless thermocouple
// reading at each of times (the logger's clock, s, rising; the pour at
// p.PourAtS, room temperature before it) and the truth read off the model's
// own fine curve. The model runs until the last of times. It is what a fit
// of the cup model to a measured curve evaluates; Simulate is the same model
// with the alloy's own constants.
func Curve(p Params, k Kinetics, times []float64) ([]float64, Truth, error) {
	out, tr, _, err := curve(p, k, times, nil, nil)
	return out, tr, err
}

// curve is Curve, resumed from the saved run from where it fits
// (Saved.fits; resumed says so) and keeping its own run in save when
// save is not nil.
func curve(p Params, k Kinetics, times []float64, from, save *Saved) (out []float64, tr Truth, resumed bool, err error) {
	if len(times) < 2 {
		return nil, Truth{}, false, fmt.Errorf("sim: curve: %d times, want at least 2", len(times))
	}
	if err := k.validate(); err != nil {
		return nil, Truth{}, false, err
	}
	p = p.withDefaults()
	p.Fault = FaultNone
	p.Cup = CupLumped
	if k.Radial != nil {
		p.Cup, p.Radial = CupRadial, *k.Radial
	}
	p.Logger.LagS = k.LagS
	p.kinetics = &k
	last := times[len(times)-1]
	if !(last > p.PourAtS) || math.IsInf(last, 0) {
		return nil, Truth{}, false, fmt.Errorf("sim: curve: the last time %g s is not after the pour at %g s", last, p.PourAtS)
	}
	p.DurationS = last + max(stepS, k.StepS)
	if err := p.Validate(); err != nil {
		return nil, Truth{}, false, err
	}
	f, m, resumed := p.runFrom(from, save)
	out = make([]float64, len(times))
	for i, t := range times {
		out[i] = f.reading(t, p.AmbientC)
	}
	return out, m.truth(f, len(f.tc)), resumed, nil
}

// reading is the noiseless thermocouple at logger time t, interpolated
// linearly between the model's steps; room temperature before the pour.
func (f *fine) reading(t, ambient float64) float64 {
	if t < f.offset {
		return ambient
	}
	u := (t - f.offset) / f.step
	i := min(int(u), len(f.tc)-2)
	a := u - float64(i)
	return f.tc[i] + a*(f.tc[i+1]-f.tc[i])
}

// Effect is what a melt addition acts on in the model.
type Effect string

// Effects of an addition.
const (
	// EffectEutecticNuclei multiplies the eutectic nucleation constant A
	// (an iron inoculant).
	EffectEutecticNuclei Effect = "eutectic-nuclei"
	// EffectPrimaryNuclei multiplies the primary phase's nucleation
	// constant A (an aluminium grain refiner).
	EffectPrimaryNuclei Effect = "primary-nuclei"
	// EffectEutecticDepression lowers the eutectic growth reference
	// temperature (an Al-Si modifier).
	EffectEutecticDepression Effect = "eutectic-depression"
)

// Addition is a melt treatment made AgeMin minutes before the cup is
// poured: an inoculant, a grain refiner or a modifier, described as a
// shop's inoculant table describes it (docs/advice.md). Its effect fades
// exponentially,
//
//	r = (Pct / 0.01) · 2^(−AgeMin / HalfLifeMin)
//
// the remaining effect counted in fresh steps of 0.01 %: a nucleation
// effect multiplies A by Gain^r (ln A grows by r·ln Gain), a depression
// lowers the eutectic growth reference by Gain·r °C. The melt's own
// inoculation (Params.Inoculation, faded over Params.HoldMin) is kept.
type Addition struct {
	Effect      Effect
	Pct         float64 // addition, % of the ladle's mass
	AgeMin      float64 // minutes from the addition to the pour of the cup
	Gain        float64 // per 0.01 %, fresh: factor on A (> 1), or °C of depression
	HalfLifeMin float64 // the effect halves in this many minutes
}

// Remaining is r, the fresh 0.01 % steps the addition still amounts to.
func (a Addition) Remaining() float64 {
	return a.Pct / 0.01 * math.Exp2(-a.AgeMin/a.HalfLifeMin)
}

func (a Addition) validate() error {
	switch a.Effect {
	case EffectEutecticNuclei, EffectPrimaryNuclei:
		if !(a.Gain >= 1) || math.IsInf(a.Gain, 0) {
			return fmt.Errorf("sim: addition gain %g must be a factor of at least 1 per 0.01 %%", a.Gain)
		}
	case EffectEutecticDepression:
		if !(a.Gain >= 0) || a.Gain > 10 {
			return fmt.Errorf("sim: addition depression %g °C per 0.01 %% is outside 0..10", a.Gain)
		}
	default:
		return fmt.Errorf("sim: unknown addition effect %q (known: %q, %q, %q)", a.Effect,
			EffectEutecticNuclei, EffectPrimaryNuclei, EffectEutecticDepression)
	}
	switch {
	case !(a.Pct >= 0) || a.Pct > 5:
		return fmt.Errorf("sim: addition %g %% is outside 0..5 %%", a.Pct)
	case !(a.AgeMin >= 0) || a.AgeMin > 600:
		return fmt.Errorf("sim: addition age %g min is outside 0..600", a.AgeMin)
	case !(a.HalfLifeMin > 0) || math.IsInf(a.HalfLifeMin, 0):
		return fmt.Errorf("sim: addition half-life %g min must be positive", a.HalfLifeMin)
	}
	return nil
}

func (p Params) validateAdditions() error {
	for _, a := range p.Additions {
		if err := a.validate(); err != nil {
			return err
		}
		if a.Effect == EffectEutecticDepression && p.Alloy != AlSi7Mg {
			return fmt.Errorf("sim: a eutectic-depression addition (modifier) is for %s, not %s", AlSi7Mg, p.Alloy)
		}
		if a.Effect == EffectPrimaryNuclei && p.Alloy != AlSi7Mg {
			return fmt.Errorf("sim: a primary-nuclei addition (grain refiner) is for %s, not %s", AlSi7Mg, p.Alloy)
		}
	}
	return nil
}

// maxStepS is the coarsest integration step Kinetics may ask for, s.
const maxStepS = 0.05

// adjust applies the explicit kinetics of Curve and the additions to the
// resolved model (the last step of model).
func (p Params) adjust(m *cup) {
	m.step = stepS
	if k := p.kinetics; k != nil {
		if k.StepS > 0 {
			m.step = k.StepS
		}
		if l := k.Eutectic; l != nil {
			m.eutecticLaw = law{A: l.A, N: l.N, Mu: l.Mu}
		}
		if l := k.Primary; l != nil {
			m.primaryLaw = law{A: l.A, N: l.N, Mu: l.Mu}
		}
		m.h = k.H
		if k.Conductance > 0 {
			m.kSolid *= k.Conductance
			m.kLiquid *= k.Conductance
		}
		if r := m.radial; r != nil && k.Radial != nil {
			if k.Radial.WallHW == 0 {
				r.wallH = k.H
			}
			if k.Conductance > 0 {
				r.kL *= k.Conductance
				r.kS *= k.Conductance
			}
		}
		if k.EutecticC > 0 {
			m.eutectic = k.EutecticC
		}
		if k.LiquidusC > 0 && m.lineSlope > 0 {
			m.liquidus = k.LiquidusC
			m.c0 = (m.lineTm - k.LiquidusC) / m.lineSlope
		}
	}
	for _, a := range p.Additions {
		r := a.Remaining()
		switch a.Effect {
		case EffectEutecticNuclei:
			m.eutecticLaw.A *= math.Pow(a.Gain, r)
		case EffectPrimaryNuclei:
			m.primaryLaw.A *= math.Pow(a.Gain, r)
		case EffectEutecticDepression:
			m.eutectic -= a.Gain * r
		}
	}
	m.primary = m.liquidus > m.eutectic && m.lineSlope > 0
}

// additionMeta is the curve-file metadata of the additions.
func (p Params) additionMeta() []string {
	g := func(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
	var out []string
	for _, a := range p.Additions {
		unit := "× A"
		if a.Effect == EffectEutecticDepression {
			unit = "°C"
		}
		out = append(out, fmt.Sprintf("%s %% %s %s min before the pour (%s %s per 0.01 %%, half-life %s min)",
			g(a.Pct), a.Effect, g(a.AgeMin), g(a.Gain), unit, g(a.HalfLifeMin)))
	}
	return out
}
