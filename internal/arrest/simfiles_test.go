package arrest_test

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// The committed simulated curves (testdata/sim, made by the project's cup
// model, not measurements) analysed against the points the model's
// noiseless curve gives (FILE.truth.json), with the tolerances:
// eutectic minimum, maximum and recalescence 0.5 °C, liquidus 1.5 °C, end of
// freezing 4 °C. A primary recalescence the model makes smaller than 0.3 °C
// is below what the detector resolves: liquidus_min may then be null.
func TestSimulatedFiles(t *testing.T) {
	files, _ := filepath.Glob("../../testdata/sim/*.csv")
	if len(files) == 0 {
		t.Skip("no simulated curves in testdata/sim")
	}
	family := map[string]arrest.Family{"grey-iron": arrest.FamilyIron, "ductile-iron": arrest.FamilyIron,
		"white-iron": arrest.FamilyWhite, "al-si7mg": arrest.FamilyAluminum, "pure-al": arrest.FamilyPure}
	for _, path := range files {
		c, err := curvefile.ReadFile(path)
		if err != nil {
			t.Errorf("%v", err)
			continue
		}
		raw, err := os.ReadFile(path + ".truth.json")
		if err != nil {
			t.Errorf("%s: %v", path, err)
			continue
		}
		var tr map[string]*float64
		var all map[string]json.RawMessage
		if err := json.Unmarshal(raw, &all); err != nil {
			t.Fatalf("%s.truth.json: %v", path, err)
		}
		tr = map[string]*float64{}
		for k, v := range all {
			var f *float64
			if json.Unmarshal(v, &f) == nil {
				tr[k] = f
			}
		}
		name := filepath.Base(path)
		fam, ok := family[c.Get("alloy")]
		if !ok {
			t.Errorf("%s: alloy %q has no family here", name, c.Get("alloy"))
			continue
		}
		r := arrest.Analyze(c.Time, c.Temp, arrest.Options{Family: fam})
		liveCheck(t, name, c.Time, c.Temp, fam, r)
		var line strings.Builder
		fmt.Fprintf(&line, "%-40s", name)
		check := func(key string, p arrest.Point, tol float64) {
			want := tr[key+"_c"]
			switch {
			case want == nil && !p.OK:
				fmt.Fprintf(&line, " %s null", key)
			case want == nil || !p.OK:
				if key == "liquidus_min" && want != nil && tr["liquidus_c"] != nil && *tr["liquidus_c"]-*want < 0.3 {
					fmt.Fprintf(&line, " %s null (model %.2f °C recalescence)", key, *tr["liquidus_c"]-*want)
					return
				}
				if r.Invalid() && !p.OK {
					fmt.Fprintf(&line, " %s null (problem)", key)
					return
				}
				t.Errorf("%s: %s found %v, model has it %v", name, key, p.OK, want != nil)
			default:
				e := p.TempC - *want
				fmt.Fprintf(&line, " %s %+.2f", key, e)
				if math.Abs(e) > tol {
					t.Errorf("%s: %s %.2f °C, model %.2f (tolerance %.1f)", name, key, p.TempC, *want, tol)
				}
			}
		}
		check("liquidus_min", r.LiquidusMin, 1.5)
		check("liquidus", r.Liquidus, 1.5)
		check("eutectic_min", r.EutecticMin, 0.5)
		check("eutectic_max", r.EutecticMax, 0.5)
		check("solidus", r.Solidus, 4)
		var codes []string
		for _, p := range r.Problems {
			codes = append(codes, p.Code)
		}
		fmt.Fprintf(&line, " problems %v", codes)
		t.Log(line.String())
		switch {
		case strings.Contains(name, "open-thermocouple"):
			if !slices.Contains(codes, arrest.CodeFault) {
				t.Errorf("%s: no thermocouple fault reported: %v", name, codes)
			}
		case strings.Contains(name, "pulled-early"):
			if !slices.Contains(codes, arrest.CodeEndedEarly) {
				t.Errorf("%s: early end not reported: %v", name, codes)
			}
		case !strings.Contains(name, "bad-") && len(codes) > 0:
			t.Errorf("%s: problems on a good sample: %v", name, codes)
		}
	}
}

// liveCheck feeds the curve to one Analyzer in growing prefixes (every 5th)
// and checks that settled points never change and the final call equals the
// offline result.
func liveCheck(t *testing.T, name string, tt, v []float64, fam arrest.Family, offline arrest.Result) {
	t.Helper()
	var a arrest.Analyzer
	seen := map[string]arrest.Point{}
	for k := 1; k <= len(tt); k += 5 {
		r := a.Analyze(tt[:k], v[:k], arrest.Options{Family: fam, Live: true})
		for key, p := range map[string]arrest.Point{"pour": r.PourPeak, "liqmin": r.LiquidusMin, "liq": r.Liquidus,
			"emin": r.EutecticMin, "emax": r.EutecticMax, "sol": r.Solidus} {
			// a confirmed point never changes; a provisional one may
			if old, ok := seen[key]; ok && old != p {
				t.Fatalf("%s: live %s changed at reading %d: %+v -> %+v", name, key, k, old, p)
			} else if !ok && p.OK && !p.Provisional {
				seen[key] = p
			}
		}
	}
	if final := a.Analyze(tt, v, arrest.Options{Family: fam}); !reflect.DeepEqual(final, offline) {
		t.Fatalf("%s: final live answer differs from offline:\n%+v\n%+v", name, final, offline)
	}
}
