package sim

import (
	"fmt"
	"math"
	"reflect"
	"testing"
)

// TestResumedRunIsTheFullRun holds a run resumed from a saved run
// (Saved.Curve) to the same run made in full: every reading within 1e-9 °C
// and the same truth (its points within 1e-9 °C and s), for runs that
// differ from the saved one only in the eutectic (an inoculant's gain on A,
// a modifier's depression, a changed eutectic law), on the lumped and the
// radial cup of iron and Al-Si. Runs that differ in anything else, or whose
// eutectic reference lies above the saved run's, are made in full. The
// tolerance is the one place the runs may part: a zone's eutectic heat
// held back above its reference rounds at 1e-16 of a solid fraction
// (freezeZone); before that step the model is the same arithmetic.
func TestResumedRunIsTheFullRun(t *testing.T) {
	const tol = 1e-9 // the runs measured the same to the last bit
	depress := func(c float64) []Addition {
		return []Addition{{Effect: EffectEutecticDepression, Pct: 0.02, AgeMin: 5, Gain: c, HalfLifeMin: 60}}
	}
	nuclei := func(gain float64) []Addition {
		return []Addition{{Effect: EffectEutecticNuclei, Pct: 0.05, AgeMin: 5, Gain: gain, HalfLifeMin: 8}}
	}
	refiner := []Addition{{Effect: EffectPrimaryNuclei, Pct: 0.02, AgeMin: 5, Gain: 3, HalfLifeMin: 30}}
	for _, c := range []struct {
		alloy  string
		radial bool
		step   float64
	}{{AlSi7Mg, false, 0.02}, {AlSi7Mg, true, 0.03}, {GreyIron, false, 0.02}, {GreyIron, true, 0.05}, {DuctileIron, true, 0.05}} {
		p := preset(t, c.alloy, 0.2)
		k := kineticsOf(t, p)
		k.StepS = c.step
		if c.radial {
			k.Radial = &Radial{Zones: 5}
		}
		times := []float64{0, 60, 120, 240}
		_, _, sv, err := CurveSaved(p, k, times)
		if err != nil {
			t.Fatal(err)
		}
		if sv.partial || sv.n < 2 {
			t.Fatalf("%s: nothing saved (%d entries)", c.alloy, sv.n)
		}
		e0 := p.withDefaults().model().eutectic
		t.Logf("%s radial=%v: %d fine entries saved, at %.1f s", c.alloy, c.radial, sv.n, sv.s.t)
		higher, lower := k, k
		higher.EutecticC, lower.EutecticC = e0+0.5, e0-1.5
		other := k
		other.H *= 1.01
		al := c.alloy == AlSi7Mg
		for _, r := range []struct {
			name   string
			adds   []Addition
			k      Kinetics
			resume bool
		}{
			{"modifier", depress(2), k, true},
			{"inoculant", nuclei(1.5), k, true},
			{"eutectic law", nil, func() Kinetics {
				k2 := k
				e := *k.Eutectic
				e.A *= 7
				e.N = 2.3
				k2.Eutectic = &e
				return k2
			}(), true},
			{"eutectic below", nil, lower, true},
			{"refiner", refiner, k, false},
			{"eutectic above", nil, higher, false},
			{"heat loss", nuclei(1.5), other, false},
		} {
			if !al && (r.name == "modifier" || r.name == "refiner") {
				continue // additions for Al-Si only
			}
			name := fmt.Sprintf("%s radial=%v %s", c.alloy, c.radial, r.name)
			q := p
			q.Additions = r.adds
			want, wantTr, err := Curve(q, r.k, times)
			if err != nil {
				t.Fatal(err)
			}
			got, gotTr, resumed, err := curve(q, r.k, times, sv, nil)
			if err != nil {
				t.Fatal(err)
			}
			if resumed != r.resume {
				t.Errorf("%s: resumed %v, want %v", name, resumed, r.resume)
			}
			for i := range want {
				if math.Abs(got[i]-want[i]) > tol {
					t.Errorf("%s: reading at %g s %.12f °C resumed, %.12f in full", name, times[i], got[i], want[i])
				}
			}
			if !sameTruth(gotTr, wantTr, tol) {
				t.Errorf("%s: truth resumed %+v\nin full %+v", name, gotTr, wantTr)
			}
		}
	}
}

// sameTruth compares two truths field by field, floats within tol.
func sameTruth(a, b Truth, tol float64) bool {
	return closeValues(reflect.ValueOf(a), reflect.ValueOf(b), tol)
}

func closeValues(a, b reflect.Value, tol float64) bool {
	switch a.Kind() {
	case reflect.Float64:
		return math.Abs(a.Float()-b.Float()) <= tol
	case reflect.Struct:
		for i := range a.NumField() {
			if !closeValues(a.Field(i), b.Field(i), tol) {
				return false
			}
		}
		return true
	default:
		return reflect.DeepEqual(a.Interface(), b.Interface())
	}
}
