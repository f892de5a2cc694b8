package limits

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

func TestBuiltinAlloys(t *testing.T) {
	b := Builtin()
	for _, n := range []string{"grey-iron", "ductile-iron", "white-iron", "al-si7mg", "pure-sn", "pure-zn", "pure-al", "pure-ag", "pure-cu"} {
		a, ok := b.Alloy(n)
		if !ok {
			t.Fatalf("built-in book lacks %s", n)
		}
		if a.Family != Family(n) {
			t.Errorf("%s: family %q in the file, Family() says %q", n, a.Family, Family(n))
		}
	}
}

func TestFamily(t *testing.T) {
	for _, c := range []struct {
		name string
		want arrest.Family
	}{
		{"grey-iron", arrest.FamilyIron}, {"ductile-iron", arrest.FamilyIron}, {"compacted-iron", arrest.FamilyIron},
		{"white-iron", arrest.FamilyWhite}, {"al-si7mg", arrest.FamilyAluminum}, {"al-si10mg", arrest.FamilyAluminum},
		{"pure-al", arrest.FamilyPure}, {"pure-zn", arrest.FamilyPure}, {"Grey-Iron", arrest.FamilyIron},
	} {
		if got := Family(c.name); got != c.want {
			t.Errorf("Family(%q) = %q, want %q", c.name, got, c.want)
		}
	}
}

func TestShippedSaysExample(t *testing.T) {
	// The shipped file must say, in the file, that its numbers are examples.
	txt := string(Example())
	if !strings.Contains(txt, "EXAMPLE NUMBERS ONLY") || !strings.Contains(txt, "metallurgist must") {
		t.Error("the shipped limits file does not say its numbers are examples")
	}
	if !strings.Contains(Builtin().Note, "Example") {
		t.Error("the shipped note (kept through Save) does not say example")
	}
}

// TestFixedPointBands: a check cup for every usual fixed point, with the
// ITS-90 freezing point (Preston-Thomas, Metrologia 27 (1990) 3, exact
// values of the scale) and a pass band on the thermocouple's offset of the
// type K class 2 tolerance, ±2.2 °C or ±0.75 % of the reading, whichever
// is greater (IEC 60584-1, memory), to 1 mK (the file writes 3 decimals).
func TestFixedPointBands(t *testing.T) {
	b := Builtin()
	for _, c := range []struct {
		alloy string
		fp    float64
	}{{"pure-sn", 231.928}, {"pure-zn", 419.527}, {"pure-al", 660.323}, {"pure-ag", 961.78}, {"pure-cu", 1084.62}} {
		a, ok := b.Alloy(c.alloy)
		if !ok || a.Family != arrest.FamilyPure {
			t.Fatalf("%s: no check cup in the shipped book", c.alloy)
		}
		if *a.Reference.FixedPointC != c.fp {
			t.Errorf("%s fixed point %g, ITS-90 %g", c.alloy, *a.Reference.FixedPointC, c.fp)
		}
		if p := a.Metrics["plateau_c"]; p == nil || !p.Required {
			t.Errorf("%s: the plateau is not required", c.alloy)
		}
		tol := math.Max(2.2, 0.0075*c.fp)
		l := a.Metrics["fixed_point_error_c"]
		if l == nil || l.MarginalMin != nil || l.MarginalMax != nil {
			t.Fatalf("%s: want a pass band on the offset and no marginal band: %+v", c.alloy, l)
		}
		if math.Abs(*l.PassMin+tol) > 1e-3 || math.Abs(*l.PassMax-tol) > 1e-3 {
			t.Errorf("%s: offset band %g … %g, want ±%.4f", c.alloy, *l.PassMin, *l.PassMax, tol)
		}
		if !strings.Contains(l.Low, "thermocouple, not metal") || !strings.Contains(l.High, "thermocouple, not metal") {
			t.Errorf("%s: the advice does not say it checks the thermocouple", c.alloy)
		}
	}
}

const goodFile = `version = "t1"

[alloy.grey-iron]
family = "iron"

[alloy.grey-iron.metric.eutectic_min_c]
pass_min = 1142.0
marginal_min = 1138.0
`

