package limits

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/metal"
)

// Elements are the chemistry keys a limits file and a curve file may use
// (wt %, lower-case symbols).
var Elements = []string{"c", "si", "p", "mn", "s", "cr", "ni", "cu", "mo", "mg", "fe", "zn", "ti", "sr", "na", "sb", "sn", "b"}

// CEL regressions and white-cup methods a file may name.
const (
	RegressionKoriyama = "koriyama2020"
	RegressionHeine    = "heine"
	RegressionShop     = "shop"
	WhiteFormula       = "formula"
	WhiteShop          = "shop"
)

// potencyUndercoolings are the metrics that may serve as the ΔT of the
// potency figure.
var potencyUndercoolings = []string{"undercooling_c", "alpha_undercooling_c", "alpha_recalescence_c", "recalescence_c"}

// Validate checks a book built in memory (e.g. by the dashboard's limit
// editor) with the rules Load applies; errors name the key.
func (b *Book) Validate() error {
	name := b.Source
	if name == "" {
		name = "limits"
	}
	return b.validate(nil, name)
}

// validate checks everything the TOML decoder cannot: families, band
// nesting, names of regressions, metals and metrics. All problems are
// reported, ordered by line.
func (b *Book) validate(data []byte, name string) error {
	lines := map[string]int{}
	if data != nil {
		lines = keyLines(data)
	}
	var errs []*Error
	add := func(key, format string, args ...any) {
		errs = append(errs, &Error{File: name, Line: lineIn(lines, key), Key: key, Msg: fmt.Sprintf(format, args...)})
	}
	if b.Version == "" {
		add("version", "is required (a label such as \"2026-12-01.1\" that verdicts record)")
	}
	b.validateText(add)
	if len(b.Alloys) == 0 {
		add("alloy", "the file defines no [alloy.NAME] table")
	}
	for _, n := range b.Names() {
		a := b.Alloys[n]
		base := "alloy." + n
		switch a.Family {
		case arrest.FamilyIron, arrest.FamilyWhite, arrest.FamilyAluminum, arrest.FamilyPure, arrest.FamilyEutectic:
		case "":
			add(base+".family", "is required: %s", familyList)
		default:
			add(base+".family", "unknown family %q (want %s)", a.Family, familyList)
		}
		validateDetect(a, base, add)
		for el, v := range a.Chemistry {
			if !slices.Contains(Elements, el) {
				add(base+".chemistry."+el, "unknown element %q", el)
			} else if !(v >= 0 && v <= 100) {
				add(base+".chemistry."+el, "%g is not a wt %% between 0 and 100", v)
			}
		}
		b.validateReference(a, base, add)
		p := a.Potency
		if p.Metal != "" {
			if _, ok := metal.Metals[p.Metal]; !ok {
				add(base+".potency.metal", "unknown metal %q (want al, fe, cu or ni)", p.Metal)
			}
		}
		if p.Undercooling != "" && !slices.Contains(potencyUndercoolings, p.Undercooling) {
			add(base+".potency.undercooling", "%q cannot serve as the nucleation undercooling (want one of %v)", p.Undercooling, potencyUndercoolings)
		}
		if p.Onset != "" && p.Onset != metal.OnsetHomRatio && p.Onset != metal.OnsetAbsolute {
			add(base+".potency.onset", "unknown onset criterion %q (want %q or %q)", p.Onset, metal.OnsetHomRatio, metal.OnsetAbsolute)
		}
		for key, v := range map[string]*float64{"onset_kt": p.OnsetKT, "tm_k": p.TmK, "dhf_j_per_mol": p.DHfJPerMol,
			"sigma_j_per_m2": p.SigmaJPerM2, "molar_volume_m3": p.MolarVolM3, "dt_hom_k": p.DTHomK} {
			if v != nil && !(*v > 0 && !math.IsInf(*v, 0)) {
				add(base+".potency."+key, "%g must be positive", *v)
			}
		}
		for _, m := range sortedMetrics(a.Metrics) {
			validateLimit(a.Metrics[m], base+".metric."+m, m, add)
		}
	}
	b.validateInoculants(add)
	if c := b.Calibration; c != nil {
		if c.Liquidus != nil && !(c.Liquidus.B > 0) {
			add("calibration.liquidus.b", "%g: the liquidus must fall as CEL rises (b > 0)", c.Liquidus.B)
		}
	}
	if len(errs) == 0 {
		return nil
	}
	slices.SortStableFunc(errs, func(x, y *Error) int { return cmp.Compare(x.Line, y.Line) })
	all := make([]error, len(errs))
	for i, e := range errs {
		all[i] = e
	}
	return errors.Join(all...)
}

const familyList = `"iron", "white", "aluminum", "pure" or "eutectic"`

// validateDetect checks an alloy's detection windows: a pour trigger and
// [low, high] windows within the readings a thermocouple can give, and for
// a "eutectic" family alloy the eutectic window it cannot do without.
func validateDetect(a *Alloy, base string, add func(key, format string, args ...any)) {
	d := a.Detect
	key := base + ".detect."
	inRange := func(v float64) bool { return v >= arrest.MinValidC && v <= arrest.MaxValidC }
	if v := d.PourMinC; v != nil && !inRange(*v) {
		add(key+"pour_min_c", "%g °C is not a reading between %d and %d °C", *v, arrest.MinValidC, arrest.MaxValidC)
	}
	for name, w := range map[string][]float64{"liquidus_c": d.LiquidusC, "eutectic_c": d.EutecticC} {
		switch {
		case w == nil:
		case len(w) != 2:
			add(key+name, "give two temperatures, [low, high] in °C (%d given)", len(w))
		case !inRange(w[0]) || !inRange(w[1]):
			add(key+name, "[%g, %g] is not within the readings a thermocouple gives (%d to %d °C)", w[0], w[1], arrest.MinValidC, arrest.MaxValidC)
		case !(w[0] < w[1]):
			add(key+name, "[%g, %g]: the low end must be below the high end", w[0], w[1])
		}
	}
	if l, e := d.LiquidusC, d.EutecticC; len(l) == 2 && len(e) == 2 && !(l[1] > e[1]) {
		add(key+"liquidus_c", "[%g, %g] must reach above the eutectic window's top %g °C (the liquidus arrest comes first)", l[0], l[1], e[1])
	}
	if a.Family == arrest.FamilyEutectic && d.EutecticC == nil {
		add(base+".detect", "a \"eutectic\" family alloy needs detect.eutectic_c = [low, high], the window of its eutectic in °C")
	}
}

