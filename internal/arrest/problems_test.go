package arrest

import (
	"math"
	"slices"
	"testing"
)

func codes(r Result) []string {
	var c []string
	for _, p := range r.Problems {
		c = append(c, p.Code)
	}
	return c
}

// Problems on constructed curves: each named by its stable code, fatal, and
// points settled before a fault kept.
func TestProblems(t *testing.T) {
	sh := shapes()[0] // constructed grey iron, eutectic min at 81 s, max at 94 s, end of freezing at 165 s
	fam := Options{Family: sh.family}
	clean := func() ([]float64, []float64) { return sh.sample(sampling{rate: 10, noise: 0.1, seed: 9}) }
	at := func(tt []float64, s float64) int { i, _ := slices.BinarySearch(tt, s); return i }

	t.Run("open circuit during the plateau", func(t *testing.T) {
		tt, v := clean()
		for i := at(tt, 130); i < len(v); i++ {
			v[i] = math.NaN()
		}
		r := Analyze(tt, v, fam)
		if !slices.Contains(codes(r), CodeFault) || !r.Invalid() {
			t.Fatalf("problems %v", r.Problems)
		}
		if !r.EutecticMin.OK || !r.EutecticMax.OK || !r.Liquidus.OK || r.Solidus.OK {
			t.Fatalf("points settled before the fault must stay and the end of freezing be null: %+v", r)
		}
		if !r.Complete {
			t.Fatal("a faulted curve is complete: it will give no more")
		}
	})
	t.Run("pegged high", func(t *testing.T) {
		tt, v := clean()
		for i := at(tt, 60); i < len(v); i++ {
			v[i] = 1999.9
		}
		r := Analyze(tt, v, fam)
		if !slices.Contains(codes(r), CodeFault) || r.EutecticMin.OK || !r.Liquidus.OK {
			t.Fatalf("problems %v, eutectic %v, liquidus %v", r.Problems, r.EutecticMin.OK, r.Liquidus.OK)
		}
	})
	t.Run("sustained step to a wrong but possible value", func(t *testing.T) {
		tt, v := clean()
		for i := at(tt, 100); i < len(v); i++ {
			v[i] -= 300
		}
		r := Analyze(tt, v, fam)
		if !slices.Contains(codes(r), CodeFault) || !r.EutecticMax.OK || r.Solidus.OK {
			t.Fatalf("problems %v, eutectic max %v, solidus %v", r.Problems, r.EutecticMax.OK, r.Solidus.OK)
		}
	})
	t.Run("below -50 °C", func(t *testing.T) {
		tt, v := clean()
		v[at(tt, 50)] = -200
		v[at(tt, 50)+1] = -200
		v[at(tt, 50)+2] = -200
		r := Analyze(tt, v, fam)
		if !slices.Contains(codes(r), CodeFault) {
			t.Fatalf("problems %v", r.Problems)
		}
	})
	t.Run("fault after the end of freezing is not held against the sample", func(t *testing.T) {
		tt, v := clean()
		for i := at(tt, 250); i < len(v); i++ {
			v[i] = math.NaN() // thermocouple pulled out after the test
		}
		r := Analyze(tt, v, fam)
		if len(r.Problems) != 0 || !r.Complete || !r.Solidus.OK {
			t.Fatalf("problems %v complete %v", r.Problems, r.Complete)
		}
	})
	t.Run("recording ended before the end of freezing", func(t *testing.T) {
		tt, v := clean()
		n := at(tt, 140)
		r := Analyze(tt[:n], v[:n], fam)
		if !slices.Equal(codes(r), []string{CodeEndedEarly}) || r.Solidus.OK || !r.EutecticMax.OK || r.Complete {
			t.Fatalf("problems %v", r.Problems)
		}
		if live := Analyze(tt[:n], v[:n], Options{Family: sh.family, Live: true}); len(live.Problems) != 0 {
			t.Fatalf("live analysis reports end-of-recording problems: %v", live.Problems)
		}
	})
	t.Run("no pour", func(t *testing.T) {
		tt := make([]float64, 600)
		v := make([]float64, 600)
		for i := range tt {
			tt[i], v[i] = float64(i)/10, 24+0.01*float64(i%7)
		}
		r := Analyze(tt, v, fam)
		if !slices.Equal(codes(r), []string{CodeNoPour}) || r.PourPeak.OK {
			t.Fatalf("problems %v", r.Problems)
		}
	})
	t.Run("too few samples", func(t *testing.T) {
		r := Analyze([]float64{0, 1, 2}, []float64{1200, 1199, 1198}, fam)
		if !slices.Equal(codes(r), []string{CodeTooFew}) {
			t.Fatalf("problems %v", r.Problems)
		}
		if r := Analyze(nil, nil, fam); !slices.Equal(codes(r), []string{CodeTooFew}) {
			t.Fatalf("empty: problems %v", r.Problems)
		}
	})
	t.Run("time repeated and going backwards", func(t *testing.T) {
		tt, v := clean()
		i := at(tt, 70)
		tt[i] = tt[i-1]     // repeated
		tt[i+5] = tt[i] - 1 // backwards
		r := Analyze(tt, v, fam)
		if !slices.Equal(codes(r), []string{CodeTimeOrder}) || !r.Invalid() {
			t.Fatalf("problems %v", r.Problems)
		}
		if r.Samples != len(tt)-2 {
			t.Fatalf("samples %d, want %d", r.Samples, len(tt)-2)
		}
		if !r.EutecticMin.OK || !r.Solidus.OK {
			t.Fatal("the dropped readings should not stop the analysis")
		}
	})
	t.Run("too noisy", func(t *testing.T) {
		tt, v := sh.sample(sampling{rate: 10, noise: 2.5, seed: 3})
		r := Analyze(tt, v, fam)
		if !slices.Contains(codes(r), CodeNoisy) || !r.Invalid() {
			t.Fatalf("problems %v", r.Problems)
		}
	})
	t.Run("spikes make no point", func(t *testing.T) {
		tt, v := clean()
		want := Analyze(tt, v, fam)
		for s := 10.0; s < 240; s += 13 {
			v[at(tt, s)] += 35 * math.Copysign(1, math.Sin(s))
		}
		r := Analyze(tt, v, fam)
		if len(r.Problems) != 0 || r.Despiked != 13 { // 13 spikes fall before the analysis completes at about 176 s
			t.Fatalf("problems %v, despiked %d", r.Problems, r.Despiked)
		}
		for name, p := range livePoints(&r) {
			q := livePoints(&want)[name]
			if name == "solidus" {
				// T' is −3.5 °C/s there, so the point is held to 0.15 s
				// (1.5 readings): a replaced reading is off by T'·Δt,
				// 0.35 °C, which may tip the window it is placed on
				// (solidusWindow)
				if p.OK != q.OK || math.Abs(p.TimeS-q.TimeS) > 0.15 {
					t.Errorf("%s moved by spikes: %+v vs %+v", name, p, q)
				}
				continue
			}
			// a replaced reading is a neighbour's, not the clean value: a little moves
			if p.OK != q.OK || math.Abs(p.TempC-q.TempC) > 0.05 {
				t.Errorf("%s moved by spikes: %+v vs %+v", name, p, q)
			}
		}
	})
}

