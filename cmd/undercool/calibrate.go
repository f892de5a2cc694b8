package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/limits"
)

func init() {
	register(command{
		name:    "calibrate",
		summary: "fit the shop's CE, carbon and silicon regressions to pairs of cup results and spectrometer analyses",
		run:     runCalibrate,
	})
}

const calibrateUsage = `usage: undercool calibrate [--json] [--out FILE] [options] PAIRS.csv
       undercool calibrate --inoculants [--limits FILE] [--alloy A] [--json] [--out FILE] PAIRS.csv

PAIRS.csv has a header row and one pair a line: a cup's arrests beside the
spectrometer analysis of the same metal. Columns (any order; others are
ignored and listed):
  liquidus_c     liquidus arrest of the cup, °C
  metastable_c   white eutectic arrest of a tellurium cup, °C
  c_pct si_pct p_pct mn_pct s_pct ni_pct cr_pct ...   analysis, wt %
  sample         an id for the row (optional)
Separators: comma, semicolon (decimal comma allowed) or tab. Empty cells are
not measured. Lines starting with # are comments.

Fits (least squares): TL = a − b·CEL with CEL = C + cel_si·Si + cel_p·P;
Si = a + b·T_white; C = a + b·TL + c·Si. --out writes a [calibration] file to
name in the limits file with calibration_file = "FILE".

--inoculants fits the shop's inoculant tables instead (docs/advice.md): each
line of PAIRS.csv is a cup, an addition and its re-sample from the same
ladle, with the columns before and after (curve files, relative to
PAIRS.csv), inoculant (a table of the limits file), addition_pct (% of the
ladle) and delay_min (minutes from the addition to the re-sample's pour),
and optionally sample. The gain per 0.01 % and the fade half-life are
fitted with their uncertainties; --out writes the limits file with the
tables updated (the old one is backed up).
`

func runCalibrate(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("calibrate", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprint(env.stderr, calibrateUsage); fs.PrintDefaults() }
	opt := limits.DefaultFitOptions()
	asJSON := fs.Bool("json", false, "write the result as one JSON object")
	out := fs.String("out", "", "write the [calibration] table to FILE (an existing one is backed up)")
	fs.Float64Var(&opt.CELSi, "cel-si", opt.CELSi, "CEL silicon coefficient of the liquidus fit")
	fs.Float64Var(&opt.CELP, "cel-p", opt.CELP, "CEL phosphorus coefficient of the liquidus fit")
	fs.IntVar(&opt.MinPairs, "min-pairs", opt.MinPairs, "warn with fewer pairs than this")
	fs.Float64Var(&opt.MinR2, "min-r2", opt.MinR2, "warn when R² is below this")
	fs.Float64Var(&opt.MaxRMSTempC, "max-rms-c", opt.MaxRMSTempC, "warn when the liquidus fit's RMS residual exceeds this, °C")
	fs.Float64Var(&opt.MaxRMSPct, "max-rms-pct", opt.MaxRMSPct, "warn when the C or Si fit's RMS residual exceeds this, wt %")
	var inoc inoculantCalibration
	inoc.register(fs)
	pos, err := parseLimitsArgs(fs, args)
	if err != nil {
		return errUsage
	}
	if len(pos) != 1 {
		fs.Usage()
		return errUsage
	}
	path := pos[0]
	if inoc.on {
		return inoc.run(ctx, env, path, *out, *asJSON)
	}
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	pairs, ignored, err := readPairs(f, path)
	f.Close()
	if err != nil {
		return err
	}
	cal, reps, checks, warns := limits.FitCalibration(pairs, opt)
	cal.Pairs = path
	cal.Fitted = time.Now().UTC().Format(time.RFC3339)
	if cal.Liquidus == nil && cal.Silicon == nil && cal.Carbon == nil {
		for _, r := range reps {
			fmt.Fprintf(env.stderr, "%s: %s\n", escape.Line(r.Name), escape.Line(r.Skipped))
		}
		return fmt.Errorf("%s: no regression could be fitted from %d pairs", path, len(pairs))
	}
	var section bytes.Buffer
	limits.EncodeCalibration(&section, cal)
	if *out != "" {
		if err := limits.SaveCalibration(*out, cal); err != nil {
			return err
		}
	}
	if *asJSON {
		enc := json.NewEncoder(env.stdout)
		return enc.Encode(map[string]any{
			"file": path, "pairs": len(pairs), "ignored_columns": ignored, "fits": reps,
			"published": checks, "warnings": nonNil(warns), "calibration_toml": section.String(), "out": *out,
		})
	}
	w := env.stdout
	fmt.Fprintf(w, "calibrate: %s: %d pairs\n", path, len(pairs))
	if len(ignored) > 0 {
		fmt.Fprintf(w, "ignored columns: %s\n", strings.Join(ignored, ", "))
	}
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "\nFIT\tFORMULA\tN\tR²\tRMS\tMAX\tWORST LINE\tINPUT RANGE °C")
	for _, r := range reps {
		if r.Fit == nil {
			fmt.Fprintf(tw, "%s\tskipped: %s\t\t\t\t\t\t\n", r.Name, r.Skipped)
			continue
		}
		fmt.Fprintf(tw, "%s\t%s\t%d\t%.4f\t%.4g\t%.4g\t%d\t%.1f–%.1f\n", r.Name, fitFormula(r), r.Fit.N, r.Fit.R2, r.Fit.RMS, r.Fit.MaxAbs, r.WorstLine, r.Fit.InputMin, r.Fit.InputMax)
	}
	tw.Flush()
	for _, c := range checks {
		fmt.Fprintf(w, "published %s on these pairs: measured − predicted liquidus: bias %+.1f °C, RMS %.1f °C (n %d)\n", c.Name, c.BiasC, c.RMSC, c.N)
	}
	if len(warns) > 0 {
		fmt.Fprintln(w, "\nwarnings:")
		for _, s := range warns {
			fmt.Fprintf(w, "  - %s\n", s)
		}
	}
	if *out != "" {
		fmt.Fprintf(w, "\nwrote %s; name it in the limits file with calibration_file = %q and choose cel_regression = \"shop\" / white_cup = \"shop\" per alloy.\n", *out, *out)
	} else {
		fmt.Fprintf(w, "\ncalibration section (write it with --out FILE):\n%s", section.String())
	}
	fmt.Fprintln(w, "Review the fit with the shop's metallurgist before using it for decisions.")
	return nil
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

