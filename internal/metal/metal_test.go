package metal

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"
)

const deg = math.Pi / 180

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.6g, want %.6g ± %.2g", what, got, want, tol)
	}
}

func TestFTheta(t *testing.T) {
	// Check values computed from f(θ) = (2+cosθ)(1−cosθ)²/4 (Porter &
	// Easterling, Phase Transformations in Metals and Alloys; computed), tolerance 5e-7 (six decimals given).
	for _, c := range []struct{ theta, f float64 }{
		{0, 0}, {30, 0.012861}, {45, 0.058058}, {60, 0.15625},
		{90, 0.5}, {120, 0.84375}, {180, 1},
	} {
		near(t, "f(θ)", FTheta(c.theta*deg), c.f, 5e-7)
		if c.theta > 0 && c.theta < 180 {
			near(t, "θ(f)", ThetaFromF(c.f)/deg, c.theta, 2e-3)
		}
	}
}

func TestWorkedPotency(t *testing.T) {
	// Worked values (computed from f(θ) ≈ (ΔT/ΔT_hom)²·(T_m − ΔT)/(T_m − ΔT_hom),
	// Turnbull's droplet undercoolings, memory): Al T_m 933.47 K, ΔT_hom 130 K,
	// ΔT 5 K → f 1.71e-3, θ ≈ 17.9°; Fe 1811 K, 295 K, ΔT 10 K → f 1.37e-3,
	// θ ≈ 16.9°. Tolerances: f half a unit in the last digit given; θ is
	// given as "≈" to a tenth of a degree, tolerance 0.1°.
	al := Metals["al"]
	p, err := NucleationPotency(al, 5, Onset{})
	if err != nil {
		t.Fatal(err)
	}
	near(t, "Al f", p.FTheta, 1.71e-3, 0.005e-3)
	near(t, "Al θ", p.ThetaDeg, 17.9, 0.1)
	near(t, "Al barrier ratio", p.BarrierRatio, p.FTheta, 0)
	// Free growth (Greer et al. 2000; computed): ΔT 5 K → d = 4·0.158/(1.112e6·5) m = 0.1137 µm.
	near(t, "Al d_min", p.DMinUm, 4*0.158/(1.112e6*5)*1e6, 1e-9)
	fe := Metals["fe"]
	p, err = NucleationPotency(fe, 10, Onset{})
	if err != nil {
		t.Fatal(err)
	}
	near(t, "Fe f", p.FTheta, 1.37e-3, 0.005e-3)
	near(t, "Fe θ", p.ThetaDeg, 16.9, 0.1)
	if p.DMinUm != 0 {
		t.Errorf("free growth is for aluminium only, got d_min %g for Fe", p.DMinUm)
	}
	if p.Basis == "" {
		t.Error("the assumptions must be stated")
	}
}

func TestRStarAndBarrier(t *testing.T) {
	// r* = 2σT_m/(ΔH_v·ΔT) and ΔG*_hom = 16πσ³T_m²/(3ΔH_v²ΔT²) (Porter &
	// Easterling, memory). Al (σ 0.093 J/m², ΔH_f 10.71 kJ/mol, V_m 9.997e-6
	// m³/mol, memory), ΔT 5 K, by hand: ΔH_v = 1.0713e9 J/m³,
	// r* = 2·0.093·933.473/(1.0713e9·5) = 32.41 nm. Tolerance 0.05 nm.
	al := Metals["al"]
	near(t, "ΔH_v Al", al.DHv(), 1.0713e9, 0.0005e9)
	near(t, "r* Al", al.RStar(5)*1e9, 32.41, 0.05)
	// ΔG*_hom = 16π·0.093³·933.473²/(3·1.0713e9²·25) = 4.09e-16 J (by hand), 0.5 %.
	near(t, "ΔG*_hom Al", al.GHom(5), 4.09e-16, 0.02e-16)
	// r* and ΔG* relation: ΔG*_hom = (16π/3)σ³/ΔG_v² and r* = 2σ/ΔG_v imply
	// ΔG*_hom = (4π/3)·σ·r*² (identity), to rounding.
	r := al.RStar(5)
	near(t, "ΔG*_hom identity", al.GHom(5), 4*math.Pi/3*al.SigmaJPerM2*r*r, 1e-25)
}

