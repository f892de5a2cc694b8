package metal

// AlSi holds the composition corrections of an Al-Si casting alloy's
// reference temperatures:
//
//	TL  = LiquidusBase + Σ LiquidusSlope[el]·wt %(el)
//	T_E = EutecticBase − (EutecticSiRef/Si)·Σ Depressor[el]·wt %(el) − EutecticOffset
//
// T_E is the unmodified eutectic growth temperature the measured plateau is
// compared with: the reference must be corrected for Si, Mg, Cu and Fe, and a
// fit made at another cooling rate gives systematic errors (Ferdian & Lacaze,
// Mater. Sci. Forum 790–791 (2014) 367), hence the per-shop offset.
type AlSi struct {
	LiquidusBase   float64
	LiquidusSlope  map[string]float64
	EutecticBase   float64
	EutecticSiRef  float64
	Depressor      map[string]float64
	EutecticOffset float64
}

// DefaultAlSi: the liquidus of pure Al, 660.45 °C on the Al-Si diagram
// (Murray & McAlister, Bull. Alloy Phase Diagrams 5 (1984); ITS-90 puts the
// Al freezing point at 660.323 °C), with the Al-Si liquidus slope ≈ −6.6 °C
// per wt % Si (memory); the Al-Si eutectic 577 °C (Murray & McAlister 1984,
// source) depressed by Mg 4.43, Fe 1.43, Cu 1.93, Zn 1.7, Mn 3.0, Ni 4.0 °C
// per wt %, scaled by 12.5/Si (memory: a published form recalled, not
// re-checked; configurable).
func DefaultAlSi() AlSi {
	return AlSi{
		LiquidusBase:  660.45,
		LiquidusSlope: map[string]float64{"si": -6.6},
		EutecticBase:  577, EutecticSiRef: 12.5,
		Depressor: map[string]float64{"mg": 4.43, "fe": 1.43, "cu": 1.93, "zn": 1.7, "mn": 3.0, "ni": 4.0},
	}
}

// Liquidus is the equilibrium α-Al liquidus of the analysis, °C.
func (a AlSi) Liquidus(chem map[string]float64) float64 {
	t := a.LiquidusBase
	for el, k := range a.LiquidusSlope {
		t += k * chem[el]
	}
	return t
}

// Eutectic is the unmodified Al-Si eutectic reference of the analysis, °C.
// With no silicon it returns EutecticBase − EutecticOffset (no scaling).
func (a AlSi) Eutectic(chem map[string]float64) float64 {
	sum := 0.0
	for el, k := range a.Depressor {
		sum += k * chem[el]
	}
	scale := 1.0
	if si := chem["si"]; si > 0 && a.EutecticSiRef > 0 {
		scale = a.EutecticSiRef / si
	}
	return a.EutecticBase - scale*sum - a.EutecticOffset
}

// AlphaUndercooling is the α-Al nucleation undercooling below the
// equilibrium liquidus tl: tl − T_min, °C, where T_min is the primary
// undercooling minimum (or the arrest itself when it does not recalesce).
func AlphaUndercooling(tl, tMin float64) float64 { return tl - tMin }

// EutecticDepression is how far the eutectic growth temperature (the plateau)
// sits below the unmodified reference: T_E,ref − T_growth, °C. Sr or Na
// modification depresses it by ≈4–8 °C (well modified ≳5–6 °C; memory).
func EutecticDepression(ref, growth float64) float64 { return ref - growth }
