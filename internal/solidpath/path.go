package solidpath

import (
	"errors"
	"fmt"
	"math"
)

// Methods named in Path.Method.
const (
	MethodNewtonian = "newtonian"
	MethodFourier   = "fourier"
)

// Mark is a characteristic point at which the fraction solid is reported:
// Key names it in the record's style ("eutectic_start" is reported as
// fs_at_eutectic_start), TimeS is its time on the curve's clock, s.
type Mark struct {
	Key   string
	TimeS float64
}

// Events are the times, on the curve's own clock, that bound the freezing
// of the cup, read off the centre curve (EventsOf takes them from package
// arrest). NaN marks an event that is not known.
type Events struct {
	// PourS is the pour peak, s. The liquid stretch starts Options.SettleS
	// after it (NaN: at the first reading).
	PourS float64
	// ArrestS is the first arrest, s: the primary undercooling minimum or
	// the liquidus arrest, else the eutectic start or minimum. Freezing
	// begins at or before it.
	ArrestS float64
	// EutecticS is the start of the eutectic (else its minimum), s: the
	// end of the primary freezing, where the coherency search stops (NaN:
	// the search runs to EndS).
	EutecticS float64
	// EndS is the end of freezing, s: the most negative T' after the
	// eutectic plateau.
	EndS float64
	// Marks are the points to report the fraction solid at.
	Marks []Mark
}

// Options are the physical constants and windows of the analysis.
type Options struct {
	// SpecificHeat is c in L = c·∫(T' − Z)dt, J/(kg K), one value for the
	// liquid and the solid (see SpecificHeat for the defaults). 0: not
	// known; fs needs no c, the latent heat is then NaN.
	SpecificHeat float64
	// AmbientC is the room temperature T∞ of a one-sided Newtonian zero
	// curve, °C (0: 25 °C).
	AmbientC float64
	// SlopeS is the span of the local straight-line fit that gives T' and
	// the smoothed T, s (0: 4 s).
	SlopeS float64
	// SettleS is the time after the pour peak that the thermocouple and
	// the filling need before the liquid stretch starts, s (0: 3 s).
	SettleS float64
}

func (o Options) withDefaults() Options {
	if o.AmbientC == 0 {
		o.AmbientC = 25
	}
	if o.SlopeS == 0 {
		o.SlopeS = 4
	}
	if o.SettleS == 0 {
		o.SettleS = 3
	}
	return o
}

// Window is a stretch of the curve, s.
type Window struct {
	FromS, ToS float64
	OK         bool // false: the stretch is not on the recording (too short or absent)
}

// Zero describes the zero curve Z that T' is compared with: what T' would
// be if no latent heat were released.
type Zero struct {
	// Form is how Z was obtained: ZeroNewtonSolid or ZeroNewtonLiquid
	// (Newtonian), ZeroDiffusivity (Fourier).
	Form string
	// Liquid and Solid are the single-phase stretches the recording has
	// (Window.OK false where it has none).
	Liquid, Solid Window
	// Newtonian: Z(T) = −K·(T − AmbientC), K in 1/s, AmbientC in °C.
	K, AmbientC float64
	// Fourier: the thermal diffusivity of the liquid and of the solid,
	// m²/s, and between them a(fs) = (1 − fs)·a_l + fs·a_s.
	DiffLiquid, DiffSolid float64
	// RMS is the scatter of T' about Z over the stretches Z was fitted on,
	// °C/s: how well the form holds there.
	RMS float64
	// LiquidMisfit is, for a Newtonian Z taken from the solid, the mean of
	// T' − Z over the liquid stretch, °C/s (NaN without one): negative when
	// the liquid cooled faster than the law found on the solid, as in a cup
	// whose cold wall first soaks up heat.
	LiquidMisfit float64
	// Inflow is, for the Fourier method, the check of where its parabolic
	// field holds: the share of the centre's released heat that the zero
	// curve credits as conduction INTO the centre (the wall thermocouple
	// reading above the centre while the cup freezes) before the
	// eutectic, 0–1; 0 where the wall stays below the centre. Above
	// MaxInflow the Fourier fs at and before the eutectic reads low (a
	// chill shell recalescing before the centre; docs/solidification.md).
	Inflow float64
}

// Zero-curve forms.
const (
	ZeroNewtonSolid  = "newton-solid"  // Z = −K(T − T∞), K from the solid stretch
	ZeroNewtonLiquid = "newton-liquid" // Z = −K(T − T∞), K from the liquid stretch (no solid one recorded)
	ZeroDiffusivity  = "diffusivity"   // Z = a(fs)·∇²T, the Laplacian from two thermocouples
)

// PointFS is the fraction solid at a characteristic point.
type PointFS struct {
	Key   string
	TimeS float64
	TempC float64 // the smoothed centre temperature there, °C
	FS    float64 // 0 before the start of freezing, 1 after its end
}

// Path is the solidification path of one cup by one method.
type Path struct {
	Method string // MethodNewtonian or MethodFourier

	// StartS and EndS bound the heat release: where T' leaves the zero
	// curve and where it has come back to it after the end of freezing, s.
	StartS, EndS float64
	// Time, TempC and FS are fs(t) and fs(T) at every reading from StartS
	// to EndS: the time, the smoothed centre temperature (°C) and the
	// fraction solid (0 to 1, never falling).
	Time, TempC, FS []float64

	// LatentJPerKg is the latent heat the method finds, J/kg:
	// c·∫(T' − Z)dt from StartS to EndS. For the Newtonian method it is an
	// apparent figure (see the package documentation for each method's
	// bias). NaN when Options.SpecificHeat is 0.
	LatentJPerKg float64
	SpecificHeat float64 // the c used, J/(kg K)

	Zero   Zero
	Points []PointFS
}

// At returns the fraction solid at time s: 0 before StartS, 1 after EndS.
func (p *Path) At(s float64) float64 {
	switch {
	case len(p.Time) == 0 || math.IsNaN(s):
		return math.NaN()
	case s <= p.StartS:
		return 0
	case s >= p.EndS:
		return 1
	}
	return interp(p.Time, p.FS, s)
}

// Errors that say why a method gives no answer.
var (
	ErrCurve   = errors.New("solidpath: unusable curve")
	ErrEvents  = errors.New("solidpath: the freezing is not bounded")
	ErrNoZero  = errors.New("solidpath: no single-phase stretch to take the zero curve from")
	ErrNoHeat  = errors.New("solidpath: no latent heat found")
	ErrOptions = errors.New("solidpath: bad options")
)

// checkCurve checks that t rises strictly and each series has its length
// and finite values.
func checkCurve(t []float64, series ...[]float64) error {
	if len(t) < 20 {
		return fmt.Errorf("%w: %d readings (at least 20 needed)", ErrCurve, len(t))
	}
	for i, v := range t {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: time %d is not a number", ErrCurve, i)
		}
		if i > 0 && v <= t[i-1] {
			return fmt.Errorf("%w: time does not rise at reading %d (%g s after %g s)", ErrCurve, i, v, t[i-1])
		}
	}
	for _, x := range series {
		if len(x) != len(t) {
			return fmt.Errorf("%w: %d temperatures for %d times", ErrCurve, len(x), len(t))
		}
		for i, v := range x {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%w: temperature %d is not a number", ErrCurve, i)
			}
		}
	}
	return nil
}