func TestLoadErrors(t *testing.T) {
	for _, c := range []struct {
		name, text string
		line       int
		key, msg   string
	}{
		{"unknown key", goodFile + "pass_mni = 3.0\n", 9, "alloy.grey-iron.metric.eutectic_min_c.pass_mni", "unknown key"},
		{"bands do not nest", strings.Replace(goodFile, "marginal_min = 1138.0", "marginal_min = 1145.0", 1), 8,
			"alloy.grey-iron.metric.eutectic_min_c.marginal_min", "must contain the pass band"},
		{"marginal without pass", goodFile + "marginal_max = 1160.0\n", 9, "alloy.grey-iron.metric.eutectic_min_c.marginal_max", "pass_max is not"},
		{"pass reversed", goodFile + "pass_max = 1100.0\n", 9, "alloy.grey-iron.metric.eutectic_min_c.pass_max", "below pass_min"},
		{"unknown metric", goodFile + "\n[alloy.grey-iron.metric.eutectic_minimum]\npass_min = 1.0\n", 10, "alloy.grey-iron.metric.eutectic_minimum", "unknown metric"},
		{"no band", goodFile + "\n[alloy.grey-iron.metric.ce]\nlow = \"x\"\n", 10, "alloy.grey-iron.metric.ce", "sets no band"},
		{"family", strings.Replace(goodFile, `"iron"`, `"steel"`, 1), 4, "alloy.grey-iron.family", "unknown family"},
		{"family missing", strings.Replace(goodFile, "family = \"iron\"\n", "", 1), 3, "alloy.grey-iron.family", "is required"},
		{"version", strings.Replace(goodFile, `version = "t1"`, "", 1), 0, "version", "is required"},
		{"regression", goodFile + "\n[alloy.grey-iron.reference]\ncel_regression = \"guess\"\n", 11, "alloy.grey-iron.reference.cel_regression", "unknown regression"},
		{"shop without calibration", goodFile + "\n[alloy.grey-iron.reference]\ncel_regression = \"shop\"\n", 11, "alloy.grey-iron.reference.cel_regression", "needs a [calibration.liquidus]"},
		{"element", goodFile + "\n[alloy.grey-iron.chemistry]\nsilicon = 2.0\n", 11, "alloy.grey-iron.chemistry.silicon", "unknown element"},
		{"metal", goodFile + "\n[alloy.grey-iron.potency]\nmetal = \"unobtainium\"\n", 11, "alloy.grey-iron.potency.metal", "unknown metal"},
		{"syntax", goodFile + "pass_max = = 3\n", 9, "", ""},
		{"type", strings.Replace(goodFile, "1142.0", `"1142"`, 1), 7, "", "pass_min"},
	} {
		t.Run(c.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "shop.toml")
			if err := os.WriteFile(path, []byte(c.text), 0o644); err != nil {
				t.Fatal(err)
			}
			_, err := Load(path)
			if err == nil {
				t.Fatal("no error")
			}
			var le *Error
			if !errors.As(err, &le) {
				t.Fatalf("error %v is not a *limits.Error", err)
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, path) {
				t.Errorf("error %q does not start with the file name", msg)
			}
			if le.Line != c.line {
				t.Errorf("line %d, want %d (%s)", le.Line, c.line, msg)
			}
			if c.key != "" && le.Key != c.key {
				t.Errorf("key %q, want %q", le.Key, c.key)
			}
			if !strings.Contains(msg, c.msg) {
				t.Errorf("error %q lacks %q", msg, c.msg)
			}
		})
	}
}

