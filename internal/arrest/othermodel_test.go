package arrest_test

import (
	"bufio"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/errdist"
	"github.com/undercool-foundry/undercool/internal/pyref"
)

// otherModelBudget is how many checks on the independent cup model's
// cups may lie outside the tolerances: the count last measured (numpy
// 1.24.2 and scipy 1.10.1 of Debian 12; the model is seeded, so the count
// moves only with the detector, or by a borderline check with another
// numpy), so that the test fails on any regression while the misses are
// worked off. 42 when the test was written (3 December 2026, main at
// 051594a: 25 ends of freezing left null, 8 points of two eutectics given
// up as outside the window, 1 liquidus, 8 eutectic points of 5 cups); 6
// once a shallow end-of-freezing dip settles below the floor, a flat
// arrest refined to above the window is a primary one and a
// recalescence's pause is inside it; 5 once a pure metal's plateau
// settles when long (plateauHeld): a liquidus shoulder missed at 4 Hz, a
// pure-Zn plateau's first crossing, a 5 Hz nucleation cusp (2) and one
// recalescence 0.63 °C low; 2 once a recalescence's minimum is located
// again on shorter windows (recalMin), a pure metal's plateau is held only
// for the time T' spends near zero, and a check cup's chill shoulder is
// outranked by its recalescence: a liquidus shoulder missed at 4 Hz, and
// a pure-Zn plateau whose first touch of zero the noise hides.
// docs/analysis.md ("An independent cup model") lists them with the
// reasons.
const otherModelBudget = 2

// TestIndependentCupModel runs .ci/cupmodel.py, a radial cup model written
// independently of internal/sim (its own geometry, heat flow, nucleation
// and growth laws, and its own read of the truth off the noiseless centre
// thermocouple curve by the definitions of docs/analysis.md,
// "Characteristic points"), and analyses every SIMULATED cup it writes. The
// tolerances are those of the simulated-cup suite (issue 12): eutectic
// minimum, maximum and recalescence ±0.6 °C, liquidus ±1.5 °C, end of
// freezing ±4 °C; a point found where the truth has none, or missed where
// it has one, is a miss too. The model needs Python 3 with numpy and scipy
// (Debian's python3-scipy): UNDERCOOL_PYTHON names the interpreter, the
// test skips with the reason where it cannot run and fails when
// UNDERCOOL_SCIPY=required. UNDERCOOL_CUPMODEL_CUPS=N draws N cups instead
// of the model's 84 (the first 84 are the same); the cups beyond them were
// not looked at while the detector was tuned, and the budget holds for the
// 84 only, so a larger run reports its checks and fails on none.
func TestIndependentCupModel(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: the cup model takes about 30 s")
	}
	ncups := 0
	if s := os.Getenv("UNDERCOOL_CUPMODEL_CUPS"); s != "" {
		n, err := strconv.Atoi(s)
		if err != nil || n < 1 {
			t.Fatalf("UNDERCOOL_CUPMODEL_CUPS=%q: want a number of cups, 1 or more", s)
		}
		ncups = n
	}
	dir := runCupModel(t, ncups)
	var doc struct {
		Cups []otherCup
	}
	raw, err := os.ReadFile(filepath.Join(dir, "cups.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatalf("cups.json: %v", err)
	}
	if ncups == 0 && len(doc.Cups) < 60 {
		t.Fatalf("cupmodel.py wrote %d cups, want at least 60", len(doc.Cups))
	}
	checks := otherChecks()
	var failures []string
	var az arrest.Analyzer
	for _, c := range doc.Cups {
		tm, temp := readPlainCSV(t, filepath.Join(dir, c.File))
		az.Reset()
		res := az.Analyze(tm, temp, arrest.Options{Family: arrest.Family(c.Family)})
		desc := fmt.Sprintf("%s %s gradient %.2f cells %d chill %d lag %.2f s %g Hz noise %.2f q %g (centre−wall %.1f °C):",
			c.Name, c.Alloy, c.Gradient, c.Cells, c.ChillCells, c.LagS, c.RateHz, c.NoiseC, c.QuantC, c.Diag.CentreMinusWallC)
		for _, k := range checks {
			want, wok := k.truth(c.Truth)
			got, gok := k.got(&res)
			switch miss, null := k.Add(got, gok, want, wok); {
			case miss != "" && null:
				failures = append(failures, fmt.Sprintf("%s %s problems %v", desc, miss, codes(res.Problems)))
			case miss != "":
				failures = append(failures, desc+" "+miss)
			}
		}
	}
	t.Logf("%d SIMULATED cups of the independent model; arrest − truth in °C:", len(doc.Cups))
	t.Log(errdist.Header())
	for _, k := range checks {
		t.Log(k.Row())
	}
	if ncups != 0 {
		t.Logf("%d checks outside the tolerances on %d cups (the budget, %d, holds for the model's 84):", len(failures), len(doc.Cups), otherModelBudget)
	} else {
		t.Logf("%d checks outside the tolerances (budget %d):", len(failures), otherModelBudget)
	}
	for _, f := range failures {
		t.Log(f)
	}
	if ncups != 0 {
		return // a larger draw is reported, not judged against the budget
	}
	if len(failures) > otherModelBudget {
		t.Errorf("%d checks outside the tolerances on %d cups of the independent model, budget %d (listed above)", len(failures), len(doc.Cups), otherModelBudget)
	}
}

