package curve

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// Published Savitzky–Golay convolution weights. Source: Savitzky & Golay,
// Anal. Chem. 36 (1964) 1627, Tables I–III, with the corrections of Steinier,
// Termonia & Deltour, Anal. Chem. 44 (1972) 1906. The values are recalled
// (memory), not re-read from the printed tables; each set is also a
// consequence of the least-squares definition, which the property test below
// checks independently. Tolerance 1e-12.
func TestSavGolPublishedCoefficients(t *testing.T) {
	cases := []struct {
		name                 string
		window, order, deriv int
		num                  []float64
		norm                 float64
	}{
		// Table I, quadratic/cubic smoothing (memory).
		{"smooth 5-pt quad", 5, 2, 0, []float64{-3, 12, 17, 12, -3}, 35},
		{"smooth 5-pt cubic", 5, 3, 0, []float64{-3, 12, 17, 12, -3}, 35},
		{"smooth 7-pt quad", 7, 2, 0, []float64{-2, 3, 6, 7, 6, 3, -2}, 21},
		{"smooth 9-pt quad", 9, 2, 0, []float64{-21, 14, 39, 54, 59, 54, 39, 14, -21}, 231},
		// Table I, quartic/quintic smoothing, 7 points (memory).
		{"smooth 7-pt quartic", 7, 4, 0, []float64{5, -30, 75, 131, 75, -30, 5}, 231},
		// Table II, first derivative, linear/quadratic (memory).
		{"d1 5-pt quad", 5, 2, 1, []float64{-2, -1, 0, 1, 2}, 10},
		{"d1 7-pt quad", 7, 2, 1, []float64{-3, -2, -1, 0, 1, 2, 3}, 28},
		// Table II, first derivative, cubic/quartic, 5 points (memory).
		{"d1 5-pt cubic", 5, 3, 1, []float64{1, -8, 0, 8, -1}, 12},
		// Table III, second derivative, quadratic/cubic, 5 points (memory);
		// Σ c_k·k² = 2, so the weights give d²x/dk² itself.
		{"d2 5-pt quad", 5, 2, 2, []float64{2, -1, -2, -1, 2}, 7},
	}
	for _, c := range cases {
		got := SavGol(c.window, c.order, c.deriv).Coefficients()
		for i, n := range c.num {
			want := n / c.norm
			if math.Abs(got[i]-want) > 1e-12 {
				t.Errorf("%s: c[%d] = %.15g, want %.15g", c.name, i, got[i], want)
			}
		}
	}
}

func TestSavGolCached(t *testing.T) {
	if SavGol(11, 2, 1) != SavGol(11, 2, 1) {
		t.Fatal("SavGol computed the same kernel twice")
	}
}

// A polynomial of degree ≤ order is reproduced exactly, edges included, and
// so are its derivatives: the defining property of a least-squares fit.
func TestSavGolReproducesPolynomials(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 40; trial++ {
		order := 1 + r.IntN(4)
		window := 2*(order/2+1+r.IntN(8)) + 1
		n := window + r.IntN(60)
		dt := 0.05 + r.Float64()
		coef := make([]float64, order+1)
		for i := range coef {
			coef[i] = r.NormFloat64() * math.Pow(0.3, float64(i))
		}
		x := make([]float64, n)
		for i := range x {
			x[i] = poly(coef, float64(i)*dt, 0)
		}
		for deriv := 0; deriv <= min(order, 2); deriv++ {
			got := SavGol(window, order, deriv).Apply(nil, x, dt)
			for i := range x {
				want := poly(coef, float64(i)*dt, deriv)
				scale := 1 + math.Abs(want)
				if math.Abs(got[i]-want) > 1e-8*scale*math.Pow(float64(n)*dt, float64(order)) {
					t.Fatalf("trial %d (w %d, o %d, d %d): y[%d] = %g, want %g", trial, window, order, deriv, i, got[i], want)
				}
			}
		}
	}
}

func poly(c []float64, t float64, deriv int) float64 {
	s := 0.0
	for a := deriv; a < len(c); a++ {
		f := 1.0
		for i := 0; i < deriv; i++ {
			f *= float64(a - i)
		}
		s += f * c[a] * math.Pow(t, float64(a-deriv))
	}
	return s
}

func TestKernelAtMatchesApply(t *testing.T) {
	x := constructedCurve(400, 10, 0.2, 7)
	k := SavGol(21, 3, 1)
	all := k.Apply(nil, x, 0.1)
	for i := range x {
		if got := k.At(x, i, 0.1); math.Abs(got-all[i]) > 1e-12 {
			t.Fatalf("At(%d) = %g, Apply gives %g", i, got, all[i])
		}
	}
}

// constructedCurve is a constructed cooling curve (not measured): an
// exponential fall from 1350 °C with a bump, white noise of sd °C, n samples
// at rate Hz.
func constructedCurve(n int, rate, sd float64, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 99))
	x := make([]float64, n)
	for i := range x {
		t := float64(i) / rate
		x[i] = 25 + 1325*math.Exp(-t/400) + 8*math.Exp(-(t-60)*(t-60)/200) + sd*r.NormFloat64()
	}
	return x
}

func TestWindowSamples(t *testing.T) {
	cases := []struct {
		s, hz    float64
		order    int
		min, out int
	}{
		{2, 10, 2, 5, 21}, {2, 2, 2, 5, 5}, {2, 200, 2, 5, 401}, {0.1, 4, 3, 5, 5}, {1, 4, 2, 5, 5}, {1.5, 4, 2, 5, 7},
	}
	for _, c := range cases {
		if got := WindowSamples(c.s, c.hz, c.order, c.min); got != c.out {
			t.Errorf("WindowSamples(%g s, %g Hz) = %d, want %d", c.s, c.hz, got, c.out)
		}
	}
}

// AppendGrowing gives AtGrowing in a loop, bit for bit, at the start edge
// and in the interior.
func TestAppendGrowingIsAtGrowing(t *testing.T) {
	x := constructedCurve(2000, 10, 0.3, 21)
	for _, w := range []int{5, 21, 41} {
		k := SavGol(w, 2, 1)
		var want []float64
		for c := 0; c < len(x)-w/2; c++ {
			want = append(want, k.AtGrowing(x, c, 0.1))
		}
		got := k.AppendGrowing(nil, x, 0, len(x)-w/2, 0.1)
		if !slices.Equal(got, want) {
			t.Fatalf("window %d: AppendGrowing differs from AtGrowing", w)
		}
	}
}
