package curve

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

func TestDespikeRemovesSpikesOnly(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for _, rate := range []float64{1, 2, 4, 10, 50, 200} {
		clean := constructedCurve(int(300*rate), rate, 0.3, uint64(rate))
		x := slices.Clone(clean)
		spikes := map[int]bool{}
		for i := 10; i < len(x)-10; i += 200 + r.IntN(600) {
			x[i] += (10 + 30*r.Float64()) * float64(1-2*r.IntN(2))
			spikes[i] = true
		}
		y, n := Despike(nil, x, 3, 0.3)
		if n != len(spikes) {
			t.Errorf("%g Hz: removed %d spikes, put in %d", rate, n, len(spikes))
		}
		for i := range y {
			if spikes[i] {
				// the spikes lie hundreds of readings apart: each takes the
				// mean of its two neighbours, within the noise of the clean
				// curve (0.3 °C here; one neighbour's reading was up to a
				// whole step off at 2 Hz)
				if want := (x[i-1] + x[i+1]) / 2; y[i] != want {
					t.Errorf("%g Hz: replacement %g at %d, want the neighbours' mean %g", rate, y[i], i, want)
				}
				if math.Abs(y[i]-clean[i]) > 1 {
					t.Errorf("%g Hz: spike at %d replaced by %g, clean %g", rate, i, y[i], clean[i])
				}
			} else if y[i] != x[i] {
				t.Errorf("%g Hz: sample %d changed from %g to %g", rate, i, x[i], y[i])
			}
		}
	}
}

// A logger reading once a second on a liquid cooling at 2.7 °C/s: an 11 °C
// spike lies only 8.3 °C from its window's median (a neighbour's reading, a
// step away), under the 8.4 °C threshold base + 2·slope; against the mean
// of its neighbours it stands out by 11 °C, and it is removed, its
// neighbours kept (simulated iron cups at 1 Hz had such a spike left in and
// read a liquidus 100 °C high on the bend in T' it made).
func TestDespikeOnASlowLoggersSlope(t *testing.T) {
	x := make([]float64, 21)
	for i := range x {
		x[i] = 1300 - 2.7*float64(i)
	}
	clean := slices.Clone(x)
	x[10] += 11
	y, n := Despike(nil, x, 3, 0)
	if n != 1 || math.Abs(y[10]-clean[10]) > 1e-9 {
		t.Fatalf("removed %d spikes, x[10] %.2f → %.2f, clean %.2f", n, x[10], y[10], clean[10])
	}
	for i := range y {
		if i != 10 && y[i] != x[i] {
			t.Errorf("reading %d changed from %.2f to %.2f", i, x[i], y[i])
		}
	}
}

// A steep genuine rise (the pour: 25 → 1400 °C in half a second) is no spike.
func TestDespikeKeepsThePour(t *testing.T) {
	x := []float64{25, 25, 25, 300, 900, 1300, 1390, 1385, 1380, 1376, 1371, 1366}
	y, n := Despike(nil, x, 3, 0.3)
	if n != 0 || !slices.Equal(x, y) {
		t.Fatalf("pour altered: %v (%d removed)", y, n)
	}
}

// The noise estimate recovers the standard deviation of white noise on a
// smooth constructed curve, with and without spikes, within 10 %.
func TestNoiseEstimate(t *testing.T) {
	for _, sd := range []float64{0.05, 0.1, 0.3, 1} {
		x := constructedCurve(3000, 10, sd, 11)
		for i := 100; i < len(x); i += 500 {
			x[i] += 30
		}
		got, _ := Noise(nil, x)
		if math.Abs(got-sd) > 0.1*sd {
			t.Errorf("noise %g: estimated %g", sd, got)
		}
		t.Logf("white noise sd %.2f °C: estimate %.4f °C", sd, got)
	}
	if got, _ := Noise(nil, make([]float64, 100)); got != 0 {
		t.Errorf("flat line: noise %g", got)
	}
}

