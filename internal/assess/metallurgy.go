package assess

import (
	"errors"
	"fmt"
	"maps"
	"math"
	"strconv"
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/metal"
)

// Chemistry sources named in Record.ChemistrySource.
const (
	SourceCurve   = "curve"
	SourceNominal = "nominal"
	SourceWhite   = "tellurium cup"
)

// metallurgy computes the derived figures of one sample into the record and
// collects the metric values (and why each missing one is missing) for the
// limits.
type metallurgy struct {
	r      *Record
	s      sample
	res    arrest.Result
	book   *limits.Book
	alloy  *limits.Alloy
	values map[string]float64
	why    map[string]string
}

func newMetallurgy(r *Record, s sample, res arrest.Result) *metallurgy {
	return &metallurgy{r: r, s: s, res: res, book: s.book, alloy: s.res.Entry,
		values: map[string]float64{}, why: map[string]string{}}
}

func (m *metallurgy) run() {
	m.chemistry()
	m.points()
	switch m.s.detect.Family {
	case arrest.FamilyIron:
		m.iron()
	case arrest.FamilyWhite:
		m.white()
	case arrest.FamilyAluminum:
		m.aluminium()
	case arrest.FamilyPure:
		m.pure()
	}
	m.potency()
	m.solidification()
}

// set stores a computed figure in the record field and the metric values.
func (m *metallurgy) set(dst **float64, metric string, v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		m.why[metric] = label(metric) + " could not be computed"
		return
	}
	v = roundFigure(metric, v)
	*dst = num(v)
	m.values[metric] = v
}

// missing records why a metric could not be computed.
func (m *metallurgy) missing(metric, why string) {
	if _, seen := m.why[metric]; !seen {
		m.why[metric] = why
	}
}

func label(metric string) string {
	if mi, ok := limits.Metric(metric); ok {
		return mi.Label
	}
	return metric
}

// chemistry is the analysis a sample is judged with.
type chemistry struct {
	values   map[string]float64 // wt % by lower-case element symbol
	source   map[string]string  // SourceCurve or SourceNominal
	warnings []string
}

// chemistryOf reads "<el>_pct" metadata of the curve over the alloy's
// nominal analysis (a decimal comma and a trailing % are accepted; an
// unreadable value is a warning, never used).
func chemistryOf(alloy *limits.Alloy, meta []curvefile.Meta) chemistry {
	c := chemistry{values: map[string]float64{}, source: map[string]string{}}
	if alloy != nil {
		for el, v := range alloy.Chemistry {
			c.values[el], c.source[el] = v, SourceNominal
		}
	}
	for _, md := range meta {
		el, ok := strings.CutSuffix(strings.ToLower(strings.TrimSpace(md.Key)), "_pct")
		if !ok || !isElement(el) {
			continue
		}
		txt := strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(md.Value), "%"))
		v, err := strconv.ParseFloat(strings.Replace(txt, ",", ".", 1), 64)
		if err != nil || v < 0 || v > 100 {
			c.warnings = append(c.warnings, fmt.Sprintf("curve metadata %s: %q is not a wt %% (ignored)", md.Key, md.Value))
			continue
		}
		c.values[el], c.source[el] = v, SourceCurve
	}
	return c
}

// chemistry copies the sample's analysis into the record.
func (m *metallurgy) chemistry() {
	maps.Copy(m.r.Chemistry, m.s.chem.values)
	maps.Copy(m.r.ChemistrySource, m.s.chem.source)
	m.r.Warnings = append(m.r.Warnings, m.s.chem.warnings...)
}

func isElement(el string) bool {
	for _, e := range limits.Elements {
		if e == el {
			return true
		}
	}
	return false
}

// chem returns an element's wt % and whether it is known.
func (m *metallurgy) chem(el string) (float64, bool) {
	v, ok := m.r.Chemistry[el]
	return v, ok
}

