package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// writeSim writes a SIMULATED cup (internal/sim) to dir/name.
func writeSim(t *testing.T, dir, name string, p sim.Params) {
	t.Helper()
	var buf bytes.Buffer
	if err := curvefile.WriteCurve(&buf, sim.Simulate(p).Curve(name)); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, name), buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

// calibrate --inoculants on simulated pairs made with the shipped table's
// values (gain 1.6 per 0.01 %, half-life 8 min) writes a limits file whose
// table has them back within 10 % and 30 %, with their uncertainties.
func TestCalibrateInoculants(t *testing.T) {
	dir := t.TempDir()
	var csv strings.Builder
	csv.WriteString("# SIMULATED pairs (internal/sim), the Cindermoth demo ladles\nsample,before,after,inoculant,addition_pct,delay_min\n")
	for i, c := range []struct{ pct, delay float64 }{{0.1, 1}, {0.2, 8}, {0.25, 15}} {
		b, err := sim.Preset(sim.GreyIron, 0, uint64(60+i))
		if err != nil {
			t.Fatal(err)
		}
		a := b
		a.Seed += 500
		a.Additions = []sim.Addition{{Effect: sim.EffectEutecticNuclei, Pct: c.pct, AgeMin: c.delay, Gain: 1.6, HalfLifeMin: 8}}
		bn, an := fmt.Sprintf("L-24%02d-1.csv", i), fmt.Sprintf("L-24%02d-2.csv", i)
		writeSim(t, dir, bn, b)
		writeSim(t, dir, an, a)
		fmt.Fprintf(&csv, "L-24%02d,%s,%s,fesi75-ca-ba,%g,%g\n", i, bn, an, c.pct, c.delay)
	}
	pairs := writeText(t, dir, "pairs.csv", csv.String())
	base := filepath.Join(dir, "limits.toml")
	if err := os.WriteFile(base, limits.Example(), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "fitted.toml")
	code, stdout, errs := filesRun(t, "calibrate", "--inoculants", "--limits", base, "--out", out, pairs)
	if code != 0 {
		t.Fatalf("exit %d: %s\n%s", code, errs, stdout)
	}
	if !strings.Contains(stdout, "fesi75-ca-ba (eutectic-nuclei)") || !strings.Contains(stdout, "metallurgist") {
		t.Errorf("output:\n%s", stdout)
	}
	b, err := limits.Load(out)
	if err != nil {
		t.Fatal(err)
	}
	in := b.InoculantTables["fesi75-ca-ba"]
	if d := in.Gain/1.6 - 1; d > 0.1 || d < -0.1 || in.GainU <= 0 {
		t.Errorf("fitted gain %g ± %g, the simulator's 1.6", in.Gain, in.GainU)
	}
	if d := in.HalfLifeMin/8 - 1; d > 0.3 || d < -0.3 || in.HalfLifeU <= 0 {
		t.Errorf("fitted half-life %g ± %g min, the simulator's 8", in.HalfLifeMin, in.HalfLifeU)
	}
	if !strings.Contains(in.Calibrated, "pairs.csv, 3 pairs") {
		t.Errorf("calibrated stamp %q", in.Calibrated)
	}
	for _, c := range []struct {
		csv, want string
	}{
		{"before,after,inoculant,addition_pct\n", "the column \"delay_min\" is missing"},
		{"before,after,inoculant,addition_pct,delay_min\na.csv,b.csv,fesi75-ca-ba,x,3\n", "pairs.csv:2: column addition_pct: \"x\" is not a number"},
		{"before,after,inoculant,addition_pct,delay_min\na.csv,b.csv,unobtainium,0.1,3\n", "pairs.csv:2: column inoculant"},
		{"before,after,inoculant,addition_pct,delay_min,colour\n", "unknown column \"colour\""},
	} {
		p := writeText(t, t.TempDir(), "pairs.csv", c.csv)
		if code, _, errs := filesRun(t, "calibrate", "--inoculants", p); code == 0 || !strings.Contains(errs, c.want) {
			t.Errorf("%q: exit %d, stderr %q, want an error naming %q", c.csv, code, errs, c.want)
		}
	}
}