// NoiseFast recovers white noise on a smooth constructed curve within 5 % as
// the median of 50-reading blocks and within 15 % over 200 readings holding
// a 30 °C spike; quantisation noise, q/√12 (uniform distribution), within
// 30 % (it may count part of it twice, which errs on the safe side).
func TestNoiseFast(t *testing.T) {
	for _, sd := range []float64{0.05, 0.3, 1} {
		x := constructedCurve(3000, 10, sd, 12)
		x[1234] += 30
		var est []float64
		for b := 0; b+50 <= len(x); b += 50 {
			v, _ := NoiseFast(nil, x[b:b+50])
			est = append(est, v)
		}
		slices.Sort(est)
		if got := est[len(est)/2]; math.Abs(got-sd) > 0.05*sd {
			t.Errorf("noise %g: median block estimate %g", sd, got)
		}
		if got, _ := NoiseFast(nil, x[1150:1350]); math.Abs(got-sd) > 0.15*sd {
			t.Errorf("noise %g: block with the spike %g", sd, got)
		}
	}
	x := constructedCurve(3000, 10, 0.01, 13)
	for i := range x {
		x[i] = math.Round(x[i]*4) / 4 // 0.25 °C steps
	}
	if got, want := first(NoiseFast(nil, x)), 0.25/math.Sqrt(12); math.Abs(got-want) > 0.3*want {
		t.Errorf("quantised to 0.25: %g, want about %g", got, want)
	}
}

func first(v float64, _ []float64) float64 { return v }

// DespikeRun gives exactly what SpikeAt gives sample by sample, at the ends
// of x and inside, in pieces of any length, on a constructed curve with
// spikes of both signs, adjacent pairs and a flat stretch.
func TestDespikeRunIsSpikeAt(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	bounded := 0
	for _, n := range []int{5, 6, 9, 40, 3000} {
		x := constructedCurve(n, 10, 0.2, uint64(n))
		for i := range x {
			switch p := r.Float64(); {
			case p < 0.02:
				x[i] += 25
			case p < 0.04:
				x[i] -= 40
			case p < 0.06 && i+1 < n:
				x[i], x[i+1] = x[i]+30, x[i+1]+30
			}
		}
		if n > 100 {
			for i := 50; i < 70; i++ {
				x[i] = x[49]
			}
		}
		for _, noise := range []float64{0, 0.2, math.NaN()} {
			var want []float64
			var wantSpikes []int
			for i := range x {
				v, spike := SpikeAt(x, i, 3, noise)
				want = append(want, v)
				if spike {
					wantSpikes = append(wantSpikes, i)
				}
			}
			var got []float64
			var gotSpikes []int
			for i := 0; i < n; {
				to := min(n, i+1+r.IntN(70))
				var maxStep float64
				got, gotSpikes, maxStep = DespikeRun(got, gotSpikes, x, i, to, 3, noise)
				// a finite bound holds for the steps within the piece, whose
				// values are then the readings themselves
				if !math.IsInf(maxStep, 1) {
					bounded++
					if maxStep != max(3, SpikeSigmas*noise) || !slices.Equal(got[i:to], x[i:to]) {
						t.Fatalf("n %d noise %g piece %d…%d: bound %g with despiked values", n, noise, i, to, maxStep)
					}
					for k := i + 1; k < to; k++ {
						if math.Abs(got[k]-got[k-1]) > maxStep {
							t.Fatalf("n %d noise %g: step %g at %d exceeds the bound %g", n, noise, got[k]-got[k-1], k, maxStep)
						}
					}
				}
				i = to
			}
			if !slices.Equal(got, want) || !slices.Equal(gotSpikes, wantSpikes) {
				t.Fatalf("n %d noise %g: DespikeRun differs from SpikeAt (spikes %v, want %v)", n, noise, gotSpikes, wantSpikes)
			}
			if len(wantSpikes) == 0 && n > 100 && !math.IsNaN(noise) {
				t.Fatalf("n %d: the constructed spikes were not found", n)
			}
		}
	}
	if bounded == 0 {
		t.Fatal("no piece came back with a step bound")
	}
	t.Logf("%d pieces came back with a step bound", bounded)
}

