package arrest

import (
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// Golden results: the detector's complete Result, field by field, for the
// committed simulated curves (testdata/sim, made by the project's cup
// model), for curves simulated here from seeded parameters (internal/sim,
// simulated, not measured) and for constructed curves (construct_test.go),
// offline and at checkpoints of a live feed. They pin the detector's
// behaviour, not its accuracy (the accuracy tests check that against the
// exact curves and the model's truth): a change meant to make the analysis
// faster must leave every result within goldenTolC (°C, s and °C/s alike;
// every other field exactly). Regenerate with
//
//	go test ./internal/arrest -run TestGoldenResults -update
//
// only for a change that is meant to move the results, and say so.
var updateGolden = flag.Bool("update", false, "rewrite the golden results in testdata/golden")

const goldenTolC = 1e-9

// goldenCase is one analysis: a curve, its options, and the live
// checkpoints (reading counts) at which the growing curve's Result is also
// recorded (nil: offline only).
type goldenCase struct {
	name   string
	t, v   []float64
	opt    Options
	checks []int
}

// goldenEntry is one recorded Result, flattened to field paths and values
// (floats in the shortest form that reads back exactly; NaN and ±Inf too).
type goldenEntry struct {
	Name   string            `json:"name"`
	Fields map[string]string `json:"fields"`
}

func flatten(prefix string, v reflect.Value, out map[string]string) {
	switch v.Kind() {
	case reflect.Struct:
		for i := range v.NumField() {
			flatten(prefix+"."+v.Type().Field(i).Name, v.Field(i), out)
		}
	case reflect.Slice:
		out[prefix+".len"] = strconv.Itoa(v.Len())
		for i := range v.Len() {
			flatten(fmt.Sprintf("%s[%d]", prefix, i), v.Index(i), out)
		}
	case reflect.Float64:
		out[prefix] = "f:" + strconv.FormatFloat(v.Float(), 'g', -1, 64)
	default:
		out[prefix] = fmt.Sprint(v.Interface())
	}
}

func goldenFields(r Result) map[string]string {
	out := map[string]string{}
	flatten("r", reflect.ValueOf(r), out)
	return out
}

// sameField compares one recorded field: floats within goldenTolC (NaN
// equals NaN), everything else exactly.
func sameField(want, got string) bool {
	if want == got {
		return true
	}
	w, okw := strings.CutPrefix(want, "f:")
	g, okg := strings.CutPrefix(got, "f:")
	if !okw || !okg {
		return false
	}
	a, err1 := strconv.ParseFloat(w, 64)
	b, err2 := strconv.ParseFloat(g, 64)
	if err1 != nil || err2 != nil {
		return false
	}
	return a == b || math.IsNaN(a) && math.IsNaN(b) || math.Abs(a-b) <= goldenTolC
}

// run analyses the case: the live checkpoints through one Analyzer fed in
// growing prefixes (every 7th reading and each checkpoint), then offline
// through the same Analyzer and through Analyze.
func (c goldenCase) run(t *testing.T) []goldenEntry {
	var out []goldenEntry
	var a Analyzer
	live := c.opt
	live.Live = true
	next := 0
	for k := 1; next < len(c.checks); k++ {
		if k%7 != 0 && k != c.checks[next] {
			continue
		}
		r := a.Analyze(c.t[:k], c.v[:k], live)
		if k == c.checks[next] {
			out = append(out, goldenEntry{Name: fmt.Sprintf("%s live %d", c.name, k), Fields: goldenFields(r)})
			next++
		}
	}
	off := Analyze(c.t, c.v, c.opt)
	if c.checks != nil {
		if again := a.Analyze(c.t, c.v, c.opt); !reflect.DeepEqual(again, off) {
			t.Errorf("%s: the live Analyzer's offline answer differs from Analyze:\n%+v\n%+v", c.name, again, off)
		}
	}
	return append(out, goldenEntry{Name: c.name + " offline", Fields: goldenFields(off)})
}

// checkpoints are n/8, 2n/8 … n−1 readings.
func checkpoints(n int) []int {
	var c []int
	for i := 1; i < 8; i++ {
		c = append(c, i*n/8)
	}
	return append(c, n-1)
}

// familyOf mirrors limits.Family (which imports this package, so it cannot
// be used here): pure-* → pure, al-*/alsi* → aluminium, white/tellurium →
// white, anything else iron.
func familyOf(alloy string) Family {
	n := strings.ToLower(strings.TrimSpace(alloy))
	switch {
	case strings.HasPrefix(n, "pure-"):
		return FamilyPure
	case strings.HasPrefix(n, "al-") || n == "al" || strings.HasPrefix(n, "alsi"):
		return FamilyAluminum
	case strings.Contains(n, "white") || strings.Contains(n, "tellurium"):
		return FamilyWhite
	}
	return FamilyIron
}

func simFileCases(t *testing.T) []goldenCase {
	files, _ := filepath.Glob("../../testdata/sim/*.csv")
	if len(files) == 0 {
		t.Fatal("no simulated curves in testdata/sim")
	}
	var cs []goldenCase
	for _, path := range files {
		c, err := curvefile.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		cs = append(cs, goldenCase{name: filepath.Base(path), t: c.Time, v: c.Temp,
			opt: Options{Family: familyOf(c.Get("alloy"))}, checks: checkpoints(len(c.Time))})
	}
	return cs
}

// goldenAlloys are the alloys the simulated cases draw from.
var goldenAlloys = []string{sim.GreyIron, sim.DuctileIron, sim.AlSi7Mg, sim.WhiteIron, sim.PureAl, sim.PureZn}

// simulatedCases draws seeded cups of every alloy and logger quality from
// the cup model (simulated, not measured), faults included.
func simulatedCases() []goldenCase {
	var cs []goldenCase
	rates := []float64{2, 4, 5, 8, 10, 16, 25, 50, 100}
	for i := range 60 {
		r := rand.New(rand.NewPCG(7417, uint64(i)))
		alloy := goldenAlloys[i%len(goldenAlloys)]
		p, err := sim.Preset(alloy, r.Float64(), r.Uint64())
		if err != nil {
			panic(err)
		}
		p.Logger.RateHz = rates[r.IntN(len(rates))]
		p.Logger.NoiseC = 0.35 * r.Float64()
		p.Logger.QuantC = []float64{0, 0.01, 0.1, 0.25}[r.IntN(4)]
		if r.Float64() < 0.5 {
			p.Logger.SpikeRate, p.Logger.SpikeMinC, p.Logger.SpikeMaxC = 1.0/300, 5, 60
		}
		switch x := r.Float64(); {
		case x < 0.08:
			p.Fault = sim.FaultPulledEarly
		case x < 0.16:
			p.Fault = sim.FaultOpen
		case x < 0.2:
			p.Fault = sim.FaultShortPour
		}
		out := sim.Simulate(p)
		tm, temp := out.Time, out.Temp
		if i%3 == 0 && out.Open != nil {
			k := slices.Index(out.Open, true) // as the acquirer passes it; else the open readings go in
			tm, temp = tm[:k], temp[:k]
		}
		var checks []int
		if i%4 == 0 {
			checks = checkpoints(len(tm))
		}
		cs = append(cs, goldenCase{name: fmt.Sprintf("simulated %d %s %s %g Hz", i, alloy, p.Fault, p.Logger.RateHz),
			t: tm, v: temp, opt: Options{Family: familyOf(alloy)}, checks: checks})
	}
	return cs
}

// constructedCases are the constructed shapes logged in many ways, and the
// faults of the problem tests.
func constructedCases() []goldenCase {
	var cs []goldenCase
	add := func(name string, tt, v []float64, opt Options, live bool) {
		var checks []int
		if live {
			checks = checkpoints(len(tt))
		}
		cs = append(cs, goldenCase{name: name, t: tt, v: v, opt: opt, checks: checks})
	}
	all := append(shapes(), closeLiquidus(), pureCup("pure Al (constructed)", its90AlC, 1.5, true), pureCup("pure Zn (constructed)", its90ZnC, 1.0, false))
	for si, sh := range all {
		opt := Options{Family: sh.family}
		for ri, rate := range []float64{2, 5, 10, 50, 200} {
			tt, v := sh.sample(sampling{rate: rate, phase: 0.37 * float64(ri%2), tailS: 10})
			add(fmt.Sprintf("%s noise-free %g Hz", sh.name, rate), tt, v, opt, ri == 2)
		}
		for c := range 12 {
			rate := []float64{4, 8, 10, 16, 25, 50, 100, 3}[(c+si)%8]
			s := sampling{rate: rate, phase: float64(c%5) / 5, noise: 0.03 * float64(c), quant: []float64{0, 0.01, 0.1, 0.25}[c%4],
				spikeP: 1.0 / 400, spikeLo: 8, spikeHi: 45, seed: uint64(100*si + c), tailS: float64(5 * c)}
			tt, v := sh.sample(s)
			add(fmt.Sprintf("%s noisy %d", sh.name, c), tt, v, opt, c%4 == 1)
		}
	}
	tt, v := benchCurve(10, 3000)
	add("benchmark curve 10 Hz", tt, v, Options{}, true)
	for _, n := range []int{300, 30000} {
		tt, v := benchCurve(float64(max(10, n/300)), n)
		add(fmt.Sprintf("benchmark curve n=%d", n), tt, v, Options{}, false)
	}
	tt, v = shapes()[0].sample(sampling{rate: 10, noise: 0.2, seed: 5})
	add("grey iron with a lower eutectic hint", tt, v, Options{EutecticTopC: 1140}, false)

	// faults, as in the problem tests (constructed grey iron)
	sh := shapes()[0]
	clean := func() ([]float64, []float64) { return sh.sample(sampling{rate: 10, noise: 0.1, seed: 9}) }
	at := func(tt []float64, s float64) int { i, _ := slices.BinarySearch(tt, s); return i }
	fault := func(name string, edit func(tt, v []float64) ([]float64, []float64)) {
		tt, v := clean()
		tt, v = edit(tt, v)
		add("fault: "+name, tt, v, Options{}, true)
	}
	fault("open circuit on the plateau", func(tt, v []float64) ([]float64, []float64) {
		for i := at(tt, 130); i < len(v); i++ {
			v[i] = math.NaN()
		}
		return tt, v
	})
	fault("pegged high", func(tt, v []float64) ([]float64, []float64) {
		for i := at(tt, 60); i < len(v); i++ {
			v[i] = 1999.9
		}
		return tt, v
	})
	fault("sustained step", func(tt, v []float64) ([]float64, []float64) {
		for i := at(tt, 100); i < len(v); i++ {
			v[i] -= 300
		}
		return tt, v
	})
	fault("time repeated and backwards", func(tt, v []float64) ([]float64, []float64) {
		i := at(tt, 70)
		tt[i] = tt[i-1]
		tt[i+5] = tt[i] - 1
		return tt, v
	})
	fault("ended on the plateau", func(tt, v []float64) ([]float64, []float64) { return cutAt(tt, v, 140) })
	fault("ended at the eutectic maximum", func(tt, v []float64) ([]float64, []float64) { return cutAt(tt, v, 86) })
	fault("starts hot", func(tt, v []float64) ([]float64, []float64) { k := at(tt, 2); return tt[k:], v[k:] })
	fault("spikes", func(tt, v []float64) ([]float64, []float64) {
		for s := 10.0; s < 240; s += 13 {
			v[at(tt, s)] += 35 * math.Copysign(1, math.Sin(s))
		}
		return tt, v
	})
	tt, v = sh.sample(sampling{rate: 10, noise: 2.5, seed: 3})
	add("fault: too noisy", tt, v, Options{}, true)
	tt, v = clean()
	for i := range tt {
		tt[i] *= 1000
	}
	add("fault: time in milliseconds", tt, v, Options{}, false)
	add("fault: too few", []float64{0, 1, 2}, []float64{1200, 1199, 1198}, Options{}, false)
	return cs
}

// TestGoldenResults compares every Result with the recorded one.
func TestGoldenResults(t *testing.T) {
	groups := []struct {
		file  string
		cases func() []goldenCase
	}{
		{"sim-files.json", func() []goldenCase { return simFileCases(t) }},
		{"simulated.json", simulatedCases},
		{"constructed.json", constructedCases},
	}
	for _, g := range groups {
		var got []goldenEntry
		for _, c := range g.cases() {
			got = append(got, c.run(t)...)
		}
		path := filepath.Join("testdata", "golden", g.file)
		if *updateGolden {
			raw, err := json.MarshalIndent(got, "", " ")
			if err != nil {
				t.Fatal(err)
			}
			if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(path, append(raw, '\n'), 0o644); err != nil {
				t.Fatal(err)
			}
			t.Logf("%s: %d results written", path, len(got))
			continue
		}
		raw, err := os.ReadFile(path)
		if err != nil {
			t.Fatalf("%v (run with -update to record)", err)
		}
		var want []goldenEntry
		if err := json.Unmarshal(raw, &want); err != nil {
			t.Fatalf("%s: %v", path, err)
		}
		if len(want) != len(got) {
			t.Fatalf("%s: %d results recorded, %d now", path, len(want), len(got))
		}
		bad := 0
		for i := range want {
			w, g := want[i], got[i]
			if w.Name != g.Name {
				t.Fatalf("%s: result %d is %q, recorded %q", path, i, g.Name, w.Name)
			}
			keys := make([]string, 0, len(w.Fields)+len(g.Fields))
			for k := range w.Fields {
				keys = append(keys, k)
			}
			for k := range g.Fields {
				if _, ok := w.Fields[k]; !ok {
					keys = append(keys, k)
				}
			}
			slices.Sort(keys)
			for _, k := range keys {
				wv, wok := w.Fields[k]
				gv, gok := g.Fields[k]
				if wok != gok || !sameField(wv, gv) {
					bad++
					if bad <= 20 {
						t.Errorf("%s: %s: %s = %q, recorded %q", path, w.Name, k, gv, wv)
					}
				}
			}
		}
		if bad > 0 {
			t.Errorf("%s: %d fields differ from the recorded results", path, bad)
		}
	}
}

// Analyze shares its pooled work space safely: constructed curves analysed
// from several goroutines at once give the results analysed one by one, and
// an earlier Result's problems stay as they were.
func TestAnalyzeConcurrent(t *testing.T) {
	cs := constructedCases()
	want := make([]Result, len(cs))
	for i, c := range cs {
		want[i] = Analyze(c.t, c.v, c.opt)
	}
	kept := slices.Clone(want[len(want)-1].Problems)
	done := make(chan int)
	for g := range 4 {
		go func() {
			for i := g; i < len(cs); i += 4 {
				if got := Analyze(cs[i].t, cs[i].v, cs[i].opt); !reflect.DeepEqual(got, want[i]) {
					t.Errorf("%s: concurrent result differs", cs[i].name)
				}
			}
			done <- g
		}()
	}
	for range 4 {
		<-done
	}
	if !slices.Equal(kept, want[len(want)-1].Problems) || len(kept) == 0 {
		t.Errorf("an earlier result's problems changed: %v, were %v", want[len(want)-1].Problems, kept)
	}
}
