package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/solidpath"
	"github.com/undercool-foundry/undercool/internal/store"
)

// A two-thermocouple cup's curve file (a SIMULATED radial cup from
// `simulate --cup radial`: the wall_tc_c column, the radii in its
// metadata) is read as one by every command: `analyze` gives the Fourier
// figures and the coherency point, `analyze --store` stores them with the
// thermocouples' radii, `report` draws the page from the Fourier path
// with them, and `replay` judges the cup as analyze does.
func TestTwoThermocoupleFile(t *testing.T) {
	dir := t.TempDir()
	curve := filepath.Join(dir, "radial.csv")
	db := filepath.Join(dir, "records.db")
	if code, _, errs := recordsRun(t, db, "simulate", "--alloy", "al-si7mg", "--cup", "radial", "--seed", "5", "--out", curve); code != 0 {
		t.Fatalf("simulate: %d %s", code, errs)
	}
	code, out, errs := recordsRun(t, db, "analyze", "--json", "--store", curve)
	if code != 0 {
		t.Fatalf("analyze: %d %s", code, errs)
	}
	var rec assess.Record
	if err := json.Unmarshal([]byte(out), &rec); err != nil {
		t.Fatal(err)
	}
	if rec.FSMethod != solidpath.MethodFourier || rec.LatentHeatFourierJPerKg == nil || rec.CoherencyC == nil || len(rec.Warnings) != 0 {
		t.Fatalf("analyze: fs by %q, Fourier L %v, coherency %v, warnings %q", rec.FSMethod, rec.LatentHeatFourierJPerKg, rec.CoherencyC, rec.Warnings)
	}
	sdb, err := store.Open(t.Context(), db)
	if err != nil {
		t.Fatal(err)
	}
	hist, err := sdb.History(t.Context(), store.Filter{Full: true})
	sdb.Close()
	if err != nil || len(hist) != 1 {
		t.Fatalf("stored %d, %v", len(hist), err)
	}
	s := hist[0].Sample
	if s.WallChannel != "" || s.CentreRadiusMm == nil || *s.CentreRadiusMm != 0 || s.WallRadiusMm == nil || *s.WallRadiusMm <= 0 {
		t.Errorf("stored sample: wall channel %q (the simulator names none), radii %v %v", s.WallChannel, s.CentreRadiusMm, s.WallRadiusMm)
	}
	if got := hist[0].Result.Record; !reflect.DeepEqual(solidFigures(got), solidFigures(rec)) {
		t.Errorf("stored %v, analyze %v", solidFigures(got), solidFigures(rec))
	}

	page := filepath.Join(dir, "page.svg")
	if code, _, errs := recordsRun(t, db, "report", curve, "--out", page); code != 0 {
		t.Fatalf("report: %d %s", code, errs)
	}
	svg, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"latent heat, Fourier", "dendrite coherency", "fs at coherency"} {
		if !strings.Contains(string(svg), want) {
			t.Errorf("the page lacks %q", want)
		}
	}

	code, out, errs = recordsRun(t, db, "replay", curve, "--end")
	m := regexp.MustCompile(`RESULT cup \S+ sample "[^"]*" alloy "al-si7mg": (\S+)`).FindStringSubmatch(out)
	if code != 0 || m == nil || !strings.HasPrefix(m[1], strings.ToUpper(rec.Verdict)) {
		t.Errorf("replay: exit %d, %q (analyze: %s)\n%s%s", code, m, rec.Verdict, out, errs)
	}
}

// solidFigures are a record's solidification-path figures: the ones a
// second thermocouple changes.
func solidFigures(r assess.Record) map[string]any {
	m := map[string]any{"fs_method": r.FSMethod}
	for k, p := range map[string]*float64{
		"fs_at_liquidus": r.FSAtLiquidus, "fs_at_eutectic_start": r.FSAtEutecticStart, "fs_at_eutectic_min": r.FSAtEutecticMin,
		"fs_at_eutectic_max": r.FSAtEutecticMax, "fs_at_end_of_freezing": r.FSAtEndOfFreezing,
		"latent_heat_newtonian_j_per_kg": r.LatentHeatNewtonianJPerKg, "latent_heat_fourier_j_per_kg": r.LatentHeatFourierJPerKg,
		"specific_heat_j_per_kg_k": r.SpecificHeatJPerKgK, "coherency_c": r.CoherencyC, "coherency_s": r.CoherencyS, "fs_at_coherency": r.FSAtCoherency,
	} {
		m[k] = nil
		if p != nil {
			m[k] = *p
		}
	}
	return m
}
