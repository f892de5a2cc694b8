package sim

import (
	"fmt"
	"math"
	"strings"
)

// Alloy names the simulator knows (the project's alloy names).
const (
	GreyIron    = "grey-iron"
	DuctileIron = "ductile-iron"
	AlSi7Mg     = "al-si7mg"
	WhiteIron   = "white-iron" // cast iron in a tellurium cup
	PureAl      = "pure-al"    // fixed-point check cup
	PureZn      = "pure-zn"    // fixed-point check cup
	PureSn      = "pure-sn"    // fixed-point check cup
	PureAg      = "pure-ag"    // fixed-point check cup
	PureCu      = "pure-cu"    // fixed-point check cup
)

// Alloys lists the alloy names in a stable order (the check cups last).
var Alloys = []string{GreyIron, DuctileIron, AlSi7Mg, WhiteIron, PureAl, PureZn, PureSn, PureAg, PureCu}

// CheckCups lists the pure-metal fixed-point cups, coldest first.
var CheckCups = []string{PureSn, PureZn, PureAl, PureAg, PureCu}

// Fault is a bad sample the simulator can make on purpose.
type Fault string

// Faults.
const (
	FaultNone        Fault = ""
	FaultOpen        Fault = "open-thermocouple" // the thermocouple goes open circuit at FaultAtS
	FaultShortPour   Fault = "short-pour"        // the cup is a third full and poured cold
	FaultPulledEarly Fault = "pulled-early"      // the recording stops at FaultAtS, mid-freeze
)

// OpenReadingC is what a logger with up-scale burnout protection reads on an
// open thermocouple: the top of the type K range, 1372 °C (NIST Monograph
// 175 range) (practice: up-scale burnout).
const OpenReadingC = 1372

// Logger is the quality of the logger that reads the cup.
type Logger struct {
	RateHz    float64 // readings per second
	NoiseC    float64 // white noise, standard deviation, °C
	SpikeRate float64 // probability that a reading is a single-sample spike
	SpikeMinC float64 // spike size range, °C (sign random)
	SpikeMaxC float64
	QuantC    float64 // quantisation step, °C (0: none)
	MainsC    float64 // amplitude of mains pickup, °C
	// MainsHz is the mains frequency; 0 gives 50 Hz plus a seeded deviation
	// within ±0.05 Hz (grids hold 50 Hz within ±0.2 Hz, practice). Sampled
	// at RateHz it aliases to a slow wave.
	MainsHz float64
	LagS    float64 // thermocouple time constant τ, s (0: 0.5 s; 0.3–1 s is usual, memory)
}

// Params are the inputs of one simulated cup, in terms a metallurgist uses.
// Zero fields take the alloy's defaults (see Preset).
type Params struct {
	Alloy string // one of Alloys

	// Chemistry, wt %. Iron: C, Si, P; when C is 0 and CE is set, C is
	// derived from CE = C + (Si + P)/3 (Stefanescu, Int. J. Metalcasting 2021).
	// Al-Si7Mg: Si (7 by default), Mg (0.35) and Fe (0.12).
	C, Si, P float64
	Mg, Fe   float64
	CE       float64

	PourC     float64 // melt temperature in the full cup, °C
	AmbientC  float64 // room temperature, °C (0: 25 °C)
	CupMassKg float64 // metal in the cup, kg (iron ≈0.3–0.45, Al ≈0.1–0.3 (practice)); the cup is a cylinder as high as wide

	// Cup is the cup model: CupLumped (the zero value, two lumps) or
	// CupRadial (concentric zones with conduction between them, the wall
	// freezing first); Radial holds the radial cup's own parameters.
	Cup    CupKind
	Radial Radial

	// Inoculation is the inoculation level of iron or the grain-refiner
	// level of Al-Si, 0 (none) to 1 (strong, fresh). It sets the nucleation
	// constants log-linearly between the poor and the good end (see
	// kinetics). It fades with HoldMin: i_eff = i·2^(−HoldMin/FadeHalfLifeMin).
	Inoculation float64
	// Modification is the Sr/Na modification level of Al-Si, 0 to 1. It
	// lowers the eutectic growth temperature by up to ModificationMaxC and
	// poisons eutectic nuclei (McDonald, Nogita, Dahle, Acta Mater. 52
	// (2004) 4273).
	Modification float64

	HoldMin         float64 // minutes held since inoculation
	FadeHalfLifeMin float64 // half-life of the inoculation effect, min (0: 8 min for iron, 30 min for Al grain refiner) (memory, practice)

	// Additions are treatments made shortly before this cup (an inoculant,
	// a grain refiner, a modifier), each fading on its own (see Addition).
	Additions []Addition

	PourAtS   float64 // time of the pour on the logger's clock, s (0: 3 s)
	FillS     float64 // time to fill the cup, s (0: 0.8 s)
	DurationS float64 // recording length, s (0: until 40 s after the end of freezing)

	Logger Logger

	Fault    Fault
	FaultAtS float64 // when an open thermocouple or an early pull happens, logger clock, s (0: three quarters of the way from the eutectic maximum to the end of freezing)

	Seed uint64

	kinetics *Kinetics // explicit kinetics of Curve (nil: the alloy's own)

	// Labels for the curve file (free text, our scenario's names in the demo).
	Sample, Ladle, Operator string
}