func TestLoadGoodAndCalibrationFile(t *testing.T) {
	dir := t.TempDir()
	cal := "[calibration]\npairs = \"pairs.csv\"\n\n[calibration.liquidus]\na = 1660.0\nb = 120.0\nn = 12\ninput_min = 1150.0\ninput_max = 1210.0\n"
	if err := os.WriteFile(filepath.Join(dir, "cal.toml"), []byte(cal), 0o644); err != nil {
		t.Fatal(err)
	}
	text := "calibration_file = \"cal.toml\"\n" + goodFile + "\n[alloy.grey-iron.reference]\ncel_regression = \"shop\"\n"
	path := filepath.Join(dir, "shop.toml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	b, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	r, ok := b.LiquidusCE(RegressionShop)
	if !ok || r.A != 1660 || r.B != 120 || r.CEL(1180) != 4 {
		t.Errorf("shop regression %+v", r)
	}
	if b.Source != path || b.Version != "t1" {
		t.Errorf("source %q version %q", b.Source, b.Version)
	}
}

func TestEvaluateBands(t *testing.T) {
	lo, hi, mlo, mhi := 10.0, 20.0, 8.0, 23.0
	a := &Alloy{Name: "x", Metrics: map[string]*Limit{
		"undercooling_c": {PassMin: &lo, PassMax: &hi, MarginalMin: &mlo, MarginalMax: &mhi, Low: "Consider low.", High: "Consider high."},
	}}
	for _, c := range []struct {
		v       float64
		status  string
		verdict string
		reason  string
	}{
		{10, StatusPass, VerdictPass, "eutectic undercooling 10.0 °C is within 10.0 °C to 20.0 °C"},
		{20, StatusPass, VerdictPass, ""},
		{9.99, StatusMarginal, VerdictMarginal, "is below the 10.0 °C pass limit (marginal down to 8.0 °C)"},
		{8, StatusMarginal, VerdictMarginal, ""},
		{7.9, StatusFail, VerdictFail, "eutectic undercooling 7.9 °C is below the 8.0 °C limit"},
		{23, StatusMarginal, VerdictMarginal, "is above the 20.0 °C pass limit (marginal up to 23.0 °C)"},
		{23.1, StatusFail, VerdictFail, "eutectic undercooling 23.1 °C is above the 23.0 °C limit"},
	} {
		o := a.Evaluate(Sample{Values: map[string]float64{"undercooling_c": c.v}, Complete: true})
		if o.Checks[0].Status != c.status || o.Verdict != c.verdict || !strings.Contains(o.Checks[0].Reason, c.reason) {
			t.Errorf("%g: %s/%s %q", c.v, o.Checks[0].Status, o.Verdict, o.Checks[0].Reason)
		}
		wantAdvice := c.status != StatusPass
		if (len(o.Advice) > 0) != wantAdvice {
			t.Errorf("%g: advice %q", c.v, o.Advice)
		}
	}
	o := a.Evaluate(Sample{Values: map[string]float64{}, Why: map[string]string{"undercooling_c": "eutectic minimum not found"}, Complete: true})
	if o.Verdict != VerdictUnchecked || o.Checks[0].Status != StatusMissing || o.Checks[0].Reason != "eutectic minimum not found" {
		t.Errorf("missing: %+v", o)
	}
}

func TestSaveRoundTripBackupAndLog(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "shop.toml")
	if err := os.WriteFile(path, Example(), 0o644); err != nil {
		t.Fatal(err)
	}
	b, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	now = func() time.Time { return time.Date(2026, 12, 1, 21, 5, 0, 0, time.UTC) }
	defer func() { now = time.Now }()
	v := 3.95
	b.Alloys["grey-iron"].Metrics["ce"].PassMin = &v
	b.Version = "cindermoth-2"
	if err := SaveBy(path, b, "Pell Brasswick"); err != nil {
		t.Fatal(err)
	}
	back, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if back.Edited != "2026-12-01T21:05:00Z" || back.EditedBy != "Pell Brasswick" || *back.Alloys["grey-iron"].Metrics["ce"].PassMin != 3.95 {
		t.Errorf("round trip: edited %q by %q, pass_min %v", back.Edited, back.EditedBy, *back.Alloys["grey-iron"].Metrics["ce"].PassMin)
	}
	// Everything else survives the round trip unchanged.
	orig := Builtin()
	orig.Alloys["grey-iron"].Metrics["ce"].PassMin = &v
	orig.Version, orig.Edited, orig.EditedBy, orig.Source = back.Version, back.Edited, back.EditedBy, back.Source
	if !reflect.DeepEqual(orig, back) {
		t.Errorf("round trip changed the book:\n%s", Encode(back))
	}
	bak, err := os.ReadFile(path + ".20261201T210500Z.bak")
	if err != nil || !bytes.Equal(bak, Example()) {
		t.Errorf("backup missing or different: %v", err)
	}
	log, err := os.ReadFile(path + ".log")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"2026-12-01T21:05:00Z", "Pell Brasswick", "alloy.grey-iron.metric.ce.pass_min 3.9 → 3.95", "version example-2 → cindermoth-2"} {
		if !strings.Contains(string(log), want) {
			t.Errorf("log %q lacks %q", log, want)
		}
	}
	// A second save in the same second keeps both backups.
	if err := Save(path, back); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(path + ".20261201T210500Z-1.bak"); err != nil {
		t.Errorf("second backup: %v", err)
	}
	// An invalid book is refused and the file is left alone.
	bad := 4.0
	back.Alloys["grey-iron"].Metrics["ce"].MarginalMin = &bad
	before, _ := os.ReadFile(path)
	if err := Save(path, back); err == nil || !strings.Contains(err.Error(), "marginal_min") {
		t.Errorf("invalid book saved: %v", err)
	}
	after, _ := os.ReadFile(path)
	if !bytes.Equal(before, after) {
		t.Error("a refused save changed the file")
	}
}