// otherCup is one cup of cups.json: its parameters (those the report
// names) and its truth; a point the truth has not is null.
type otherCup struct {
	Name       string
	File       string
	Alloy      string
	Family     string
	Gradient   float64
	Cells      int
	ChillCells int     `json:"chill_cells"`
	LagS       float64 `json:"lag_s"`
	RateHz     float64 `json:"rate_hz"`
	NoiseC     float64 `json:"noise_c"`
	QuantC     float64 `json:"quant_c"`
	Truth      map[string]json.RawMessage
	Diag       struct {
		CentreMinusWallC float64 `json:"centre_minus_wall_c"`
	}
}

type otherCheck struct {
	errdist.Point // name, tolerance (0: logged, not checked), errors and disagreeing nulls
	truth         func(map[string]json.RawMessage) (float64, bool)
	got           func(*arrest.Result) (float64, bool)
}

// truthPoint reads a point {"c": …, "s": …} of the truth, or its null.
func truthPoint(key string) func(map[string]json.RawMessage) (float64, bool) {
	return func(m map[string]json.RawMessage) (float64, bool) {
		var p *struct{ C float64 }
		if err := json.Unmarshal(m[key], &p); err != nil || p == nil {
			return 0, false
		}
		return p.C, true
	}
}

func otherChecks() []*otherCheck {
	pt := func(p arrest.Point) (float64, bool) { return p.TempC, p.OK }
	return []*otherCheck{
		{Point: errdist.Point{Name: "pour_peak"}, truth: truthPoint("pour_peak"), got: func(r *arrest.Result) (float64, bool) { return pt(r.PourPeak) }},
		{Point: errdist.Point{Name: "liquidus_min"}, truth: truthPoint("liquidus_min"), got: func(r *arrest.Result) (float64, bool) { return pt(r.LiquidusMin) }},
		{Point: errdist.Point{Name: "liquidus", Tol: 1.5}, truth: truthPoint("liquidus"), got: func(r *arrest.Result) (float64, bool) { return pt(r.Liquidus) }},
		{Point: errdist.Point{Name: "eutectic_start"}, truth: truthPoint("eutectic_start"), got: func(r *arrest.Result) (float64, bool) { return pt(r.EutecticStart) }},
		{Point: errdist.Point{Name: "eutectic_min", Tol: 0.6}, truth: truthPoint("eutectic_min"), got: func(r *arrest.Result) (float64, bool) { return pt(r.EutecticMin) }},
		{Point: errdist.Point{Name: "eutectic_max", Tol: 0.6}, truth: truthPoint("eutectic_max"), got: func(r *arrest.Result) (float64, bool) { return pt(r.EutecticMax) }},
		{Point: errdist.Point{Name: "recalescence", Tol: 0.6}, truth: func(m map[string]json.RawMessage) (float64, bool) {
			var v *float64
			if err := json.Unmarshal(m["recalescence_c"], &v); err != nil || v == nil {
				return 0, false
			}
			return *v, true
		}, got: func(r *arrest.Result) (float64, bool) { return r.Recalescence, r.RecalescenceOK }},
		{Point: errdist.Point{Name: "solidus", Tol: 4}, truth: truthPoint("solidus"), got: func(r *arrest.Result) (float64, bool) { return pt(r.Solidus) }},
	}
}

// runCupModel runs .ci/cupmodel.py into a temporary directory (ncups cups,
// 0 for the model's default) and returns it; it skips the test (fails it
// with UNDERCOOL_SCIPY=required) where Python with numpy and scipy is not
// there.
func runCupModel(t *testing.T, ncups int) string {
	t.Helper()
	py := pyref.Interpreter()
	skip := func(why string) {
		if pyref.Required() {
			t.Fatalf("scipy is required (UNDERCOOL_SCIPY=required): %s", why)
		}
		t.Skip(why)
	}
	if pyref.Off() {
		skip("UNDERCOOL_SCIPY=0")
	}
	if err := pyref.Imports(py, "numpy, scipy.linalg, scipy.signal, scipy.ndimage"); err != nil {
		skip(err.Error())
	}
	dir := t.TempDir()
	args := []string{filepath.Join("..", "..", ".ci", "cupmodel.py"), dir}
	if ncups > 0 {
		args = append(args, "--cups", strconv.Itoa(ncups))
	}
	cmd := exec.Command(py, args...)
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("cupmodel.py: %v\n%s", err, out)
	}
	return dir
}

// readPlainCSV reads the model's time_s,temp_c files.
func readPlainCSV(t *testing.T, path string) (tm, temp []float64) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	line := 0
	for sc.Scan() {
		line++
		if line == 1 {
			continue // the header
		}
		a, b, ok := strings.Cut(sc.Text(), ",")
		x, err1 := strconv.ParseFloat(a, 64)
		y, err2 := strconv.ParseFloat(b, 64)
		if !ok || err1 != nil || err2 != nil {
			t.Fatalf("%s:%d: not time_s,temp_c: %q", path, line, sc.Text())
		}
		tm, temp = append(tm, x), append(temp, y)
	}
	if err := sc.Err(); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return tm, temp
}

func codes(ps []arrest.Problem) []string {
	var out []string
	for _, p := range ps {
		out = append(out, p.Code)
	}
	return out
}
