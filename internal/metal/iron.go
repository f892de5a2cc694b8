// Package metal turns characteristic points and chemistry into metallurgy:
// the stable and metastable eutectic temperatures of cast iron, carbon
// equivalents, carbon and silicon from a tellurium (white) cup, the Al-Si
// liquidus and eutectic references, a nucleation-potency figure from
// classical nucleation theory, and least-squares fits for shop calibration.
//
// The package is pure. Temperatures in °C unless a name says K, chemistry in
// wt %. Every coefficient is a value the caller may replace: several defaults
// are recalled rather than re-checked and are marked "(memory)"; shops fit
// their own.
package metal

// Eutectic gives a cast iron's stable (graphite) and metastable (cementite)
// eutectic temperatures as linear functions of silicon and phosphorus:
//
//	Tst  = StableBase + StableSi·Si + StableP·P
//	Tmst = MetaBase + MetaSi·Si + MetaP·P
type Eutectic struct {
	StableBase, StableSi, StableP float64
	MetaBase, MetaSi, MetaP       float64
}

// DefaultEutectic is Tst ≈ 1153 + 5.25·Si − 14.88·P and Tmst ≈ 1148 − 15·Si
// (Fe-C-Si literature, memory, unverified; variants use +6.7·Si for Tst and
// 1147 − 12.5·Si for Tmst). The binary Fe-C values 1153 °C and 1148 °C are
// from ASM Handbook vol. 3 (memory).
func DefaultEutectic() Eutectic {
	return Eutectic{StableBase: 1153, StableSi: 5.25, StableP: -14.88, MetaBase: 1148, MetaSi: -15, MetaP: 0}
}

// Stable is the stable (graphite) eutectic temperature, °C.
func (e Eutectic) Stable(si, p float64) float64 { return e.StableBase + e.StableSi*si + e.StableP*p }

// Metastable is the metastable (cementite) eutectic temperature, °C.
func (e Eutectic) Metastable(si, p float64) float64 { return e.MetaBase + e.MetaSi*si + e.MetaP*p }

// SiFromMetastable inverts Metastable for silicon given the measured white
// eutectic arrest T (°C) and P; offset is how far measured arrests sit below
// the calculated value (°C). It returns NaN when MetaSi is 0.
func (e Eutectic) SiFromMetastable(t, p, offset float64) float64 {
	return (t + offset - e.MetaBase - e.MetaP*p) / e.MetaSi
}

// Undercooling is the eutectic undercooling below the stable eutectic,
// Tst − T_eutectic-min, °C (positive when undercooled).
func Undercooling(tst, eutecticMin float64) float64 { return tst - eutecticMin }

// ChillMargin is how far the eutectic minimum stays above the metastable
// eutectic, T_eutectic-min − Tmst, °C. Small or negative: white/mottled
// (chill, carbide) risk.
func ChillMargin(eutecticMin, tmst float64) float64 { return eutecticMin - tmst }

// CEClassic is the classic carbon equivalent C + (Si + P)/3 (Stefanescu,
// Int. J. Metalcasting (2021)); an iron is about eutectic at 4.2–4.3.
func CEClassic(c, si, p float64) float64 { return c + (si+p)/3 }

// LiquidusCE is a published or fitted regression of the liquidus temperature
// of hypoeutectic cast iron on its liquidus carbon equivalent:
// TL = A − B·CEL (°C), with CEL = C + Σ Coef[el]·el (wt %).
type LiquidusCE struct {
	Name   string             // "koriyama2020", "heine", "shop"
	Source string             // authors and publication, or the pairs file
	A, B   float64            // TL = A − B·CEL
	Coef   map[string]float64 // CEL = C + Σ Coef[el]·wt %(el)
}

// Koriyama2020 is TL = 1625 − 110·CEL with CEL = C + 0.23Si − 0.03Mn + 0.32P
// + 0.64S + 0.02Ni + 0.06Cr (Koriyama, Kanno, Iwami, Kang, Int. J.
// Metalcasting (2020); source, some signs reconstructed). CEL 4.0 → 1185 °C.
func Koriyama2020() LiquidusCE {
	return LiquidusCE{
		Name: "koriyama2020", Source: "Koriyama, Kanno, Iwami, Kang, Int. J. Metalcasting (2020)",
		A: 1625, B: 110,
		Coef: map[string]float64{"si": 0.23, "mn": -0.03, "p": 0.32, "s": 0.64, "ni": 0.02, "cr": 0.06},
	}
}

// Heine is the older TL = 1669 − 124·CEL with CEL = C + Si/4 + P/2 (Heine,
// AFS Transactions; memory). CEL 4.0 → 1173 °C.
func Heine() LiquidusCE {
	return LiquidusCE{
		Name: "heine", Source: "Heine, AFS Transactions (memory)",
		A: 1669, B: 124,
		Coef: map[string]float64{"si": 0.25, "p": 0.5},
	}
}

// CEL is the liquidus carbon equivalent that gives the liquidus tl (°C).
func (r LiquidusCE) CEL(tl float64) float64 { return (r.A - tl) / r.B }

// Liquidus is the liquidus temperature (°C) of an iron with the given CEL.
func (r LiquidusCE) Liquidus(cel float64) float64 { return r.A - r.B*cel }

// CELOf is the regression's own CEL of an analysis (wt %, keys by lower-case
// element symbol, "c" for carbon).
func (r LiquidusCE) CELOf(chem map[string]float64) float64 {
	v := chem["c"]
	for el, k := range r.Coef {
		v += k * chem[el]
	}
	return v
}

// WhiteCup estimates carbon and silicon from a tellurium (white-freezing) cup:
//
//	Si = SiA + SiB·T_meta            (T_meta the white eutectic arrest, °C)
//	C  = CA + CTL·TL + CSi·Si + CP·P (TL the liquidus arrest, °C)
//
// the structure C = CEL(TL) − k·Si (practice). Each foundry must fit its own
// coefficients against its spectrometer (Regordosa, Sertucha, de la Torre,
// Lacaze, Int. J. Metalcasting, c. 2020).
type WhiteCup struct {
	SiA, SiB         float64
	CA, CTL, CSi, CP float64
}

// DefaultWhiteCup inverts the metastable eutectic of e (with measured arrests
// offset °C below the calculated ones; Riposan et al., Metals 10 (2020) 993
// found 8.3 °C on average) for Si, and Heine's CEL for C:
// C = (1669 − TL)/124 − Si/4 − P/2.
func DefaultWhiteCup(e Eutectic, offset float64) WhiteCup {
	h := Heine()
	return WhiteCup{
		SiA: (offset - e.MetaBase) / e.MetaSi, SiB: 1 / e.MetaSi,
		CA: h.A / h.B, CTL: -1 / h.B, CSi: -h.Coef["si"], CP: -h.Coef["p"],
	}
}

// Si is the silicon estimate (wt %) from the white arrest (°C).
func (w WhiteCup) Si(tMeta float64) float64 { return w.SiA + w.SiB*tMeta }

// C is the carbon estimate (wt %) from the liquidus (°C), Si and P (wt %).
func (w WhiteCup) C(tl, si, p float64) float64 { return w.CA + w.CTL*tl + w.CSi*si + w.CP*p }
