package sim

import (
	"math"

	"github.com/undercool-foundry/undercool/internal/metal"
)

// Material properties (memory unless marked; the sources are named beside
// each value).
type material struct {
	rho, c, latent float64 // kg/m³, J/(kg K), J/kg
	h, eps         float64 // W/(m² K) (effective, fitted), emissivity of the open top
	k              float64 // thermal conductivity of the solid near the solidus, W/(m K)
	kLiquid        float64 // effective conductivity of the liquid in the radial cup, W/(m K)
}

var (
	// Cast iron: ρ ≈ 6900–7100 kg/m³, c ≈ 0.80–0.85 kJ/(kg K), L ≈ 200–250
	// kJ/kg (memory); h ≈ 50–100 W/(m² K) for a 0.35 kg
	// sand cup (derived from the energy balance, fitted); ε ≈ 0.35 of an
	// oxidised iron surface (memory); liquid iron conducts ≈ 20–30 W/(m K)
	// (memory), the radial cup's effective 40 adds a little convection
	// (fitted).
	ironMat = material{rho: 7000, c: 830, latent: 230e3, h: 55, eps: 0.35, k: 30, kLiquid: 40}
	// Al-Si7Mg: ρ ≈ 2400 kg/m³, c ≈ 1.18 kJ/(kg K), L ≈ 430–500 kJ/kg
	// (memory); ε ≈ 0.1 of an aluminium melt (memory); liquid Al-Si
	// conducts ≈ 70–90 W/(m K) (memory), effective 100 (fitted).
	alSiMat = material{rho: 2400, c: 1180, latent: 450e3, h: 50, eps: 0.1, k: 150, kLiquid: 100}
	// Pure Al: ρ 2375 kg/m³ (liquid), c 1.18 kJ/(kg K), L 10.71 kJ/mol =
	// 397 kJ/kg (memory); liquid ≈ 90 W/(m K) (memory).
	pureAlMat = material{rho: 2375, c: 1180, latent: 397e3, h: 45, eps: 0.1, k: 210, kLiquid: 100}
	// Solid conductivities near the solidus (memory): grey iron ≈30,
	// Al-Si7Mg ≈150, Al ≈210, Zn ≈100, Sn ≈60, Ag ≈360, Cu ≈330 W/(m K).
	// Pure Zn: ρ 6570 kg/m³ (liquid), c 0.48 kJ/(kg K), L 7.32 kJ/mol /
	// 65.38 g/mol = 112 kJ/kg (memory; derived); liquid ≈ 50 W/(m K) (memory).
	pureZnMat = material{rho: 6570, c: 480, latent: 112e3, h: 50, eps: 0.1, k: 100, kLiquid: 50}
	// Pure Sn: ρ 6990 kg/m³ (liquid), c 0.25 kJ/(kg K) (liquid), L 7.03
	// kJ/mol / 118.71 g/mol = 59.2 kJ/kg (memory; derived); liquid ≈ 30
	// W/(m K) (memory).
	pureSnMat = material{rho: 6990, c: 250, latent: 59.2e3, h: 50, eps: 0.1, k: 60, kLiquid: 30}
	// Pure Ag: ρ 9320 kg/m³ (liquid), c 0.31 kJ/(kg K) (liquid), L 11.3
	// kJ/mol / 107.87 g/mol = 105 kJ/kg (memory; derived); liquid ≈ 175
	// W/(m K) (memory); a bright melt, ε ≈ 0.05 (memory).
	pureAgMat = material{rho: 9320, c: 310, latent: 105e3, h: 55, eps: 0.05, k: 360, kLiquid: 175}
	// Pure Cu: ρ 8000 kg/m³ (liquid), c 0.49 kJ/(kg K) (liquid), L 13.26
	// kJ/mol / 63.546 g/mol = 209 kJ/kg (memory; derived); liquid ≈ 165
	// W/(m K) (memory); ε ≈ 0.15 of a lightly oxidised melt (memory).
	pureCuMat = material{rho: 8000, c: 490, latent: 209e3, h: 55, eps: 0.15, k: 330, kLiquid: 165}
)

