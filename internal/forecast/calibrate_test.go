package forecast

import (
	"context"
	"fmt"
	"math"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// simSample is a SIMULATED cup as a sample to fit.
func simSample(t testing.TB, p sim.Params, alloy string) Sample {
	t.Helper()
	in, res, _ := cup(t, p, alloy)
	rec := assess.FromResult(in, res)
	return Sample{Time: in.Time, Temp: in.Temp, Alloy: ModelAlloy(builtin.Resolve(alloy).Family(), alloy), Chemistry: rec.Chemistry, Points: res}
}

// Calibrate finds the inoculant's gain and half-life back from simulated
// pairs made with known values (the simulator's truth: gain 1.6 per
// 0.01 %, half-life 8 min): the gain within 10 % and within three of its
// standard uncertainties, the half-life within 30 %. The melts carry no
// inoculation of their own, so nothing but the addition fades.
func TestCalibrateFindsTheTable(t *testing.T) {
	table := TreatmentOf(builtin.InoculantTables["fesi75-ca-ba"])
	start := table
	start.Gain, start.HalfLifeMin = 1.3, 15 // the calibration starts off the truth
	cases := []struct{ pct, delay float64 }{{0.1, 1}, {0.2, 6}, {0.15, 12}, {0.25, 16}, {0.05, 3}, {0.3, 9}}
	if raceBuild || testing.Short() {
		cases = cases[:3]
	}
	var pairs []Pair
	for i, c := range cases {
		b := preset(t, sim.GreyIron, 0, uint64(40+i))
		a := b
		a.Seed += 1000
		a.PourC += 6
		a.Additions = []sim.Addition{{Effect: sim.EffectEutecticNuclei, Pct: c.pct, AgeMin: c.delay, Gain: table.Gain, HalfLifeMin: table.HalfLifeMin}}
		pairs = append(pairs, Pair{Label: fmt.Sprintf("pair %d", i+1), Before: simSample(t, b, "grey-iron"), After: simSample(t, a, "grey-iron"), Pct: c.pct, DelayMin: c.delay})
	}
	cal, err := Calibrate(context.Background(), pairs, start)
	if err != nil {
		t.Fatal(err)
	}
	got := cal.Treatment
	t.Logf("gain %.3f ± %.3f per 0.01 %% (truth %.2f), half-life %.2f ± %.2f min (truth %.0f), χ²/dof %.2f, %d pairs",
		got.Gain, got.GainU, table.Gain, got.HalfLifeMin, got.HalfLifeU, table.HalfLifeMin, cal.Chi2PerDoF, cal.Used)
	for _, p := range cal.Pairs {
		t.Logf("  %s: %.2f steps after %g min: effect %.3f ± %.3f, fitted %.3f %v", p.Label, p.Steps, p.DelayMin, p.Effect, p.U, p.Fitted, p.Err)
	}
	if cal.Used != len(pairs) || !cal.HalfLifeFitted {
		t.Errorf("%d of %d pairs used, half-life fitted %v", cal.Used, len(pairs), cal.HalfLifeFitted)
	}
	if d := math.Abs(got.Gain - table.Gain); d > 0.1*table.Gain || d > 3*got.GainU {
		t.Errorf("gain %.3f ± %.3f, the simulator's %.2f", got.Gain, got.GainU, table.Gain)
	}
	if math.Abs(got.HalfLifeMin-table.HalfLifeMin) > 0.3*table.HalfLifeMin {
		t.Errorf("half-life %.2f min, the simulator's %.0f", got.HalfLifeMin, table.HalfLifeMin)
	}
}
