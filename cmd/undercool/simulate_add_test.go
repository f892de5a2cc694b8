package main

import (
	"path/filepath"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// The "after" cup of the same melt: an inoculant addition raises the
// eutectic minimum (practice; docs/sources.md §2), a longer delay lets it
// fade, and the file says what was added.
func TestSimulateAfterAddition(t *testing.T) {
	dir := t.TempDir()
	eut := func(args ...string) (float64, map[string]string) {
		t.Helper()
		path := filepath.Join(dir, strings.Join(args, "_")+".csv")
		base := []string{"simulate", "--alloy", "grey-iron", "--inoculation", "0.1", "--hold-min", "20", "--seed", "3", "--out", path}
		if code, _, errs := filesRun(t, append(base, args...)...); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
		c, err := curvefile.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		rec := assess.Assess(assess.Input{Alloy: "grey-iron", Time: c.Time, Temp: c.Temp, Meta: c.Meta})
		meta, _, _ := readCurve(t, path)
		return *rec.EutecticMinC, meta
	}
	before, _ := eut()
	soon, meta := eut("--add-inoculant", "0.2", "--delay-min", "2")
	late, _ := eut("--add-inoculant", "0.2", "--delay-min", "16")
	if !(soon > before+3 && late < soon && late > before) {
		t.Errorf("eutectic minimum before %.2f, 2 min after +0.2 %% %.2f, 16 min after %.2f °C", before, soon, late)
	}
	if !strings.Contains(meta["sim_addition"], "0.2 % eutectic-nuclei 2 min before the pour") || meta["sim_hold_min"] != "22" {
		t.Errorf("metadata: addition %q, hold %q", meta["sim_addition"], meta["sim_hold_min"])
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--alloy", "grey-iron", "--delay-min", "3"}, "go with --add-inoculant"},
		{[]string{"--alloy", "grey-iron", "--add-inoculant", "0.5"}, "allows at most 0.3 % of fesi75-ca-ba"},
		{[]string{"--alloy", "al-si7mg", "--add-inoculant", "0.1"}, "choose one with --inoculant"},
		{[]string{"--alloy", "al-si7mg", "--add-inoculant", "0.1", "--inoculant", "fesi75-ca-ba"}, "has no such table for al-si7mg"},
		{[]string{"--alloy", "pure-zn", "--add-inoculant", "0.1"}, "no inoculant table for pure-zn"},
		{[]string{"--alloy", "grey-iron", "--add-inoculant", "0.1", "--delay-min", "-1"}, "0 to 600 minutes"},
	} {
		code, _, errs := filesRun(t, append(append([]string{"simulate"}, c.args...), "--out", filepath.Join(dir, "x.csv"))...)
		if code == 0 || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q, want an error naming %q", c.args, code, errs, c.want)
		}
	}
}
