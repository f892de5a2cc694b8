package forecast

import (
	"fmt"
	"math"

	"github.com/undercool-foundry/undercool/internal/sim"
)

// Law names the nucleation-and-growth law a fit adjusts.
type Law string

// The laws.
const (
	// LawEutectic is the eutectic's (the graphite eutectic of iron, the
	// Al-Si eutectic): what an iron inoculant and an Al-Si modifier act on.
	LawEutectic Law = "eutectic"
	// LawPrimary is the primary phase's (α-Al): what a grain refiner acts
	// on.
	LawPrimary Law = "primary"
)

// The parameters of the model, in the order of the parameter vector.
// Positive physical constants are fitted as logarithms, so that a step
// means the same at every scale and the fit never leaves them positive.
//
// The nucleation constant A and the growth coefficient μ enter the cup
// model only as the product A·μ³: the solid fraction is the JMAK
// 1 − exp(−(4π/3)·Σ N_i R_i³), and with every radius R_i = ∫μ·ΔT²dt
// scaled by s = μ'/μ and every count N_i by c = A'/A the sum scales by
// c·s³, so any A'·μ'³ = A·μ³ gives the same curve. A curve therefore fixes
// A·μ³ and not the two apart (a eutectic cell count would separate them):
// the fit adjusts ln(A·μ³) and keeps μ at the alloy's reference value.
const (
	parLnAMu3  = iota // ln(A·μ³) of the fitted law, A of N = A·ΔTⁿ in m⁻³ K⁻ⁿ, μ of u = μ·ΔT² in m s⁻¹ K⁻²
	parN              // exponent n of the fitted law
	parLnMu           // ln μ of the fitted law (held at the alloy's reference value)
	parLnH            // ln h, h the cup wall's heat-transfer coefficient, W m⁻² K⁻¹
	parLnTau          // ln τ, τ the thermocouple's time constant, s
	parTE             // eutectic growth reference, °C
	parTL             // equilibrium liquidus, °C
	parPour           // melt temperature in the full cup, °C
	parPourAt         // time of the pour on the model's clock, s
	parLnAMu3P        // ln(A·μ³) of the primary phase in a eutectic fit (n = 2, μ the reference)
	parLnMuP          // ln μ of the primary phase in a eutectic fit (held)
	parLnK            // ln of the factor on the core–shell conductance (the cup's gradient)
	numPar
)

// parInfo names a parameter and sets its finite-difference step. The
// model integrates in finite steps, so χ² is rough on a fine scale (of
// the order of one unit of χ² for steps of 0.01 in ln(A·μ³)); the steps
// of the nucleation parameters are taken larger than that roughness, so
// that the Jacobian follows the curve's trend rather than its grain.
var parInfo = [numPar]struct {
	name, unit string
	step       float64 // forward-difference step of the Jacobian
	log        bool    // fitted as a natural logarithm
}{
	parLnAMu3:  {"a_mu3", "m⁻³ K⁻ⁿ (m s⁻¹ K⁻²)³", 0.15, true},
	parN:       {"n", "", 0.03, false},
	parLnMu:    {"mu", "m s⁻¹ K⁻²", 0.02, true},
	parLnH:     {"h", "W m⁻² K⁻¹", 0.005, true},
	parLnTau:   {"tau", "s", 0.01, true},
	parTE:      {"eutectic_ref_c", "°C", 0.05, false},
	parTL:      {"liquidus_ref_c", "°C", 0.05, false},
	parPour:    {"pour_c", "°C", 0.2, false},
	parPourAt:  {"pour_s", "s", 0.01, false},
	parLnAMu3P: {"primary_a_mu3", "m⁻³ K⁻² (m s⁻¹ K⁻²)³", 0.15, true},
	parLnMuP:   {"primary_mu", "m s⁻¹ K⁻²", 0.02, true},
	parLnK:     {"conductance", "× the alloy's core–shell conductance", 0.05, true},
}

// bounds keeps a parameter vector physical: a step of the fit that leaves
// them is refused (the line search then shortens it).
var bounds = [numPar][2]float64{
	parLnAMu3:  {math.Log(1e-40), math.Log(1e5)},
	parN:       {0.5, 6},
	parLnMu:    {math.Log(1e-9), math.Log(1e-1)},
	parLnH:     {math.Log(5), math.Log(2000)},
	parLnTau:   {math.Log(0.02), math.Log(10)},
	parTE:      {0, 2000},
	parTL:      {0, 2000},
	parPour:    {0, 2000},
	parPourAt:  {-60, 1e4},
	parLnAMu3P: {math.Log(1e-40), math.Log(1e5)},
	parLnMuP:   {math.Log(1e-9), math.Log(1e-1)},
	parLnK:     {math.Log(1e-3), math.Log(1e3)},
}

// fitStepS is the model's integration step in a fit, s: iron and Al-Si
// cups give the same points to about 0.02 °C as at the simulator's 5 ms, at
// a quarter of the cost (internal/sim TestCurveCoarseStep).
const fitStepS = 0.02

