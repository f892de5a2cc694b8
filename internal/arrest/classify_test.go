package arrest

import (
	"fmt"
	"math"
	"testing"
)

// closeLiquidus is a constructed (not measured) hypoeutectic grey iron whose
// liquidus arrest lies about 20 °C above the eutectic, inside the iron
// family's eutectic hint window (EutecticTopC 1170 °C): a short primary
// arrest whose T' stays clearly negative, then the long recalescing
// eutectic. A grey-iron liquidus can sit 10–40 °C above the eutectic
// (practice).
func closeLiquidus() *shape {
	ks := []knot{{0, 0}, {4, -3.2}, {30, -2.6}, {42, -0.4}, {42 + matched(12, 2.2, 0.9), -1.3}, {56, -1.2},
		{68, 0.5}, {79, -0.06}, {139, -0.12}, {147, -3.5}, {147 + matched(8, 3.38, 1.3), -2.2}, {250, -1.6}}
	return &shape{name: "grey iron, liquidus close above the eutectic (constructed)", family: FamilyIron,
		anchorT: 77, anchorC: 1148, pre: 5, knots: ks, topC: 1160}
}

// The liquidus arrest inside the hint window is the liquidus, the later long
// arrest the eutectic: tolerances of the issue (liquidus 1.5 °C, eutectic
// points 0.5 °C, end of freezing 4 °C) against the exact curve, noise-free
// and noisy at 4 to 50 Hz.
func TestLiquidusInsideEutecticWindow(t *testing.T) {
	sh := closeLiquidus()
	tr := sh.truth()
	if top := FamilyHints(FamilyIron).EutecticTopC; !tr.Liquidus.OK || tr.Liquidus.TempC > top || tr.Liquidus.TempC-tr.EutecticMin.TempC > 30 {
		t.Fatalf("construction: liquidus %+v should lie below the hint %g °C, within 30 °C of the eutectic %+v", tr.Liquidus, top, tr.EutecticMin)
	}
	acc := newAccuracy("liquidus", 1.5, "eutectic_min", 0.5, "eutectic_max", 0.5, "recalescence", 0.5, "solidus", 4.0)
	for i, smp := range []sampling{
		{rate: 10},
		{rate: 4, phase: 0.5},
		{rate: 8, noise: 0.17, seed: 216},
		{rate: 25, noise: 0.25, quant: 0.1, spikeP: 1.0 / 500, spikeLo: 10, spikeHi: 40, seed: 3},
		{rate: 50, noise: 0.1, quant: 0.25, seed: 4},
	} {
		smp.tailS = 20
		tt, v := sh.sample(smp)
		r := Analyze(tt, v, Options{Family: FamilyIron})
		label := fmt.Sprintf("sampling %d (%g Hz, noise %g)", i, smp.rate, smp.noise)
		if !r.Complete || r.Invalid() {
			t.Errorf("%s: not complete: %v", label, r.Problems)
		}
		acc.check(t, label, r, tr)
	}
	acc.log(t, sh.name)
}

// cutAt returns the readings of a sample up to time s.
func cutAt(tt, v []float64, s float64) ([]float64, []float64) {
	k := 0
	for k < len(tt) && tt[k] <= s {
		k++
	}
	return tt[:k], v[:k]
}

