package limits

import (
	"bytes"
	"fmt"
	"math"
	"reflect"
	"slices"
	"sort"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

// Effects an inoculant table may name: what the addition does in the cup
// model the advice is computed with (docs/advice.md).
const (
	// EffectEutecticNuclei: more eutectic nuclei (an iron inoculant).
	EffectEutecticNuclei = "eutectic-nuclei"
	// EffectPrimaryNuclei: more primary (α-Al) nuclei (a grain refiner).
	EffectPrimaryNuclei = "primary-nuclei"
	// EffectEutecticDepression: a lower eutectic growth temperature (an
	// Al-Si modifier).
	EffectEutecticDepression = "eutectic-depression"
)

// Inoculant is one of the shop's melt additions, an [inoculant.NAME] table:
// what a fresh addition of 0.01 % of the ladle does, how fast it fades,
// and the most the shop allows. The model's advice (package forecast) reads
// it; `undercool calibrate --inoculants` fits Gain and HalfLifeMin to the
// shop's own before/after pairs. The shipped values are examples.
type Inoculant struct {
	Name        string `toml:"-"` // the table name
	Description string `toml:"description"`
	// Effect is EffectEutecticNuclei, EffectPrimaryNuclei or
	// EffectEutecticDepression.
	Effect string `toml:"effect"`
	// Alloys are the alloy tables the addition is used for.
	Alloys []string `toml:"alloys"`
	// Gain is the effect of a fresh 0.01 % of the ladle: the factor by
	// which the nucleation constant A of N = A·ΔTⁿ grows (nuclei effects,
	// > 1; ln A rises by ln Gain per 0.01 %), or the °C by which the
	// eutectic growth temperature falls (depression).
	Gain float64 `toml:"gain_per_0_01_pct"`
	// GainU is the standard uncertainty of Gain (calibrate writes it);
	// 0 when unknown.
	GainU float64 `toml:"gain_u"`
	// HalfLifeMin is the fade: the effect left after t minutes is
	// 2^(−t/HalfLifeMin) of the fresh one (exponential fade).
	HalfLifeMin float64 `toml:"fade_half_life_min"`
	HalfLifeU   float64 `toml:"fade_half_life_u_min"` // its standard uncertainty (calibrate), 0 when unknown
	// MaxPct is the largest addition the shop allows, % of the ladle: the
	// advice never proposes more.
	MaxPct float64 `toml:"max_addition_pct"`
	// DelayMin is the shop's usual time from the addition to the pour, min
	// (the delay the advice assumes unless asked for another).
	DelayMin float64 `toml:"delay_min"`
	// Calibrated says what `undercool calibrate` fitted the values to.
	Calibrated string `toml:"calibrated"`
}

// Inoculants lists the book's additions for an alloy (matched as Book.Alloy
// matches names), in name order.
func (b *Book) Inoculants(alloy string) []*Inoculant {
	if b == nil {
		return nil
	}
	a, ok := b.Alloy(alloy)
	if !ok {
		return nil
	}
	var out []*Inoculant
	for _, n := range b.inoculantNames() {
		in := b.InoculantTables[n]
		if slices.Contains(in.Alloys, a.Name) {
			out = append(out, in)
		}
	}
	return out
}

func (b *Book) inoculantNames() []string {
	names := make([]string, 0, len(b.InoculantTables))
	for n := range b.InoculantTables {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// nameInoculants fills each table's Name (Parse calls it).
func (b *Book) nameInoculants() {
	for n, in := range b.InoculantTables {
		if in == nil {
			in = &Inoculant{}
			b.InoculantTables[n] = in
		}
		in.Name = n
	}
}

// validateInoculants checks the [inoculant.NAME] tables.
func (b *Book) validateInoculants(add func(key, format string, args ...any)) {
	for _, n := range b.inoculantNames() {
		in := b.InoculantTables[n]
		base := "inoculant." + n
		var fam arrest.Family
		switch in.Effect {
		case EffectEutecticNuclei:
			fam = arrest.FamilyIron
			if !(in.Gain >= 1) || math.IsInf(in.Gain, 0) || in.Gain > 100 {
				add(base+".gain_per_0_01_pct", "%g: a nucleation gain is the factor on A per 0.01 %%, from 1 to 100", in.Gain)
			}
		case EffectPrimaryNuclei:
			fam = arrest.FamilyAluminum
			if !(in.Gain >= 1) || math.IsInf(in.Gain, 0) || in.Gain > 100 {
				add(base+".gain_per_0_01_pct", "%g: a nucleation gain is the factor on A per 0.01 %%, from 1 to 100", in.Gain)
			}
		case EffectEutecticDepression:
			fam = arrest.FamilyAluminum
			if !(in.Gain > 0) || in.Gain > 10 {
				add(base+".gain_per_0_01_pct", "%g: a depression is the °C per 0.01 %%, more than 0 and at most 10", in.Gain)
			}
		case "":
			add(base+".effect", "is required: %q, %q or %q", EffectEutecticNuclei, EffectPrimaryNuclei, EffectEutecticDepression)
		default:
			add(base+".effect", "unknown effect %q (want %q, %q or %q)", in.Effect, EffectEutecticNuclei, EffectPrimaryNuclei, EffectEutecticDepression)
		}
		if !(in.HalfLifeMin > 0) || math.IsInf(in.HalfLifeMin, 0) {
			add(base+".fade_half_life_min", "%g: the fade half-life must be a positive number of minutes", in.HalfLifeMin)
		}
		if !(in.MaxPct > 0) || in.MaxPct > 5 {
			add(base+".max_addition_pct", "%g: the largest addition must be more than 0 and at most 5 %% of the ladle", in.MaxPct)
		}
		for key, v := range map[string]float64{"gain_u": in.GainU, "fade_half_life_u_min": in.HalfLifeU, "delay_min": in.DelayMin} {
			if !(v >= 0) || math.IsInf(v, 0) {
				add(base+"."+key, "%g must be a finite number, 0 or more", v)
			}
		}
		if len(in.Alloys) == 0 {
			add(base+".alloys", "names no alloy (e.g. alloys = [\"grey-iron\"])")
		}
		for _, a := range in.Alloys {
			spec, ok := b.Alloys[a]
			switch {
			case !ok || spec == nil:
				add(base+".alloys", "unknown alloy %q (no [alloy.%s] table)", a, a)
			case fam != "" && b.Resolve(a).Family() != fam:
				add(base+".alloys", "alloy %q is of the %s family; a %s addition is for the %s family", a, b.Resolve(a).Family(), in.Effect, fam)
			}
		}
	}
}

// encodeInoculants writes the [inoculant.NAME] tables (Encode calls it).
func encodeInoculants(w *bytes.Buffer, b *Book) {
	for _, n := range b.inoculantNames() {
		EncodeInoculant(w, b.InoculantTables[n])
	}
}

// EncodeInoculant writes one [inoculant.NAME] table (for `undercool
// calibrate --inoculants`).
func EncodeInoculant(w *bytes.Buffer, in *Inoculant) {
	base := "inoculant." + quoteKey(in.Name)
	fmt.Fprintf(w, "\n[%s]\n", base)
	fields(w, base, reflect.ValueOf(in).Elem())
}
