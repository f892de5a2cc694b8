package solidpath

import (
	"errors"
	"fmt"
	"math"
)

// Coherency is the dendrite coherency point of an aluminium cup: where the
// primary dendrites have grown into a network that spans the cup (feeding
// by mass flow of the mush stops there).
type Coherency struct {
	TimeS  float64 // s, on the curve's clock
	TempC  float64 // the centre temperature there (smoothed), °C
	DeltaC float64 // T_w − T_c there, °C (negative: the wall is colder)
	// FS is the fraction solid there by the Fourier path (NaN when none
	// was given).
	FS float64
}

// ErrNoCoherency says the temperature difference shows no coherency point.
var ErrNoCoherency = errors.New("solidpath: no dendrite coherency point")

// CoherencyPoint finds the dendrite coherency point by the two-thermocouple
// criterion: ΔT = T_w − T_c, the wall thermocouple's reading less the
// centre's, falls while the primary dendrites grow apart in the liquid and
// turns back up once they touch, because the coherent network conducts the
// heat better than the liquid with floating crystals; the coherency point
// is the minimum of ΔT (the largest difference) during the primary
// freezing at the centre, between the start of freezing there (the Fourier
// path's StartS, else Events.ArrestS) and the start of the eutectic
// (Events.EutecticS, else EndS). A minimum at either end of that stretch
// is no coherency point: it must be lower than ΔT at both ends by
// max(0.05 °C, 4σ), σ the scatter of the smoothed ΔT.
//
// Criterion: Bäckerud, Chai and Tamminen, Solidification Characteristics of
// Aluminum Alloys vol. 2 (1990) (memory; the wording "the minimum of the
// T_W − T_C curve" checked in a secondary summary of Djurdjević and
// Odanović's work on the dendrite coherency of Al-Si alloys, not in the
// book). It needs two thermocouples in one cup and is defined for
// aluminium alloys with a dendritic primary phase.
func CoherencyPoint(t, centre, wall []float64, ev Events, fourier *Path, opt Options) (Coherency, error) {
	if err := checkCurve(t, centre, wall); err != nil {
		return Coherency{}, err
	}
	o := opt.withDefaults()
	return coherency(t, smoothOf(t, centre, o.SlopeS/2), smoothOf(t, wall, o.SlopeS/2), ev, fourier, o)
}

// coherency is CoherencyPoint on checked, smoothed curves.
func coherency(t []float64, sc, sw smoothed, ev Events, fourier *Path, o Options) (Coherency, error) {
	from, to := ev.ArrestS, ev.EutecticS
	if fourier != nil && len(fourier.Time) > 0 {
		from = fourier.StartS
	}
	if math.IsNaN(to) {
		to = ev.EndS
	}
	if math.IsNaN(from) || math.IsNaN(to) || !(from < to) {
		return Coherency{}, fmt.Errorf("%w: the primary freezing is not bounded (start %.1f s, eutectic %.1f s)", ErrEvents, from, to)
	}
	diff := make([]float64, len(t))
	for i := range diff {
		diff[i] = sw.x[i] - sc.x[i]
	}
	ld := fitLocal(t, diff, o.SlopeS/2)
	lo, hi := index(t, from), min(index(t, to), len(t)-1)
	if hi-lo < 5 {
		return Coherency{}, fmt.Errorf("%w: the primary freezing from %.1f s to %.1f s is too short", ErrNoCoherency, from, to)
	}
	best := lo
	var ss float64
	for i := lo; i <= hi; i++ {
		if ld.value[i] < ld.value[best] {
			best = i
		}
		r := diff[i] - ld.value[i]
		ss += r * r
	}
	sigma := math.Sqrt(ss / float64(hi-lo+1))
	h := max(0.05, 4*sigma/math.Sqrt(float64(max(1, index(t, t[lo]+o.SlopeS)-lo))))
	if ld.value[lo]-ld.value[best] < h || ld.value[hi]-ld.value[best] < h {
		return Coherency{}, fmt.Errorf("%w: T_w − T_c has no minimum inside the primary freezing (%.1f–%.1f s)", ErrNoCoherency, t[lo], t[hi])
	}
	c := Coherency{TimeS: t[best], TempC: sc.value[best], DeltaC: ld.value[best], FS: math.NaN()}
	if fourier != nil && len(fourier.Time) > 0 {
		c.FS = fourier.At(c.TimeS)
	}
	return c, nil
}