func fitFormula(r limits.FitReport) string {
	f := r.Fit
	switch r.Name {
	case "liquidus":
		return fmt.Sprintf("TL = %.2f − %.3f·CEL (CEL = C + %g·Si + %g·P)", f.A, f.B, *f.CELSi, *f.CELP)
	case "silicon":
		return fmt.Sprintf("Si = %.4f %+.6f·T_white", f.A, f.B)
	case "carbon":
		return fmt.Sprintf("C = %.4f %+.6f·TL %+.4f·Si", f.A, f.B, f.C)
	}
	return f.Formula
}

// pairColumns are the columns readPairs uses.
var pairColumns = func() map[string]bool {
	m := map[string]bool{"liquidus_c": true, "metastable_c": true}
	for _, el := range limits.Elements {
		m[el+"_pct"] = true
	}
	return m
}()

// readPairs reads a calibration pairs CSV. Errors name the file, line and
// column.
func readPairs(r io.Reader, name string) ([]limits.Pair, []string, error) {
	br := bufio.NewReader(r)
	data, err := io.ReadAll(br)
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", name, err)
	}
	data = bytes.TrimPrefix(data, []byte("\ufeff"))
	sep := ','
	first := firstDataLine(data)
	switch {
	case strings.Contains(first, ";"):
		sep = ';'
	case strings.Contains(first, "\t"):
		sep = '\t'
	}
	cr := csv.NewReader(bytes.NewReader(data))
	cr.Comma, cr.Comment, cr.FieldsPerRecord, cr.TrimLeadingSpace = sep, '#', -1, true
	header, err := cr.Read()
	if err == io.EOF {
		return nil, nil, fmt.Errorf("%s: empty file: a header row is needed (e.g. liquidus_c,c_pct,si_pct,p_pct)", name)
	}
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", name, err)
	}
	cols := make([]string, len(header))
	var ignored []string
	seen := map[string]bool{}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(h))
		if seen[h] {
			line, col := cr.FieldPos(i)
			return nil, nil, fmt.Errorf("%s:%d: column %d: %q appears twice", name, line, col, h)
		}
		seen[h] = true
		cols[i] = h
		if !pairColumns[h] && h != "sample" {
			ignored = append(ignored, h)
		}
	}
	var pairs []limits.Pair
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, nil, fmt.Errorf("%s:%d: column %d: %v", name, pe.Line, pe.Column, pe.Err)
			}
			return nil, nil, fmt.Errorf("%s: %w", name, err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		if len(rec) != len(cols) {
			return nil, nil, fmt.Errorf("%s:%d: %d fields, the header has %d", name, line, len(rec), len(cols))
		}
		p := limits.Pair{Line: line, Values: map[string]float64{}}
		for i, cell := range rec {
			cell = strings.TrimSpace(cell)
			switch {
			case cols[i] == "sample":
				p.Sample = cell
			case !pairColumns[cols[i]] || cell == "":
			default:
				if sep == ';' {
					cell = strings.Replace(cell, ",", ".", 1)
				}
				v, err := strconv.ParseFloat(cell, 64)
				if err != nil || v != v {
					return nil, nil, fmt.Errorf("%s:%d: column %s: %q is not a number", name, line, cols[i], rec[i])
				}
				if strings.HasSuffix(cols[i], "_pct") && (v < 0 || v > 100) {
					return nil, nil, fmt.Errorf("%s:%d: column %s: %g is not a wt %% between 0 and 100", name, line, cols[i], v)
				}
				p.Values[cols[i]] = v
			}
		}
		pairs = append(pairs, p)
	}
	if len(pairs) == 0 {
		return nil, nil, fmt.Errorf("%s: no pairs after the header", name)
	}
	return pairs, ignored, nil
}

func firstDataLine(data []byte) string {
	for _, l := range strings.Split(string(data), "\n") {
		if t := strings.TrimSpace(l); t != "" && !strings.HasPrefix(t, "#") {
			return t
		}
	}
	return ""
}
