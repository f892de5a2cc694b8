package assess

import (
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// The arrest.Results below are hand-built (constructed), not measured: they
// stand for what the detector reports, so that the metallurgy and verdict
// rules can be checked on their own.

// Records round their figures (round.go): temperatures to 0.01 °C, carbon
// equivalents to 0.001, ratios to 4 significant digits; the tolerances
// below are half of that resolution.
const (
	tolC   = 0.005
	tolCE  = 0.0005
	tolRel = 5e-4
)

func pt(c, s float64) arrest.Point { return arrest.Point{TempC: c, TimeS: s, OK: true} }

// greyResult is a constructed well-inoculated grey-iron cup, its eutectic
// 3 °C below the measured-basis stable eutectic of the shipped spec.
func greyResult() arrest.Result {
	return arrest.Result{
		Samples: 1800, RateHz: 10, Complete: true,
		PourPeak: pt(1320, 2), Liquidus: pt(1175, 40),
		EutecticMin: pt(1146, 95), EutecticMax: pt(1148, 120), Solidus: pt(1110, 230),
		Recalescence: 2, RecalescenceOK: true, PlateauS: 90, FreezingTimeS: 200, CoolingRateCps: -2.5,
	}
}

func near(t *testing.T, what string, got *float64, want, tol float64) {
	t.Helper()
	if got == nil {
		t.Errorf("%s is null, want %.6g", what, want)
		return
	}
	if math.Abs(*got-want) > tol {
		t.Errorf("%s = %.6g, want %.6g ± %.2g", what, *got, want, tol)
	}
}

func has(list []string, sub string) bool {
	return slices.ContainsFunc(list, func(s string) bool { return strings.Contains(s, sub) })
}

func TestGreyIronPass(t *testing.T) {
	rec := FromResult(Input{File: "L-2417-1.csv", Alloy: "grey-iron"}, greyResult())
	// Nominal Si 2.10, P 0.04 of the shipped spec (Fe-C-Si literature, memory):
	// Tst = 1153 + 5.25·2.1 − 14.88·0.04 = 1163.4298, Tmst = 1148 − 15·2.1 = 1116.5,
	// less the shipped offsets 14.4 and 8.3 °C (measured below calculated,
	// Riposan et al., Metals 10 (2020) 993).
	near(t, "stable eutectic", rec.StableEutecticC, 1163.4298-14.4, tolC)
	near(t, "metastable eutectic", rec.MetastableEutecticC, 1116.5-8.3, tolC)
	near(t, "undercooling", rec.UndercoolingC, 1149.0298-1146, tolC)
	near(t, "chill margin", rec.ChillMarginC, 1146-1108.2, tolC)
	near(t, "pour superheat", rec.PourSuperheatC, 1320-1175, tolC)
	// Koriyama et al. (2020): CEL = (1625 − 1175)/110; Heine: (1669 − 1175)/124.
	near(t, "ce", rec.CE, 450.0/110, tolCE)
	near(t, "cel koriyama", rec.CELKoriyama2020, 450.0/110, tolCE)
	near(t, "cel heine", rec.CELHeine, 494.0/124, tolCE)
	if rec.CERegression != "koriyama2020" || rec.CELShop != nil {
		t.Errorf("regression %q, shop %v", rec.CERegression, rec.CELShop)
	}
	if rec.ChemistrySource["si"] != SourceNominal {
		t.Errorf("si source %q, want nominal", rec.ChemistrySource["si"])
	}
	if rec.Verdict != VerdictPass || len(rec.Reasons) != 0 || len(rec.Advice) != 0 {
		t.Errorf("verdict %s, reasons %q, advice %q", rec.Verdict, rec.Reasons, rec.Advice)
	}
	if rec.Potency == nil || rec.Potency.Metal != "Fe" || rec.Potency.Metric != "undercooling_c" {
		t.Fatalf("potency %+v", rec.Potency)
	}
	// f = (ΔT/295)²·(1811.15 − ΔT)/(1811.15 − 295), ΔT = 3.0298 K (classical
	// nucleation with Turnbull's ΔT_hom = 295 K for Fe; derived, memory).
	dT := 3.0298
	want := math.Pow(dT/295, 2) * (1811.15 - dT) / (1811.15 - 295)
	near(t, "f(θ)", &rec.Potency.FTheta, want, want*tolRel)
	if !strings.Contains(rec.Potency.Basis, "EFFECTIVE") || rec.Potency.DMinUm != nil {
		t.Errorf("basis %q, d_min %v", rec.Potency.Basis, rec.Potency.DMinUm)
	}
	if rec.LimitsVersion != limits.Builtin().Version || rec.LimitsSource != "built-in" {
		t.Errorf("limits %q from %q", rec.LimitsVersion, rec.LimitsSource)
	}
	if len(rec.Checks) != 7 {
		t.Errorf("%d checks, want the 7 metrics of the shipped grey-iron spec", len(rec.Checks))
	}
}

func TestGreyIronVerdicts(t *testing.T) {
	poor := greyResult()
	poor.EutecticMin, poor.EutecticMax = pt(1139.2, 95), pt(1145.2, 120)
	poor.Recalescence = 6

	hyper := greyResult()
	hyper.Liquidus = arrest.Point{}

	noEut := greyResult()
	noEut.EutecticMin, noEut.EutecticMax, noEut.RecalescenceOK = arrest.Point{}, arrest.Point{}, false

	cold := greyResult()
	cold.PourPeak = pt(1225, 2)

	veryCold := greyResult()
	veryCold.PourPeak = pt(1205, 2)

	fast := greyResult()
	fast.FreezingTimeS = 90

	fatal := greyResult()
	fatal.Problems = []arrest.Problem{{Code: "tc-fault", Message: "thermocouple open circuit at 84 s", Fatal: true}}

	live := greyResult()
	live.Complete = false
	liveBad := poor
	liveBad.Complete = false

	for _, c := range []struct {
		name    string
		alloy   string
		res     arrest.Result
		verdict string
		reasons []string
		advice  []string
	}{
		{"poorly inoculated", "grey-iron", poor, VerdictFail,
			[]string{
				"eutectic undercooling 9.8 °C is above the 8.0 °C limit",
				"eutectic recalescence 6.0 °C is above the 4.0 °C pass limit (marginal up to 6.0 °C)",
			},
			[]string{"late (stream or ladle) inoculant", "more or later inoculation"}},
		{"hypereutectic: no liquidus is listed, not a fail", "grey-iron", hyper, VerdictPass,
			[]string{"carbon equivalent not computed: no liquidus arrest"}, nil},
		{"filled cold", "grey-iron", cold, VerdictMarginal,
			[]string{"pour superheat in the cup 50 °C is below the 60 °C pass limit (marginal down to 40 °C)"}, []string{"hotter metal"}},
		{"filled too cold: the cup, not the metal", "grey-iron", veryCold, VerdictInvalid,
			[]string{"the sample is unfit (a check on the cup, not the metal): pour superheat in the cup 30 °C is below the 40 °C limit",
				"withheld, spoilt by the sample: carbon equivalent from the liquidus"},
			[]string{"hotter metal", "re-sampling with a fresh cup"}},
		{"froze too fast: the cup, not the metal", "grey-iron", fast, VerdictInvalid,
			[]string{"freezing time 90 s is below the 100 s limit",
				"withheld, spoilt by the sample: eutectic recalescence, eutectic undercooling, chill margin"},
			[]string{"full cup"}},
		{"required eutectic missing", "grey-iron", noEut, VerdictInvalid,
			[]string{"eutectic minimum not found; it is required for grey-iron"},
			[]string{"re-sampling with a fresh, full cup"}},
		{"fatal problem is never pass", "grey-iron", fatal, VerdictInvalid,
			[]string{"the curve cannot be trusted: thermocouple open circuit at 84 s"}, []string{"re-sampling"}},
		{"no limits for the alloy", "compacted-iron", greyResult(), VerdictUnchecked,
			[]string{"no limits are set for alloy compacted-iron in built-in"}, nil},
		{"no alloy named", "", greyResult(), VerdictUnchecked, []string{"no alloy is named"}, nil},
		{"still freezing, nothing out", "grey-iron", live, VerdictUnchecked, []string{"still freezing"}, nil},
		{"still freezing, already out", "grey-iron", liveBad, VerdictFail, []string{"eutectic undercooling 9.8 °C"}, nil},
	} {
		t.Run(c.name, func(t *testing.T) {
			rec := FromResult(Input{Alloy: c.alloy}, c.res)
			if rec.Verdict != c.verdict {
				t.Errorf("verdict %s, want %s (reasons %q)", rec.Verdict, c.verdict, rec.Reasons)
			}
			for _, r := range c.reasons {
				if !has(rec.Reasons, r) {
					t.Errorf("reasons %q lack %q", rec.Reasons, r)
				}
			}
			for _, a := range c.advice {
				if !has(rec.Advice, a) {
					t.Errorf("advice %q lacks %q", rec.Advice, a)
				}
			}
			for _, a := range rec.Advice {
				if !strings.Contains(strings.ToLower(a), "consider") {
					t.Errorf("advice %q is not worded as advice", a)
				}
			}
			if rec.Provisional != !c.res.Complete {
				t.Errorf("provisional %v for complete %v", rec.Provisional, c.res.Complete)
			}
		})
	}
}

// TestBadCupWithholdsFigures: a cup filled too cold is invalid, and the
// carbon equivalent read from its liquidus is withheld (null, with its
// value and the reason kept in "withheld"); a cup that froze too fast
// withholds its eutectic figures and the potency computed from them.
func TestBadCupWithholdsFigures(t *testing.T) {
	cold := greyResult()
	cold.PourPeak = pt(1205, 2)
	rec := FromResult(Input{Alloy: "grey-iron"}, cold)
	if rec.CE != nil || rec.CELKoriyama2020 != nil || rec.CELHeine != nil || rec.LiquidusC == nil {
		t.Errorf("ce %v, cel %v %v, liquidus %v: want the CE figures withheld, the point kept", rec.CE, rec.CELKoriyama2020, rec.CELHeine, rec.LiquidusC)
	}
	keys := map[string]float64{}
	for _, w := range rec.Withheld {
		keys[w.Metric] = w.Value
		if !strings.Contains(w.Why, "pour superheat in the cup 30 °C") {
			t.Errorf("withheld %s: why %q", w.Metric, w.Why)
		}
	}
	// Koriyama et al. (2020): CEL = (1625 − 1175)/110; Heine: (1669 − 1175)/124.
	if math.Abs(keys["ce"]-450.0/110) > tolCE || math.Abs(keys["cel_heine"]-494.0/124) > tolCE || len(keys) != 3 {
		t.Errorf("withheld %+v", rec.Withheld)
	}
	for _, c := range rec.Checks {
		if c.Metric == "ce" && c.Status != limits.StatusWithheld {
			t.Errorf("ce check %s", c.Status)
		}
		if c.Metric == "pour_superheat_c" && (!c.SampleCheck || c.Status != limits.StatusFail) {
			t.Errorf("pour superheat check %+v", c)
		}
	}
	fast := greyResult()
	fast.FreezingTimeS = 90
	rec = FromResult(Input{Alloy: "grey-iron"}, fast)
	if rec.Verdict != VerdictInvalid || rec.UndercoolingC != nil || rec.ChillMarginC != nil || rec.RecalescenceC != nil || rec.Potency != nil || rec.CE == nil {
		t.Errorf("fast cup: verdict %s, undercooling %v, chill %v, recalescence %v, potency %v, ce %v", rec.Verdict, rec.UndercoolingC, rec.ChillMarginC, rec.RecalescenceC, rec.Potency, rec.CE)
	}
	b, _ := json.Marshal(rec)
	if !strings.Contains(string(b), `"withheld":[{"metric":"recalescence_c"`) {
		t.Errorf("JSON withheld: %s", b)
	}
}

func TestReasonWording(t *testing.T) {
	// A spec without a marginal band: the sentence names the one limit.
	f := 1142.0
	book := &limits.Book{Version: "t", Source: "test", Alloys: map[string]*limits.Alloy{
		"grey-iron": {Name: "grey-iron", Family: arrest.FamilyIron, Chemistry: map[string]float64{"si": 2.1},
			Metrics: map[string]*limits.Limit{"eutectic_min_c": {PassMin: &f, Low: "Consider a late inoculant addition and re-sample, following the shop's written practice."}}},
	}}
	res := greyResult()
	res.EutecticMin = pt(1139.2, 95)
	rec := FromResult(Input{Alloy: "grey-iron", Limits: book}, res)
	if rec.Verdict != VerdictFail || len(rec.Reasons) != 1 || rec.Reasons[0] != "eutectic minimum 1139.2 °C is below the 1142.0 °C limit" {
		t.Errorf("verdict %s, reasons %q", rec.Verdict, rec.Reasons)
	}
	if len(rec.Checks) != 1 || rec.Checks[0].Status != limits.StatusFail || *rec.Checks[0].Pass.Min != 1142 {
		t.Errorf("checks %+v", rec.Checks)
	}
}

func TestCurveChemistry(t *testing.T) {
	meta := []curvefile.Meta{{Key: "alloy", Value: "grey-iron"}, {Key: "si_pct", Value: "2,4"}, {Key: "c_pct", Value: "3.38 %"}, {Key: "mn_pct", Value: "lots"}}
	rec := FromResult(Input{Alloy: "grey-iron", Meta: meta}, greyResult())
	// Tst = 1153 + 5.25·2.4 − 14.88·0.04 (P nominal) = 1165.0048 (Fe-C-Si
	// literature, memory), less the shipped 14.4 °C offset.
	near(t, "stable eutectic", rec.StableEutecticC, 1165.0048-14.4, tolC)
	// The detector's eutectic window follows the sample's silicon too:
	// [Tmst − 8.3 − 20, Tst + 5] with Tmst = 1148 − 15·2.4 = 1112.
	w := Options(Input{Alloy: "grey-iron", Meta: meta}).Hints.Eutectic
	if math.Abs(w.LoC-(1112-8.3-20)) > 1e-9 || math.Abs(w.HiC-(1165.0048+5)) > 1e-9 {
		t.Errorf("eutectic window %+v", w)
	}
	near(t, "si_pct", rec.SiPct, 2.4, 0)
	near(t, "c_pct", rec.CPct, 3.38, 0)
	near(t, "ce_classic", rec.CEClassic, 3.38+(2.4+0.04)/3, tolCE)
	if rec.ChemistrySource["si"] != SourceCurve || rec.ChemistrySource["p"] != SourceNominal {
		t.Errorf("sources %v", rec.ChemistrySource)
	}
	if !has(rec.Warnings, `mn_pct: "lots"`) {
		t.Errorf("warnings %q lack the unreadable mn_pct", rec.Warnings)
	}
}

func TestWhiteCup(t *testing.T) {
	// Constructed from a known iron C 3.45, Si 2.00, P 0.04 (nominal P of the
	// spec): Heine TL = 1669 − 124·(3.45 + 2.00/4 + 0.04/2) = 1176.72 °C; white
	// arrest = 1148 − 15·2.00 − offset (Fe-C-Si literature, memory; an offset of 8.3 °C is
	// the average of Riposan et al. 2020). The default inversion must give
	// them back.
	book := limits.Builtin()
	book.Alloys["white-iron"].Reference.MetastableOffsetC = 8.3
	res := arrest.Result{Samples: 1500, RateHz: 10, Complete: true,
		Liquidus: pt(1176.72, 35), EutecticMin: pt(1109.5, 80), EutecticMax: pt(1109.7, 90), FreezingTimeS: 150}
	rec := FromResult(Input{Alloy: "white-iron", Limits: book}, res)
	near(t, "si", rec.SiPct, 2.00, 1e-9)
	near(t, "c", rec.CPct, 3.45, 1e-9)
	near(t, "ce classic", rec.CEClassic, 3.45+2.04/3, 1e-9)
	near(t, "white arrest", rec.WhiteEutecticC, 1109.7, 0)
	if rec.ChemistrySource["c"] != SourceWhite || rec.Family != "white" || rec.Potency != nil {
		t.Errorf("sources %v, family %s, potency %v", rec.ChemistrySource, rec.Family, rec.Potency)
	}
	if rec.Verdict != VerdictPass {
		t.Errorf("verdict %s, reasons %q", rec.Verdict, rec.Reasons)
	}
	// Silicon 0.5 % higher lowers the arrest by 7.5 °C: out of the pass band.
	res.EutecticMax = pt(1102.2, 90)
	rec = FromResult(Input{Alloy: "white-iron", Limits: book}, res)
	near(t, "si high", rec.SiPct, 2.5, 1e-9)
	if rec.Verdict != VerdictFail || !has(rec.Advice, "dilution") {
		t.Errorf("verdict %s, advice %q", rec.Verdict, rec.Advice)
	}
}

func TestShopCalibration(t *testing.T) {
	book := limits.Builtin()
	book.Calibration = &limits.Calibration{Pairs: "pairs.csv",
		Liquidus: &limits.Regression{A: 1660, B: 120, N: 12, InputMin: 1160, InputMax: 1200},
	}
	book.Alloys["grey-iron"].Reference.CELRegression = "shop"
	res := greyResult()
	rec := FromResult(Input{Alloy: "grey-iron", Limits: book}, res)
	near(t, "shop CEL", rec.CELShop, (1660-1175)/120.0, tolCE)
	near(t, "ce uses shop", rec.CE, (1660-1175)/120.0, tolCE)
	if len(rec.Warnings) != 0 {
		t.Errorf("warnings %q inside the fitted range", rec.Warnings)
	}
	res.Liquidus = pt(1215, 40)
	rec = FromResult(Input{Alloy: "grey-iron", Limits: book}, res)
	if !has(rec.Warnings, "outside the 1160.0–1200.0 °C") {
		t.Errorf("no range warning: %q", rec.Warnings)
	}
}

func alResult(tMin, tGrowth, eutMax float64) arrest.Result {
	return arrest.Result{Samples: 3000, RateHz: 10, Complete: true,
		LiquidusMin: pt(tMin, 30), Liquidus: pt(tGrowth, 34), LiquidusRecalescence: tGrowth - tMin,
		EutecticMin: pt(eutMax-0.4, 110), EutecticMax: pt(eutMax, 130), Recalescence: 0.4, RecalescenceOK: true,
		FreezingTimeS: 160}
}

func TestAluminium(t *testing.T) {
	rec := FromResult(Input{Alloy: "al-si7mg"}, alResult(613.0, 613.2, 567.5))
	// Nominal Si 7, Mg 0.35, Fe 0.12, Cu 0.02: TL = 660.45 − 6.6·7 = 614.25 (memory);
	// T_E = 577 − (12.5/7)(4.43·0.35 + 1.43·0.12 + 1.93·0.02) = 573.856 (memory form).
	near(t, "liquidus ref", rec.LiquidusRefC, 614.25, 1e-9)
	near(t, "α undercooling", rec.AlphaUndercoolingC, 1.25, 1e-9)
	near(t, "α recalescence", rec.AlphaRecalescenceC, 0.2, 1e-9)
	near(t, "eutectic ref", rec.EutecticRefC, 573.856, tolC)
	near(t, "depression", rec.EutecticDepressionC, 573.86-567.5, tolC) // from the rounded reference
	if rec.Potency == nil || rec.Potency.Metal != "Al" {
		t.Fatalf("potency %+v", rec.Potency)
	}
	// Free growth (Greer et al. 2000): d = 4·0.158/(1.112e6·1.25) m = 0.45468 µm.
	dmin := 4 * 0.158 / (1.112e6 * 1.25) * 1e6
	near(t, "d_min", rec.Potency.DMinUm, dmin, dmin*tolRel)
	if rec.Verdict != VerdictPass {
		t.Errorf("verdict %s, reasons %q", rec.Verdict, rec.Reasons)
	}
	// Unrefined and unmodified: recalescence 1.5 °C, growth near the reference.
	rec = FromResult(Input{Alloy: "al-si7mg"}, alResult(611.5, 613.0, 572.5))
	if rec.Verdict != VerdictFail || !has(rec.Advice, "grain-refiner") || !has(rec.Advice, "strontium") {
		t.Errorf("verdict %s, advice %q", rec.Verdict, rec.Advice)
	}
}

// TestPureCheckCup: a check cup reports its plateau, the thermocouple's
// offset from the ITS-90 freezing point (Preston-Thomas, Metrologia 27
// (1990) 3) and the undercooling below its plateau; it passes within the
// type K class 2 tolerance, ±2.2 °C or ±0.75 %, whichever is greater
// (IEC 60584-1, memory), and says it checks the thermocouple, not metal.
func TestPureCheckCup(t *testing.T) {
	for _, c := range []struct {
		alloy   string
		fp      float64
		plateau float64
		verdict string
	}{
		{"pure-sn", 231.928, 233.0, VerdictPass}, {"pure-sn", 231.928, 234.2, VerdictFail}, // ±2.2 °C
		{"pure-zn", 419.527, 416.5, VerdictPass}, {"pure-zn", 419.527, 416.3, VerdictFail}, // ±3.146 °C
		{"pure-al", 660.323, 659.1, VerdictPass}, {"pure-al", 660.323, 656.0, VerdictPass}, {"pure-al", 660.323, 655.3, VerdictFail}, {"pure-al", 660.323, 666.0, VerdictFail},
		{"pure-ag", 961.78, 968.9, VerdictPass}, {"pure-ag", 961.78, 969.1, VerdictFail}, // ±7.213 °C
		{"pure-cu", 1084.62, 1076.6, VerdictPass}, {"pure-cu", 1084.62, 1076.4, VerdictFail}, // ±8.135 °C
	} {
		res := arrest.Result{Samples: 900, RateHz: 10, Complete: true, EutecticMin: pt(c.plateau-0.3, 50), EutecticMax: pt(c.plateau, 60)}
		rec := FromResult(Input{Alloy: c.alloy}, res)
		near(t, c.alloy+" plateau", rec.PlateauC, c.plateau, 0)
		near(t, c.alloy+" offset", rec.FixedPointErrorC, c.plateau-c.fp, tolCE)
		near(t, c.alloy+" undercooling", rec.FixedPointUndercoolingC, 0.3, tolCE)
		if rec.Verdict != c.verdict {
			t.Errorf("%s plateau %.1f: verdict %s, want %s (%q)", c.alloy, c.plateau, rec.Verdict, c.verdict, rec.Reasons)
		}
		if len(rec.Reasons) == 0 || !strings.HasPrefix(rec.Reasons[0], "a check of the thermocouple and amplifier, not of metal") {
			t.Errorf("%s: reasons %q", c.alloy, rec.Reasons)
		}
		if c.verdict == VerdictFail && !has(rec.Advice, "checks the thermocouple, not metal") {
			t.Errorf("%s: advice %q", c.alloy, rec.Advice)
		}
	}
}

// jsonFields is the record as scripts see it: its JSON object.
func jsonFields(t *testing.T, rec Record) map[string]any {
	t.Helper()
	b, err := json.Marshal(rec)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	return m
}

func TestJSONKeys(t *testing.T) {
	rec := FromResult(Input{File: "x.csv", Alloy: "grey-iron"}, greyResult())
	m := jsonFields(t, rec)
	for _, k := range []string{
		// the stable keys of the JSON result (README.md, "Analysing files") keep their names
		"file", "alloy", "samples", "rate_hz", "pour_peak_c", "liquidus_min_c", "liquidus_c", "eutectic_min_c",
		"eutectic_max_c", "recalescence_c", "solidus_c", "problems", "verdict",
		// new keys
		"stable_eutectic_c", "metastable_eutectic_c", "undercooling_c", "chill_margin_c", "ce", "ce_classic",
		"cel_koriyama2020", "cel_heine", "cel_shop", "c_pct", "si_pct", "alpha_undercooling_c",
		"eutectic_depression_c", "potency", "checks", "reasons", "advice", "limits_version", "chemistry_source",
	} {
		if _, ok := m[k]; !ok {
			t.Errorf("JSON lacks key %q", k)
		}
	}
	if m["liquidus_min_c"] != nil || m["cel_shop"] != nil {
		t.Errorf("missing figures must be null: %v %v", m["liquidus_min_c"], m["cel_shop"])
	}
	p := m["potency"].(map[string]any)
	for _, k := range []string{"f_theta", "theta_deg", "barrier_ratio", "r_star_nm", "d_min_um", "basis"} {
		if _, ok := p[k]; !ok {
			t.Errorf("potency lacks %q", k)
		}
	}
	c := m["checks"].([]any)[0].(map[string]any)
	for _, k := range []string{"metric", "value", "pass", "marginal", "status", "reason"} {
		if _, ok := c[k]; !ok {
			t.Errorf("check lacks %q", k)
		}
	}
}

func TestAssessEmptyCurveNeverPasses(t *testing.T) {
	// Whatever the detector makes of an empty curve, it must not pass.
	rec := Assess(Input{File: "empty.csv", Alloy: "Grey-Iron "})
	if rec.Verdict == VerdictPass {
		t.Errorf("an empty curve passed: %+v", rec)
	}
	if rec.Family != string(arrest.FamilyIron) {
		t.Errorf("family %q", rec.Family)
	}
}

func TestNoUndercoolingNoPotency(t *testing.T) {
	// A constructed cup whose eutectic minimum lies above the offset Tst
	// (1149.03 °C at the nominal Si 2.1): no potency figure, and a warning.
	res := greyResult()
	res.EutecticMin, res.EutecticMax = pt(1151, 95), pt(1152, 120)
	rec := FromResult(Input{Alloy: "grey-iron"}, res)
	if rec.Potency != nil || !has(rec.Warnings, "no undercooling") {
		t.Errorf("potency %+v, warnings %q", rec.Potency, rec.Warnings)
	}
	near(t, "undercooling", rec.UndercoolingC, 1149.0298-1151, tolC)
}

func TestAluminiumCurveSilicon(t *testing.T) {
	// The curve's own Si (7.4) moves the liquidus reference: 660.45 − 6.6·7.4 = 611.61 °C.
	rec := FromResult(Input{Alloy: "al-si7mg", Meta: []curvefile.Meta{{Key: "Si_pct", Value: "7.4"}}}, alResult(610.5, 610.6, 567.5))
	near(t, "liquidus ref", rec.LiquidusRefC, 611.61, 1e-9)
	near(t, "α undercooling", rec.AlphaUndercoolingC, 1.11, 1e-9)
	if rec.ChemistrySource["si"] != SourceCurve {
		t.Errorf("si source %q", rec.ChemistrySource["si"])
	}
}

func TestConcurrentSharedBook(t *testing.T) {
	// analyze judges files in parallel against one book: records must not
	// share state (run with -race).
	book := limits.Builtin()
	done := make(chan Record)
	for i := range 8 {
		go func() {
			in := Input{Alloy: []string{"grey-iron", "al-si7mg"}[i%2], Limits: book}
			if i%2 == 0 {
				done <- FromResult(in, greyResult())
			} else {
				done <- FromResult(in, alResult(613.0, 613.2, 567.5))
			}
		}()
	}
	for range 8 {
		if rec := <-done; rec.Verdict != VerdictPass {
			t.Errorf("%s: %s %q", rec.Alloy, rec.Verdict, rec.Reasons)
		}
	}
}

// TestJSONNumbersRounded: a record of a simulated cup (internal/sim, the
// project's own model) writes its numbers at the data's resolution, not
// as 1184.4096759008462: the characteristic points to 0.01 °C and 0.01 s,
// and every number with at most 3 decimals or, for ratios over decades
// (f(θ), r*, ΔG*), at most 4 significant digits.
func TestJSONNumbersRounded(t *testing.T) {
	p, err := sim.Preset(sim.DuctileIron, 0.8, 7)
	if err != nil {
		t.Fatal(err)
	}
	out := sim.Simulate(p)
	rec := Assess(Input{File: "x.csv", Alloy: "ductile-iron", Time: out.Time, Temp: out.Temp, Meta: out.Meta})
	b, _ := json.Marshal(rec)
	dec := json.NewDecoder(strings.NewReader(string(b)))
	dec.UseNumber()
	var m map[string]any
	if err := dec.Decode(&m); err != nil {
		t.Fatal(err)
	}
	decimals := func(n json.Number) int {
		s := n.String()
		if i := strings.IndexAny(s, "eE"); i >= 0 {
			return 99
		}
		if i := strings.IndexByte(s, '.'); i >= 0 {
			return len(s) - i - 1
		}
		return 0
	}
	significant := func(n json.Number) int {
		s := strings.TrimLeft(strings.NewReplacer("-", "", ".", "").Replace(strings.SplitN(strings.ToLower(n.String()), "e", 2)[0]), "0")
		return len(s)
	}
	for _, k := range []string{"eutectic_min_c", "eutectic_max_c", "solidus_c", "eutectic_min_s", "solidus_s", "pour_peak_c"} { // a near-eutectic ductile iron shows no liquidus
		n, ok := m[k].(json.Number)
		if !ok || decimals(n) > 2 {
			t.Errorf("%s = %v: want a number with at most 2 decimals", k, m[k])
		}
	}
	var walk func(path string, v any)
	walk = func(path string, v any) {
		switch v := v.(type) {
		case json.Number:
			if decimals(v) > 3 && significant(v) > 4 {
				t.Errorf("%s = %s: more than 3 decimals and 4 significant digits", path, v)
			}
		case map[string]any:
			for k, x := range v {
				walk(path+"."+k, x)
			}
		case []any:
			for i, x := range v {
				walk(fmt.Sprintf("%s[%d]", path, i), x)
			}
		}
	}
	walk("", m)
	if rec.Potency == nil || rec.UndercoolingC == nil {
		t.Fatalf("the simulated cup gave no potency or undercooling: %+v", rec.Reasons)
	}
}

func TestSigned(t *testing.T) {
	for v, want := range map[float64]string{0.38: "+0.38", -0.41: "−0.41", -0.001: "0.00", 0.004: "0.00", 0: "0.00", -12.5: "−12.50"} {
		if got := signed(v, 2); got != want {
			t.Errorf("signed(%g) = %q, want %q", v, got, want)
		}
	}
}