func TestFreeGrowth(t *testing.T) {
	// Greer et al., Acta Mater. 48 (2000) 2823 (memory): σ 0.158 J/m², ΔS_v
	// 1.112e6 J/K/m³; d = 1 µm → 0.57 K, d = 0.1 µm → 5.7 K (computed, field
	// notes §3). Tolerance 0.005 K and 0.05 K.
	near(t, "ΔT_fg(1 µm)", FreeGrowthUndercooling(1e-6, FreeGrowthSigmaAl, FreeGrowthDSvAl), 0.57, 0.005)
	near(t, "ΔT_fg(0.1 µm)", FreeGrowthUndercooling(0.1e-6, FreeGrowthSigmaAl, FreeGrowthDSvAl), 5.7, 0.05)
	near(t, "d(0.5683 K)", FreeGrowthDiameter(0.5683453, FreeGrowthSigmaAl, FreeGrowthDSvAl)*1e6, 1, 1e-6)
}

func TestTurnbullRule(t *testing.T) {
	// Turnbull's largest droplet undercoolings (J. Appl. Phys. 21 (1950)
	// 1022, memory) and the rule ΔT_max ≈ 0.18·T_m (restated in J. Appl.
	// Phys. 104 (2008) 033506, source): each ratio within 0.18 ± 0.05.
	for name, want := range map[string]float64{"al": 130, "cu": 236, "ni": 319, "fe": 295} {
		c := Metals[name]
		if c.DTHomK != want {
			t.Errorf("%s ΔT_hom %g K, Turnbull %g K", name, c.DTHomK, want)
		}
		near(t, name+" ΔT_hom/T_m", c.DTHomK/c.TmK, 0.18, 0.05)
		// At the homogeneous limit itself f must be 1 (θ 180°).
		p, err := NucleationPotency(c, c.DTHomK, Onset{})
		if err != nil {
			t.Fatal(err)
		}
		near(t, name+" f at ΔT_hom", p.FTheta, 1, 1e-12)
		// (θ is ill-conditioned at the flat end of f: 1e-4° tolerance.)
		near(t, name+" θ at ΔT_hom", p.ThetaDeg, 180, 1e-4)
	}
}

func TestOnsetAbsolute(t *testing.T) {
	// f = N·k·T/ΔG*_hom: for Al, ΔT 5 K, N 78: 78·1.380649e-23·928.473/4.09e-16
	// = 2.44e-3 (by hand), 1 %.
	p, err := NucleationPotency(Metals["al"], 5, Onset{Mode: OnsetAbsolute})
	if err != nil {
		t.Fatal(err)
	}
	near(t, "f absolute", p.FTheta, 2.44e-3, 0.03e-3)
	if _, err := NucleationPotency(Metals["al"], 5, Onset{Mode: "guess"}); err == nil {
		t.Error("an unknown onset mode must be an error")
	}
	for _, dT := range []float64{0, -1, math.NaN(), 2000} {
		if _, err := NucleationPotency(Metals["al"], dT, Onset{}); err == nil {
			t.Errorf("ΔT %g K must be an error", dT)
		}
	}
}

func TestPotencyProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 2417)) // fixed seed
	for range 2000 {
		// f monotone in θ.
		a, b := rng.Float64()*math.Pi, rng.Float64()*math.Pi
		if a > b {
			a, b = b, a
		}
		if FTheta(a) > FTheta(b)+1e-15 {
			t.Fatalf("f not monotone: f(%g) = %g > f(%g) = %g", a, FTheta(a), b, FTheta(b))
		}
		// θ → f → θ round-trips (away from the flat ends).
		th := (0.5 + rng.Float64()*179) * deg
		if got := ThetaFromF(FTheta(th)); math.Abs(got-th) > 1e-6 {
			t.Fatalf("θ %g → f → θ %g", th/deg, got/deg)
		}
		// More undercooling gives a larger f(θ) (a less potent melt), both criteria.
		for _, name := range []string{"al", "fe"} {
			c := Metals[name]
			d1 := 0.5 + rng.Float64()*(c.DTHomK-1)
			d2 := d1 + 0.01 + rng.Float64()*(c.DTHomK-d1)
			for _, o := range []Onset{{}, {Mode: OnsetAbsolute}} {
				p1, err1 := NucleationPotency(c, d1, o)
				p2, err2 := NucleationPotency(c, d2, o)
				if err1 != nil || err2 != nil {
					t.Fatal(err1, err2)
				}
				if p2.FTheta < p1.FTheta || (p1.FTheta < 1 && p2.FTheta == p1.FTheta) {
					t.Fatalf("%s %s: ΔT %g → f %g but ΔT %g → f %g", name, o.Mode, d1, p1.FTheta, d2, p2.FTheta)
				}
			}
		}
	}
}

