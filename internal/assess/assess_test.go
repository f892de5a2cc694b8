package assess

import (
	"encoding/json"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
)

// The arrest.Results below are hand-built (constructed), not measured: they
// stand for what the detector reports, so that the metallurgy and verdict
// rules can be checked on their own.

func pt(c, s float64) arrest.Point { return arrest.Point{TempC: c, TimeS: s, OK: true} }

// greyResult is a constructed well-inoculated grey-iron cup.
func greyResult() arrest.Result {
	return arrest.Result{
		Samples: 1800, RateHz: 10, Complete: true,
		PourPeak: pt(1320, 2), Liquidus: pt(1175, 40),
		EutecticMin: pt(1156, 95), EutecticMax: pt(1158, 120), Solidus: pt(1120, 230),
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
	// Nominal Si 2.10, P 0.04 of the shipped spec; field notes §2 (memory):
	// Tst = 1153 + 5.25·2.1 − 14.88·0.04 = 1163.4298, Tmst = 1148 − 15·2.1 = 1116.5.
	near(t, "stable eutectic", rec.StableEutecticC, 1163.4298, 1e-9)
	near(t, "metastable eutectic", rec.MetastableEutecticC, 1116.5, 1e-9)
	near(t, "undercooling", rec.UndercoolingC, 7.4298, 1e-9)
	near(t, "chill margin", rec.ChillMarginC, 39.5, 1e-9)
	near(t, "pour superheat", rec.PourSuperheatC, 1320-1175, 1e-9)
	// Koriyama et al. (2020): CEL = (1625 − 1175)/110; Heine: (1669 − 1175)/124.
	near(t, "ce", rec.CE, 450.0/110, 1e-12)
	near(t, "cel koriyama", rec.CELKoriyama2020, 450.0/110, 1e-12)
	near(t, "cel heine", rec.CELHeine, 494.0/124, 1e-12)
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
	// f = (7.4298/295)²·(1811.15 − 7.4298)/(1811.15 − 295) (field notes §4).
	want := math.Pow(7.4298/295, 2) * (1811.15 - 7.4298) / (1811.15 - 295)
	near(t, "f(θ)", &rec.Potency.FTheta, want, 1e-9)
	if !strings.Contains(rec.Potency.Basis, "EFFECTIVE") || rec.Potency.DMinUm != nil {
		t.Errorf("basis %q, d_min %v", rec.Potency.Basis, rec.Potency.DMinUm)
	}
	if rec.LimitsVersion != "example-1" || rec.LimitsSource != "built-in" {
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
				"eutectic minimum 1139.2 °C is below the 1142.0 °C pass limit (marginal down to 1138.0 °C)",
				"eutectic undercooling 24.2 °C is above the 14.0 °C limit",
				"eutectic recalescence 6.0 °C is above the 4.0 °C pass limit (marginal up to 6.0 °C)",
			},
			[]string{"late (stream or ladle) inoculant", "more or later inoculation"}},
		{"hypereutectic: no liquidus is listed, not a fail", "grey-iron", hyper, VerdictPass,
			[]string{"carbon equivalent not computed: no liquidus arrest"}, nil},
		{"filled cold", "grey-iron", cold, VerdictMarginal,
			[]string{"pour superheat in the cup 50 °C is below the 60 °C pass limit (marginal down to 40 °C)"}, []string{"hotter metal"}},
		{"required eutectic missing", "grey-iron", noEut, VerdictInvalid,
			[]string{"eutectic minimum not found; it is required for grey-iron"},
			[]string{"re-sampling with a fresh, full cup"}},
		{"fatal problem is never pass", "grey-iron", fatal, VerdictInvalid,
			[]string{"the curve cannot be trusted: thermocouple open circuit at 84 s"}, []string{"re-sampling"}},
		{"no limits for the alloy", "compacted-iron", greyResult(), VerdictUnchecked,
			[]string{"no limits are set for alloy compacted-iron in built-in"}, nil},
		{"no alloy named", "", greyResult(), VerdictUnchecked, []string{"no alloy is named"}, nil},
		{"still freezing, nothing out", "grey-iron", live, VerdictUnchecked, []string{"still freezing"}, nil},
		{"still freezing, already out", "grey-iron", liveBad, VerdictFail, []string{"1139.2 °C"}, nil},
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
	// Tst = 1153 + 5.25·2.4 − 14.88·0.04 (P nominal) = 1165.0048 (field notes §2, memory).
	near(t, "stable eutectic", rec.StableEutecticC, 1165.0048, 1e-9)
	near(t, "si_pct", rec.SiPct, 2.4, 0)
	near(t, "c_pct", rec.CPct, 3.38, 0)
	near(t, "ce_classic", rec.CEClassic, 3.38+(2.4+0.04)/3, 1e-12)
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
	// arrest = 1148 − 15·2.00 − offset (field notes §2; an offset of 8.3 °C is
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
	near(t, "shop CEL", rec.CELShop, (1660-1175)/120.0, 1e-12)
	near(t, "ce uses shop", rec.CE, (1660-1175)/120.0, 1e-12)
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
	near(t, "eutectic ref", rec.EutecticRefC, 573.856, 5e-4)
	near(t, "depression", rec.EutecticDepressionC, 6.356, 5e-4)
	if rec.Potency == nil || rec.Potency.Metal != "Al" {
		t.Fatalf("potency %+v", rec.Potency)
	}
	// Free growth (Greer et al. 2000): d = 4·0.158/(1.112e6·1.25) m = 0.45468 µm.
	near(t, "d_min", rec.Potency.DMinUm, 4*0.158/(1.112e6*1.25)*1e6, 1e-9)
	if rec.Verdict != VerdictPass {
		t.Errorf("verdict %s, reasons %q", rec.Verdict, rec.Reasons)
	}
	// Unrefined and unmodified: recalescence 1.5 °C, growth near the reference.
	rec = FromResult(Input{Alloy: "al-si7mg"}, alResult(611.5, 613.0, 572.5))
	if rec.Verdict != VerdictFail || !has(rec.Advice, "grain-refiner") || !has(rec.Advice, "strontium") {
		t.Errorf("verdict %s, advice %q", rec.Verdict, rec.Advice)
	}
}

