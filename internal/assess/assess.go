// Package assess runs the whole decision pipeline for one sample: the
// characteristic points (arrest), then metallurgy and limits, and gives the
// stable JSON record that `undercool analyze --json`, the store and the
// dashboard share.
package assess

import (
	"fmt"
	"reflect"
	"strconv"
	"strings"
	"sync"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// Verdict values (stable, documented in README.md).
const (
	VerdictPass      = "pass"
	VerdictMarginal  = "marginal"
	VerdictFail      = "fail"
	VerdictInvalid   = "invalid"
	VerdictUnchecked = "unchecked"
)

// Record is the stable JSON result for one sample. Keys keep their meaning;
// new keys may be added. A point that was not found is null; so is a figure
// that could not be computed.
type Record struct {
	File    string  `json:"file"`
	Alloy   string  `json:"alloy"`
	Samples int     `json:"samples"`
	RateHz  float64 `json:"rate_hz"`

	PourPeakC    *float64 `json:"pour_peak_c"`
	PourPeakS    *float64 `json:"pour_peak_s"`
	LiquidusMinC *float64 `json:"liquidus_min_c"`
	LiquidusMinS *float64 `json:"liquidus_min_s"`
	LiquidusC    *float64 `json:"liquidus_c"`
	LiquidusS    *float64 `json:"liquidus_s"`
	// EutecticStartC, EutecticStartS: the start of eutectic freezing
	// (docs/analysis.md), null where not found.
	EutecticStartC *float64 `json:"eutectic_start_c"`
	EutecticStartS *float64 `json:"eutectic_start_s"`
	EutecticMinC   *float64 `json:"eutectic_min_c"`
	EutecticMinS   *float64 `json:"eutectic_min_s"`
	EutecticMaxC   *float64 `json:"eutectic_max_c"`
	EutecticMaxS   *float64 `json:"eutectic_max_s"`
	RecalescenceC  *float64 `json:"recalescence_c"`
	SolidusC       *float64 `json:"solidus_c"`
	SolidusS       *float64 `json:"solidus_s"`
	PlateauS       *float64 `json:"plateau_s"`
	CoolingRateCps *float64 `json:"cooling_rate_c_per_s"`
	FreezingTimeS  *float64 `json:"freezing_time_s"`
	SkippedLines   int      `json:"skipped_lines"`
	Despiked       int      `json:"despiked"`

	Problems []string `json:"problems"`
	Verdict  string   `json:"verdict"`

	// Metallurgy (see README.md, "Metallurgy figures"). °C unless named.

	Family string `json:"family"` // detector family used

	StableEutecticC     *float64 `json:"stable_eutectic_c"`     // Tst from Si, P (cast iron)
	MetastableEutecticC *float64 `json:"metastable_eutectic_c"` // Tmst from Si, P (cast iron)
	UndercoolingC       *float64 `json:"undercooling_c"`        // Tst − eutectic minimum
	ChillMarginC        *float64 `json:"chill_margin_c"`        // eutectic minimum − Tmst
	CE                  *float64 `json:"ce"`                    // CEL from the liquidus by CERegression
	CERegression        string   `json:"ce_regression"`         // koriyama2020, heine or shop
	CEClassic           *float64 `json:"ce_classic"`            // C + (Si + P)/3
	CELKoriyama2020     *float64 `json:"cel_koriyama2020"`      // (1625 − TL)/110
	CELHeine            *float64 `json:"cel_heine"`             // (1669 − TL)/124
	CELShop             *float64 `json:"cel_shop"`              // the shop's fitted regression
	WhiteEutecticC      *float64 `json:"white_eutectic_c"`      // tellurium cup: the metastable arrest used for Si
	CPct                *float64 `json:"c_pct"`                 // carbon, wt % (tellurium-cup estimate or the curve's analysis)
	SiPct               *float64 `json:"si_pct"`                // silicon, wt % (same)

	LiquidusRefC        *float64 `json:"liquidus_ref_c"`        // Al-Si equilibrium liquidus from chemistry
	AlphaUndercoolingC  *float64 `json:"alpha_undercooling_c"`  // liquidus_ref_c − primary minimum
	AlphaRecalescenceC  *float64 `json:"alpha_recalescence_c"`  // α-Al growth − primary minimum
	EutecticRefC        *float64 `json:"eutectic_ref_c"`        // unmodified Al-Si eutectic from chemistry
	EutecticDepressionC *float64 `json:"eutectic_depression_c"` // eutectic_ref_c − eutectic growth temperature

	// PourSuperheatC is the pour peak above the first arrest (the liquidus,
	// else the eutectic maximum or minimum): a cup filled too cold reads low.
	PourSuperheatC *float64 `json:"pour_superheat_c"`

	PlateauC         *float64 `json:"plateau_c"`           // pure-metal check cup: freezing plateau
	FixedPointC      *float64 `json:"fixed_point_c"`       // its ITS-90 value
	FixedPointErrorC *float64 `json:"fixed_point_error_c"` // plateau − fixed point: the thermocouple's offset
	// FixedPointUndercoolingC is how far a check cup's metal undercooled
	// below its own plateau before it froze (plateau − the minimum before
	// it; 0 without recalescence): measured against the plateau, the
	// thermocouple's offset cancels out of it.
	FixedPointUndercoolingC *float64 `json:"fixed_point_undercooling_c"`

	// The solidification path (docs/solidification.md): fs at the points by
	// FSMethod ("fourier" with two thermocouples, else "newtonian"; "" when
	// neither could be worked out), the latent heat by each method with
	// the specific heat used, and for aluminium with two thermocouples the
	// dendrite coherency point.
	FSMethod                  string   `json:"fs_method"`
	FSAtLiquidus              *float64 `json:"fs_at_liquidus"`
	FSAtEutecticStart         *float64 `json:"fs_at_eutectic_start"`
	FSAtEutecticMin           *float64 `json:"fs_at_eutectic_min"`
	FSAtEutecticMax           *float64 `json:"fs_at_eutectic_max"`
	FSAtEndOfFreezing         *float64 `json:"fs_at_end_of_freezing"`
	LatentHeatNewtonianJPerKg *float64 `json:"latent_heat_newtonian_j_per_kg"` // apparent: low in sand cups
	LatentHeatFourierJPerKg   *float64 `json:"latent_heat_fourier_j_per_kg"`
	SpecificHeatJPerKgK       *float64 `json:"specific_heat_j_per_kg_k"` // the c both latent heats use
	CoherencyC                *float64 `json:"coherency_c"`
	CoherencyS                *float64 `json:"coherency_s"`
	FSAtCoherency             *float64 `json:"fs_at_coherency"`

	// Chemistry is the analysis used (wt %), ChemistrySource where each
	// element came from: "curve" (# si_pct: ...), "nominal" (the alloy's
	// spec) or "tellurium cup" (estimated from the arrests).
	Chemistry       map[string]float64 `json:"chemistry"`
	ChemistrySource map[string]string  `json:"chemistry_source"`

	Potency *Potency `json:"potency"` // null when it cannot be computed

	// Withheld are the figures a failed check on the sample spoils (a cup
	// filled cold spoils a carbon equivalent read from its liquidus): they
	// are null above, and kept here with why, so nothing is lost.
	Withheld []WithheldFigure `json:"withheld"`

	Checks        []limits.Check `json:"checks"`
	Reasons       []string       `json:"reasons"`  // why the verdict, in numbers
	Advice        []string       `json:"advice"`   // worded as advice; the shop's practice rules
	Warnings      []string       `json:"warnings"` // caveats: calibration range, chemistry read, ...
	Provisional   bool           `json:"provisional"`
	LimitsVersion string         `json:"limits_version"`
	LimitsSource  string         `json:"limits_source"`
}

// WithheldFigure is one figure a failed check on the sample spoils.
type WithheldFigure struct {
	Metric string  `json:"metric"` // the record key, e.g. "ce"
	Value  float64 `json:"value"`  // the figure as computed; not to be acted on
	Why    string  `json:"why"`
}

// Potency is the nucleation-potency figure: an EFFECTIVE contact angle for
// ranking melts, never a measured angle (see Basis).
type Potency struct {
	FTheta        float64  `json:"f_theta"`
	ThetaDeg      float64  `json:"theta_deg"`
	BarrierRatio  float64  `json:"barrier_ratio"`
	RStarNm       *float64 `json:"r_star_nm"`
	DGStarJ       *float64 `json:"dg_star_j"`
	DMinUm        *float64 `json:"d_min_um"` // free-growth smallest active nucleant (aluminium)
	UndercoolingK float64  `json:"undercooling_k"`
	Metric        string   `json:"metric"` // the record key used as ΔT
	Metal         string   `json:"metal"`
	Basis         string   `json:"basis"`
}

// Input is one sample to assess.
type Input struct {
	File    string
	Alloy   string
	Family  arrest.Family // empty: the alloy's, by limits.Book.Resolve; set: this family's own hints
	Time    []float64     // s
	Temp    []float64     // °C
	Skipped int           // lines the reader skipped as noise

	// Limits is the shop's limits book; nil uses limits.Builtin() (the
	// shipped examples).
	Limits *limits.Book

	// Meta is the curve file's metadata; chemistry keys "c_pct", "si_pct",
	// "p_pct", ... (wt %) override the alloy's nominal analysis.
	Meta []curvefile.Meta

	// Wall is the second thermocouple of a two-thermocouple cup, near its
	// wall, at Time's readings (nil: one thermocouple; curvefile.OnTimes
	// puts a channel logged on its own clock there), NaN where it has no
	// reading (the Fourier figures then come from the stretch it read
	// throughout, or are not computed); Radii place the two.
	Wall  []float64
	Radii solidpath.Geometry
}

// CurveInput is the input for a curve file read from path: its alloy
// ("# alloy:"), readings, skipped lines and metadata, and for a
// two-thermocouple cup the wall thermocouple (the curvefile.ColumnWall
// column, WithWall) (docs/curve-files.md, "Two thermocouples in one cup").
// A wall column that cannot be read leaves the wall thermocouple out; the
// notes say so, for the record's warnings beside the file's own Notes.
// Limits and an alloy given by the user are the caller's to set.
func CurveInput(path string, c *curvefile.Curve) (Input, []string) {
	in := Input{File: path, Alloy: strings.TrimSpace(c.Get("alloy")), Time: c.Time, Temp: c.Temp, Skipped: c.Skipped, Meta: c.Meta}
	wall, err := c.Wall()
	if err != nil {
		return in, []string{"the wall thermocouple is left out: " + err.Error()}
	}
	return in.WithWall(wall)
}

// WithWall is the input with a two-thermocouple cup's wall thermocouple,
// °C at in.Time's readings (NaN where it has no reading), placed by the
// radii of in.Meta (curvefile.PairOf); a nil wall leaves in as it is.
// Radii that cannot be read leave the wall thermocouple out; the notes say
// so, for the record's warnings.
func (in Input) WithWall(wall []float64) (Input, []string) {
	if wall == nil {
		return in, nil
	}
	pair, err := curvefile.PairOf(in.Meta)
	if err != nil {
		return in, []string{fmt.Sprintf("the wall thermocouple is left out: %s: %v", in.File, err)}
	}
	in.Wall, in.Radii = wall, solidpath.Geometry{CentreMm: pair.CentreMm, WallMm: pair.WallMm}
	return in, nil
}

// Assess analyses one sample and fills its record. The detector options
// are those of Options.
func Assess(in Input) Record {
	s := resolve(in)
	res := arrest.Analyze(in.Time, in.Temp, s.detect)
	return fromResult(s, res)
}

// FromResult builds the record from an already computed Result (one made
// with Options(in), so that the live and the offline record agree).
func FromResult(in Input, res arrest.Result) Record {
	return fromResult(resolve(in), res)
}

// Options are the detector options for the input: its alloy resolved by
// limits.Book.Resolve (the one rule every command uses), with the iron
// eutectic window worked out from the sample's own chemistry where the
// curve's metadata carries it (Resolution.WithChemistry); a curve that
// names no alloy is analysed in the family its highest reading suggests
// (limits.FamilyOfCurve). A live analyser made with these options gives
// what Assess gives once the sample is complete.
func Options(in Input) arrest.Options { return resolve(in).detect }

// sample is an input with its alloy resolved.
type sample struct {
	in        Input
	book      *limits.Book
	res       limits.Resolution
	detect    arrest.Options
	chem      chemistry
	guessedBy string // why the family was taken from the curve ("" when it was not)
}

// resolve resolves the input's alloy, chemistry and detector options.
func resolve(in Input) sample {
	s := sample{in: in, book: in.Limits}
	if s.book == nil {
		s.book = builtin()
	}
	s.res = s.book.Resolve(in.Alloy)
	s.chem = chemistryOf(s.res.Entry, in.Meta)
	s.res = s.res.WithChemistry(s.chem.values)
	s.detect = s.res.Detect
	switch {
	case in.Family != "" && in.Family != s.res.Family():
		s.detect = arrest.Options{Family: in.Family}
	case s.res.Name == "" && in.Family == "":
		fam, why := limits.FamilyOfCurve(in.Temp)
		s.detect = arrest.Options{Family: fam, Hints: arrest.FamilyHints(fam)}
		s.detect = limits.Resolution{Detect: s.detect}.WithChemistry(s.chem.values).Detect
		s.guessedBy = why
	}
	s.in.Family = s.detect.Family // the family every later step uses
	return s
}

// builtin is parsed once, when first needed (not when the program
// starts: every command would pay for it, about 2 ms); Assess only reads
// it.
var builtin = sync.OnceValue(limits.Builtin)

func fromResult(s sample, res arrest.Result) Record {
	in, book, alloy := s.in, s.book, s.res.Entry
	r := Record{
		File: in.File, Alloy: in.Alloy, Samples: res.Samples, RateHz: roundTo(res.RateHz, rateDecimals),
		SkippedLines: in.Skipped, Despiked: res.Despiked,
		Problems: []string{}, Family: string(s.detect.Family),
		Chemistry: map[string]float64{}, ChemistrySource: map[string]string{},
		Checks: []limits.Check{}, Reasons: []string{}, Advice: []string{}, Warnings: []string{}, Withheld: []WithheldFigure{},
		LimitsVersion: book.Version, LimitsSource: book.Source,
	}
	r.PourPeakC, r.PourPeakS = point(res.PourPeak)
	r.LiquidusMinC, r.LiquidusMinS = point(res.LiquidusMin)
	r.LiquidusC, r.LiquidusS = point(res.Liquidus)
	r.EutecticStartC, r.EutecticStartS = point(res.EutecticStart)
	r.EutecticMinC, r.EutecticMinS = point(res.EutecticMin)
	r.EutecticMaxC, r.EutecticMaxS = point(res.EutecticMax)
	r.SolidusC, r.SolidusS = point(res.Solidus)
	switch {
	case res.RecalescenceOK && r.EutecticMinC != nil && r.EutecticMaxC != nil:
		// from the rounded points, so the record adds up
		r.RecalescenceC = fig("recalescence_c", *r.EutecticMaxC-*r.EutecticMinC)
	case res.RecalescenceOK:
		r.RecalescenceC = fig("recalescence_c", res.Recalescence)
	}
	if res.PlateauS > 0 {
		r.PlateauS = fig("plateau_s", res.PlateauS)
	}
	if res.CoolingRateCps != 0 {
		r.CoolingRateCps = fig("cooling_rate_c_per_s", res.CoolingRateCps)
	}
	if res.FreezingTimeS > 0 {
		r.FreezingTimeS = fig("freezing_time_s", res.FreezingTimeS)
	}
	for _, p := range res.Problems {
		r.Problems = append(r.Problems, p.Message)
	}

	if s.res.Name != "" && alloy == nil {
		r.Warnings = append(r.Warnings, fmt.Sprintf("alloy %q is not in %s (it has: %s): analysed as %s by the naming rule, no limits apply",
			s.res.Name, book.Source, strings.Join(book.Names(), ", "), r.Family))
	}
	if s.guessedBy != "" {
		r.Warnings = append(r.Warnings, "no alloy named (give --alloy or a '# alloy:' line): analysed as "+r.Family+", "+s.guessedBy+"; no limits apply")
	}
	m := newMetallurgy(&r, s, res)
	m.run()
	judge(&r, res, alloy, m, book)
	return r
}

// judge sets the verdict, reasons and advice.
func judge(r *Record, res arrest.Result, alloy *limits.Alloy, m *metallurgy, book *limits.Book) {
	var out limits.Outcome
	if alloy != nil {
		out = alloy.Evaluate(limits.Sample{Values: m.values, Why: m.why, Complete: res.Complete})
		r.Checks = append(r.Checks, out.Checks...)
		withhold(r, out.Withheld)
	}
	r.Provisional = !res.Complete
	switch {
	case res.Invalid():
		r.Verdict = VerdictInvalid
		for _, p := range res.Problems {
			if p.Fatal {
				r.Reasons = append(r.Reasons, "the curve cannot be trusted: "+p.Message)
			}
		}
		r.Advice = append(r.Advice, "Consider re-sampling with a fresh cup, following the shop's written practice; do not act on these figures.")
	case r.Alloy == "":
		r.Verdict = VerdictUnchecked
		r.Reasons = append(r.Reasons, "no alloy is named for this sample, so no limits apply")
	case alloy == nil:
		r.Verdict = VerdictUnchecked
		r.Reasons = append(r.Reasons, "no limits are set for alloy "+r.Alloy+" in "+r.LimitsSource+" (it has: "+strings.Join(book.Names(), ", ")+")")
	default:
		r.Verdict = out.Verdict
		if r.Family == string(arrest.FamilyPure) && r.FixedPointErrorC != nil {
			r.Reasons = append(r.Reasons, fmt.Sprintf("a check of the thermocouple and amplifier, not of metal: plateau %.2f °C, %s °C from the ITS-90 freezing point %.3f °C",
				*r.PlateauC, signed(*r.FixedPointErrorC, 2), *r.FixedPointC))
		}
		r.Reasons = append(r.Reasons, out.Reasons...)
		r.Advice = append(r.Advice, out.Advice...)
		if r.Verdict == VerdictInvalid {
			r.Advice = append(r.Advice, "Consider re-sampling with a fresh cup, following the shop's written practice.")
		}
	}
}

// companions are record figures that stand or fall with a metric.
var companions = map[string][]string{
	"ce": {"cel_koriyama2020", "cel_heine", "cel_shop"},
}

// withhold nulls the spoilt figures of the record (and their companions,
// and a potency figure computed from one), keeping each in r.Withheld.
func withhold(r *Record, spoilt []limits.Withheld) {
	v := reflect.ValueOf(r).Elem()
	t := v.Type()
	field := func(key string) **float64 {
		for i := range t.NumField() {
			if strings.Split(t.Field(i).Tag.Get("json"), ",")[0] == key {
				if p, ok := v.Field(i).Addr().Interface().(**float64); ok {
					return p
				}
			}
		}
		return nil
	}
	for _, w := range spoilt {
		for _, key := range append([]string{w.Metric}, companions[w.Metric]...) {
			if p := field(key); p != nil && *p != nil {
				r.Withheld = append(r.Withheld, WithheldFigure{Metric: key, Value: **p, Why: w.Why})
				*p = nil
			}
		}
		if r.Potency != nil && r.Potency.Metric == w.Metric {
			r.Withheld = append(r.Withheld, WithheldFigure{Metric: "f_theta", Value: r.Potency.FTheta, Why: w.Why},
				WithheldFigure{Metric: "theta_deg", Value: r.Potency.ThetaDeg, Why: w.Why})
			r.Potency = nil
		}
	}
}

// signed writes v with d decimals and its sign, "+0.38", "−0.41"; a value
// that rounds to zero is "0.00", never "-0.00".
func signed(v float64, d int) string {
	s := strconv.FormatFloat(v, 'f', d, 64)
	switch {
	case strings.Trim(s, "-0.") == "":
		return strings.TrimPrefix(s, "-")
	case v > 0:
		return "+" + s
	}
	return "−" + strings.TrimPrefix(s, "-")
}

func point(p arrest.Point) (c, s *float64) {
	if !p.OK {
		return nil, nil
	}
	return num(roundTo(p.TempC, tempDecimals)), num(roundTo(p.TimeS, timeDecimals))
}

func num(v float64) *float64 { return &v }