// points feeds the characteristic points to the limits.
func (m *metallurgy) points() {
	for _, p := range []struct {
		metric string
		v      *float64
	}{
		{"liquidus_c", m.r.LiquidusC}, {"liquidus_min_c", m.r.LiquidusMinC},
		{"eutectic_min_c", m.r.EutecticMinC}, {"eutectic_max_c", m.r.EutecticMaxC},
		{"recalescence_c", m.r.RecalescenceC}, {"solidus_c", m.r.SolidusC},
		{"plateau_s", m.r.PlateauS}, {"freezing_time_s", m.r.FreezingTimeS},
		{"cooling_rate_c_per_s", m.r.CoolingRateCps},
	} {
		if p.v != nil {
			m.values[p.metric] = *p.v
		} else {
			m.missing(p.metric, label(p.metric)+" not found")
		}
	}
	first := m.r.LiquidusC
	for _, p := range []*float64{m.r.EutecticMaxC, m.r.EutecticMinC} {
		if first == nil {
			first = p
		}
	}
	switch {
	case m.r.PourPeakC == nil:
		m.missing("pour_superheat_c", "pour superheat not computed: no pour peak found")
	case first == nil:
		m.missing("pour_superheat_c", "pour superheat not computed: no arrest found")
	default:
		m.set(&m.r.PourSuperheatC, "pour_superheat_c", *m.r.PourPeakC-*first)
	}
}

// iron: normal cup of grey, ductile or compacted iron.
func (m *metallurgy) iron() {
	r := m.r
	si, okSi := m.chem("si")
	p, _ := m.chem("p")
	if okSi {
		e := m.alloy.Eutectic()
		offSt, offMst := m.alloy.Offsets()
		m.set(&r.StableEutecticC, "stable_eutectic_c", e.Stable(si, p)-offSt)
		m.set(&r.MetastableEutecticC, "metastable_eutectic_c", e.Metastable(si, p)-offMst)
	} else {
		why := "no silicon analysis (curve # si_pct: or the alloy's nominal chemistry)"
		m.missing("undercooling_c", "eutectic undercooling not computed: "+why)
		m.missing("chill_margin_c", "chill margin not computed: "+why)
	}
	if r.EutecticMinC != nil {
		if r.StableEutecticC != nil {
			m.set(&r.UndercoolingC, "undercooling_c", metal.Undercooling(*r.StableEutecticC, *r.EutecticMinC))
		}
		if r.MetastableEutecticC != nil {
			m.set(&r.ChillMarginC, "chill_margin_c", metal.ChillMargin(*r.EutecticMinC, *r.MetastableEutecticC))
		}
	} else {
		m.missing("undercooling_c", "eutectic undercooling not computed: eutectic minimum not found")
		m.missing("chill_margin_c", "chill margin not computed: eutectic minimum not found")
	}
	m.cel()
	if c, ok := m.chem("c"); ok && okSi && (r.ChemistrySource["c"] != SourceNominal || r.ChemistrySource["si"] != SourceNominal) {
		m.set(&r.CEClassic, "ce_classic", metal.CEClassic(c, si, p))
	} else {
		m.missing("ce_classic", "carbon equivalent C + (Si + P)/3 not computed: no carbon and silicon analysis with the sample")
	}
	for _, el := range []string{"c", "si"} {
		if r.ChemistrySource[el] == SourceCurve {
			v := r.Chemistry[el]
			if el == "c" {
				m.set(&r.CPct, "c_pct", v)
			} else {
				m.set(&r.SiPct, "si_pct", v)
			}
		}
	}
}