// A NaN time on the very first reading is dropped like any other.
func TestFirstTimeNaN(t *testing.T) {
	tt, v := shapes()[0].sample(sampling{rate: 10, noise: 0.1, seed: 4})
	tt[0] = math.NaN()
	r := Analyze(tt, v, Options{})
	if !slices.Equal(codes(r), []string{CodeTimeOrder}) || r.Samples != len(tt)-1 || !r.Solidus.OK {
		t.Fatalf("problems %v, samples %d", r.Problems, r.Samples)
	}
}

// A time column in milliseconds (readings 100 "s" apart) is an odd rate,
// named as such, not analysed as a 0.01 Hz curve.
func TestOddRate(t *testing.T) {
	tt, v := shapes()[0].sample(sampling{rate: 10, noise: 0.1, seed: 4})
	for i := range tt {
		tt[i] *= 1000
	}
	r := Analyze(tt, v, Options{})
	if !slices.Equal(codes(r), []string{CodeRate}) || !r.Invalid() || r.EutecticMin.OK || !r.Complete {
		t.Fatalf("problems %v, complete %v", r.Problems, r.Complete)
	}
}

// A recording that begins after the pour (already hot, falling) still gives
// every point; the pour peak is among its first readings.
func TestStartsHot(t *testing.T) {
	sh := shapes()[0]
	tt, v := sh.sample(sampling{rate: 10, noise: 0.1, seed: 8})
	k, _ := slices.BinarySearch(tt, 2.0) // from 2 s after the peak
	r := Analyze(tt[k:], v[k:], Options{})
	want := sh.truth()
	if len(r.Problems) != 0 || !r.Complete || math.Abs(r.EutecticMin.TempC-want.EutecticMin.TempC) > 0.5 ||
		math.Abs(r.Liquidus.TempC-want.Liquidus.TempC) > 1.5 || r.PourPeak.TimeS > tt[k]+1 {
		t.Fatalf("%+v", r)
	}
}

// A spike on a slowing pour rise is no pour peak. A thermocouple lagging the
// melt approaches it ever more slowly; at 4 Hz the rise below (the readings'
// distances from the peak, in the shape of a simulated radial cup's pour)
// takes more than half a second to climb past a spike of some 35 °C on it,
// so three readings lie below the spike by more than the pour drop, each
// above the one before. The despiking lets steep readings through on the
// pour, so this spike stays; the pour peak must still be the melt's, and
// the spiked curve give the points of the unspiked one.
func TestSpikeOnSlowingPourRise(t *testing.T) {
	sh := shapes()[0]
	tt, clean := sh.sample(sampling{rate: 4, noise: 0.1, seed: 11})
	below := []float64{290.8, 217.3, 161.6, 119.2, 87.6, 63.4, 45, 32.2, 22.3, 14.9, 9.7, 6.0, 3.6, 1.8, 0.6, 0.2} // °C below the peak, one every 0.25 s up to it
	p := sh.peak()
	k0, _ := slices.BinarySearch(tt, 0)
	for i := range k0 {
		clean[i] = 25
		if j := i - (k0 - len(below)); j >= 0 {
			clean[i] = p - below[j]
		}
	}
	spiked := slices.Clone(clean)
	k := k0 - len(below) + 6
	spiked[k] = p - 11 // 34 °C above its neighbours' path
	want := Analyze(tt, clean, Options{Family: sh.family})
	got := Analyze(tt, spiked, Options{Family: sh.family})
	if len(got.Problems) != 0 || !got.Complete {
		t.Fatalf("problems %v, complete %v", got.Problems, got.Complete)
	}
	if math.Abs(got.PourPeak.TimeS-want.PourPeak.TimeS) > 0.01 || !want.EutecticMin.OK {
		t.Fatalf("pour peak at %.2f s, want %.2f s (the spike at %.2f s taken for it?)", got.PourPeak.TimeS, want.PourPeak.TimeS, tt[k])
	}
	for name, q := range livePoints(&want) {
		if g := livePoints(&got)[name]; g.OK != q.OK || math.Abs(g.TempC-q.TempC) > 0.05 {
			t.Errorf("%s: %+v with the spike, %+v without", name, g, q)
		}
	}
}
