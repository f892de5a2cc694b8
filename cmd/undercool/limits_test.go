package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/limits"
)

func TestLimitsInitCheckShow(t *testing.T) {
	p := filepath.Join(t.TempDir(), "shop.toml")
	code, out, errs := decisionRun(t, "limits", "init", p)
	if code != 0 || !strings.Contains(out, "EXAMPLE numbers only") {
		t.Fatalf("init: exit %d %s %s", code, out, errs)
	}
	// init never overwrites.
	if code, _, errs := decisionRun(t, "limits", "init", p); code != 1 || !strings.Contains(errs, "already exists") {
		t.Errorf("second init: exit %d %s", code, errs)
	}
	code, out, _ = decisionRun(t, "limits", "check", p)
	if code != 0 || !strings.Contains(out, p+": ok: version "+limits.Builtin().Version) || !strings.Contains(out, "grey-iron") {
		t.Errorf("check: exit %d %s", code, out)
	}
	code, out, _ = decisionRun(t, "limits", "show", "grey-iron", "--limits", p)
	for _, want := range []string{"grey-iron (iron)", "eutectic_min_c", "≤ 5.0 °C", "≤ 8.0 °C", "koriyama2020", "consider a late",
		"detection: a pour reaches 1000 °C; eutectic within 1088.2–1168.4 °C", "a check on the cup", "when it fails, withheld: ce"} {
		if code != 0 || !strings.Contains(out, want) {
			t.Errorf("show lacks %q (exit %d):\n%s", want, code, out)
		}
	}
	code, out, _ = decisionRun(t, "limits", "show")
	if code != 0 || !strings.Contains(out, "built-in") || !strings.Contains(out, "pure-zn") {
		t.Errorf("show all: %d %s", code, out)
	}
	code, out, _ = decisionRun(t, "limits", "show", "--metrics")
	if code != 0 || !strings.Contains(out, "eutectic_depression_c") {
		t.Errorf("show --metrics: %d %s", code, out)
	}
	if code, _, errs := decisionRun(t, "limits", "show", "steel"); code != 1 || !strings.Contains(errs, `no alloy "steel"`) {
		t.Errorf("unknown alloy: %d %s", code, errs)
	}
}

func TestLimitsCheckErrors(t *testing.T) {
	bad := strings.Replace(string(limits.Example()), "marginal_min = 3.80", "marginal_min = 3.95", 1)
	bad = strings.Replace(bad, "pass_max = 5.0", "pass_max = 5.0\npass_maks = 11.0", 1)
	p := filepath.Join(t.TempDir(), "bad.toml")
	if err := os.WriteFile(p, []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs := decisionRun(t, "limits", "check", p)
	if code != 1 || !strings.Contains(errs, p+":") || !strings.Contains(errs, "pass_maks: unknown key") {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
	good := strings.Replace(string(limits.Example()), "marginal_min = 3.80", "marginal_min = 3.95", 1)
	if err := os.WriteFile(p, []byte(good), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs = decisionRun(t, "limits", "check", p)
	// line of the marginal_min key in the shipped file
	line := 1 + strings.Count(good[:strings.Index(good, "marginal_min = 3.95")], "\n")
	want := p + ":" + strconv.Itoa(line) + ": alloy.grey-iron.metric.ce.marginal_min: 3.95 is above pass_min 3.9"
	if code != 1 || !strings.Contains(errs, want) {
		t.Errorf("exit %d, stderr %q, want %q", code, errs, want)
	}
	if code, _, _ := decisionRun(t, "limits", "check"); code != 2 {
		t.Errorf("no file: exit %d", code)
	}
	if code, _, _ := decisionRun(t, "limits"); code != 2 {
		t.Errorf("no action: exit %d", code)
	}
}

// limits show lists the [inoculant.NAME] tables (docs/limits.md, "The
// shop's inoculants"): every table for the book, the alloy's own for an
// alloy, with the uncertainties and the stamp a calibration wrote. The
// expected figures are those of the file written here.
func TestLimitsShowInoculants(t *testing.T) {
	base, err := os.ReadFile(filepath.Join("..", "..", "internal", "limits", "shipped", "limits.toml"))
	if err != nil {
		t.Fatal(err)
	}
	shop := string(base) + `
[inoculant.cindermoth-late-stream]
description = "Late stream inoculant at Cindermoth (constructed test values)."
effect = "eutectic-nuclei"
alloys = ["ductile-iron"]
gain_per_0_01_pct = 1.9
gain_u = 0.12
fade_half_life_min = 6.5
fade_half_life_u_min = 0.8
max_addition_pct = 0.15
delay_min = 1.0
calibrated = "12 pairs, 2026-03-01"
`
	p := filepath.Join(t.TempDir(), "shop.toml")
	if err := os.WriteFile(p, []byte(shop), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := decisionRun(t, "limits", "show", "--limits", p)
	if code != 0 {
		t.Fatalf("show: exit %d %s", code, errs)
	}
	for _, want := range []string{
		"INOCULANT", "PER 0.01 %", "FADE HALF-LIFE", "LARGEST ADDITION",
		"fesi75-ca-ba", "nucleation constant × 1.6", "8 min", "0.3 %", "grey-iron, ductile-iron",
		"alsr-master", "eutectic − 0.2 °C", "120 min", "0.4 %",
		"cindermoth-late-stream", "nucleation constant × 1.9 ± 0.12", "6.5 ± 0.8 min", "0.15 %", "12 pairs, 2026-03-01",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("show lacks %q:\n%s", want, out)
		}
	}
	code, out, _ = decisionRun(t, "limits", "show", "ductile-iron", "--limits", p)
	if code != 0 || !strings.Contains(out, "cindermoth-late-stream") || !strings.Contains(out, "fesi75-ca-ba") || strings.Contains(out, "altib-rod") {
		t.Errorf("show ductile-iron: the alloy's own inoculants (exit %d):\n%s", code, out)
	}
	code, out, _ = decisionRun(t, "limits", "show", "pure-zn", "--limits", p)
	if code != 0 || strings.Contains(out, "INOCULANT") {
		t.Errorf("show pure-zn: no inoculant table expected (exit %d):\n%s", code, out)
	}
}