// round is math.Round (halves away from zero, integers, large, tiny, NaN
// and infinite values, negative ones) on seeded random values.
func TestRound(t *testing.T) {
	vals := []float64{0, 0.5, 1.5, 2.5, 0.49999999999999994, 4503599627370495.5, 1 << 52, 1<<53 + 2, 1e300, 5e-324,
		math.Inf(1), math.Inf(-1), math.NaN(), -0.5, -2.5, math.Nextafter(0.5, 0), math.Nextafter(1.5, 2)}
	r := rand.New(rand.NewPCG(1, 2))
	for range 20000 {
		vals = append(vals, r.Float64()*math.Pow(10, float64(r.IntN(20))), float64(r.IntN(1000))/4, float64(r.IntN(1000))+0.5)
	}
	for _, v := range vals {
		if got, want := round(v), math.Round(v); got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
			t.Fatalf("round(%v) = %v, math.Round %v", v, got, want)
		}
	}
}

// quietCopy copies exactly the middle readings of the leading windows
// whose four steps are within h (the steps tested directly, as floats),
// and with h = quietStep(base) every reading it copies is within base of
// all four neighbours, SpikeAt's quick test, so no spike: on seeded random
// readings with steps near the limit, NaN, infinities and signed zeros,
// from every start.
func TestQuietCopyIsTheFourSteps(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	specials := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, math.Copysign(0, -1)}
	copied := 0
	for trial := range 2000 {
		base := []float64{0, 0.5, 1, 3, 1e-300, 7.3}[trial%6]
		h := quietStep(base)
		n := 5 + r.IntN(60)
		x := make([]float64, n)
		v := (r.Float64()*2 - 1) * 2000
		for i := range x {
			switch r.IntN(3) {
			case 0: // just within or just beyond the limit, either way
				v += h * math.Copysign(1+(r.Float64()*2-1)*1e-15, r.Float64()-0.5)
			default:
				v += (r.Float64()*2 - 1) * h
			}
			if r.IntN(40) == 0 {
				v += base * (1 + r.Float64())
			}
			x[i] = v
			if r.IntN(80) == 0 {
				x[i] = specials[r.IntN(len(specials))]
			}
		}
		for from := 0; from+5 <= n; from++ {
			xs := x[from:]
			want := 0
			for ; want+5 <= len(xs); want++ {
				w := xs[want : want+5]
				if !(math.Abs(w[1]-w[0]) <= h && math.Abs(w[2]-w[1]) <= h && math.Abs(w[3]-w[2]) <= h && math.Abs(w[4]-w[3]) <= h) {
					break
				}
			}
			out := make([]float64, len(xs)-4)
			got := quietCopy(out, xs, math.Float64bits(h))
			if got != want || !slices.Equal(out[:want], xs[2:2+want]) {
				t.Fatalf("trial %d from %d base %g: quietCopy %d (%v), want %d (x %v)", trial, from, base, got, out[:got], want, xs)
			}
			for o := range got {
				w := xs[o : o+5]
				if !(math.Abs(w[0]-w[2]) <= base && math.Abs(w[1]-w[2]) <= base && math.Abs(w[3]-w[2]) <= base && math.Abs(w[4]-w[2]) <= base) {
					t.Fatalf("trial %d: copied %v, beyond base %g of a neighbour", trial, w, base)
				}
				if _, spike := SpikeAt(w, 2, base, 0); spike {
					t.Fatalf("trial %d: copied a spike %v", trial, w)
				}
			}
			copied += got
		}
	}
	if copied < 10000 {
		t.Fatalf("only %d readings copied: the cases do not exercise the scan", copied)
	}
}
