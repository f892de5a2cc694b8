package main

import (
	"bytes"
	"cmp"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/forecast"
	"github.com/undercool-foundry/undercool/internal/limits"
)

// inoculantCalibration is `undercool calibrate --inoculants`: the shop's
// inoculant tables fitted to its own before/after pairs.
type inoculantCalibration struct {
	on     bool
	limits string
	alloy  string
}

func (c *inoculantCalibration) register(fs *flag.FlagSet) {
	fs.BoolVar(&c.on, "inoculants", false, "fit the limits file's inoculant tables to before/after pairs of cups (see below)")
	fs.StringVar(&c.limits, "limits", "", "with --inoculants: the limits `FILE` whose tables to fit (default: the shipped examples)")
	fs.StringVar(&c.alloy, "alloy", "", "with --inoculants: alloy of every cup (overrides the curve files' '# alloy:')")
}

// inoculantPair is one line of an inoculant pairs file.
type inoculantPair struct {
	line                int
	sample              string
	before, after, name string
	pct, delay          float64
}

// inoculantColumns are the columns of an inoculant pairs file.
var inoculantColumns = []string{"before", "after", "inoculant", "addition_pct", "delay_min", "sample"}

// readInoculantPairs reads the pairs file; errors name the file, line and
// column.
func readInoculantPairs(r io.Reader, name string) ([]inoculantPair, error) {
	cr := csv.NewReader(r)
	cr.Comment, cr.FieldsPerRecord, cr.TrimLeadingSpace = '#', -1, true
	header, err := cr.Read()
	if err == io.EOF {
		return nil, fmt.Errorf("%s: empty file: a header row is needed (%s)", name, strings.Join(inoculantColumns[:5], ","))
	}
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	col := map[string]int{}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(h))
		if !slices.Contains(inoculantColumns, h) {
			return nil, fmt.Errorf("%s:1: column %d: unknown column %q (want %s)", name, i+1, h, strings.Join(inoculantColumns, ", "))
		}
		if _, dup := col[h]; dup {
			return nil, fmt.Errorf("%s:1: column %d: %q appears twice", name, i+1, h)
		}
		col[h] = i
	}
	for _, need := range inoculantColumns[:5] {
		if _, ok := col[need]; !ok {
			return nil, fmt.Errorf("%s:1: the column %q is missing (want %s)", name, need, strings.Join(inoculantColumns[:5], ","))
		}
	}
	var pairs []inoculantPair
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, fmt.Errorf("%s:%d: column %d: %v", name, pe.Line, pe.Column, pe.Err)
			}
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) != len(header) {
			return nil, fmt.Errorf("%s:%d: %d fields, the header has %d", name, line, len(rec), len(header))
		}
		get := func(k string) string { return strings.TrimSpace(rec[col[k]]) }
		p := inoculantPair{line: line, before: get("before"), after: get("after"), name: get("inoculant")}
		if i, ok := col["sample"]; ok {
			p.sample = strings.TrimSpace(rec[i])
		}
		for _, f := range []struct {
			key    string
			dst    *float64
			lo, hi float64
		}{{"addition_pct", &p.pct, 0, 5}, {"delay_min", &p.delay, 0, 600}} {
			v, err := strconv.ParseFloat(get(f.key), 64)
			if err != nil || !(v >= f.lo && v <= f.hi) {
				return nil, fmt.Errorf("%s:%d: column %s: %q is not a number from %g to %g", name, line, f.key, get(f.key), f.lo, f.hi)
			}
			*f.dst = v
		}
		if p.pct == 0 {
			return nil, fmt.Errorf("%s:%d: column addition_pct: a pair needs an addition above 0 %%", name, line)
		}
		for _, f := range [][2]string{{"before", p.before}, {"after", p.after}, {"inoculant", p.name}} {
			if f[1] == "" {
				return nil, fmt.Errorf("%s:%d: column %s is empty", name, line, f[0])
			}
		}
		pairs = append(pairs, p)
	}
	if len(pairs) == 0 {
		return nil, fmt.Errorf("%s: no pairs after the header", name)
	}
	return pairs, nil
}

