package limits

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/arrest"
)

func TestBuiltinAlloys(t *testing.T) {
	b := Builtin()
	for _, n := range []string{"grey-iron", "ductile-iron", "white-iron", "al-si7mg", "pure-al", "pure-zn"} {
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

func TestFixedPointBands(t *testing.T) {
	// ITS-90 freezing points (Preston-Thomas, Metrologia 27 (1990) 3): Al
	// 660.323 °C, Zn 419.527 °C. Pass ±2.2 °C; marginal the type K class 2
	// tolerance ±0.75 % of the reading (IEC 60584-1, memory), to 1 mK.
	b := Builtin()
	for name, fp := range map[string]float64{"pure-al": 660.323, "pure-zn": 419.527} {
		a, _ := b.Alloy(name)
		if *a.Reference.FixedPointC != fp {
			t.Errorf("%s fixed point %g, ITS-90 %g", name, *a.Reference.FixedPointC, fp)
		}
		l := a.Metrics["plateau_c"]
		for _, c := range []struct {
			what      string
			got, want float64
		}{
			{"pass_min", *l.PassMin, fp - 2.2}, {"pass_max", *l.PassMax, fp + 2.2},
			{"marginal_min", *l.MarginalMin, fp * (1 - 0.0075)}, {"marginal_max", *l.MarginalMax, fp * (1 + 0.0075)},
		} {
			if math.Abs(c.got-c.want) > 1e-3 {
				t.Errorf("%s %s = %.4f, want %.4f", name, c.what, c.got, c.want)
			}
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
	v := 1143.0
	b.Alloys["grey-iron"].Metrics["eutectic_min_c"].PassMin = &v
	b.Version = "cindermoth-2"
	if err := SaveBy(path, b, "Pell Brasswick"); err != nil {
		t.Fatal(err)
	}
	back, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if back.Edited != "2026-12-01T21:05:00Z" || back.EditedBy != "Pell Brasswick" || *back.Alloys["grey-iron"].Metrics["eutectic_min_c"].PassMin != 1143 {
		t.Errorf("round trip: edited %q by %q, pass_min %v", back.Edited, back.EditedBy, *back.Alloys["grey-iron"].Metrics["eutectic_min_c"].PassMin)
	}
	// Everything else survives the round trip unchanged.
	orig := Builtin()
	orig.Alloys["grey-iron"].Metrics["eutectic_min_c"].PassMin = &v
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
	for _, want := range []string{"2026-12-01T21:05:00Z", "Pell Brasswick", "alloy.grey-iron.metric.eutectic_min_c.pass_min 1142 → 1143", "version example-1 → cindermoth-2"} {
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
	bad := 1200.0
	back.Alloys["grey-iron"].Metrics["eutectic_min_c"].MarginalMin = &bad
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
	c.Alloys["grey-iron"].Metrics["eutectic_min_c"].PassMin = &v
	c.Alloys["al-si7mg"].Chemistry["si"] = 9
	if *b.Alloys["grey-iron"].Metrics["eutectic_min_c"].PassMin != 1142 || b.Alloys["al-si7mg"].Chemistry["si"] != 7 {
		t.Error("editing the clone changed the original")
	}
}

func TestCloneInvalid(t *testing.T) {
	// An editor's book mid-edit may be invalid; its clone is still deep.
	b := Builtin()
	bad := 2000.0
	b.Alloys["grey-iron"].Metrics["eutectic_min_c"].MarginalMin = &bad
	c := b.Clone()
	*c.Alloys["grey-iron"].Metrics["eutectic_min_c"].PassMin = 1.0
	if *b.Alloys["grey-iron"].Metrics["eutectic_min_c"].PassMin != 1142 || *c.Alloys["grey-iron"].Metrics["eutectic_min_c"].MarginalMin != 2000 {
		t.Error("the clone of an invalid book is not deep")
	}
}
