package main

import (
	"cmp"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"maps"
	"os"
	"slices"
	"strings"
	"text/tabwriter"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/limits"
)

func init() {
	register(command{
		name:    "limits",
		summary: "check, show or start a per-alloy limits file (check FILE, show [ALLOY], init FILE)",
		run:     runLimits,
	})
}

const limitsUsage = `usage:
  undercool limits check FILE...           validate limits files (errors name file, line and key)
  undercool limits show [ALLOY] [--limits FILE] [--metrics]
                                           show the alloys, or one alloy's bands and advice
  undercool limits init FILE               write the shipped example file to edit

Without --limits, show uses the shipped examples, whose numbers the shop's
metallurgist must set before use.`

func runLimits(ctx context.Context, env *environ, args []string) error {
	if len(args) == 0 {
		fmt.Fprintln(env.stderr, limitsUsage)
		return errUsage
	}
	switch args[0] {
	case "check":
		return limitsCheck(env, args[1:])
	case "show":
		return limitsShow(env, args[1:])
	case "init":
		return limitsInit(env, args[1:])
	case "-h", "--help", "help":
		fmt.Fprintln(env.stdout, limitsUsage)
		return nil
	}
	fmt.Fprintf(env.stderr, "undercool limits: unknown action %q\n%s\n", args[0], limitsUsage)
	return errUsage
}

// parseLimitsArgs parses flags that may come before or after the
// positional arguments.
func parseLimitsArgs(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		if fs.NArg() == 0 {
			return pos, nil
		}
		pos = append(pos, fs.Arg(0))
		args = fs.Args()[1:]
	}
}