// Nucleation and growth constants at the poor (level 0) and good (level 1)
// ends. A level x in between gives A = A₀·(A₁/A₀)^x and
// ΔT₀ = ΔT₀₀ + x·(ΔT₀₁ − ΔT₀₀): inoculants and grain refiners add
// potent sites (larger A) that act at smaller undercooling (smaller ΔT₀).
// The A ranges put eutectic cells at ≈0.3–3 mm (derived); the values are
// fitted so the readings fall in the typical ranges that physics_test.go
// checks, with their sources (fitted, not measured).
var (
	// Grey iron eutectic: μ ≈ 10⁻⁷–5×10⁻⁷ m s⁻¹ K⁻² is derived; the model
	// takes 1.5×10⁻⁶ (fitted): freezing at the measured-basis Tst
	// (GreyStableOffsetC), the typical readings need the faster growth, with
	// a well inoculated cup about 3 °C and an un-inoculated one about 12 °C
	// below it.
	greyPoor = law{A: 2e4, N: 2, DT0: 3, Mu: 1.5e-6}
	greyGood = law{A: 1e9, N: 2, DT0: 0.5, Mu: 1.5e-6}
	// Ductile iron: many nodules whose growth is limited by diffusion of
	// carbon through the austenite shell, modelled as a ten times smaller
	// μ (derived).
	ductilePoor = law{A: 1e7, N: 2, DT0: 5, Mu: 1e-7}
	ductileGood = law{A: 3e9, N: 2, DT0: 1.5, Mu: 1e-7}
	// Ledeburite (cementite eutectic) in a tellurium cup grows fast and
	// nucleates readily, so the arrest is flat (practice; fitted).
	whiteLaw = law{A: 1e10, N: 2, DT0: 0.5, Mu: 3e-4}
	// Primary austenite dendrites (fitted).
	austeniteLaw = law{A: 1e10, N: 2, DT0: 0.3, Mu: 3e-6}
	// Primary α-Al: dendrite tip u ≈ 2.9×10⁻⁶·ΔT² m/s for Al-7Si (Rappaz
	// & Gandin, Acta Metall. Mater. 41 (1993) 345) (memory); unrefined melts
	// nucleate at 1–3 K, TiB₂ refiner at ≈0.2–0.6 K (free growth, Greer et
	// al., Acta Mater. 48 (2000) 2823) (memory).
	alphaPoor = law{A: 3e6, N: 2, DT0: 1.5, Mu: 1.5e-5}
	alphaGood = law{A: 3e12, N: 2, DT0: 0.15, Mu: 1.5e-5}
	// Al-Si eutectic, unmodified and fully modified (Sr poisons the
	// eutectic nuclei: McDonald et al. 2004) (fitted).
	alSiUnmod = law{A: 1e10, N: 2, DT0: 0.3, Mu: 4e-6}
	alSiMod   = law{A: 1e8, N: 2, DT0: 1.0, Mu: 4e-6}
	// Pure metals freeze within hundredths of a kelvin of the fixed point
	// once nucleated (memory); μ is chosen so the growth undercooling is
	// ≈0.02 °C (derived). A cup nucleates at ≈1 K (fitted).
	pureLaw = law{A: 1e9, N: 2, DT0: 0.8, Mu: 1e-2}
)

// Fe-C-Si freezes its graphite eutectic over a temperature interval (the
// three-phase field), and in Al-Si7Mg the last liquid is enriched in Mg and
// Fe: the eutectic reference temperature falls by this much from the first
// to the last eutectic (memory for the existence; the size is fitted).
const (
	ironEutecticRange = 8.0
	alSiEutecticRange = 2.0
)

// mix interpolates a law between its poor and good end at level x in 0..1.
func mix(poor, good law, x float64) law {
	return law{
		A:   poor.A * math.Pow(good.A/poor.A, x),
		N:   poor.N + x*(good.N-poor.N),
		DT0: poor.DT0 + x*(good.DT0-poor.DT0),
		Mu:  poor.Mu * math.Pow(good.Mu/poor.Mu, x),
	}
}

// EffectiveInoculation is the inoculation (or refiner) level after fading
// for the holding time: i·2^(−HoldMin/half-life).
func (p Params) EffectiveInoculation() float64 {
	hl := p.FadeHalfLifeMin
	if hl <= 0 {
		hl = 8 // iron inoculants lose half their effect in ≈5–10 min (memory, practice)
		if !isIron(p.Alloy) {
			hl = 30 // TiB₂ grain refiner settles more slowly (memory)
		}
	}
	return p.Inoculation * math.Exp2(-p.HoldMin/hl)
}

// withDefaults fills the zero fields from the alloy's preset.
func (p Params) withDefaults() Params {
	d, err := Preset(p.Alloy, 0, p.Seed)
	if err != nil {
		return p
	}
	if isIron(p.Alloy) && p.C == 0 {
		if p.Si == 0 {
			p.Si = d.Si
		}
		if p.P == 0 {
			p.P = d.P
		}
		if p.CE > 0 {
			p.C = p.CE - (p.Si+p.P)/3
		} else {
			p.C = d.C
		}
	}
	if p.Alloy == AlSi7Mg {
		if p.Si == 0 {
			p.Si = d.Si
		}
		if p.Mg == 0 {
			p.Mg = alSi7MgMg
		}
		if p.Fe == 0 {
			p.Fe = alSi7MgFe
		}
	}
	if isIron(p.Alloy) && p.Si == 0 {
		p.Si = d.Si
	}
	if p.PourC == 0 {
		p.PourC = d.PourC
	}
	if p.CupMassKg == 0 {
		p.CupMassKg = d.CupMassKg
	}
	if p.AmbientC == 0 {
		p.AmbientC = 25
	}
	if p.PourAtS == 0 {
		p.PourAtS = 3
	}
	if p.FillS == 0 {
		p.FillS = 0.8
	}
	if p.Logger.RateHz == 0 {
		p.Logger.RateHz = d.Logger.RateHz
	}
	if p.Logger.LagS == 0 {
		p.Logger.LagS = 0.5
	}
	return p
}

