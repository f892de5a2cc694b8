package sim

import (
	"bytes"
	"encoding/json"
	"flag"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

var update = flag.Bool("update", false, "rewrite the SIMULATED curves in testdata/sim")

// testdataDir is the repository's committed set of simulated curves.
var testdataDir = filepath.Join("..", "..", "testdata", "sim")

// committedCurve is one file of testdata/sim.
type committedCurve struct {
	file string
	make func() Params
}

func committedCurves() []committedCurve {
	cup := func(alloy string, inoc float64, seed uint64, rate, noise float64, sample, op string, mod func(*Params)) func() Params {
		return func() Params {
			p, err := Preset(alloy, inoc, seed)
			if err != nil {
				panic(err)
			}
			p.Logger = Logger{RateHz: rate, NoiseC: noise, QuantC: 0.01, MainsC: 0.02, LagS: 0.5}
			p.Sample, p.Ladle, p.Operator = sample, sample[:6], op
			if mod != nil {
				mod(&p)
			}
			return p
		}
	}
	return []committedCurve{
		{"L-2401-grey-well-inoculated.csv", cup(GreyIron, 0.9, 2401, 10, 0.05, "L-2401 cup 1", "Pell Brasswick", nil)},
		{"L-2402-grey-poorly-inoculated.csv", cup(GreyIron, 0.1, 2402, 5, 0.2, "L-2402 cup 1", "Tobin Quenchmoor", func(p *Params) {
			p.Logger.SpikeRate, p.Logger.SpikeMinC, p.Logger.SpikeMaxC = 1.0/500, 10, 40
		})},
		{"L-2403-grey-hypereutectic.csv", cup(GreyIron, 0.7, 2403, 10, 0.1, "L-2403 cup 1", "Odile Flintcaster", func(p *Params) { p.C, p.CE = 0, 4.5 })},
		{"L-2404-ductile.csv", cup(DuctileIron, 0.8, 2404, 10, 0.05, "L-2404 cup 1", "Pell Brasswick", nil)},
		{"L-2405-ductile-faded.csv", cup(DuctileIron, 0.8, 2405, 4, 0.1, "L-2405 cup 2", "Odile Flintcaster", func(p *Params) { p.HoldMin = 25 })},
		{"L-2406-tellurium-cup.csv", cup(WhiteIron, 0, 2406, 10, 0.05, "L-2406 tellurium cup", "Tobin Quenchmoor", nil)},
		{"L-2407-alsi7mg-refined-modified.csv", cup(AlSi7Mg, 0.9, 2407, 8, 0.05, "L-2407 cup 1", "Odile Flintcaster", func(p *Params) { p.Modification = 0.9 })},
		{"L-2408-alsi7mg-unrefined-unmodified.csv", cup(AlSi7Mg, 0, 2408, 20, 0.1, "L-2408 cup 1", "Pell Brasswick", nil)},
		{"L-2409-pure-al-check-cup.csv", cup(PureAl, 0, 2409, 5, 0.05, "L-2409 check cup", "Tobin Quenchmoor", nil)},
		{"L-2410-bad-open-thermocouple.csv", cup(GreyIron, 0.8, 2410, 10, 0.05, "L-2410 cup 1", "Odile Flintcaster", func(p *Params) { p.Fault = FaultOpen })},
		{"L-2411-bad-short-pour.csv", cup(DuctileIron, 0.8, 2411, 10, 0.05, "L-2411 cup 1", "Pell Brasswick", func(p *Params) { p.Fault = FaultShortPour })},
		{"L-2412-bad-pulled-early.csv", cup(AlSi7Mg, 0.8, 2412, 5, 0.05, "L-2412 cup 1", "Tobin Quenchmoor", func(p *Params) {
			p.Modification = 0.8
			p.Fault = FaultPulledEarly
		})},
	}
}

// The committed SIMULATED curves are exactly what the model makes today;
// `go test ./internal/sim -run TestCommittedCurves -update` rewrites them.
func TestCommittedCurves(t *testing.T) {
	for _, c := range committedCurves() {
		out := Simulate(c.make())
		var curve bytes.Buffer
		if err := curvefile.WriteCurve(&curve, out.Curve(c.file)); err != nil {
			t.Fatal(err)
		}
		truth, err := out.TruthJSON()
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(testdataDir, c.file)
		if *update {
			if err := os.MkdirAll(testdataDir, 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(path, curve.Bytes(), 0o644); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(path+".truth.json", truth, 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		// Compared by value, not by byte: another CPU may fuse a multiply
		// and an add and move a last digit.
		got, err := curvefile.ReadFile(path)
		if err != nil {
			t.Fatalf("%v (regenerate with: go test ./internal/sim -run TestCommittedCurves -update)", err)
		}
		if len(got.Time) != len(out.Time) || len(got.Meta) != len(out.Meta) {
			t.Fatalf("%s: %d readings and %d metadata lines, the model makes %d and %d (regenerate with -update and review)", path, len(got.Time), len(got.Meta), len(out.Time), len(out.Meta))
		}
		for i := range got.Time {
			if got.Time[i] != out.Time[i] || math.Abs(got.Temp[i]-out.Temp[i]) > 0.011 {
				t.Fatalf("%s reading %d: %g s %g °C, the model makes %g s %g °C (regenerate with -update and review)", path, i, got.Time[i], got.Temp[i], out.Time[i], out.Temp[i])
			}
		}
		var gotTruth, wantTruth map[string]any
		b, err := os.ReadFile(path + ".truth.json")
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, &gotTruth); err != nil {
			t.Fatalf("%s.truth.json: %v", path, err)
		}
		if err := json.Unmarshal(truth, &wantTruth); err != nil {
			t.Fatal(err)
		}
		for k, w := range wantTruth {
			wf, wok := w.(float64)
			gf, gok := gotTruth[k].(float64)
			if wok != gok || wok && math.Abs(wf-gf) > 1e-3 || !wok && k != "model" && w != gotTruth[k] {
				t.Errorf("%s.truth.json: %s = %v, the model makes %v", path, k, gotTruth[k], w)
			}
		}
		// Every committed curve says it is simulated, and reads back.
		back, err := curvefile.Read(bytes.NewReader(curve.Bytes()), c.file)
		if err != nil {
			t.Fatalf("%s: %v", c.file, err)
		}
		if back.Get("simulated") != "true" || len(back.Time) != len(out.Time) {
			t.Errorf("%s: simulated=%q, %d readings back of %d", c.file, back.Get("simulated"), len(back.Time), len(out.Time))
		}
	}
}