func TestThetaFromFBisection(t *testing.T) {
	// The closed form agrees with a plain bisection of the monotone f(θ).
	rng := rand.New(rand.NewPCG(7, 17)) // fixed seed
	for range 200 {
		f := rng.Float64()
		lo, hi := 0.0, math.Pi
		for range 200 {
			mid := (lo + hi) / 2
			if FTheta(mid) < f {
				lo = mid
			} else {
				hi = mid
			}
		}
		near(t, "θ closed form vs bisection", ThetaFromF(f), (lo+hi)/2, 1e-9)
	}
}

func TestIron(t *testing.T) {
	e := DefaultEutectic()
	// Fe-C-Si literature (memory, unverified; docs/sources.md §2): Tst = 1153 + 5.25·Si − 14.88·P,
	// Tmst = 1148 − 15·Si. Si 2.1, P 0.04: by hand 1163.4298 and 1116.5.
	near(t, "Tst", e.Stable(2.1, 0.04), 1163.4298, 1e-9)
	near(t, "Tmst", e.Metastable(2.1, 0.04), 1116.5, 1e-9)
	near(t, "Si from Tmst", e.SiFromMetastable(1116.5, 0.04, 0), 2.1, 1e-12)
	near(t, "undercooling", Undercooling(1163.4, 1150.1), 13.3, 1e-9)
	near(t, "chill margin", ChillMargin(1150.1, 1116.5), 33.6, 1e-9)
	// Classic CE (Stefanescu 2021): C 3.4, Si 2.1, P 0.04 → 3.4 + 2.14/3.
	near(t, "CE", CEClassic(3.4, 2.1, 0.04), 3.4+2.14/3, 1e-12)
	// Published liquidus regressions, check points at CEL 4.0: 1185 °C
	// (Koriyama, Kanno, Iwami, Kang, Int. J. Metalcasting 2020), 1173 °C (Heine,
	// AFS Transactions, memory).
	near(t, "Koriyama TL(4.0)", Koriyama2020().Liquidus(4), 1185, 1e-9)
	near(t, "Heine TL(4.0)", Heine().Liquidus(4), 1173, 1e-9)
	near(t, "Koriyama CEL(1185)", Koriyama2020().CEL(1185), 4, 1e-12)
	near(t, "Heine CEL(1173)", Heine().CEL(1173), 4, 1e-12)
	// They disagree by 12–16 °C for CEL 4.0–4.3 (computed by hand from the
	// two regressions: 12.0 and 16.2 °C at the ends).
	for _, cel := range []float64{4.0, 4.15, 4.3} {
		d := Koriyama2020().Liquidus(cel) - Heine().Liquidus(cel)
		if d < 11.95 || d > 16.25 {
			t.Errorf("CEL %.1f: regressions differ by %.1f °C, want 12–16", cel, d)
		}
	}
	near(t, "Heine CEL of chemistry", Heine().CELOf(map[string]float64{"c": 3.4, "si": 2.0, "p": 0.1}), 3.95, 1e-12)
	// White cup with the default inversion reproduces Heine and the metastable
	// eutectic: an iron of C 3.45, Si 2.0, P 0.04 has TL = 1669 − 124·CEL and
	// an arrest offset 8.3 °C below 1148 − 15·Si.
	w := DefaultWhiteCup(e, 8.3)
	cel := 3.45 + 2.0/4 + 0.04/2
	tl := Heine().Liquidus(cel)
	tm := e.Metastable(2.0, 0) - 8.3
	near(t, "white-cup Si", w.Si(tm), 2.0, 1e-12)
	near(t, "white-cup C", w.C(tl, w.Si(tm), 0.04), 3.45, 1e-12)
}

