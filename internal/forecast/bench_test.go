package forecast

import (
	"context"
	"testing"

	"github.com/undercool-foundry/undercool/internal/cpuclock"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// BenchmarkAdvise is the target: the fit and the prediction (the
// search for the smallest passing addition and the longest wait) of one
// finished sample in under 1 s on one core (run with -cpu 1), per
// addition; an Al-Si7Mg sample with both a refiner and a modifier takes
// two fits. A radial cup (internal/sim's default radial cup, a gradient
// of a few °C) is fitted twice: the lumped model misfits it, the radial
// one of FitZones zones does not (Fit). It reports the model runs per
// sample beside the time, and the process's CPU time per sample
// (cpu-s/op: user + system, the garbage collector included), which a busy
// shared host does not inflate as it does the wall time (ns/op).
func BenchmarkAdvise(b *testing.B) {
	for _, c := range []struct {
		name, alloy, inoculant string
		inoc                   float64
		radial                 bool
	}{
		{"grey-iron", sim.GreyIron, "", 0.1, false},
		{"ductile-iron", sim.DuctileIron, "", 0.1, false},
		{"al-si7mg-refiner", sim.AlSi7Mg, "altib-rod", 0.1, false},
		{"al-si7mg-modifier", sim.AlSi7Mg, "alsr-master", 0.1, false},
		{"al-si7mg-both", sim.AlSi7Mg, "", 0.1, false},
		{"grey-iron-radial", sim.GreyIron, "", 0.1, true},
		{"ductile-iron-radial", sim.DuctileIron, "", 0.1, true},
		{"al-si7mg-refiner-radial", sim.AlSi7Mg, "altib-rod", 0.1, true},
		{"al-si7mg-modifier-radial", sim.AlSi7Mg, "alsr-master", 0.1, true},
	} {
		b.Run(c.name, func(b *testing.B) {
			p := preset(b, c.alloy, c.inoc, 3)
			if c.radial {
				p.Cup = sim.CupRadial
			}
			in, res, _ := cup(b, p, c.alloy)
			runs := 0
			cpu0 := cpuclock.Used()
			for b.Loop() {
				for _, pr := range Advise(context.Background(), in, res, Options{Inoculant: c.inoculant, DelayMin: -1}) {
					if !pr.Applies {
						b.Fatalf("%s: %s", c.name, pr.Why)
					}
					runs += pr.Fit.ModelRuns
				}
			}
			if cpu := cpuclock.Used() - cpu0; cpu > 0 {
				b.ReportMetric(cpu.Seconds()/float64(b.N), "cpu-s/op")
			}
			b.ReportMetric(float64(runs)/float64(b.N), "fit-runs/op")
		})
	}
}
