package metal

import (
	"errors"
	"fmt"
	"math"
)

// Boltzmann is the Boltzmann constant, J/K (exact in the 2019 SI).
const Boltzmann = 1.380649e-23

// Constants are the properties of a metal used by the nucleation-potency
// figure. All are configurable; the defaults in Metals are recalled values.
type Constants struct {
	Name        string
	TmK         float64 // melting point, K
	DHfJPerMol  float64 // latent heat of fusion, J/mol
	SigmaJPerM2 float64 // solid-liquid interfacial energy, J/m²
	MolarVolM3  float64 // molar volume of the solid, m³/mol
	DTHomK      float64 // largest (homogeneous) undercooling, K
	Source      string
}

// DHv is the latent heat per unit volume ΔH_v = ΔH_f / V_m, J/m³.
func (c Constants) DHv() float64 { return c.DHfJPerMol / c.MolarVolM3 }

// Metals holds default constants. T_m of Al and Cu are the ITS-90 freezing
// points (Preston-Thomas, Metrologia 27 (1990) 3); T_m of Fe (1538 °C) and Ni
// (1455 °C), ΔH_f (Al 10.71, Fe 13.81, Ni 17.48, Cu 13.26 kJ/mol), σ_sl
// (Turnbull: Al 93, Cu 177, Ni 255, Fe 204 mJ/m²) and Turnbull's largest
// droplet undercoolings (Al 130, Cu 236, Ni 319, Fe 295 K; J. Appl. Phys. 21
// (1950) 1022) are recalled (memory); molar volumes are molar mass over
// room-temperature solid density (memory).
var Metals = map[string]Constants{
	"al": {Name: "Al", TmK: 933.473, DHfJPerMol: 10710, SigmaJPerM2: 0.093, MolarVolM3: 26.982e-3 / 2699, DTHomK: 130, Source: "Turnbull (1950) (memory)"},
	"fe": {Name: "Fe", TmK: 1811.15, DHfJPerMol: 13810, SigmaJPerM2: 0.204, MolarVolM3: 55.845e-3 / 7874, DTHomK: 295, Source: "Turnbull (1950) (memory)"},
	"cu": {Name: "Cu", TmK: 1357.77, DHfJPerMol: 13260, SigmaJPerM2: 0.177, MolarVolM3: 63.546e-3 / 8960, DTHomK: 236, Source: "Turnbull (1950) (memory)"},
	"ni": {Name: "Ni", TmK: 1728.15, DHfJPerMol: 17480, SigmaJPerM2: 0.255, MolarVolM3: 58.693e-3 / 8908, DTHomK: 319, Source: "Turnbull (1950) (memory)"},
}

// Onset modes.
const (
	// OnsetHomRatio assumes the same onset criterion ΔG*/kT for the
	// homogeneous limit ΔT_hom and the measured undercooling, giving
	// f(θ) = (ΔT/ΔT_hom)²·(T_m − ΔT)/(T_m − ΔT_hom). Needs only T_m, ΔT_hom.
	OnsetHomRatio = "hom-ratio"
	// OnsetAbsolute takes ΔG*_het = N·kT at onset (N ≈ 76–80 for
	// I = 1 cm⁻³ s⁻¹; ≈78 in Porter & Easterling, memory), so
	// f(θ) = N·k·(T_m − ΔT)/ΔG*_hom(ΔT). Needs σ, ΔH_f, V_m.
	OnsetAbsolute = "absolute"
)

// DefaultOnsetKT is the ΔG*/kT at onset used by OnsetAbsolute (Porter &
// Easterling, memory).
const DefaultOnsetKT = 78

// Onset is the nucleation-onset criterion.
type Onset struct {
	Mode string  // OnsetHomRatio (default when empty) or OnsetAbsolute
	KT   float64 // ΔG*/kT at onset for OnsetAbsolute; 0 means DefaultOnsetKT
}

// FTheta is the spherical-cap factor f(θ) = (2 + cos θ)(1 − cos θ)²/4 of
// heterogeneous nucleation (θ in radians): ΔG*_het = f(θ)·ΔG*_hom (Turnbull
// 1950; Porter & Easterling). f is 0 at 0, ½ at 90° and 1 at 180°.
func FTheta(theta float64) float64 {
	c := math.Cos(theta)
	return (2 + c) * (1 - c) * (1 - c) / 4
}

// ThetaFromF inverts FTheta on [0, π] in closed form. With x = cos θ,
// 4f = 2 − 3x + x³, a depressed cubic whose root in [−1, 1] is
// x = 2·cos((arccos(2f − 1) − 2π)/3). f is clamped to [0, 1].
func ThetaFromF(f float64) float64 {
	f = math.Max(0, math.Min(1, f))
	x := 2 * math.Cos((math.Acos(2*f-1)-2*math.Pi)/3)
	return math.Acos(math.Max(-1, math.Min(1, x)))
}

// GHom is the homogeneous barrier ΔG*_hom = 16πσ³T_m²/(3ΔH_v²ΔT²), J.
func (c Constants) GHom(dT float64) float64 {
	h := c.DHv()
	return 16 * math.Pi * math.Pow(c.SigmaJPerM2, 3) * c.TmK * c.TmK / (3 * h * h * dT * dT)
}

// RStar is the critical radius r* = 2σT_m/(ΔH_v·ΔT), m; it does not depend
// on θ.
func (c Constants) RStar(dT float64) float64 { return 2 * c.SigmaJPerM2 * c.TmK / (c.DHv() * dT) }

