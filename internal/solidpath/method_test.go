package solidpath

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// loggers the constructed cups are read with.
var loggers = []struct {
	name                string
	rate, jitter, sigma float64
	quant               float64
	tolL, tolFS         float64 // latent heat (relative) and fs tolerances
}{
	{"clean 10 Hz", 10, 0, 0, 0, 0.001, 0.001},
	{"10 Hz, 0.05 °C noise, 0.01 °C steps", 10, 0, 0.05, 0.01, 0.005, 0.005},
	{"5 Hz with ±30 % time jitter, 0.1 °C steps", 5, 0.3, 0.02, 0.1, 0.005, 0.005},
	{"50 Hz, 0.3 °C noise", 50, 0, 0.3, 0, 0.01, 0.005},
}

// checkPath checks what every path promises: fs from 0 to 1, never
// falling, on rising times inside the curve, and fs(T) beside it.
func checkPath(t *testing.T, p Path) {
	t.Helper()
	if len(p.Time) != len(p.FS) || len(p.Time) != len(p.TempC) || len(p.Time) < 2 {
		t.Fatalf("path lengths: %d times, %d fs, %d temperatures", len(p.Time), len(p.FS), len(p.TempC))
	}
	if p.FS[0] < 0 || p.FS[len(p.FS)-1] != 1 {
		t.Errorf("fs runs from %g to %g, want 0 … 1", p.FS[0], p.FS[len(p.FS)-1])
	}
	for i := 1; i < len(p.FS); i++ {
		if p.FS[i] < p.FS[i-1] || p.Time[i] <= p.Time[i-1] {
			t.Fatalf("reading %d: fs %g after %g at %g s after %g s", i, p.FS[i], p.FS[i-1], p.Time[i], p.Time[i-1])
		}
	}
	if p.At(p.StartS-1) != 0 || p.At(p.EndS+1) != 1 || !math.IsNaN(p.At(math.NaN())) {
		t.Errorf("At before the start %g, after the end %g, at NaN %g", p.At(p.StartS-1), p.At(p.EndS+1), p.At(math.NaN()))
	}
}

// The Newtonian method gives back the latent heat and fs of a cup built
// from its own heat balance, dT/dt = −K(T − T∞) + (L/c)·dfs/dt
// (constructed; the tolerances are the reading's: noise and steps of the
// logger).
func TestNewtonianConstructed(t *testing.T) {
	c := newtonianCup()
	for _, lg := range loggers {
		t.Run(lg.name, func(t *testing.T) {
			tt, temp, _ := c.sample(lg.rate, lg.jitter, lg.sigma, lg.quant, 11)
			p, err := Newtonian(tt, temp, c.events(), Options{SpecificHeat: c.c})
			if err != nil {
				t.Fatal(err)
			}
			checkPath(t, p)
			if p.Method != MethodNewtonian || p.Zero.Form != ZeroNewtonSolid || p.SpecificHeat != c.c {
				t.Errorf("method %q, zero %q, c %g", p.Method, p.Zero.Form, p.SpecificHeat)
			}
			if e := p.LatentJPerKg/c.L - 1; math.Abs(e) > lg.tolL {
				t.Errorf("L = %.0f J/kg, built with %.0f (%+.2f %%, tolerance ±%.1f %%)", p.LatentJPerKg, c.L, 100*e, 100*lg.tolL)
			}
			if e := p.Zero.K/c.k - 1; math.Abs(e) > lg.tolL {
				t.Errorf("K = %.5f /s, built with %.5f", p.Zero.K, c.k)
			}
			for _, pt := range p.Points {
				if want := c.fs(pt.TimeS); math.Abs(pt.FS-want) > lg.tolFS {
					t.Errorf("fs at %s (%.1f s) = %.4f, built %.4f (±%.3f)", pt.Key, pt.TimeS, pt.FS, want, lg.tolFS)
				}
			}
			for _, s := range []float64{60, 100, 150, 220, 280} {
				if got, want := p.At(s), c.fs(s); math.Abs(got-want) > lg.tolFS {
					t.Errorf("fs(%g s) = %.4f, built %.4f", s, got, want)
				}
			}
		})
	}
}