// cel fills the liquidus carbon equivalents and the selected "ce".
func (m *metallurgy) cel() {
	r := m.r
	r.CERegression = m.alloy.CELRegressionName()
	if r.LiquidusC == nil {
		m.missing("ce", "carbon equivalent not computed: no liquidus arrest (a hypereutectic iron shows none)")
		return
	}
	tl := *r.LiquidusC
	k, _ := m.book.LiquidusCE(limits.RegressionKoriyama)
	h, _ := m.book.LiquidusCE(limits.RegressionHeine)
	r.CELKoriyama2020 = fig("cel_koriyama2020", k.CEL(tl))
	r.CELHeine = fig("cel_heine", h.CEL(tl))
	if s, ok := m.book.LiquidusCE(limits.RegressionShop); ok {
		r.CELShop = fig("cel_shop", s.CEL(tl))
		m.rangeWarning("liquidus", m.book.Calibration.Liquidus, tl)
	}
	switch r.CERegression {
	case limits.RegressionHeine:
		m.set(&r.CE, "ce", *r.CELHeine)
	case limits.RegressionShop:
		if r.CELShop == nil {
			m.missing("ce", "carbon equivalent not computed: the limits file has no shop calibration")
			return
		}
		m.set(&r.CE, "ce", *r.CELShop)
	default:
		m.set(&r.CE, "ce", *r.CELKoriyama2020)
	}
}

func (m *metallurgy) rangeWarning(what string, reg *limits.Regression, x float64) {
	if reg != nil && !reg.InRange(x) {
		m.r.Warnings = append(m.r.Warnings, fmt.Sprintf(
			"%.1f °C is outside the %.1f–%.1f °C the shop's %s calibration was fitted on: treat the estimate with care",
			x, reg.InputMin, reg.InputMax, what))
	}
}

// white: tellurium cup, carbon and silicon from the arrests.
func (m *metallurgy) white() {
	r := m.r
	var tMeta *float64
	switch {
	case r.EutecticMaxC != nil:
		tMeta = r.EutecticMaxC
	case r.EutecticMinC != nil:
		tMeta = r.EutecticMinC
	}
	wc, shop := m.book.WhiteCup(m.alloy)
	m.cel()
	if tMeta == nil {
		m.missing("si_pct", "silicon not estimated: no white eutectic arrest found")
		m.missing("c_pct", "carbon not estimated: no white eutectic arrest found")
		m.missing("ce_classic", "carbon equivalent not computed: no white eutectic arrest found")
		return
	}
	r.WhiteEutecticC = num(*tMeta)
	si := wc.Si(*tMeta)
	m.set(&r.SiPct, "si_pct", si)
	r.Chemistry["si"], r.ChemistrySource["si"] = roundTo(si, pctDecimals), SourceWhite
	if shop {
		m.rangeWarning("silicon", m.book.Calibration.Silicon, *tMeta)
	}
	if r.LiquidusC == nil {
		m.missing("c_pct", "carbon not estimated: no liquidus arrest found")
		m.missing("ce_classic", "carbon equivalent not computed: no liquidus arrest found")
		return
	}
	p, okP := m.chem("p")
	if !okP {
		r.Warnings = append(r.Warnings, "no phosphorus analysis: carbon estimated with P = 0")
	}
	c := wc.C(*r.LiquidusC, si, p)
	m.set(&r.CPct, "c_pct", c)
	r.Chemistry["c"], r.ChemistrySource["c"] = roundTo(c, pctDecimals), SourceWhite
	if shop {
		m.rangeWarning("carbon", m.book.Calibration.Carbon, *r.LiquidusC)
	}
	m.set(&r.CEClassic, "ce_classic", metal.CEClassic(c, si, p))
}

// aluminium: Al-Si grain refinement and modification.
func (m *metallurgy) aluminium() {
	r := m.r
	model := m.alloy.AlSi()
	if _, ok := m.chem("si"); !ok {
		why := "no silicon analysis (curve # si_pct: or the alloy's nominal chemistry)"
		m.missing("alpha_undercooling_c", "α-Al nucleation undercooling not computed: "+why)
		m.missing("eutectic_depression_c", "eutectic depression not computed: "+why)
		return
	}
	tl := model.Liquidus(r.Chemistry)
	m.set(&r.LiquidusRefC, "liquidus_ref_c", tl)
	switch {
	case r.LiquidusC == nil:
		m.missing("alpha_undercooling_c", "α-Al nucleation undercooling not computed: no liquidus arrest found")
		m.missing("alpha_recalescence_c", "α-Al recalescence not computed: no liquidus arrest found")
	default:
		m.set(&r.AlphaRecalescenceC, "alpha_recalescence_c", m.res.LiquidusRecalescence)
		low := *r.LiquidusC
		if r.LiquidusMinC != nil {
			low = *r.LiquidusMinC
		}
		m.set(&r.AlphaUndercoolingC, "alpha_undercooling_c", metal.AlphaUndercooling(tl, low))
	}
	ref := model.Eutectic(r.Chemistry)
	m.set(&r.EutecticRefC, "eutectic_ref_c", ref)
	growth := r.EutecticMaxC
	if growth == nil {
		growth = r.EutecticMinC
	}
	if growth == nil {
		m.missing("eutectic_depression_c", "eutectic depression not computed: no Al-Si eutectic arrest found")
		return
	}
	m.set(&r.EutecticDepressionC, "eutectic_depression_c", metal.EutecticDepression(ref, *growth))
}

