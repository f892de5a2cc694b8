package main

import (
	"context"
	"flag"
	"fmt"
	"sort"
	"strconv"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/forecast"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/report"
	"github.com/undercool-foundry/undercool/internal/store"
)

func init() {
	register(command{
		name:    "report",
		summary: "draw a sample's quality-record page (curve, dT/dt, points, verdict) as PNG or SVG",
		run:     runReport,
	})
}

const reportUsage = `usage: undercool report SAMPLE --out FILE.png|FILE.svg [--db PATH|postgres://…] [--alloy A] [--limits FILE]
        [--advise [--inoculant NAME]] [--time-column C] [--temp-column C] [--time-unit U] [--temp-unit U]

Draws the page for a ladle's quality record: the cooling curve with its
characteristic points, its derivative dT/dt, the results, the verdict with
its reasons and advice, and the caution that the advice defers to the
shop's written procedures. A4, PNG (150 dpi) or SVG by the file's extension.

SAMPLE is a stored sample's id (digits, as 'undercool history' lists them:
the stored results are drawn, over the curve file as it is now; a changed
curve file is noted on the page), or a curve file's path (analysed now,
with --alloy and --limits as for 'undercool analyze'; write ./42 for a
file named 42). --advise adds the cup model's estimate of what the alloy's
additions would do, as 'undercool analyze --advise' gives it (docs/advice.md),
marked as a model estimate that never replaces the shop's practice.

` + columnsUsage + `
`

func runReport(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("report", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprint(env.stderr, reportUsage); fs.PrintDefaults() }
	out := fs.String("out", "", "the page to write, `FILE`.png or FILE.svg")
	dbPath := fs.String("db", "", dbFlagHelp)
	alloy := fs.String("alloy", "", "alloy of a curve file (overrides its '# alloy:')")
	limitsPath := fs.String("limits", "", "limits `FILE` for a curve file (default: the shipped examples)")
	columns := columnFlags(fs)
	advise := fs.Bool("advise", false, "add the cup model's estimate for the alloy's additions (a model estimate)")
	inoculant := fs.String("inoculant", "", "with --advise: only this addition of the limits file")
	pos, err := parseLimitsArgs(fs, args) // flags before or after SAMPLE
	if err != nil {
		if err == flag.ErrHelp {
			return nil
		}
		return errUsage
	}
	if err := checkColumns(env, "report", columns); err != nil {
		return err
	}
	if len(pos) != 1 || *out == "" {
		fmt.Fprint(env.stderr, reportUsage)
		return errUsage
	}
	if *inoculant != "" && !*advise {
		return fmt.Errorf("--inoculant goes with --advise")
	}
	var (
		c    *curvefile.Curve
		rec  assess.Record
		info report.Info
		book *limits.Book
	)
	if *limitsPath != "" {
		if book, err = limits.Load(*limitsPath); err != nil {
			return err
		}
	}
	if id, err := strconv.ParseInt(pos[0], 10, 64); err == nil && id > 0 {
		c, rec, info, err = reportStored(ctx, env, *dbPath, id, columns)
		if err != nil {
			return err
		}
	} else {
		if c, err = columns.ReadFile(pos[0]); err != nil {
			return err
		}
		in, notes := assess.CurveInput(pos[0], c) // with a two-thermocouple cup's wall column and radii
		in.Limits = book
		if *alloy != "" {
			in.Alloy = *alloy
		}
		rec = assess.Assess(in)
		rec.Warnings = append(append(rec.Warnings, c.Notes...), notes...) // what reading the file took (swapped columns, padding, a wall column left out)
		s := sampleFromCurve(pos[0], c, rec)
		if s.CurveSHA256, err = store.HashFile(pos[0]); err != nil {
			return err
		}
		info = report.Info{Sample: s.Sample, Ladle: s.Ladle, Alloy: rec.Alloy, Furnace: s.Furnace, Operator: s.Operator,
			Time: s.Recorded, CurvePath: pos[0], CurveSHA256: s.CurveSHA256, Detect: assess.Options(in), Wall: in.Wall, Radii: in.Radii,
			Simulated: s.Simulated}
		if s.Recorded.IsZero() {
			info.Notes = append(info.Notes, pos[0]+" does not say when the sample was poured (no '# started:' line)")
		}
		if s.Simulated {
			info.Notes = append(info.Notes, "simulated cup, not a measurement")
		}
	}
	if *advise {
		in, _ := assess.CurveInput(info.CurvePath, c)
		in.Alloy, in.Limits = rec.Alloy, book
		_, info.Predictions = forecast.AdviseInput(ctx, in, forecast.Options{Inoculant: *inoculant, DelayMin: -1})
	}
	if err := report.Write(*out, c, rec, info); err != nil {
		return err
	}
	fmt.Fprintf(env.stderr, "wrote %s (%s, verdict %s)\n", *out, dash(info.Sample), rec.Verdict)
	return nil
}