// A recording that stops (or whose thermocouple fails) three quarters of
// the way from the eutectic maximum to the end of freezing keeps the
// eutectic points it has seen; the end of freezing is null. Constructed
// pure zinc cup (plateau at the ITS-90 freezing point 419.527 °C,
// Preston-Thomas, Metrologia 27 (1990) 3) and recalescing grey iron.
func TestPlateauCutEarly(t *testing.T) {
	zn := pureCup("pure Zn cup cut on its plateau (constructed)", its90ZnC, 1.0, false)
	grey := shapes()[0]
	for _, c := range []struct {
		sh      *shape
		cutS    float64 // where the recording stops, s after the pour peak
		wantMax bool    // the plateau's maximum was seen
		liveMax bool    // ... and settled without knowing that the recording ends
	}{
		{zn, 48 + 75, true, true}, // flat: T' has not fallen, but a pure metal's plateau settles once long (plateauHeld)
		{grey, 94.4 + 0.75*(164.7-94.4), true, true},
		{grey, 86, false, false}, // T' still positive: the maximum is not yet seen
	} {
		tr := c.sh.truth()
		for _, smp := range []sampling{{rate: 10}, {rate: 25, noise: 0.15, quant: 0.1, seed: 9}} {
			tt, v := c.sh.sample(smp)
			tt, v = cutAt(tt, v, c.cutS)
			label := fmt.Sprintf("%s cut at %.0f s, %g Hz noise %g", c.sh.name, c.cutS, smp.rate, smp.noise)
			// the recording ends: offline the plateau is settled
			off := Analyze(tt, v, Options{Family: c.sh.family})
			checkCut(t, label+", ended", off, tr, c.wantMax, CodeEndedEarly)
			live := Analyze(tt, v, Options{Family: c.sh.family, Live: true})
			if live.EutecticMax.OK != c.liveMax || live.Solidus.OK {
				t.Errorf("%s: live (the end of the recording not yet known) eutectic maximum %v, want %v; end of freezing %v", label, live.EutecticMax.OK, c.liveMax, live.Solidus.OK)
			}
			for name, p := range livePoints(&live) {
				p.Provisional = false // live may show a point still provisional that the end settles
				if p.OK && p != livePoints(&off)[name] {
					t.Errorf("%s: %s live %+v, offline %+v", label, name, p, livePoints(&off)[name])
				}
			}
			// the thermocouple fails (pegged high): settled live and offline
			ft, fv := append([]float64(nil), tt...), append([]float64(nil), v...)
			for k := range 30 {
				ft, fv = append(ft, tt[len(tt)-1]+float64(k+1)/smp.rate), append(fv, 1999)
			}
			for _, lv := range []bool{true, false} {
				r := Analyze(ft, fv, Options{Family: c.sh.family, Live: lv})
				checkCut(t, fmt.Sprintf("%s, fault (live %v)", label, lv), r, tr, c.wantMax, CodeFault)
			}
		}
	}
}

func checkCut(t *testing.T, label string, r, tr Result, wantMax bool, code string) {
	t.Helper()
	hasCode := false
	for _, p := range r.Problems {
		hasCode = hasCode || p.Code == code
	}
	switch {
	case !hasCode || !r.Invalid():
		t.Errorf("%s: want fatal problem %q, got %v", label, code, r.Problems)
	case r.Solidus.OK:
		t.Errorf("%s: end of freezing %+v reported although it was never reached", label, r.Solidus)
	case !r.EutecticMin.OK:
		t.Errorf("%s: eutectic minimum not reported", label)
	case r.EutecticMax.OK != wantMax || r.RecalescenceOK != wantMax:
		t.Errorf("%s: eutectic maximum reported %v, want %v", label, r.EutecticMax.OK, wantMax)
	}
	// issue tolerance for the eutectic points: 0.5 °C
	if e := math.Abs(r.EutecticMin.TempC - tr.EutecticMin.TempC); r.EutecticMin.OK && e > 0.5 {
		t.Errorf("%s: eutectic minimum %.3f, truth %.3f", label, r.EutecticMin.TempC, tr.EutecticMin.TempC)
	}
	if e := math.Abs(r.EutecticMax.TempC - tr.EutecticMax.TempC); r.EutecticMax.OK && e > 0.5 {
		t.Errorf("%s: eutectic maximum %.3f, truth %.3f", label, r.EutecticMax.TempC, tr.EutecticMax.TempC)
	}
	if r.EutecticMax.OK {
		t.Logf("%s: eutectic %.3f … %.3f (truth %.3f … %.3f)", label, r.EutecticMin.TempC, r.EutecticMax.TempC, tr.EutecticMin.TempC, tr.EutecticMax.TempC)
	}
}