func TestKeyLines(t *testing.T) {
	text := `version = "x"  # comment
note = """several
lines = not a key
"""
[alloy."grey-iron".reference]
liquidus_slopes = { si = -6.6, mg = -1.0 }
"quoted.key" = 1
`
	got := keyLines([]byte(text))
	for k, want := range map[string]int{
		"version": 1, "note": 2, "alloy.grey-iron.reference": 5,
		"alloy.grey-iron.reference.liquidus_slopes.mg": 6, "alloy.grey-iron.reference.quoted.key": 7,
	} {
		if got[k] != want {
			t.Errorf("%s: line %d, want %d", k, got[k], want)
		}
	}
	if _, ok := got["lines"]; ok {
		t.Error("a line inside a multi-line string was read as a key")
	}
	if lineIn(got, "alloy.grey-iron.reference.eutectic_base_c") != 5 {
		t.Error("an absent key should fall back to its table's line")
	}
}

func TestCalibrationValidation(t *testing.T) {
	b := Builtin()
	b.Calibration = &Calibration{Liquidus: &Regression{A: 1600, B: -3}}
	if err := b.Validate(); err == nil || !strings.Contains(err.Error(), "calibration.liquidus.b") {
		t.Errorf("a rising liquidus was accepted: %v", err)
	}
	b = Builtin()
	b.Alloys["white-iron"].Reference.WhiteCup = WhiteShop
	if err := b.Validate(); err == nil || !strings.Contains(err.Error(), "alloy.white-iron.reference.white_cup") {
		t.Errorf("shop white cup without calibration accepted: %v", err)
	}
}

func TestClone(t *testing.T) {
	b := Builtin()
	c := b.Clone()
	if !reflect.DeepEqual(b, c) {
		t.Fatal("clone differs")
	}
	v := 1.0
	c.Alloys["grey-iron"].Metrics["ce"].PassMin = &v
	c.Alloys["al-si7mg"].Chemistry["si"] = 9
	if *b.Alloys["grey-iron"].Metrics["ce"].PassMin != 3.9 || b.Alloys["al-si7mg"].Chemistry["si"] != 7 {
		t.Error("editing the clone changed the original")
	}
}

func TestCloneInvalid(t *testing.T) {
	// An editor's book mid-edit may be invalid; its clone is still deep.
	b := Builtin()
	bad := 4.0
	b.Alloys["grey-iron"].Metrics["ce"].MarginalMin = &bad
	c := b.Clone()
	*c.Alloys["grey-iron"].Metrics["ce"].PassMin = 1.0
	if *b.Alloys["grey-iron"].Metrics["ce"].PassMin != 3.9 || *c.Alloys["grey-iron"].Metrics["ce"].MarginalMin != 4 {
		t.Error("the clone of an invalid book is not deep")
	}
}