// sampleOf reads a curve file and analyses it for the fit.
func (c *inoculantCalibration) sampleOf(path string, book *limits.Book) (forecast.Sample, string, error) {
	cv, err := curvefile.ReadFile(path)
	if err != nil {
		return forecast.Sample{}, "", err
	}
	alloy := cmp.Or(c.alloy, cv.Get("alloy"))
	if alloy == "" {
		return forecast.Sample{}, "", fmt.Errorf("%s: no alloy (give --alloy or a '# alloy:' line)", path)
	}
	in := assess.Input{File: path, Alloy: alloy, Time: cv.Time, Temp: cv.Temp, Limits: book, Meta: cv.Meta}
	r := book.Resolve(alloy)
	res := arrest.Analyze(cv.Time, cv.Temp, assess.Detect(in))
	if res.Invalid() {
		return forecast.Sample{}, "", fmt.Errorf("%s: the cup is not trustworthy: %s", path, res.Problems[0].Message)
	}
	rec := assess.FromResult(in, res)
	model := forecast.ModelAlloy(r.Family(), alloy)
	if model == "" {
		return forecast.Sample{}, "", fmt.Errorf("%s: the cup model has no nucleation law for alloy %s", path, alloy)
	}
	return forecast.Sample{Time: cv.Time, Temp: cv.Temp, Alloy: model, Chemistry: rec.Chemistry, Points: res}, alloy, nil
}