// pointsCurve is a curve through a record's characteristic points in time
// order, for a stored sample whose file can no longer be read; false with
// fewer than two.
func pointsCurve(path string, r assess.Record) (*curvefile.Curve, bool) {
	type pt struct{ t, c float64 }
	var pts []pt
	for _, p := range [][2]*float64{{r.PourPeakS, r.PourPeakC}, {r.LiquidusMinS, r.LiquidusMinC}, {r.LiquidusS, r.LiquidusC},
		{r.EutecticMinS, r.EutecticMinC}, {r.EutecticMaxS, r.EutecticMaxC}, {r.SolidusS, r.SolidusC}} {
		if p[0] != nil && p[1] != nil {
			pts = append(pts, pt{*p[0], *p[1]})
		}
	}
	sort.Slice(pts, func(i, j int) bool { return pts[i].t < pts[j].t })
	c := &curvefile.Curve{Name: path}
	for _, p := range pts {
		if n := len(c.Time); n == 0 || p.t > c.Time[n-1] {
			c.Time, c.Temp = append(c.Time, p.t), append(c.Temp, p.c)
		}
	}
	return c, len(c.Time) >= 2
}

// reportStored loads a stored sample and its curve file; a curve file that
// changed since it was stored is drawn as it is now, with a note.
func reportStored(ctx context.Context, env *environ, dbPath string, id int64, columns *curvefile.Options) (*curvefile.Curve, assess.Record, report.Info, error) {
	db, err := readRecords(ctx, env, dbPath)
	if err != nil {
		return nil, assess.Record{}, report.Info{}, err
	}
	defer db.Close()
	s, results, err := db.Get(ctx, id)
	if err != nil {
		return nil, assess.Record{}, report.Info{}, err
	}
	info := report.Info{Sample: s.Sample, Ladle: s.Ladle, Alloy: s.Alloy, Furnace: s.Furnace, Operator: s.Operator,
		Time: s.Recorded, StoreID: s.ID, CurvePath: s.CurvePath, CurveSHA256: s.CurveSHA256, LimitsVersion: s.LimitsVersion,
		Simulated: s.Simulated}
	if s.Simulated {
		info.Notes = append(info.Notes, "simulated cup, not a measurement")
	}
	if s.CurvePath == "" {
		return nil, s.Record, info, fmt.Errorf("sample %d has no curve file to draw", id)
	}
	c, err := columns.ReadFile(s.CurvePath)
	if err != nil {
		// the record stands without its file: drawn from its points, said so
		pc, ok := pointsCurve(s.CurvePath, s.Record)
		if !ok {
			return nil, s.Record, info, fmt.Errorf("sample %d: %w (and its record has too few points to draw)", id, err)
		}
		note := fmt.Sprintf("The curve file cannot be read (%v): the page is drawn from the stored record; the line joins its characteristic points and is NOT the measured curve.", err)
		info.Notes = append(info.Notes, note)
		fmt.Fprintf(env.stderr, "undercool report: warning: sample %d: %s\n", id, note)
		return pc, s.Record, info, nil
	}
	if sum, err := store.HashFile(s.CurvePath); err == nil && s.CurveSHA256 != "" && sum != s.CurveSHA256 {
		note := fmt.Sprintf("The curve file has CHANGED since it was stored (sha256 now %.16s…): the curve is drawn as it is now, the results are those stored.", sum)
		info.Notes = append(info.Notes, note)
		fmt.Fprintf(env.stderr, "undercool report: warning: sample %d: %s\n", id, note)
	}
	if len(results) > 1 {
		info.Notes = append(info.Notes, fmt.Sprintf("Latest of %d analyses of this sample (first %s).", len(results),
			results[0].Analysed.UTC().Format("2006-01-02 15:04 UTC")))
	}
	// a two-thermocouple cup's page draws the Fourier path its record's
	// figures come from: the wall column of its file
	in, _ := assess.CurveInput(s.CurvePath, c)
	info.Wall, info.Radii = in.Wall, in.Radii
	return c, s.Record, info, nil
}