// pure: fixed-point check cup.
func (m *metallurgy) pure() {
	r := m.r
	for _, p := range []*float64{r.EutecticMaxC, r.EutecticMinC, r.LiquidusC} {
		if p != nil {
			m.set(&r.PlateauC, "plateau_c", *p)
			break
		}
	}
	if r.PlateauC == nil {
		m.missing("plateau_c", "freezing plateau not found")
		m.missing("fixed_point_error_c", "plateau minus the fixed point not computed: no plateau found")
		m.missing("fixed_point_undercooling_c", "check-cup undercooling not computed: no plateau found")
		return
	}
	switch {
	case r.EutecticMinC != nil && r.EutecticMaxC != nil:
		m.set(&r.FixedPointUndercoolingC, "fixed_point_undercooling_c", *r.EutecticMaxC-*r.EutecticMinC)
	case r.EutecticMinC != nil:
		m.set(&r.FixedPointUndercoolingC, "fixed_point_undercooling_c", 0)
	default:
		m.missing("fixed_point_undercooling_c", "check-cup undercooling not computed: the plateau is not a eutectic-type arrest")
	}
	if m.alloy != nil && m.alloy.Reference.FixedPointC != nil {
		fp := *m.alloy.Reference.FixedPointC
		r.FixedPointC = num(fp)
		m.set(&r.FixedPointErrorC, "fixed_point_error_c", *r.PlateauC-fp)
	} else {
		m.missing("fixed_point_error_c", "plateau minus the fixed point not computed: the spec sets no fixed_point_c")
	}
}

// potency computes the nucleation-potency figure from the chosen
// undercooling metric.
func (m *metallurgy) potency() {
	c, onset, metric, ok := m.alloy.PotencyModel(m.s.detect.Family)
	if !ok {
		return
	}
	dT, have := m.values[metric]
	if !have {
		return
	}
	p, err := metal.NucleationPotency(c, dT, onset)
	if err != nil {
		if !errors.Is(err, metal.ErrNoUndercooling) {
			m.r.Warnings = append(m.r.Warnings, "nucleation potency not computed: "+err.Error())
		} else {
			m.r.Warnings = append(m.r.Warnings, fmt.Sprintf("nucleation potency not computed: %s is %.1f °C (no undercooling)", label(metric), dT))
		}
		return
	}
	out := &Potency{FTheta: roundFigure("f_theta", p.FTheta), ThetaDeg: roundFigure("theta_deg", p.ThetaDeg),
		BarrierRatio: roundSig(p.BarrierRatio, sigDigits), UndercoolingK: roundTo(p.UndercoolingK, tempDecimals),
		Metric: metric, Metal: c.Name, Basis: p.Basis}
	if p.RStarNm > 0 {
		out.RStarNm, out.DGStarJ = num(roundSig(p.RStarNm, sigDigits)), num(roundSig(p.GHetJ, sigDigits))
	}
	if p.DMinUm > 0 {
		out.DMinUm = num(roundSig(p.DMinUm, sigDigits))
	}
	m.r.Potency = out
	m.values["f_theta"], m.values["theta_deg"] = out.FTheta, out.ThetaDeg
}