// The Fourier method gives back the latent heat, the fs and the two
// diffusivities of a cup built from the conduction balance at its centre,
// T_c' = a(fs)·4(T_w − T_c)/r_w² + (L/c)·dfs/dt with a(fs) linear between
// the liquid's and the solid's (constructed).
func TestFourierConstructed(t *testing.T) {
	c := fourierCup()
	for _, lg := range loggers {
		t.Run(lg.name, func(t *testing.T) {
			tt, centre, wall := c.sample(lg.rate, lg.jitter, lg.sigma, lg.quant, 12)
			p, err := Fourier(tt, centre, wall, Geometry{CentreMm: 1000 * c.rc, WallMm: 1000 * c.rw}, c.events(), Options{SpecificHeat: c.c})
			if err != nil {
				t.Fatal(err)
			}
			checkPath(t, p)
			if p.Method != MethodFourier || p.Zero.Form != ZeroDiffusivity {
				t.Errorf("method %q, zero %q", p.Method, p.Zero.Form)
			}
			if e := p.LatentJPerKg/c.L - 1; math.Abs(e) > lg.tolL {
				t.Errorf("L = %.0f J/kg, built with %.0f (%+.2f %%, tolerance ±%.1f %%)", p.LatentJPerKg, c.L, 100*e, 100*lg.tolL)
			}
			for _, d := range []struct {
				name      string
				got, want float64
			}{{"liquid", p.Zero.DiffLiquid, c.aL}, {"solid", p.Zero.DiffSolid, c.aS}} {
				// The noise of T_w − T_c (1.5–2.3 °C) weighs on a more than on L.
				if e := d.got/d.want - 1; math.Abs(e) > 5*lg.tolL {
					t.Errorf("%s diffusivity %.4g m²/s, built %.4g", d.name, d.got, d.want)
				}
			}
			for _, pt := range p.Points {
				if want := c.fs(pt.TimeS); math.Abs(pt.FS-want) > lg.tolFS {
					t.Errorf("fs at %s (%.1f s) = %.4f, built %.4f (±%.3f)", pt.Key, pt.TimeS, pt.FS, want, lg.tolFS)
				}
			}
		})
	}
}

// On a two-thermocouple cup the methods disagree as their assumptions do:
// the Newtonian one, blind to the gradient, is far off where the cup's
// cooling is set by conduction (constructed: the Fourier cup above).
func TestNewtonianBlindToTheGradient(t *testing.T) {
	c := fourierCup()
	tt, centre, wall := c.sample(10, 0, 0, 0, 1)
	s := Analyze(Cup{Time: tt, Centre: centre, Wall: wall, Geometry: Geometry{WallMm: 16}, Events: c.events(), Options: Options{SpecificHeat: c.c}})
	if s.Newtonian == nil || s.Fourier == nil || s.Best() != s.Fourier {
		t.Fatalf("paths: %v (%v), %v (%v)", s.Newtonian, s.NewtonianErr, s.Fourier, s.FourierErr)
	}
	if e := s.Fourier.LatentJPerKg/c.L - 1; math.Abs(e) > 0.002 {
		t.Errorf("Fourier L off by %+.2f %%", 100*e)
	}
	if e := s.Newtonian.LatentJPerKg/c.L - 1; math.Abs(e) < 0.2 {
		t.Errorf("Newtonian L off by only %+.1f %% on a conduction-controlled cup", 100*e)
	}
	if s.Coherency != nil || s.CoherencyErr != nil {
		t.Errorf("coherency was not asked for: %v, %v", s.Coherency, s.CoherencyErr)
	}
}