func limitsCheck(env *environ, args []string) error {
	fs := flag.NewFlagSet("limits check", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	files, err := parseLimitsArgs(fs, args)
	if err != nil {
		return errUsage
	}
	if len(files) == 0 {
		fmt.Fprintln(env.stderr, "undercool limits check: name at least one FILE")
		return errUsage
	}
	bad := 0
	for _, f := range files {
		b, err := limits.Load(f)
		if err != nil {
			bad++
			for _, line := range strings.Split(err.Error(), "\n") {
				fmt.Fprintln(env.stderr, escape.Line(line))
			}
			continue
		}
		fmt.Fprintf(env.stdout, "%s: ok: version %s, edited %s, %d alloys (%s)\n", f, b.Version, cmp.Or(b.Edited, "-"), len(b.Alloys), strings.Join(b.Names(), ", "))
	}
	if bad > 0 {
		return exitError{1}
	}
	return nil
}

func limitsShow(env *environ, args []string) error {
	fs := flag.NewFlagSet("limits show", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	file := fs.String("limits", "", "limits file (default: the shipped examples)")
	metrics := fs.Bool("metrics", false, "list every metric a limit can be set on")
	pos, err := parseLimitsArgs(fs, args)
	if err != nil || len(pos) > 1 {
		return errUsage
	}
	if *metrics {
		tw := tabwriter.NewWriter(env.stdout, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "METRIC\tUNIT\tMEANING")
		for _, m := range limits.Metrics() {
			fmt.Fprintf(tw, "%s\t%s\t%s\n", m.Name, cmp.Or(m.Unit, "-"), m.Label)
		}
		return tw.Flush()
	}
	book := limits.Builtin()
	if *file != "" {
		if book, err = limits.Load(*file); err != nil {
			return err
		}
	}
	fmt.Fprintf(env.stdout, "limits: %s  version %s  edited %s by %s\n", book.Source, book.Version, cmp.Or(book.Edited, "-"), cmp.Or(book.EditedBy, "-"))
	if book.Note != "" {
		fmt.Fprintf(env.stdout, "note: %s\n", book.Note)
	}
	if len(pos) == 0 {
		tw := tabwriter.NewWriter(env.stdout, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "\nALLOY\tFAMILY\tMETRICS\tDESCRIPTION")
		for _, n := range book.Names() {
			a := book.Alloys[n]
			fmt.Fprintf(tw, "%s\t%s\t%d\t%s\n", n, a.Family, len(a.Metrics), a.Description)
		}
		if err := tw.Flush(); err != nil {
			return err
		}
		var all []*limits.Inoculant
		for _, n := range slices.Sorted(maps.Keys(book.InoculantTables)) {
			all = append(all, book.InoculantTables[n])
		}
		return showInoculants(env.stdout, all)
	}
	a, ok := book.Alloy(pos[0])
	if !ok {
		return fmt.Errorf("no alloy %q in %s (it has: %s)", pos[0], book.Source, strings.Join(book.Names(), ", "))
	}
	return showAlloy(env.stdout, book, a)
}

func showAlloy(w io.Writer, book *limits.Book, a *limits.Alloy) error {
	fmt.Fprintf(w, "\n%s (%s): %s\n", a.Name, a.Family, a.Description)
	if len(a.Chemistry) > 0 {
		var parts []string
		for _, el := range limits.Elements {
			if v, ok := a.Chemistry[el]; ok {
				parts = append(parts, fmt.Sprintf("%s %g", strings.ToUpper(el[:1])+el[1:], v))
			}
		}
		fmt.Fprintf(w, "nominal chemistry, wt %% (used when a curve carries none): %s\n", strings.Join(parts, ", "))
	}
	switch a.Family {
	case "iron", "white":
		e := a.Eutectic()
		st, mst := a.Offsets()
		fmt.Fprintf(w, "stable eutectic Tst = %s; metastable Tmst = %s (°C)\n",
			linear(e.StableBase, e.StableSi, "Si", e.StableP, "P", -st, "offset"),
			linear(e.MetaBase, e.MetaSi, "Si", e.MetaP, "P", -mst, "offset"))
		r, _ := book.LiquidusCE(a.CELRegressionName())
		fmt.Fprintf(w, "carbon equivalent from the liquidus: %s, TL = %g − %g·CEL (%s)\n", a.CELRegressionName(), r.A, r.B, r.Source)
		if a.Family == "white" {
			wc, shop := book.WhiteCup(a)
			src := "formula (inverted eutectic and Heine relations)"
			if shop {
				src = "shop calibration"
			}
			fmt.Fprintf(w, "tellurium cup, %s: Si = %.4g %+.4g·T_white; C = %.4g %+.4g·TL %+.4g·Si %+.4g·P\n", src, wc.SiA, wc.SiB, wc.CA, wc.CTL, wc.CSi, wc.CP)
		}
	case "aluminum":
		m := a.AlSi()
		fmt.Fprintf(w, "liquidus = %g + Σ %v·wt %%; unmodified eutectic = %g − (%g/Si)·Σ %v·wt %% − %g (°C)\n",
			m.LiquidusBase, m.LiquidusSlope, m.EutecticBase, m.EutecticSiRef, m.Depressor, m.EutecticOffset)
	case "pure":
		if a.Reference.FixedPointC != nil {
			fmt.Fprintf(w, "fixed point (ITS-90): %.3f °C\n", *a.Reference.FixedPointC)
		}
	}
	fmt.Fprintln(w, detectionText(book.Resolve(a.Name).Detect.Hints))
	if c, o, metric, ok := a.PotencyModel(a.Family); ok {
		fmt.Fprintf(w, "nucleation potency: ΔT from %s, %s constants, onset %s (an effective, ranking figure)\n", metric, c.Name, cmp.Or(o.Mode, "hom-ratio"))
	}
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "\nMETRIC\tPASS\tMARGINAL\tREQUIRED\tADVICE WHEN OUT")
	for _, c := range a.Evaluate(limits.Sample{Complete: true}).Checks {
		mi, _ := limits.Metric(c.Metric)
		req := ""
		switch {
		case c.Required && c.SampleCheck:
			req = "yes (a check on the cup)"
		case c.Required:
			req = "yes"
		case c.SampleCheck:
			req = "a check on the cup"
		}
		l := a.Metrics[c.Metric]
		advice := []string{}
		if l.Low != "" {
			advice = append(advice, "low: "+l.Low)
		}
		if l.High != "" {
			advice = append(advice, "high: "+l.High)
		}
		if l.Missing != "" {
			advice = append(advice, "missing: "+l.Missing)
		}
		if len(l.Spoils) > 0 {
			advice = append(advice, "when it fails, withheld: "+strings.Join(l.Spoils, ", "))
		}
		band := func(b limits.Band) string {
			if b.Min == nil && b.Max == nil {
				return "-"
			}
			if mi.Unit == "" {
				return limits.FormatBand(mi, b)
			}
			return limits.FormatBand(mi, b) + " " + mi.Unit
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\n", c.Metric, band(c.Pass), band(c.Marginal), req, strings.Join(advice, " | "))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	return showInoculants(w, book.Inoculants(a.Name))
}

// showInoculants lists [inoculant.NAME] tables (docs/limits.md,
// "Inoculants"): what a fresh 0.01 % of the ladle does, the fade
// half-life, the largest addition the advice may propose, the usual delay
// to the pour, with the standard uncertainties calibrate fitted. Nothing
// for none.
func showInoculants(w io.Writer, ins []*limits.Inoculant) error {
	if len(ins) == 0 {
		return nil
	}
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "\nINOCULANT\tEFFECT\tPER 0.01 %\tFADE HALF-LIFE\tLARGEST ADDITION\tDELAY\tALLOYS\tCALIBRATED\tDESCRIPTION")
	withU := func(v, u float64, unit string) string {
		if u > 0 {
			return fmt.Sprintf("%g ± %.2g%s", v, u, unit)
		}
		return fmt.Sprintf("%g%s", v, unit)
	}
	for _, in := range ins {
		gain := "nucleation constant × " + withU(in.Gain, in.GainU, "")
		if in.Effect == limits.EffectEutecticDepression {
			gain = "eutectic − " + withU(in.Gain, in.GainU, " °C")
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", in.Name, in.Effect, gain, withU(in.HalfLifeMin, in.HalfLifeU, " min"),
			fmt.Sprintf("%g %%", in.MaxPct), fmt.Sprintf("%g min", in.DelayMin), strings.Join(in.Alloys, ", "), cmp.Or(in.Calibrated, "-"), in.Description)
	}
	return tw.Flush()
}

// detectionText says what the detector expects of the alloy's curves
// (Book.Resolve): the pour trigger and the windows of its arrests.
func detectionText(h arrest.Hints) string {
	parts := []string{fmt.Sprintf("a pour reaches %.0f °C", h.MinPourC)}
	win := func(name string, r arrest.Range) {
		if !r.Open() {
			parts = append(parts, fmt.Sprintf("%s within %.1f–%.1f °C", name, r.LoC, r.HiC))
		}
	}
	win("liquidus arrest", h.Liquidus)
	name := "eutectic"
	if h.FixedPointC != 0 {
		name = "plateau"
	}
	win(name, h.Eutectic)
	if h.FixedPointC != 0 {
		parts = append(parts, fmt.Sprintf("fixed point %.3f °C", h.FixedPointC))
	}
	return "detection: " + strings.Join(parts, "; ")
}

func limitsInit(env *environ, args []string) error {
	fs := flag.NewFlagSet("limits init", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	pos, err := parseLimitsArgs(fs, args)
	if err != nil || len(pos) != 1 {
		fmt.Fprintln(env.stderr, "undercool limits init: name one FILE to write")
		return errUsage
	}
	path := pos[0]
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if errors.Is(err, os.ErrExist) {
		return fmt.Errorf("%s already exists: not overwritten (edit it, or choose another name)", path)
	}
	if err != nil {
		return err
	}
	_, err = f.Write(limits.Example())
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	fmt.Fprintf(env.stdout, "wrote %s: EXAMPLE numbers only; the shop's metallurgist must set every limit, then run 'undercool limits check %s'\n", path, path)
	return nil
}

// linear writes base ± k·name ... leaving out zero terms: "1153 + 5.25·Si − 14.88·P".
func linear(base float64, terms ...any) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%g", base)
	for i := 0; i+1 < len(terms); i += 2 {
		k, name := terms[i].(float64), terms[i+1].(string)
		switch {
		case k == 0:
		case name == "offset" && k < 0:
			fmt.Fprintf(&b, " − %g (offset)", -k)
		case name == "offset":
			fmt.Fprintf(&b, " + %g (offset)", k)
		case k < 0:
			fmt.Fprintf(&b, " − %g·%s", -k, name)
		default:
			fmt.Fprintf(&b, " + %g·%s", k, name)
		}
	}
	return b.String()
}
