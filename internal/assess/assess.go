// Package assess runs the whole decision pipeline for one sample: the
// characteristic points (arrest), then metallurgy and limits, and gives the
// stable JSON record that `undercool analyze --json`, the store and the
// dashboard share.
package assess

import (
	"sync"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
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

	PourPeakC      *float64 `json:"pour_peak_c"`
	PourPeakS      *float64 `json:"pour_peak_s"`
	LiquidusMinC   *float64 `json:"liquidus_min_c"`
	LiquidusMinS   *float64 `json:"liquidus_min_s"`
	LiquidusC      *float64 `json:"liquidus_c"`
	LiquidusS      *float64 `json:"liquidus_s"`
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
	FixedPointErrorC *float64 `json:"fixed_point_error_c"` // plateau − fixed point

	// Chemistry is the analysis used (wt %), ChemistrySource where each
	// element came from: "curve" (# si_pct: ...), "nominal" (the alloy's
	// spec) or "tellurium cup" (estimated from the arrests).
	Chemistry       map[string]float64 `json:"chemistry"`
	ChemistrySource map[string]string  `json:"chemistry_source"`

	Potency *Potency `json:"potency"` // null when it cannot be computed

	Checks        []limits.Check `json:"checks"`
	Reasons       []string       `json:"reasons"`  // why the verdict, in numbers
	Advice        []string       `json:"advice"`   // worded as advice; the shop's practice rules
	Warnings      []string       `json:"warnings"` // caveats: calibration range, chemistry read, ...
	Provisional   bool           `json:"provisional"`
	LimitsVersion string         `json:"limits_version"`
	LimitsSource  string         `json:"limits_source"`
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
	Family  arrest.Family // empty: the alloy spec's family, else limits.Family(Alloy)
	Time    []float64     // s
	Temp    []float64     // °C
	Skipped int           // lines the reader skipped as noise

	// Limits is the shop's limits book; nil uses limits.Builtin() (the
	// shipped examples).
	Limits *limits.Book

	// Meta is the curve file's metadata; chemistry keys "c_pct", "si_pct",
	// "p_pct", ... (wt %) override the alloy's nominal analysis.
	Meta []curvefile.Meta
}

// Assess analyses one sample and fills its record.
func Assess(in Input) Record {
	book, alloy := resolve(&in)
	res := arrest.Analyze(in.Time, in.Temp, arrest.Options{Family: in.Family})
	return fromResult(in, res, book, alloy)
}

// FromResult builds the record from an already computed Result.
func FromResult(in Input, res arrest.Result) Record {
	book, alloy := resolve(&in)
	return fromResult(in, res, book, alloy)
}

// resolve picks the book, the alloy spec and the family (Book.Resolve, the
// one rule every command uses).
func resolve(in *Input) (*limits.Book, *limits.Alloy) {
	book := in.Limits
	if book == nil {
		book = builtin()
	}
	res := book.Resolve(in.Alloy)
	if in.Family == "" {
		in.Family = res.Family()
	}
	return book, res.Entry
}

// builtin is parsed once, when first needed (not when the program
// starts: every command would pay for it, about 2 ms); Assess only reads
// it.
var builtin = sync.OnceValue(limits.Builtin)

func fromResult(in Input, res arrest.Result, book *limits.Book, alloy *limits.Alloy) Record {
	r := Record{
		File: in.File, Alloy: in.Alloy, Samples: res.Samples, RateHz: res.RateHz,
		SkippedLines: in.Skipped, Despiked: res.Despiked,
		Problems: []string{}, Family: string(in.Family),
		Chemistry: map[string]float64{}, ChemistrySource: map[string]string{},
		Checks: []limits.Check{}, Reasons: []string{}, Advice: []string{}, Warnings: []string{},
		LimitsVersion: book.Version, LimitsSource: book.Source,
	}
	r.PourPeakC, r.PourPeakS = point(res.PourPeak)
	r.LiquidusMinC, r.LiquidusMinS = point(res.LiquidusMin)
	r.LiquidusC, r.LiquidusS = point(res.Liquidus)
	r.EutecticMinC, r.EutecticMinS = point(res.EutecticMin)
	r.EutecticMaxC, r.EutecticMaxS = point(res.EutecticMax)
	r.SolidusC, r.SolidusS = point(res.Solidus)
	if res.RecalescenceOK {
		r.RecalescenceC = num(res.Recalescence)
	}
	if res.PlateauS > 0 {
		r.PlateauS = num(res.PlateauS)
	}
	if res.CoolingRateCps != 0 {
		r.CoolingRateCps = num(res.CoolingRateCps)
	}
	if res.FreezingTimeS > 0 {
		r.FreezingTimeS = num(res.FreezingTimeS)
	}
	for _, p := range res.Problems {
		r.Problems = append(r.Problems, p.Message)
	}

	m := newMetallurgy(&r, in, res, book, alloy)
	m.run()
	judge(&r, res, alloy, m)
	return r
}

// judge sets the verdict, reasons and advice.
func judge(r *Record, res arrest.Result, alloy *limits.Alloy, m *metallurgy) {
	var out limits.Outcome
	if alloy != nil {
		out = alloy.Evaluate(limits.Sample{Values: m.values, Why: m.why, Complete: res.Complete})
		r.Checks = append(r.Checks, out.Checks...)
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
		r.Reasons = append(r.Reasons, "no limits are set for alloy "+r.Alloy+" in "+r.LimitsSource)
	default:
		r.Verdict = out.Verdict
		r.Reasons = append(r.Reasons, out.Reasons...)
		r.Advice = append(r.Advice, out.Advice...)
		if r.Verdict == VerdictInvalid {
			r.Advice = append(r.Advice, "Consider re-sampling with a fresh cup, following the shop's written practice.")
		}
	}
}

func point(p arrest.Point) (c, s *float64) {
	if !p.OK {
		return nil, nil
	}
	return num(p.TempC), num(p.TimeS)
}

func num(v float64) *float64 { return &v }