// Bad input gets an error that says what is wrong.
func TestErrors(t *testing.T) {
	c := newtonianCup()
	tt, temp, _ := c.sample(10, 0, 0, 0, 1)
	ev := c.events()
	ok := Options{SpecificHeat: c.c}
	shifted := func(f func(t, x []float64)) ([]float64, []float64) {
		t2, x2 := append([]float64(nil), tt...), append([]float64(nil), temp...)
		f(t2, x2)
		return t2, x2
	}
	backwards, _ := shifted(func(t, _ []float64) { t[100] = t[98] })
	_, nan := shifted(func(_, x []float64) { x[50] = math.NaN() })
	cut := index(tt, c.t3-20)
	for _, tc := range []struct {
		name  string
		t, x  []float64
		ev    Events
		opt   Options
		is    error
		words string
	}{
		{"too short", tt[:10], temp[:10], ev, ok, ErrCurve, "10 readings"},
		{"lengths", tt, temp[:100], ev, ok, ErrCurve, "100 temperatures"},
		{"time backwards", backwards, temp, ev, ok, ErrCurve, "reading 100"},
		{"NaN reading", tt, nan, ev, ok, ErrCurve, "temperature 50"},
		{"negative specific heat", tt, temp, ev, Options{SpecificHeat: -1}, ErrOptions, "specific heat -1"},
		{"no end of freezing", tt, temp, Events{PourS: math.NaN(), ArrestS: 50, EndS: math.NaN()}, ok, ErrEvents, "end of freezing"},
		{"events out of order", tt, temp, Events{PourS: math.NaN(), ArrestS: 300, EndS: 100}, ok, ErrEvents, "not in order"},
		{"end beyond the curve", tt[:cut], temp[:cut], ev, ok, ErrEvents, "not in order"},
		{"no single-phase stretch", tt[index(tt, c.t1-3):index(tt, c.t3+5)], temp[index(tt, c.t1-3):index(tt, c.t3+5)], ev, ok, ErrNoZero, "lasts 6 s"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Newtonian(tc.t, tc.x, tc.ev, tc.opt)
			if !errors.Is(err, tc.is) || !strings.Contains(err.Error(), tc.words) {
				t.Errorf("error %v, want %v saying %q", err, tc.is, tc.words)
			}
		})
	}
	f := fourierCup()
	tt, centre, wall := f.sample(10, 0, 0, 0, 1)
	for _, tc := range []struct {
		name  string
		wall  []float64
		g     Geometry
		is    error
		words string
	}{
		{"radii swapped", wall, Geometry{CentreMm: 16, WallMm: 2}, ErrOptions, "further out"},
		{"wall missing readings", wall[:50], Geometry{WallMm: 16}, ErrCurve, "50 temperatures"},
		{"wall hotter than the centre", centre, Geometry{WallMm: 16}, ErrNoZero, "thermal diffusivity"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w := tc.wall
			if tc.name == "wall hotter than the centre" {
				w = make([]float64, len(centre))
				for i := range w {
					w[i] = 2*centre[i] - wall[i]
				}
			}
			_, err := Fourier(tt, centre, w, tc.g, f.events(), Options{SpecificHeat: f.c})
			if !errors.Is(err, tc.is) || !strings.Contains(err.Error(), tc.words) {
				t.Errorf("error %v, want %v saying %q", err, tc.is, tc.words)
			}
		})
	}
	// Without a specific heat fs is still there, the latent heat is not.
	tn, xn, _ := c.sample(10, 0, 0, 0, 1)
	if p, err := Newtonian(tn, xn, c.events(), Options{}); err != nil || !math.IsNaN(p.LatentJPerKg) || p.At(c.t2) == 0 {
		t.Errorf("c = 0: L %g, fs(t2) %g, %v", p.LatentJPerKg, p.At(c.t2), err)
	}
	s := Analyze(Cup{Time: tt, Centre: centre, Events: f.events(), Options: Options{SpecificHeat: f.c}, Coherency: true})
	if !errors.Is(s.FourierErr, ErrOneThermocouple) || !errors.Is(s.CoherencyErr, ErrOneThermocouple) || s.Best() != s.Newtonian {
		t.Errorf("one thermocouple: %v, %v", s.FourierErr, s.CoherencyErr)
	}
}

// The coherency point is the minimum of T_w − T_c inside the primary
// freezing (constructed: a difference with a dip of known depth and time,
// and one without).
func TestCoherencyPoint(t *testing.T) {
	c := fourierCup()
	tt, centre, wall := c.sample(10, 0, 0.02, 0, 3)
	ev := c.events()
	dip := func(depth float64) []float64 {
		w := make([]float64, len(wall))
		for i, s := range tt {
			w[i] = wall[i] - depth*math.Exp(-(s-100)*(s-100)/(2*8*8))
		}
		return w
	}
	got, err := CoherencyPoint(tt, centre, dip(1.5), ev, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// The constructed difference is −gap(t) − dip(t); its minimum lies where
	// the dip's fall balances the gap's slow rise, within 2 s of 100 s.
	if math.Abs(got.TimeS-100) > 2 || !math.IsNaN(got.FS) || got.DeltaC > -1.5 {
		t.Errorf("coherency at %.1f s, ΔT %.2f °C, fs %g; want ≈100 s, below −1.5 °C, no fs", got.TimeS, got.DeltaC, got.FS)
	}
	p, err := Fourier(tt, centre, dip(1.5), Geometry{WallMm: 16}, ev, Options{SpecificHeat: c.c})
	if err != nil {
		t.Fatal(err)
	}
	if got, err = CoherencyPoint(tt, centre, dip(1.5), ev, &p, Options{}); err != nil || math.Abs(got.FS-p.At(got.TimeS)) > 1e-12 {
		t.Errorf("with the Fourier path: %+v, %v", got, err)
	}
	// Without the dip, T_w − T_c = −gap falls steadily through the primary
	// freezing: its lowest value is at the end, no coherency point.
	if _, err := CoherencyPoint(tt, centre, wall, ev, nil, Options{}); !errors.Is(err, ErrNoCoherency) {
		t.Errorf("no dip: %v, want ErrNoCoherency", err)
	}
}