// TestShippedIronExamplesAgree: the example checks of one iron alloy never
// ask different things of the same eutectic minimum. At the nominal
// chemistry, with the alloy's offsets (grey iron: measured Tst 14.4 °C and
// Tmst 8.3 °C below calculated, Riposan et al., Metals 10 (2020) 993), every
// eutectic minimum from 1080 to 1180 °C in 0.05 °C steps is judged: where
// the eutectic_min_c band (if any) passes, the undercooling must not fail,
// and the other way round; the chill margin (white risk) may only fail
// where the undercooling fails too. The floors the file's comments state
// (grey: pass from 1144.0 °C; ductile: pass 1149.7–1159.7 °C) are checked.
func TestShippedIronExamplesAgree(t *testing.T) {
	b := Builtin()
	if st, mst := b.Alloys["grey-iron"].Offsets(); st != 14.4 || mst != 8.3 {
		t.Errorf("grey-iron offsets %g, %g; want 14.4, 8.3 (Riposan et al. 2020)", st, mst)
	}
	for _, c := range []struct {
		alloy          string
		passLo, passHi float64 // the eutectic minimum that passes the undercooling band, per the comments
	}{{"grey-iron", 1144.0, math.Inf(1)}, {"ductile-iron", 1149.7, 1159.7}} {
		a := b.Alloys[c.alloy]
		si, p := a.Chemistry["si"], a.Chemistry["p"]
		e := a.Eutectic()
		offSt, offMst := a.Offsets()
		tst, tmst := e.Stable(si, p)-offSt, e.Metastable(si, p)-offMst
		for eut := 1080.0; eut <= 1180; eut += 0.05 {
			o := a.Evaluate(Sample{Complete: true, Values: map[string]float64{
				"eutectic_min_c": eut, "undercooling_c": tst - eut, "chill_margin_c": eut - tmst}})
			st := map[string]string{}
			for _, ch := range o.Checks {
				st[ch.Metric] = ch.Status
			}
			if l := a.Metrics["eutectic_min_c"]; l.PassMin == nil && l.PassMax == nil {
				delete(st, "eutectic_min_c") // presence only: it asks nothing of the value
			}
			if st["eutectic_min_c"] == StatusPass && st["undercooling_c"] == StatusFail ||
				st["eutectic_min_c"] == StatusFail && st["undercooling_c"] == StatusPass {
				t.Errorf("%s at %.2f °C: eutectic minimum %s, undercooling %s", c.alloy, eut, st["eutectic_min_c"], st["undercooling_c"])
			}
			if st["chill_margin_c"] == StatusFail && st["undercooling_c"] != StatusFail {
				t.Errorf("%s at %.2f °C: chill margin fails while the undercooling %s", c.alloy, eut, st["undercooling_c"])
			}
			inPass := eut >= c.passLo+0.005 && eut <= c.passHi-0.005
			outPass := eut < c.passLo-0.06 || eut > c.passHi+0.06
			if inPass && st["undercooling_c"] != StatusPass || outPass && st["undercooling_c"] == StatusPass {
				t.Errorf("%s at %.2f °C: undercooling %s; the file says pass %.1f–%.1f °C", c.alloy, eut, st["undercooling_c"], c.passLo, c.passHi)
			}
		}
	}
}

// TestReasonsTellValueFromLimit: beside a bound a value is written with as
// many decimals as it takes to differ from it, so "9.0 °C is above the 9.0
// °C limit" is never printed; within a band the metric's own decimals do.
func TestReasonsTellValueFromLimit(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	a := &Alloy{Name: "x", Metrics: map[string]*Limit{
		"recalescence_c": {PassMax: f(7), MarginalMax: f(9)},
		"ce":             {PassMin: f(3.9), MarginalMin: f(3.8)},
	}}
	for _, c := range []struct {
		metric string
		v      float64
		want   string
	}{
		{"recalescence_c", 9.04, "eutectic recalescence 9.04 °C is above the 9.0 °C limit"},
		{"recalescence_c", 9.0004, "eutectic recalescence 9.0004 °C is above the 9.0 °C limit"},
		{"recalescence_c", 9.6, "eutectic recalescence 9.6 °C is above the 9.0 °C limit"},
		{"recalescence_c", 7.02, "eutectic recalescence 7.02 °C is above the 7.0 °C pass limit (marginal up to 9.0 °C)"},
		{"ce", 3.796, "carbon equivalent from the liquidus 3.796 is below the 3.80 limit"},
		{"ce", 3.8999, "carbon equivalent from the liquidus 3.8999 is below the 3.90 pass limit (marginal down to 3.80)"},
		{"recalescence_c", 6.96, "eutectic recalescence 7.0 °C is within its limit (at most 7.0 °C)"},
	} {
		o := a.Evaluate(Sample{Values: map[string]float64{c.metric: c.v}, Complete: true})
		var got string
		for _, ch := range o.Checks {
			if ch.Metric == c.metric {
				got = ch.Reason
			}
		}
		if got != c.want {
			t.Errorf("%s %g: %q, want %q", c.metric, c.v, got, c.want)
		}
	}
}