// Free-growth constants for α-Al (Greer et al., Acta Mater. 48 (2000) 2823;
// memory).
const (
	FreeGrowthSigmaAl = 0.158   // J/m²
	FreeGrowthDSvAl   = 1.112e6 // J K⁻¹ m⁻³
)

// FreeGrowthDiameter is the smallest nucleant particle diameter that can
// start free growth at undercooling dT (K): d = 4σ/(ΔS_v·ΔT), m (Greer et al.
// 2000).
func FreeGrowthDiameter(dT, sigma, dSv float64) float64 { return 4 * sigma / (dSv * dT) }

// FreeGrowthUndercooling is ΔT_fg = 4σ/(ΔS_v·d), K, for a particle of
// diameter d (m).
func FreeGrowthUndercooling(d, sigma, dSv float64) float64 { return 4 * sigma / (dSv * d) }

// Potency is the nucleation-potency figure of a sample: an EFFECTIVE contact
// angle and barrier ratio for ranking melts, never a measured angle.
type Potency struct {
	UndercoolingK float64 // ΔT used, K
	FTheta        float64 // f(θ) = ΔG*_het/ΔG*_hom
	ThetaDeg      float64 // effective contact angle, degrees
	BarrierRatio  float64 // ΔG*_het/ΔG*_hom (equal to f(θ))
	RStarNm       float64 // critical radius r*, nm
	GHetJ         float64 // ΔG*_het, J
	DMinUm        float64 // free-growth smallest active nucleant, µm (aluminium only; else 0)
	Basis         string  // the assumptions, in words
}

// ErrNoUndercooling is returned when ΔT is not positive: potency is then
// undefined.
var ErrNoUndercooling = errors.New("metal: no undercooling, nucleation potency undefined")

// NucleationPotency computes the potency figure from a measured nucleation
// undercooling dT (K, > 0) with the metal's constants and the onset
// criterion. An undercooling at or beyond the homogeneous limit gives
// f = 1, θ = 180° (no potent nucleant). For aluminium (c.Name "Al") it adds
// the free-growth estimate of the smallest active nucleant.
func NucleationPotency(c Constants, dT float64, o Onset) (Potency, error) {
	if !(dT > 0) || math.IsInf(dT, 0) {
		return Potency{}, fmt.Errorf("%w (ΔT %.3g K)", ErrNoUndercooling, dT)
	}
	if !(c.TmK > dT) {
		return Potency{}, fmt.Errorf("metal: undercooling %.3g K is not below T_m %.6g K", dT, c.TmK)
	}
	p := Potency{UndercoolingK: dT}
	var basis string
	switch o.Mode {
	case "", OnsetHomRatio:
		if !(c.DTHomK > 0 && c.DTHomK < c.TmK) {
			return Potency{}, fmt.Errorf("metal: %s: homogeneous undercooling %.6g K is not in (0, T_m)", c.Name, c.DTHomK)
		}
		r := dT / c.DTHomK
		p.FTheta = r * r * (c.TmK - dT) / (c.TmK - c.DTHomK)
		basis = fmt.Sprintf("same onset criterion ΔG*/kT for the homogeneous limit and the sample: "+
			"f(θ) = (ΔT/ΔT_hom)²·(T_m−ΔT)/(T_m−ΔT_hom) with %s constants T_m %.2f K, ΔT_hom %.0f K (%s)",
			c.Name, c.TmK, c.DTHomK, c.Source)
	case OnsetAbsolute:
		kt := o.KT
		if kt == 0 {
			kt = DefaultOnsetKT
		}
		p.FTheta = kt * Boltzmann * (c.TmK - dT) / c.GHom(dT)
		basis = fmt.Sprintf("onset at ΔG*_het = %.0f kT: f(θ) = %.0f·k·(T_m−ΔT)/ΔG*_hom(ΔT) with %s constants "+
			"T_m %.2f K, σ %.3f J/m², ΔH_f %.0f J/mol (%s)", kt, kt, c.Name, c.TmK, c.SigmaJPerM2, c.DHfJPerMol, c.Source)
	default:
		return Potency{}, fmt.Errorf("metal: unknown onset criterion %q (want %q or %q)", o.Mode, OnsetHomRatio, OnsetAbsolute)
	}
	p.FTheta = math.Min(p.FTheta, 1)
	p.BarrierRatio = p.FTheta
	p.ThetaDeg = ThetaFromF(p.FTheta) * 180 / math.Pi
	if c.SigmaJPerM2 > 0 && c.DHfJPerMol > 0 && c.MolarVolM3 > 0 {
		p.RStarNm = c.RStar(dT) * 1e9
		p.GHetJ = p.FTheta * c.GHom(dT)
	}
	if c.Name == "Al" {
		p.DMinUm = FreeGrowthDiameter(dT, FreeGrowthSigmaAl, FreeGrowthDSvAl) * 1e6
		basis += "; smallest active nucleant from free growth d = 4σ/(ΔS_v·ΔT), σ 0.158 J/m², ΔS_v 1.112e6 J/K/m³ (Greer et al. 2000)"
	}
	p.Basis = "EFFECTIVE contact angle for ranking melts, not a measured angle; classical heterogeneous " +
		"nucleation on a spherical cap, f(θ) = (2+cosθ)(1−cosθ)²/4, equal prefactors assumed; " + basis
	return p, nil
}