// Constants of the model, with sources.
const (
	sigmaSB = 5.670374419e-8 // Stefan–Boltzmann constant, W m⁻² K⁻⁴ (CODATA 2018)
	kelvin  = 273.15

	// ITS-90 freezing points (Preston-Thomas, Metrologia 27 (1990) 3,
	// Table 1).
	FreezeSnC = 231.928
	FreezeZnC = 419.527
	FreezeAlC = 660.323
	FreezeAgC = 961.78
	FreezeCuC = 1084.62

	// Al-Si eutectic, 577 °C at 12.6 wt % Si (Murray & McAlister, Bull.
	// Alloy Phase Diagrams 5 (1984) 74).
	AlSiEutecticC = 577.0
	// Liquidus of Al-Si: 660.4 − 6.6·Si(wt %) °C (memory).
	alSiLiquidusIntercept = 660.4
	alSiLiquidusSlope     = 6.6
	// Partition coefficient of Si in α-Al, k ≈ 0.13 (memory).
	alSiPartition = 0.13

	// ModificationMaxC is the eutectic growth-temperature depression of a
	// fully modified Al-Si alloy; published range ≈4–8 °C (memory); the
	// nucleation poisoning adds a little more undercooling.
	ModificationMaxC = 5.0

	// Liquidus of hypoeutectic iron, TL = 1669 − 124·CEL with
	// CEL = C + Si/4 + P/2 (Heine, AFS Transactions) (memory). Used as the
	// pseudo-binary liquidus line; the Koriyama et al. 2020 form gives
	// 12–16 °C higher values.
	ironLiquidusIntercept = 1669.0
	ironLiquidusSlope     = 124.0
	// Partition of carbon between austenite and liquid, ≈2.1/4.3 ≈ 0.49
	// (Fe-C diagram, memory).
	ironPartition = 0.49
)

// StableEutecticC is the graphite eutectic temperature,
// Tst ≈ 1153 + 5.25·Si − 14.88·P (°C, wt %) (Fe-C-Si literature, memory,
// unverified).
func StableEutecticC(si, p float64) float64 { return 1153 + 5.25*si - 14.88*p }

// Grey irons freeze their eutectics below the values the formulas above
// give from chemistry: measured Tst runs 14.4 °C and Tmst 8.3 °C lower
// (Riposan et al., Metals 10 (2020) 993, grey irons; recalled), the
// offsets the shipped limits book applies (docs/metallurgy.md). The model's
// grey iron freezes at that measured basis, so that its undercooling below
// the Tst the analysis computes is the undercooling of its kinetics.
const (
	GreyStableOffsetC     = 14.4
	GreyMetastableOffsetC = 8.3
)

// IronEutecticsC are the model's own graphite and cementite eutectic
// temperatures of an iron alloy (°C; wt % Si and P): the formulas, less
// the measured-basis offsets for grey iron.
func IronEutecticsC(alloy string, si, p float64) (tst, tmst float64) {
	tst, tmst = StableEutecticC(si, p), MetastableEutecticC(si)
	if alloy == GreyIron {
		tst, tmst = tst-GreyStableOffsetC, tmst-GreyMetastableOffsetC
	}
	return tst, tmst
}

// MetastableEutecticC is the cementite eutectic temperature,
// Tmst ≈ 1148 − 15·Si (memory, unverified).
func MetastableEutecticC(si float64) float64 { return 1148 - 15*si }

// IronLiquidusC is TL = 1669 − 124·CEL, CEL = C + Si/4 + P/2 (Heine)
// (memory). It is the primary-austenite liquidus; above the eutectic CEL it
// is meaningless (the iron is hypereutectic and freezes primary graphite).
func IronLiquidusC(c, si, p float64) float64 {
	return ironLiquidusIntercept - ironLiquidusSlope*(c+si/4+p/2)
}

// AlSiLiquidusC is 660.4 − 6.6·Si (memory).
func AlSiLiquidusC(si float64) float64 { return alSiLiquidusIntercept - alSiLiquidusSlope*si }

// CarbonEquivalent is CE = C + (Si + P)/3 (Stefanescu, Int. J.
// Metalcasting 2021).
func CarbonEquivalent(c, si, p float64) float64 { return c + (si+p)/3 }

// isPure reports whether the alloy is a pure-metal check cup.
func isPure(alloy string) bool { return strings.HasPrefix(alloy, "pure-") }