// TestSampleChecks: a check on the sample that fails makes the verdict
// invalid (re-sample) and withholds what it spoils; marginal stays
// marginal; a spoilt figure is not judged (its own fail does not count).
func TestSampleChecks(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	a := &Alloy{Name: "x", Metrics: map[string]*Limit{
		"pour_superheat_c": {SampleCheck: true, Spoils: []string{"ce"}, PassMin: f(60), MarginalMin: f(40), Low: "Consider re-sampling with hotter metal."},
		"ce":               {PassMin: f(3.9), MarginalMin: f(3.8), Low: "Consider carbon."},
	}}
	for _, c := range []struct {
		superheat, ce float64
		verdict       string
		ceStatus      string
		withheld      int
	}{
		{80, 4.0, VerdictPass, StatusPass, 0},
		{50, 4.0, VerdictMarginal, StatusPass, 0},
		{30, 4.0, VerdictInvalid, StatusWithheld, 1},
		{30, 3.5, VerdictInvalid, StatusWithheld, 1}, // the spoilt CE's own fail does not count
		{80, 3.5, VerdictFail, StatusFail, 0},
	} {
		o := a.Evaluate(Sample{Values: map[string]float64{"pour_superheat_c": c.superheat, "ce": c.ce}, Complete: true})
		var ce Check
		for _, ch := range o.Checks {
			if ch.Metric == "ce" {
				ce = ch
			}
		}
		if o.Verdict != c.verdict || ce.Status != c.ceStatus || len(o.Withheld) != c.withheld {
			t.Errorf("superheat %g, ce %g: verdict %s, ce %s, withheld %v; want %s, %s, %d", c.superheat, c.ce, o.Verdict, ce.Status, o.Withheld, c.verdict, c.ceStatus, c.withheld)
		}
		if c.verdict == VerdictInvalid && (!strings.HasPrefix(o.Reasons[0], "the sample is unfit (a check on the cup, not the metal)") || slices.Contains(o.Advice, "Consider carbon.")) {
			t.Errorf("superheat %g: reasons %q advice %q", c.superheat, o.Reasons, o.Advice)
		}
	}
	// The file's form, and its rules.
	for _, c := range []struct{ body, key, msg string }{
		{"spoils = [\"ce\"]\npass_min = 60.0\n", "alloy.grey-iron.metric.pour_superheat_c.spoils", "only a check on the sample"},
		{"sample_check = true\nspoils = [\"cee\"]\npass_min = 60.0\n", "alloy.grey-iron.metric.pour_superheat_c.spoils", "unknown metric"},
		{"sample_check = true\nspoils = [\"pour_superheat_c\"]\npass_min = 60.0\n", "alloy.grey-iron.metric.pour_superheat_c.spoils", "its own metric"},
		{"sample_check = true\nrequired = true\n", "alloy.grey-iron.metric.pour_superheat_c.sample_check", "needs a pass band"},
	} {
		_, err := Parse([]byte(goodFile+"\n[alloy.grey-iron.metric.pour_superheat_c]\n"+c.body), "t.toml")
		var le *Error
		if !errors.As(err, &le) || le.Key != c.key || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%q: %v", c.body, err)
		}
	}
}

// TestBoundsReadAsWritten: a bound is written with the metric's decimals,
// or as finely as the file gives it (up to 4 more decimals).
func TestBoundsReadAsWritten(t *testing.T) {
	mi, _ := Metric("fixed_point_error_c") // 2 decimals
	for b, want := range map[float64]string{8.135: "8.135 °C", -3.146: "-3.146 °C", 2.2: "2.20 °C", 1.0 / 3: "0.333333 °C"} {
		if got := mi.FormatBound(b); got != want {
			t.Errorf("FormatBound(%g) = %q, want %q", b, got, want)
		}
	}
	if got := FormatBand(mi, Band{Min: ptr(-8.135), Max: ptr(8.135)}); got != "-8.135 … 8.135" {
		t.Errorf("FormatBand = %q", got)
	}
}

func ptr(v float64) *float64 { return &v }
