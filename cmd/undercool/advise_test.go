package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// poorCup writes a SIMULATED, poorly inoculated grey-iron cup (internal/sim)
// to dir/name.
func poorCup(t testing.TB, dir, name string, seed uint64) string {
	t.Helper()
	p, err := sim.Preset(sim.GreyIron, 0.1, seed)
	if err != nil {
		t.Fatal(err)
	}
	p.HoldMin = 20
	out := sim.Simulate(p)
	var buf bytes.Buffer
	if err := curvefile.WriteCurve(&buf, out.Curve(name)); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// predictionKeys are the keys issue 17 asks of the "prediction" object,
// each with its uncertainty.
var predictionKeys = []string{"addition_pct", "addition_pct_u", "delay_min", "eutectic_min_c", "eutectic_min_c_u",
	"recalescence_c", "recalescence_c_u", "verdict", "verdict_u", "hold_max_min", "hold_max_min_u", "model_estimate", "text", "caution"}

func TestAnalyzeAdviseJSON(t *testing.T) {
	dir := t.TempDir()
	poor := poorCup(t, dir, "L-2417-cup1.csv", 4)
	flat := writeText(t, dir, "flat.csv", flatCup())
	code, out, errs := filesRun(t, "analyze", "--json", "--advise", poor, flat)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	byFile := map[string]map[string]any{}
	for _, r := range jsonLines(t, out) {
		byFile[r["file"].(string)] = r
	}
	p, ok := byFile[poor]["prediction"].(map[string]any)
	if !ok {
		t.Fatalf("no prediction object for the poor cup: %v", byFile[poor])
	}
	for _, k := range predictionKeys {
		if _, ok := p[k]; !ok {
			t.Errorf("prediction: key %q missing", k)
		}
	}
	text, _ := p["text"].(string)
	if p["model_estimate"] != true || p["applies"] != true || !strings.HasPrefix(text, "model estimate: +") ||
		!strings.Contains(text, "consider") && !strings.Contains(text, "Consider") || p["verdict"] != "pass" {
		t.Errorf("poor cup: prediction %v", p)
	}
	if a, _ := p["addition_pct"].(float64); a <= 0 || a > 0.3 {
		t.Errorf("advised addition %v %%, want more than 0 and at most the shipped largest 0.30 %%", p["addition_pct"])
	}
	// The flat curve is a bad cup: the prediction says why, with no number.
	q, _ := byFile[flat]["prediction"].(map[string]any)
	if q == nil || q["applies"] != false || q["addition_pct"] != nil || !strings.Contains(q["why"].(string), "finished freezing") &&
		!strings.Contains(q["why"].(string), "not trustworthy") {
		t.Errorf("flat curve: prediction %v", q)
	}
	// Without --advise there is no prediction (archive batches stay fast).
	_, out, _ = filesRun(t, "analyze", "--json", poor)
	if strings.Contains(out, `"prediction"`) {
		t.Error("a prediction without --advise")
	}
}

func TestAnalyzeAdviseText(t *testing.T) {
	dir := t.TempDir()
	poor := poorCup(t, dir, "L-2417-cup1.csv", 4)
	code, out, errs := filesRun(t, "analyze", "--advise", "--add-inoculant", "0.2", "--delay-min", "4", poor)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "estimate: model estimate: +0.20 % fesi75-ca-ba → eutectic minimum") || !strings.Contains(out, "never replaces the shop's written practice") {
		t.Errorf("text output lacks the estimate or its caution:\n%s", out)
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"analyze", "--add-inoculant", "0.1", poor}, "go with --advise"},
		{[]string{"analyze", "--advise", "--add-inoculant", "9", poor}, "from 0 to 5"},
		{[]string{"analyze", "--advise", "--delay-min", "-3", poor}, "0 to 600 minutes"},
	} {
		code, _, errs := filesRun(t, c.args...)
		if code == 0 || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q, want an error naming %q", c.args, code, errs, c.want)
		}
	}
	// More than the shop allows: no estimate, and why.
	_, out, _ = filesRun(t, "analyze", "--advise", "--add-inoculant", "0.5", poor)
	if !strings.Contains(out, "no model estimate: +0.50 % is more than the largest addition the limits file allows (0.30 %)") {
		t.Errorf("an addition above the largest allowed:\n%s", out)
	}
}

// report --advise draws the estimate on the page.
func TestReportAdvise(t *testing.T) {
	dir := t.TempDir()
	poor := poorCup(t, dir, "L-2417-cup1.csv", 4)
	page := filepath.Join(dir, "page.svg")
	code, _, errs := filesRun(t, "report", poor, "--out", page, "--advise")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	data, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Estimate", "model estimate: +", "Model estimate, not a measurement"} {
		if !bytes.Contains(data, []byte(want)) {
			t.Errorf("the page lacks %q", want)
		}
	}
}