func (c *inoculantCalibration) run(ctx context.Context, env *environ, path, out string, asJSON bool) error {
	book := limits.Builtin()
	if c.limits != "" {
		var err error
		if book, err = limits.Load(c.limits); err != nil {
			return err
		}
	} else if out != "" {
		return errors.New("--out with --inoculants writes a limits file: name the one to start from with --limits FILE")
	}
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	rows, err := readInoculantPairs(f, path)
	f.Close()
	if err != nil {
		return err
	}
	dir := filepath.Dir(path)
	byName := map[string][]forecast.Pair{}
	var names []string
	for _, r := range rows {
		t := book.InoculantTables[r.name]
		if t == nil {
			return fmt.Errorf("%s:%d: column inoculant: %s has no table %q", path, r.line, book.Source, r.name)
		}
		var p forecast.Pair
		var alloys [2]string
		for i, f := range []string{r.before, r.after} {
			if !filepath.IsAbs(f) {
				f = filepath.Join(dir, f)
			}
			s, alloy, err := c.sampleOf(f, book)
			if err != nil {
				return fmt.Errorf("%s:%d: %w", path, r.line, err)
			}
			if !slices.Contains(t.Alloys, alloy) {
				return fmt.Errorf("%s:%d: %s is used for %s, not for %s", path, r.line, r.name, strings.Join(t.Alloys, ", "), alloy)
			}
			alloys[i] = alloy
			if i == 0 {
				p.Before = s
			} else {
				p.After = s
			}
		}
		if alloys[0] != alloys[1] {
			return fmt.Errorf("%s:%d: the before cup is %s, the after cup %s: a pair is one ladle", path, r.line, alloys[0], alloys[1])
		}
		p.Label = fmt.Sprintf("line %d %s", r.line, r.sample)
		p.Pct, p.DelayMin = r.pct, r.delay
		if _, seen := byName[r.name]; !seen {
			names = append(names, r.name)
		}
		byName[r.name] = append(byName[r.name], p)
	}
	type result struct {
		Inoculant string             `json:"inoculant"`
		Was       forecast.Treatment `json:"was"`
		Fitted    forecast.Treatment `json:"fitted"`
		HalfLife  bool               `json:"half_life_fitted"`
		Used      int                `json:"pairs_used"`
		Chi2      float64            `json:"chi2_per_dof"`
		Pairs     []map[string]any   `json:"pairs"`
		Error     string             `json:"error,omitempty"`

		cal   forecast.Calibration
		table *limits.Inoculant
	}
	var results []result
	stamp := time.Now().UTC().Format(time.RFC3339)
	failed := 0
	for _, n := range names {
		t := book.InoculantTables[n]
		was := forecast.TreatmentOf(t)
		cal, err := forecast.Calibrate(ctx, byName[n], was)
		if ctx.Err() != nil {
			return ctx.Err()
		}
		r := result{Inoculant: n, Was: was, Fitted: cal.Treatment, HalfLife: cal.HalfLifeFitted, Used: cal.Used, Chi2: cal.Chi2PerDoF, cal: cal, table: t}
		for _, p := range cal.Pairs {
			m := map[string]any{"pair": p.Label, "steps": p.Steps, "delay_min": p.DelayMin, "effect": p.Effect, "u": p.U, "fitted": p.Fitted}
			if p.Err != nil {
				m["error"] = p.Err.Error()
			}
			r.Pairs = append(r.Pairs, m)
		}
		if err != nil {
			r.Error = err.Error()
			failed++
		} else {
			ft := cal.Treatment
			t.Gain, t.GainU, t.HalfLifeMin, t.HalfLifeU = round4(ft.Gain), round4(ft.GainU), round4(ft.HalfLifeMin), round4(ft.HalfLifeU)
			t.Calibrated = fmt.Sprintf("%s, %d pairs, %s", filepath.Base(path), cal.Used, stamp)
		}
		results = append(results, r)
	}
	if out != "" && failed < len(names) {
		if err := limits.Save(out, book); err != nil {
			return err
		}
	}
	if asJSON {
		if err := json.NewEncoder(env.stdout).Encode(map[string]any{"file": path, "pairs": len(rows), "inoculants": results, "out": out}); err != nil {
			return err
		}
	} else {
		w := env.stdout
		fmt.Fprintf(w, "calibrate --inoculants: %s: %d pairs\n", path, len(rows))
		for _, r := range results {
			unit, effect := "× A", "RISE OF ln A"
			if r.Was.Effect == limits.EffectEutecticDepression {
				unit, effect = "°C", "DEPRESSION °C"
			}
			fmt.Fprintf(w, "\n%s (%s)\n", r.Inoculant, r.Was.Effect)
			tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
			fmt.Fprintf(tw, "PAIR\tADDITION\tDELAY\t%s\t± U\tFITTED\t\n", effect)
			for _, p := range r.cal.Pairs {
				if p.Err != nil {
					fmt.Fprintf(tw, "%s\t%.2f %%\t%g min\tleft out: %v\t\t\t\n", p.Label, p.Steps*0.01, p.DelayMin, p.Err)
					continue
				}
				fmt.Fprintf(tw, "%s\t%.2f %%\t%g min\t%.3f\t%.3f\t%.3f\t\n", p.Label, p.Steps*0.01, p.DelayMin, p.Effect, p.U, p.Fitted)
			}
			tw.Flush()
			if r.Error != "" {
				fmt.Fprintf(w, "  not fitted: %s\n", r.Error)
				continue
			}
			hl := fmt.Sprintf("%.2f ± %.2f min", r.Fitted.HalfLifeMin, r.Fitted.HalfLifeU)
			if !r.HalfLife {
				hl = fmt.Sprintf("%.2f min kept (the delays are too alike to fit it)", r.Fitted.HalfLifeMin)
			}
			fmt.Fprintf(w, "  gain %.4g ± %.2g %s per 0.01 %% (was %.4g), half-life %s (was %.4g min); χ²/dof %.2f from %d pairs\n",
				r.Fitted.Gain, r.Fitted.GainU, unit, r.Was.Gain, hl, r.Was.HalfLifeMin, r.Chi2, r.Used)
			var b bytes.Buffer
			limits.EncodeInoculant(&b, r.table)
			fmt.Fprintf(w, "%s", b.String())
		}
		if out != "" && failed < len(names) {
			fmt.Fprintf(w, "\nwrote %s (the old file is backed up beside it).\n", out)
		}
		fmt.Fprintln(w, "Review the fit with the shop's metallurgist before the advice uses it: it is a model of the shop's own pairs, not a rule.")
	}
	if failed > 0 {
		return exitError{1}
	}
	return nil
}

func round4(v float64) float64 {
	s, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 4, 64), 64)
	return s
}