func TestAlSi(t *testing.T) {
	a := DefaultAlSi()
	// Al-Si7Mg liquidus ≈ 613–617 °C (memory): 660.45 − 6.6·7 = 614.25.
	tl := a.Liquidus(map[string]float64{"si": 7, "mg": 0.35})
	near(t, "Al-Si7 liquidus", tl, 614.25, 1e-9)
	if tl < 613 || tl > 617 {
		t.Errorf("Al-Si7Mg liquidus %.2f °C outside the 613–617 °C expected (memory)", tl)
	}
	// Binary eutectic: no depressors → 577 °C (Murray & McAlister 1984).
	near(t, "binary eutectic", a.Eutectic(map[string]float64{"si": 12.6}), 577, 1e-12)
	// A356-type: by hand 577 − (12.5/7)·(4.43·0.35 + 1.43·0.12 + 1.93·0.02) = 573.856.
	near(t, "A356 eutectic ref", a.Eutectic(map[string]float64{"si": 7, "mg": 0.35, "fe": 0.12, "cu": 0.02}), 573.856, 5e-4)
	near(t, "depression", EutecticDepression(573.9, 567.6), 6.3, 1e-9)
	near(t, "α undercooling", AlphaUndercooling(614.25, 612.75), 1.5, 1e-9)
}

func TestLeastSquares(t *testing.T) {
	// Anscombe, "Graphs in statistical analysis", Am. Stat. 27 (1973) 17,
	// data set I: published fit y = 3.00 + 0.500x, r² 0.67.
	x := []float64{10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5}
	y := []float64{8.04, 6.95, 7.58, 8.81, 8.33, 9.96, 7.24, 4.26, 10.84, 4.82, 5.68}
	f, err := LeastSquares(y, x)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "Anscombe intercept", f.Coef[0], 3.00, 0.005)
	near(t, "Anscombe slope", f.Coef[1], 0.500, 0.0005)
	near(t, "Anscombe R²", f.R2, 0.67, 0.005)
	// Cross-check with a general-purpose library (gonum stat.LinearRegression).
	alpha, beta := stat.LinearRegression(x, y, nil, false)
	near(t, "vs gonum intercept", f.Coef[0], alpha, 1e-12)
	near(t, "vs gonum slope", f.Coef[1], beta, 1e-12)
	near(t, "vs gonum R²", f.R2, stat.RSquared(x, y, nil, alpha, beta), 1e-12)

	// Exact fit: points on the plane y = 2 − 0.5·a + 3·b (constructed) give
	// the coefficients back, R² 1 and zero residuals.
	rng := rand.New(rand.NewPCG(1, 2)) // fixed seed
	var ya, xa, xb []float64
	for range 20 {
		a, b := 1150+rng.Float64()*80, 1.5+rng.Float64()
		xa, xb = append(xa, a), append(xb, b)
		ya = append(ya, 2-0.5*a+3*b)
	}
	f, err = LeastSquares(ya, xa, xb)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "exact c0", f.Coef[0], 2, 1e-8)
	near(t, "exact c1", f.Coef[1], -0.5, 1e-11)
	near(t, "exact c2", f.Coef[2], 3, 1e-10)
	near(t, "exact R²", f.R2, 1, 1e-12)
	near(t, "exact max residual", f.MaxAbs, 0, 1e-9)

	if _, err := LeastSquares([]float64{1, 2}, []float64{1, 2}); err == nil {
		t.Error("two points must be too few")
	}
	if _, err := LeastSquares([]float64{1, 2, 3, 4}, []float64{5, 5, 5, 5}); err == nil {
		t.Error("a constant regressor must be singular")
	}
	if _, err := LeastSquares([]float64{1, 2, 3, 4}, []float64{1, 2, 3, 4}, []float64{2, 4, 6, 8}); err == nil {
		t.Error("collinear regressors must be singular")
	}
}
