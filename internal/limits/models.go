package limits

import (
	"maps"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/metal"
)

// The methods below turn an alloy's reference section into the models of
// package metal. Each accepts a nil *Alloy (no spec) and then gives the
// package defaults.

// Eutectic is the alloy's iron eutectic model (defaults of
// metal.DefaultEutectic where the file sets no coefficient).
func (a *Alloy) Eutectic() metal.Eutectic {
	e := metal.DefaultEutectic()
	if a == nil {
		return e
	}
	r := a.Reference
	set(&e.StableBase, r.StableBaseC)
	set(&e.StableSi, r.StableSi)
	set(&e.StableP, r.StableP)
	set(&e.MetaBase, r.MetastableBaseC)
	set(&e.MetaSi, r.MetastableSi)
	set(&e.MetaP, r.MetastableP)
	return e
}

// Offsets are how far measured stable and metastable arrests sit below the
// calculated temperatures, °C (0 without a spec).
func (a *Alloy) Offsets() (stable, metastable float64) {
	if a == nil {
		return 0, 0
	}
	return a.Reference.StableOffsetC, a.Reference.MetastableOffsetC
}

// AlSi is the alloy's Al-Si reference model.
func (a *Alloy) AlSi() metal.AlSi {
	m := metal.DefaultAlSi()
	if a == nil {
		return m
	}
	r := a.Reference
	set(&m.LiquidusBase, r.LiquidusBaseC)
	set(&m.EutecticBase, r.EutecticBaseC)
	set(&m.EutecticSiRef, r.EutecticSiRef)
	if r.LiquidusSlopes != nil {
		m.LiquidusSlope = maps.Clone(r.LiquidusSlopes)
	}
	if r.EutecticDepressors != nil {
		m.Depressor = maps.Clone(r.EutecticDepressors)
	}
	m.EutecticOffset = r.EutecticOffsetC
	return m
}

// CELRegressionName is the regression the alloy's "ce" metric uses
// (koriyama2020 without a spec).
func (a *Alloy) CELRegressionName() string {
	if a == nil || a.Reference.CELRegression == "" {
		return RegressionKoriyama
	}
	return a.Reference.CELRegression
}

// LiquidusCE returns the named liquidus regression: the two published ones,
// or the shop's fitted one from the book's calibration (ok false when the
// book has none).
func (b *Book) LiquidusCE(name string) (metal.LiquidusCE, bool) {
	switch name {
	case RegressionKoriyama:
		return metal.Koriyama2020(), true
	case RegressionHeine:
		return metal.Heine(), true
	case RegressionShop:
		if b == nil || b.Calibration == nil || b.Calibration.Liquidus == nil {
			return metal.LiquidusCE{}, false
		}
		l := b.Calibration.Liquidus
		coef := map[string]float64{"si": 0.25, "p": 0.5}
		if l.CELSi != nil {
			coef["si"] = *l.CELSi
		}
		if l.CELP != nil {
			coef["p"] = *l.CELP
		}
		return metal.LiquidusCE{Name: RegressionShop, Source: "shop calibration " + b.Calibration.Pairs, A: l.A, B: l.B, Coef: coef}, true
	}
	return metal.LiquidusCE{}, false
}

// WhiteCup is the alloy's tellurium-cup model and whether it is the shop's
// fitted one.
func (b *Book) WhiteCup(a *Alloy) (metal.WhiteCup, bool) {
	if a != nil && a.Reference.WhiteCup == WhiteShop && b != nil && b.Calibration != nil &&
		b.Calibration.Silicon != nil && b.Calibration.Carbon != nil {
		s, c := b.Calibration.Silicon, b.Calibration.Carbon
		return metal.WhiteCup{SiA: s.A, SiB: s.B, CA: c.A, CTL: c.B, CSi: c.C}, true
	}
	_, off := a.Offsets()
	return metal.DefaultWhiteCup(a.Eutectic(), off), false
}

// PotencyModel gives the constants, the onset criterion and the metric used
// as ΔT for the potency figure; ok is false for families without one (the
// tellurium cup and pure-metal check cups, unless the file names a metal).
func (a *Alloy) PotencyModel(family arrest.Family) (c metal.Constants, o metal.Onset, metric string, ok bool) {
	var p PotencySpec
	if a != nil {
		p = a.Potency
	}
	name, metric := p.Metal, p.Undercooling
	switch family {
	case arrest.FamilyIron:
		name, metric = or(name, "fe"), or(metric, "undercooling_c")
	case arrest.FamilyAluminum:
		name, metric = or(name, "al"), or(metric, "alpha_undercooling_c")
	}
	c, ok = metal.Metals[name]
	if !ok || metric == "" {
		return metal.Constants{}, metal.Onset{}, "", false
	}
	set(&c.TmK, p.TmK)
	set(&c.DHfJPerMol, p.DHfJPerMol)
	set(&c.SigmaJPerM2, p.SigmaJPerM2)
	set(&c.MolarVolM3, p.MolarVolM3)
	set(&c.DTHomK, p.DTHomK)
	o = metal.Onset{Mode: p.Onset}
	set(&o.KT, p.OnsetKT)
	return c, o, metric, true
}

func set(dst *float64, v *float64) {
	if v != nil {
		*dst = *v
	}
}

func or(s, def string) string {
	if s == "" {
		return def
	}
	return s
}