// material is the alloy's material (the zero value for an unknown alloy).
func (p Params) material() material {
	switch p.Alloy {
	case GreyIron, DuctileIron, WhiteIron:
		return ironMat
	case AlSi7Mg:
		return alSiMat
	case PureAl:
		return pureAlMat
	case PureZn:
		return pureZnMat
	case PureSn:
		return pureSnMat
	case PureAg:
		return pureAgMat
	case PureCu:
		return pureCuMat
	}
	return material{}
}

// model resolves the parameters (with defaults filled) into the cup model.
func (p Params) model() cup {
	mat := p.material()
	m := cup{pour: p.PourC, ambient: p.AmbientC}
	inoc := p.EffectiveInoculation()
	switch p.Alloy {
	case GreyIron, DuctileIron, WhiteIron:
		m.tst, m.tmst = IronEutecticsC(p.Alloy, p.Si, p.P)
		m.liquidus = IronLiquidusC(p.C, p.Si, p.P)
		m.lineTm, m.lineSlope = ironLiquidusIntercept, ironLiquidusSlope
		m.c0 = p.C + p.Si/4 + p.P/2
		m.partition, m.lever = ironPartition, true
		m.primaryLaw = austeniteLaw
		switch p.Alloy {
		case GreyIron:
			m.eutectic, m.eutecticLaw = m.tst, mix(greyPoor, greyGood, inoc)
		case DuctileIron:
			m.eutectic, m.eutecticLaw = m.tst, mix(ductilePoor, ductileGood, inoc)
		default:
			m.eutectic, m.eutecticLaw = m.tmst, whiteLaw
		}
	case AlSi7Mg:
		m.liquidus = AlSiLiquidusC(p.Si)
		m.lineTm, m.lineSlope = alSiLiquidusIntercept, alSiLiquidusSlope
		m.c0, m.partition = p.Si, alSiPartition
		m.primaryLaw = mix(alphaPoor, alphaGood, inoc)
		m.eutectic = AlSiUnmodifiedEutecticC(p.Si, p.Mg, p.Fe) - ModificationMaxC*p.Modification
		m.eutecticLaw = mix(alSiUnmod, alSiMod, p.Modification)
	case PureAl:
		m.eutectic, m.eutecticLaw = FreezeAlC, pureLaw
	case PureZn:
		m.eutectic, m.eutecticLaw = FreezeZnC, pureLaw
	case PureSn:
		m.eutectic, m.eutecticLaw = FreezeSnC, pureLaw
	case PureAg:
		m.eutectic, m.eutecticLaw = FreezeAgC, pureLaw
	case PureCu:
		m.eutectic, m.eutecticLaw = FreezeCuC, pureLaw
	}
	switch p.Alloy {
	case GreyIron, DuctileIron:
		m.eutRange = ironEutecticRange
	case AlSi7Mg:
		m.eutRange = alSiEutecticRange
	}
	m.primary = m.liquidus > m.eutectic && m.lineSlope > 0
	m.scheilExp = 1 / (m.partition - 1)
	m.mass, m.rho, m.c, m.latent, m.h, m.eps = p.CupMassKg, mat.rho, mat.c, mat.latent, mat.h, mat.eps
	// A cylinder as high as wide: V = πD³/4, A = 1.5πD², A_top = πD²/4.
	d := math.Cbrt(4 * p.CupMassKg / mat.rho / math.Pi)
	m.area, m.areaTop = 1.5*math.Pi*d*d, math.Pi*d*d/4
	// Core–shell conductance of a cylinder of height d between radii
	// 0.28·d and 0.39·d: K = 2π·k·d/ln 2 (derived); liquid convection
	// makes it ten times larger (fitted).
	m.kSolid = 2 * math.Pi * mat.k * d / math.Ln2
	m.kLiquid = 10 * m.kSolid
	m.mat = mat
	if p.Cup == CupRadial {
		m.radial = p.Radial.resolve(mat)
		m.front = isPure(p.Alloy)
	}
	p.adjust(&m)
	return m
}

// Nominal Mg and Fe of an Al-Si7Mg (A356-type) melt, wt % (practice).
const (
	alSi7MgMg = 0.35
	alSi7MgFe = 0.12
)

// AlSiUnmodifiedEutecticC is the unmodified Al-Si eutectic growth reference of
// an alloy with the given Si, Mg and Fe (wt %): the binary 577 °C (Murray &
// McAlister 1984) lowered by the other elements, with the same
// composition correction the analysis uses (metal.DefaultAlSi, memory), so
// a simulated cup and its assessment share one reference temperature.
func AlSiUnmodifiedEutecticC(si, mg, fe float64) float64 {
	return metal.DefaultAlSi().Eutectic(map[string]float64{"si": si, "mg": mg, "fe": fe})
}
