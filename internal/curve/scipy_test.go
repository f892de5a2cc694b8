package curve

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/undercool-foundry/undercool/internal/pyref"
)

// TestAgainstScipy compares Kernel.Apply with scipy.signal.savgol_filter
// (mode="interp", the same edge handling: the polynomial of the first and
// last window) on the committed test curves: the simulated curves in
// testdata/sim and the constructed curve in internal/curve/testdata, for
// smoothing, first and second derivatives, to 1e-9 of the scale of the
// filter's terms (max|x|·Σ|c|/dt^deriv, at least 1). Reference: scipy.signal.savgol_filter, a
// general-purpose reference library, run through .ci/savgol_check.py.
//
// It runs when UNDERCOOL_SCIPY is set (to "required", a missing scipy is a
// failure); UNDERCOOL_PYTHON names the interpreter (default /usr/bin/python3,
// Debian's, with python3-scipy).
func TestAgainstScipy(t *testing.T) {
	mode := os.Getenv("UNDERCOOL_SCIPY")
	if mode == "" {
		t.Skip("set UNDERCOOL_SCIPY=1 (or =required) to compare with scipy.signal.savgol_filter; needs python3-scipy")
	}
	py := pyref.Interpreter()
	if err := pyref.Imports(py, "scipy.signal"); err != nil {
		if pyref.Required() {
			t.Fatalf("scipy is required (UNDERCOOL_SCIPY=required): %v", err)
		}
		t.Skip(err.Error())
	}
	files, _ := filepath.Glob("../../testdata/sim/*.csv")
	files = append(files, "testdata/constructed.csv")
	args := append([]string{"../../.ci/savgol_check.py"}, files...)
	out, err := exec.Command(py, args...).Output()
	if err != nil {
		t.Fatalf("savgol_check.py: %v", err)
	}
	var ref struct {
		Scipy  string
		Curves []struct {
			File    string
			Dt      float64
			Temp    []float64
			Results []struct {
				Window, Order, Deriv int
				Values               []float64
			}
		}
	}
	if err := json.Unmarshal(out, &ref); err != nil {
		t.Fatalf("savgol_check.py output: %v", err)
	}
	checks := 0
	for _, c := range ref.Curves {
		for _, r := range c.Results {
			k := SavGol(r.Window, r.Order, r.Deriv)
			got := k.Apply(nil, c.Temp, c.Dt)
			// The scale of the sum's terms, max|x|·Σ|c|/dt^deriv: rounding
			// in either implementation is relative to it (scipy's weights
			// carry errors near 2e-15, ours near 1e-16: TestSavGolExact).
			xmax := 0.0
			for _, v := range c.Temp {
				xmax = max(xmax, abs(v))
			}
			sc := 0.0
			for _, w := range k.Coefficients() {
				sc += abs(w)
			}
			scale := max(1, xmax*sc/math.Pow(c.Dt, float64(r.Deriv)))
			worst := 0.0
			for i, want := range r.Values {
				e := abs(got[i]-want) / max(scale, abs(want))
				worst = max(worst, e)
				if e > 1e-9 {
					t.Fatalf("%s, window %d order %d deriv %d: y[%d] = %.15g, scipy %.15g", c.File, r.Window, r.Order, r.Deriv, i, got[i], want)
				}
			}
			checks++
			if r.Deriv == 2 {
				t.Logf("%s, window %d order %d deriv %d: worst relative difference %.1e", filepath.Base(c.File), r.Window, r.Order, r.Deriv, worst)
			}
		}
	}
	if checks == 0 {
		t.Fatal("no curves compared")
	}
	t.Logf("scipy %s: %d curve × filter combinations agree to 1e-9", ref.Scipy, checks)
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