func TestPureCheckCup(t *testing.T) {
	// ITS-90 Al freezing point 660.323 °C (Preston-Thomas 1990); pass ±2.2 °C,
	// marginal to the type K class 2 ±0.75 % (IEC 60584-1, memory).
	for _, c := range []struct {
		plateau float64
		verdict string
	}{{659.1, VerdictPass}, {662.5, VerdictPass}, {656.0, VerdictMarginal}, {654.0, VerdictFail}, {666.0, VerdictFail}} {
		res := arrest.Result{Samples: 900, RateHz: 10, Complete: true, EutecticMin: pt(c.plateau-0.1, 50), EutecticMax: pt(c.plateau, 60)}
		rec := FromResult(Input{Alloy: "pure-al"}, res)
		near(t, "plateau", rec.PlateauC, c.plateau, 0)
		near(t, "error", rec.FixedPointErrorC, c.plateau-660.323, 1e-9)
		if rec.Verdict != c.verdict {
			t.Errorf("plateau %.1f: verdict %s, want %s (%q)", c.plateau, rec.Verdict, c.verdict, rec.Reasons)
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
		// keys of the design (design.md, "JSON result") keep their names
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
	// A constructed cup whose eutectic minimum lies above the calculated Tst
	// (1163.43 °C at the nominal Si 2.1): no potency figure, and a warning.
	res := greyResult()
	res.EutecticMin, res.EutecticMax = pt(1165, 95), pt(1166, 120)
	rec := FromResult(Input{Alloy: "grey-iron"}, res)
	if rec.Potency != nil || !has(rec.Warnings, "no undercooling") {
		t.Errorf("potency %+v, warnings %q", rec.Potency, rec.Warnings)
	}
	near(t, "undercooling", rec.UndercoolingC, 1163.4298-1165, 1e-9)
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
