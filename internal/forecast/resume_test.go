package forecast

import (
	"context"
	"math"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// A prediction's runs with an addition resume from the no-addition run
// kept before the eutectic (predictor.points); the points they give are
// those of the same run made in full (m.curve), to 1e-9 °C, on the
// fitted radial model of an Al-Si7Mg cup with the shipped modifier table
// and on the lumped model of a grey-iron cup with its inoculant
// (internal/sim TestResumedRunIsTheFullRun holds the runs themselves).
func TestPredictionRunsResumeAsFullRuns(t *testing.T) {
	for _, c := range []struct {
		alloy, table string
		radial       bool
	}{{sim.AlSi7Mg, "alsr-master", true}, {sim.GreyIron, "", false}} {
		p := preset(t, c.alloy, 0.1, 3)
		if c.radial {
			p.Cup = sim.CupRadial
		}
		in, res, _ := cup(t, p, c.alloy)
		rec := assess.FromResult(in, res)
		tables := builtin.Inoculants(c.alloy)
		var tr Treatment
		for _, tb := range tables {
			if c.table == "" || tb.Name == c.table {
				tr = TreatmentOf(tb)
				break
			}
		}
		if tr.Gain == 0 {
			t.Fatalf("%s: no inoculant table %q", c.alloy, c.table)
		}
		f, err := Fit(context.Background(), Sample{Time: in.Time, Temp: in.Temp, Alloy: c.alloy, Chemistry: rec.Chemistry, Points: res}, tr.Law())
		if err != nil {
			t.Fatal(err)
		}
		pr, err := newPredictor(f, tr, in, res)
		if err != nil {
			t.Fatal(err)
		}
		if pr.saved[f.m.theta] == nil {
			t.Fatalf("%s: the no-addition run was not kept", c.alloy)
		}
		for _, r := range []float64{1, 5, 20} {
			got, ok := pr.points(f.m.theta, r)
			_, full, err := f.m.curve(f.m.theta, tr.addition(r), pr.span)
			if err != nil {
				t.Fatal(err)
			}
			lo, top, fullOK := arrestPoints(f.Law, full)
			if ok != fullOK || math.Abs(got[0]-lo) > 1e-9 || math.Abs(got[1]-top) > 1e-9 {
				t.Errorf("%s r=%g: resumed %v (%v), in full [%v %v] (%v)", c.alloy, r, got, ok, lo, top, fullOK)
			}
		}
	}
}