func (b *Book) validateReference(a *Alloy, base string, add func(key, format string, args ...any)) {
	r := a.Reference
	cal := b.Calibration
	// A calibration_file not yet read (Parse): Load checks again once it is.
	pending := cal == nil && b.CalibrationFile != ""
	switch r.CELRegression {
	case "", RegressionKoriyama, RegressionHeine:
	case RegressionShop:
		if !pending && (cal == nil || cal.Liquidus == nil) {
			add(base+".reference.cel_regression", "\"shop\" needs a [calibration.liquidus] (run `undercool calibrate`)")
		}
	default:
		add(base+".reference.cel_regression", "unknown regression %q (want %q, %q or %q)", r.CELRegression, RegressionKoriyama, RegressionHeine, RegressionShop)
	}
	switch r.WhiteCup {
	case "", WhiteFormula:
	case WhiteShop:
		if !pending && (cal == nil || cal.Silicon == nil || cal.Carbon == nil) {
			add(base+".reference.white_cup", "\"shop\" needs [calibration.silicon] and [calibration.carbon] (run `undercool calibrate`)")
		}
	default:
		add(base+".reference.white_cup", "unknown method %q (want %q or %q)", r.WhiteCup, WhiteFormula, WhiteShop)
	}
	if c := r.SpecificHeatJPerKgK; c != nil && !(*c >= 100 && *c <= 5000) {
		add(base+".reference.specific_heat_j_per_kg_k", "%g J/(kg K) is not a metal's specific heat (100–5000)", *c)
	}
	if r.MetastableSi != nil && *r.MetastableSi == 0 {
		add(base+".reference.metastable_si", "must not be 0 (silicon is found by dividing by it)")
	}
	for _, m := range []map[string]float64{r.LiquidusSlopes, r.EutecticDepressors} {
		for el := range m {
			if !slices.Contains(Elements, el) {
				add(base+".reference", "unknown element %q in a coefficient table", el)
			}
		}
	}
}

func validateLimit(l *Limit, key, metric string, add func(key, format string, args ...any)) {
	if _, ok := Metric(metric); !ok {
		add(key, "unknown metric %q (see `undercool limits show --metrics`)", metric)
		return
	}
	if l == nil {
		add(key, "empty metric table")
		return
	}
	for k, v := range map[string]*float64{"pass_min": l.PassMin, "pass_max": l.PassMax, "marginal_min": l.MarginalMin, "marginal_max": l.MarginalMax} {
		if v != nil && (math.IsNaN(*v) || math.IsInf(*v, 0)) {
			add(key+"."+k, "must be a finite number")
		}
	}
	if len(l.Spoils) > 0 && !l.SampleCheck {
		add(key+".spoils", "only a check on the sample (sample_check = true) can spoil other figures")
	}
	for _, sp := range l.Spoils {
		switch _, ok := Metric(sp); {
		case !ok:
			add(key+".spoils", "unknown metric %q", sp)
		case sp == metric:
			add(key+".spoils", "a check cannot spoil its own metric")
		}
	}
	if l.SampleCheck && l.PassMin == nil && l.PassMax == nil {
		add(key+".sample_check", "a check on the sample needs a pass band (pass_min and/or pass_max)")
	}
	if l.PassMin == nil && l.PassMax == nil && l.MarginalMin == nil && l.MarginalMax == nil && !l.Required {
		add(key, "sets no band: give pass_min and/or pass_max, or required = true")
	}
	if l.PassMin != nil && l.PassMax != nil && *l.PassMin > *l.PassMax {
		add(key+".pass_max", "%g is below pass_min %g", *l.PassMax, *l.PassMin)
	}
	if l.MarginalMin != nil {
		if l.PassMin == nil {
			add(key+".marginal_min", "is set but pass_min is not: the marginal band must contain the pass band")
		} else if *l.MarginalMin > *l.PassMin {
			add(key+".marginal_min", "%g is above pass_min %g: the marginal band must contain the pass band", *l.MarginalMin, *l.PassMin)
		}
	}
	if l.MarginalMax != nil {
		if l.PassMax == nil {
			add(key+".marginal_max", "is set but pass_max is not: the marginal band must contain the pass band")
		} else if *l.MarginalMax < *l.PassMax {
			add(key+".marginal_max", "%g is below pass_max %g: the marginal band must contain the pass band", *l.MarginalMax, *l.PassMax)
		}
	}
}

func sortedMetrics(m map[string]*Limit) []string {
	names := make([]string, 0, len(m))
	for n := range m {
		names = append(names, n)
	}
	slices.SortFunc(names, func(a, b string) int {
		return cmp.Or(cmp.Compare(metricOrder(a), metricOrder(b)), cmp.Compare(a, b))
	})
	return names
}