// fitRadialStepS is an iron cup's integration step in a radial fit, s:
// the sim's coarsest; the 5-zone cup's points move by under 0.04 °C from
// the 5 ms step (internal/sim TestCurveRadialCoarseStep holds them to
// 0.1 °C), at two fifths of the cost of fitStepS.
const fitRadialStepS = 0.05

// fitRadialAlSiEutecticStepS is an Al-Si cup's step in a radial fit of the
// eutectic law (a modifier), s. Al-Si is rougher at coarse steps: its χ²
// at 50 ms left 5 of 12 modifier fits on radial cups unconverged, against 1
// of 12 at 20 and at 30 ms (TestHeldOutPairs, UNDERCOOL_ADVICE_PAIRS=12,
// with the same error distribution at 20 and 30 ms). A grain-refiner
// (primary-law) fit keeps fitStepS: its α-Al arrest, whose growth is
// fast, lost two of 12 fits at 30 ms and its errors grew (90th percentile
// 0.37 °C against 0.24 °C).
const fitRadialAlSiEutecticStepS = 0.03

// model is the cup model of one sample with some parameters free: the
// sim's lumped cup run through sim.Curve.
type model struct {
	base  sim.Params // alloy, chemistry, cup mass, room temperature
	law   Law        // the law the nucleation parameters belong to
	theta [numPar]float64
	free  []int // indexes into theta of the fitted parameters, in order
	// primary says the primary phase's law is set from parLnAMu3P (a
	// eutectic fit of a cup with a primary arrest).
	primary bool
	// radial, when set, is the radial cup the model runs instead of the
	// lumped one (sim.Kinetics.Radial): the fit of a cup with a gradient.
	radial *sim.Radial
	shift  float64
}

// set returns the full parameter vector with the free ones taken from x.
func (m *model) set(x []float64) [numPar]float64 {
	th := m.theta
	for i, j := range m.free {
		th[j] = x[i]
	}
	return th
}

// inBounds reports whether th lies inside the parameter bounds.
func inBounds(th [numPar]float64) bool {
	for i, b := range bounds {
		if !(th[i] >= b[0] && th[i] <= b[1]) {
			return false
		}
	}
	return true
}

// nucleation is the law of a product ln(A·μ³), exponent and ln μ.
func nucleation(lnAMu3, n, lnMu float64) *sim.Nucleation {
	return &sim.Nucleation{A: math.Exp(lnAMu3 - 3*lnMu), N: n, Mu: math.Exp(lnMu)}
}

// params turns a parameter vector into the sim's parameters and kinetics,
// with the additions given.
func (m *model) params(th [numPar]float64, adds []sim.Addition) (sim.Params, sim.Kinetics) {
	p := m.base
	p.PourC = th[parPour]
	p.PourAtS = th[parPourAt]
	p.Additions = adds
	k := sim.Kinetics{H: math.Exp(th[parLnH]), LagS: math.Exp(th[parLnTau]), EutecticC: th[parTE], LiquidusC: th[parTL],
		Conductance: math.Exp(th[parLnK]), StepS: fitStepS}
	if m.radial != nil {
		k.Radial = m.radial
		switch {
		case m.base.Alloy != sim.AlSi7Mg:
			k.StepS = fitRadialStepS
		case m.law == LawEutectic:
			k.StepS = fitRadialAlSiEutecticStepS
		}
	}
	l := nucleation(th[parLnAMu3], th[parN], th[parLnMu])
	if m.law == LawPrimary {
		k.Primary = l
	} else {
		k.Eutectic = l
		if m.primary {
			k.Primary = nucleation(th[parLnAMu3P], 2, th[parLnMuP])
		}
	}
	return p, k
}

// curve runs the model at the sample's times (already shifted to the
// model's clock).
func (m *model) curve(th [numPar]float64, adds []sim.Addition, times []float64) ([]float64, sim.Truth, error) {
	if !inBounds(th) {
		return nil, sim.Truth{}, fmt.Errorf("forecast: parameters outside their bounds")
	}
	p, k := m.params(th, adds)
	return sim.Curve(p, k, times)
}

// curveSaved is curve, also keeping the run at its last step before the
// eutectic (sim.CurveSaved) for the runs that differ from it only in the
// eutectic to resume from (curveFrom).
func (m *model) curveSaved(th [numPar]float64, adds []sim.Addition, times []float64) ([]float64, sim.Truth, *sim.Saved, error) {
	if !inBounds(th) {
		return nil, sim.Truth{}, nil, fmt.Errorf("forecast: parameters outside their bounds")
	}
	p, k := m.params(th, adds)
	return sim.CurveSaved(p, k, times)
}

// curveFrom is curve resumed from the saved run sv where the run differs
// from it only in the eutectic (sim.Saved.Curve: the same result as a
// full run), else made in full.
func (m *model) curveFrom(sv *sim.Saved, th [numPar]float64, adds []sim.Addition, times []float64) ([]float64, sim.Truth, error) {
	if !inBounds(th) {
		return nil, sim.Truth{}, fmt.Errorf("forecast: parameters outside their bounds")
	}
	p, k := m.params(th, adds)
	return sv.Curve(p, k, times)
}