// isIron reports whether the alloy is a cast iron.
func isIron(alloy string) bool {
	return alloy == GreyIron || alloy == DuctileIron || alloy == WhiteIron
}

// Preset returns the parameters of a typical cup of the alloy at an
// inoculation (or grain-refiner) level from 0 to 1, with a good logger
// (10 Hz iron, 10 Hz aluminium, 0.05 °C noise, no spikes). Chemistry and
// pour temperatures are typical shop values (practice).
func Preset(alloy string, inoculation float64, seed uint64) (Params, error) {
	a := strings.ToLower(strings.TrimSpace(alloy))
	if inoculation < 0 || inoculation > 1 || math.IsNaN(inoculation) {
		return Params{}, fmt.Errorf("sim: inoculation %g is outside 0..1", inoculation)
	}
	p := Params{Alloy: a, Inoculation: inoculation, Seed: seed,
		Logger: Logger{RateHz: 10, NoiseC: 0.05, QuantC: 0.01, MainsC: 0.02, LagS: 0.5}}
	switch a {
	case GreyIron:
		p.C, p.Si, p.P, p.PourC, p.CupMassKg = 3.35, 2.0, 0.04, 1340, 0.35
	case DuctileIron:
		p.C, p.Si, p.P, p.PourC, p.CupMassKg = 3.55, 2.5, 0.03, 1360, 0.35
	case WhiteIron:
		p.C, p.Si, p.P, p.PourC, p.CupMassKg = 3.35, 2.0, 0.04, 1340, 0.35
	case AlSi7Mg:
		p.Si, p.PourC, p.CupMassKg = 7.0, 720, 0.15
	case PureAl:
		p.PourC, p.CupMassKg = 720, 0.15
	case PureZn:
		p.PourC, p.CupMassKg = 470, 0.35
	case PureSn:
		p.PourC, p.CupMassKg = 270, 0.35
	case PureAg:
		p.PourC, p.CupMassKg = 1010, 0.45
	case PureCu:
		p.PourC, p.CupMassKg = 1135, 0.4
	default:
		return Params{}, fmt.Errorf("sim: unknown alloy %q (known: %s)", alloy, strings.Join(Alloys, ", "))
	}
	return p, nil
}

// Validate checks the parameters and names the first bad field.
func (p Params) Validate() error {
	known := false
	for _, a := range Alloys {
		known = known || a == p.Alloy
	}
	switch {
	case !known:
		return fmt.Errorf("sim: unknown alloy %q (known: %s)", p.Alloy, strings.Join(Alloys, ", "))
	case p.Inoculation < 0 || p.Inoculation > 1:
		return fmt.Errorf("sim: inoculation %g is outside 0..1", p.Inoculation)
	case p.Modification < 0 || p.Modification > 1:
		return fmt.Errorf("sim: modification %g is outside 0..1", p.Modification)
	case p.CupMassKg < 0 || p.CupMassKg > 5:
		return fmt.Errorf("sim: cup mass %g kg is outside 0..5 kg", p.CupMassKg)
	case p.HoldMin < 0:
		return fmt.Errorf("sim: holding time %g min is negative", p.HoldMin)
	case p.Logger.RateHz < 0 || p.Logger.RateHz > 1000:
		return fmt.Errorf("sim: logger rate %g Hz is outside 0..1000 Hz", p.Logger.RateHz)
	case p.Logger.NoiseC < 0 || p.Logger.QuantC < 0 || p.Logger.MainsC < 0 || p.Logger.SpikeRate < 0 || p.Logger.SpikeRate > 1:
		return fmt.Errorf("sim: logger noise, quantisation, mains and spike rate must be ≥ 0 (spike rate ≤ 1)")
	case p.DurationS < 0 || p.DurationS > 3600:
		return fmt.Errorf("sim: duration %g s is outside 0..3600 s", p.DurationS)
	case p.Cup != CupLumped && p.Cup != CupRadial:
		return fmt.Errorf("sim: unknown cup kind %q (known: %q, %q)", p.Cup, CupLumped, CupRadial)
	}
	if err := p.Radial.validate(); err != nil {
		return err
	}
	if err := p.validateAdditions(); err != nil {
		return err
	}
	if isIron(p.Alloy) {
		c := p.C
		if c == 0 && p.CE > 0 {
			c = p.CE - (p.Si+p.P)/3
		}
		if c < 2 || c > 4.8 || p.Si < 0 || p.Si > 4 || p.P < 0 || p.P > 1 {
			return fmt.Errorf("sim: iron chemistry C %.2f Si %.2f P %.2f %% is outside C 2–4.8, Si 0–4, P 0–1", c, p.Si, p.P)
		}
	}
	if p.Alloy == AlSi7Mg && (p.Si < 0 || p.Si > 12) {
		return fmt.Errorf("sim: Al-Si silicon %.2f %% is outside 0–12 %% (hypoeutectic only)", p.Si)
	}
	return nil
}
