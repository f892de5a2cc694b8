package report

import (
	"path/filepath"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/forecast"
)

// The page shows the model's estimate under its own heading, with the
// caution that it never replaces the shop's practice.
func TestWriteEstimate(t *testing.T) {
	c, rec := simulatedCup(t)
	info := demoInfo
	info.Predictions = []forecast.Prediction{{ModelEstimate: true, Applies: true,
		Text: "model estimate: +0.20 % fesi75-ca-ba → eutectic minimum 1156 ± 0.8 °C (pass) if poured within 3 min of the addition."}}
	path := filepath.Join(t.TempDir(), "L-2417.svg")
	if err := Write(path, c, rec, info); err != nil {
		t.Fatal(err)
	}
	all := svgText(t, path)
	for _, want := range []string{"Estimate", "model estimate: +0.20 % fesi75-ca-ba", "Model estimate, not a measurement", "never replaces"} {
		if !strings.Contains(all, want) {
			t.Errorf("SVG text lacks %q", want)
		}
	}
	// Without predictions the page has no estimate.
	if err := Write(path, c, rec, demoInfo); err != nil {
		t.Fatal(err)
	}
	if all := svgText(t, path); strings.Contains(all, "Estimate") {
		t.Error("an estimate heading without predictions")
	}
}
