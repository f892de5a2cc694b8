package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"runtime"
	"slices"
	"strings"
	"sync"

	"github.com/mattn/go-isatty"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/forecast"
	"github.com/undercool-foundry/undercool/internal/limits"
)

func init() {
	register(command{
		name:    "analyze",
		summary: "analyse curve files: characteristic points, problems and verdict (table or --json)",
		run:     runAnalyze,
	})
}

const analyzeUsage = `usage: undercool analyze [--json] [--alloy NAME] [--limits FILE]
        [--advise [--inoculant NAME] [--add-inoculant PCT] [--delay-min M]]
        [--time-column C] [--temp-column C] [--time-unit U] [--temp-unit U] FILE...

Reads each curve file, finds the characteristic points of its cooling curve
and judges them against the alloy's limits. The alloy comes from --alloy,
else from the file's '# alloy:' line. Without --limits the shipped example
limits are used, whose numbers the shop's metallurgist must set. A FILE of
"-" is a curve read from standard input.

--json writes one JSON object per file, one a line, as each file finishes.
--advise also fits the cup model to each curve and adds its advice (about
half a second a file; see docs/advice.md): for each addition the limits
file lists for the alloy, the smallest allowed one that reaches a pass with
a margin and how long the ladle may then wait, or, with --add-inoculant,
what that addition would do if poured --delay-min minutes after it. In
--json the object "prediction" (and "predictions" where the alloy has
several additions). It is a model estimate, never a measurement.
--store also keeps each analysis in the records database (--db PATH, else
$UNDERCOOL_DB, else the user's data directory): a new sample, or for a
curve file already stored a new result beside the earlier ones.
Exit status 1 when some file could not be read (the others are still
analysed); the reasons go to stderr, naming file and line.

` + columnsUsage + `

The verdict and advice assist the shop's own written procedures and its
metallurgist; they do not replace them.`

// analyzed is one file's outcome.
type analyzed struct {
	index int
	rec   assess.Record
	preds []forecast.Prediction // --advise: the model's predictions
	err   error                 // the file could not be read
}

// advisedRecord is the JSON of an analysed file: the record, and with
// --advise the prediction to show first and, where the alloy has several
// additions, all of them.
type advisedRecord struct {
	assess.Record
	Prediction  *forecast.Prediction  `json:"prediction,omitempty"`
	Predictions []forecast.Prediction `json:"predictions,omitempty"`
}

func runAnalyze(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("analyze", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprintln(env.stderr, analyzeUsage) }
	asJSON := fs.Bool("json", false, "one JSON object per file per line")
	alloy := fs.String("alloy", "", "alloy name for every file (overrides '# alloy:')")
	limitsPath := fs.String("limits", "", "limits file (default: the shipped examples)")
	storeIt := fs.Bool("store", false, "also store each analysis in the records database (earlier results are kept)")
	dbPath := fs.String("db", "", "records database for --store: a file, or the plant database's postgres:// connection string (default $UNDERCOOL_DB or the user's data directory)")
	columns := columnFlags(fs)
	advise := fs.Bool("advise", false, "fit the cup model and add its advice on the alloy's additions (a model estimate; about 0.5 s a file)")
	var aopt forecast.Options
	fs.StringVar(&aopt.Inoculant, "inoculant", "", "with --advise: only this addition of the limits file (its table name)")
	fs.Float64Var(&aopt.AdditionPct, "add-inoculant", 0, "with --advise: predict this addition, % of the ladle (0: search the smallest that passes)")
	fs.Float64Var(&aopt.DelayMin, "delay-min", -1, "with --advise: minutes from the addition to the pour (default: the table's delay_min)")
	files, err := parseLimitsArgs(fs, args)
	if err != nil {
		return errUsage
	}
	if err := checkColumns(env, "analyze", columns); err != nil {
		return err
	}
	set := map[string]bool{}
	fs.Visit(func(f *flag.Flag) { set[f.Name] = true })
	if !*advise && (set["inoculant"] || set["add-inoculant"] || set["delay-min"]) {
		return errors.New("--inoculant, --add-inoculant and --delay-min go with --advise")
	}
	if aopt.AdditionPct < 0 || aopt.AdditionPct > 5 || aopt.AdditionPct != aopt.AdditionPct {
		return fmt.Errorf("--add-inoculant %g: want a percentage of the ladle from 0 to 5", aopt.AdditionPct)
	}
	if set["delay-min"] && !(aopt.DelayMin >= 0 && aopt.DelayMin <= 600) {
		return fmt.Errorf("--delay-min %g: want 0 to 600 minutes", aopt.DelayMin)
	}
	var adv *forecast.Options
	if *advise {
		adv = &aopt
	}
	if len(files) == 0 {
		fmt.Fprintln(env.stderr, analyzeUsage)
		return errUsage
	}
	// "-" is a curve read from standard input (once, before the workers).
	read := columns.ReadFile
	if slices.Contains(files, "-") {
		if *storeIt {
			return errors.New("--store needs curve files: standard input (-) has no file to keep and verify")
		}
		c, err := columns.Read(env.stdin, "-")
		read = func(path string) (*curvefile.Curve, error) {
			if path == "-" {
				return c, err
			}
			return columns.ReadFile(path)
		}
	}
	var book *limits.Book // nil: assess uses the shipped examples
	if *limitsPath != "" {
		if book, err = limits.Load(*limitsPath); err != nil {
			return err
		}
	}
	if *alloy != "" {
		if err := knownAlloy(env, "analyze", book, *alloy); err != nil {
			return err
		}
	}

	var records *recordWriter // --store
	if *storeIt {
		db, err := openRecords(ctx, env, *dbPath)
		if err != nil {
			return err
		}
		defer db.Close()
		records = newRecordWriter(ctx, db, nil)
		records.read = columns.ReadFile // the metadata read as analyze read the file
		defer func() {
			records.Close()
			for _, err := range records.Errors() {
				fmt.Fprintf(env.stderr, "undercool analyze: %s\n", escape.Text(err.Error()))
			}
			fmt.Fprintln(env.stderr, records.summary())
		}()
	}

	out := &analyzeOutput{env: env, json: *asJSON, files: files, progress: stderrIsTerminal(env)}
	out.start()
	wctx, cancel := context.WithCancel(ctx)
	defer cancel()
	results := analyzeFiles(wctx, files, *alloy, book, adv, read)
	for a := range results {
		if err := out.result(a); err != nil {
			cancel()
			go func() {
				for range results { // let the workers finish
				}
			}()
			return err
		}
		if records != nil && a.err == nil {
			records.Add(files[a.index], a.rec)
		}
	}
	if err := out.finish(); err != nil {
		return err
	}
	if ctx.Err() != nil {
		return ctx.Err()
	}
	if records != nil && records.Close() != nil {
		out.failed++
	}
	if out.failed > 0 {
		return exitError{1}
	}
	return nil
}

// analyzeFiles reads and assesses the files on GOMAXPROCS workers and sends
// each outcome as soon as it is ready (in finishing order). The channel is
// closed when every file is done or ctx is cancelled.
func analyzeFiles(ctx context.Context, files []string, alloy string, book *limits.Book, adv *forecast.Options, read func(string) (*curvefile.Curve, error)) <-chan analyzed {
	jobs := make(chan int)
	results := make(chan analyzed)
	workers := min(runtime.GOMAXPROCS(0), len(files))
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			for i := range jobs {
				results <- analyzeOne(ctx, i, files[i], alloy, book, adv, read)
			}
		})
	}
	go func() {
		defer close(jobs)
		for i := range files {
			select {
			case jobs <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	go func() {
		wg.Wait()
		close(results)
	}()
	return results
}

// analyzeOne reads one curve with read (nil: curvefile.ReadFile) and
// assesses it; with adv also the model's advice.
func analyzeOne(ctx context.Context, i int, path, alloy string, book *limits.Book, adv *forecast.Options, read func(string) (*curvefile.Curve, error)) analyzed {
	if read == nil {
		read = curvefile.ReadFile
	}
	c, err := read(path)
	if err != nil {
		return analyzed{index: i, err: err}
	}
	in, notes := assess.CurveInput(path, c) // with a two-thermocouple cup's wall column and radii
	in.Limits = book
	if alloy != "" {
		in.Alloy = alloy
	}
	var out analyzed
	if adv != nil {
		out.rec, out.preds = forecast.AdviseInput(ctx, in, *adv)
	} else {
		out.rec = assess.Assess(in)
	}
	out.rec.Warnings = append(append(out.rec.Warnings, c.Notes...), notes...) // what reading the file took (swapped columns, padding, a wall column left out)
	out.index = i
	return out
}

// knownAlloy refuses an alloy the limits do not know (a typo such as
// grey_iron would otherwise be analysed by the name rule and judged
// unchecked), naming the alloys they do know, as the sample form does. It
// prints the refusal and gives exit status 2 (a usage mistake).
func knownAlloy(env *environ, cmd string, book *limits.Book, alloy string) error {
	src := "the shipped example limits"
	if book == nil {
		book = limits.Builtin()
	} else {
		src = book.Source
	}
	if book.Resolve(alloy).Known() {
		return nil
	}
	fmt.Fprintf(env.stderr, "undercool %s: unknown alloy %q: %s know %s (or give --limits FILE with its entry)\n",
		cmd, alloy, src, strings.Join(book.Names(), ", "))
	return exitError{2}
}

func stderrIsTerminal(env *environ) bool {
	f, ok := env.stderr.(*os.File)
	return ok && isatty.IsTerminal(f.Fd())
}

// analyzeOutput prints outcomes as they arrive: JSON lines, or table rows
// followed by each file's problems, reasons and advice.
type analyzeOutput struct {
	env      *environ
	json     bool
	files    []string
	progress bool // stderr is a terminal: keep a progress line there

	fileW, alloyW int
	done, failed  int
	details       []*analyzed // by input index, for the notes after the table
}

func (o *analyzeOutput) start() {
	if o.json {
		return
	}
	o.details = make([]*analyzed, len(o.files))
	o.fileW, o.alloyW = len("file"), len("alloy")
	for _, f := range o.files {
		o.fileW = max(o.fileW, len([]rune(escape.Line(f))))
	}
	o.alloyW = max(o.alloyW, len("ductile-iron"))
	fmt.Fprintf(o.env.stdout, "%-*s  %-*s  %7s  %8s  %8s  %8s  %6s  %8s  %s\n",
		o.fileW, "file", o.alloyW, "alloy", "samples", "liquidus", "eut.min", "eut.max", "recal.", "solidus", "verdict")
	fmt.Fprintf(o.env.stdout, "%-*s  %-*s  %7s  %8s  %8s  %8s  %6s  %8s\n",
		o.fileW, "", o.alloyW, "", "", "°C", "°C", "°C", "°C", "°C")
}

func (o *analyzeOutput) result(a analyzed) error {
	o.done++
	o.clearProgress()
	var err error
	switch {
	case a.err != nil:
		o.failed++
		fmt.Fprintf(o.env.stderr, "undercool analyze: %s\n", escape.Text(a.err.Error()))
		if !o.json {
			_, err = fmt.Fprintf(o.env.stdout, "%-*s  %-*s  %s\n", o.fileW, escape.Line(o.files[a.index]), o.alloyW, "", "unreadable (see the error above)")
		}
	case o.json:
		out := advisedRecord{Record: a.rec}
		if p, ok := forecast.Headline(a.rec, a.preds); ok {
			out.Prediction = &p
			if len(a.preds) > 1 {
				out.Predictions = a.preds
			}
		}
		b, jerr := json.Marshal(out)
		if jerr != nil {
			o.failed++
			fmt.Fprintf(o.env.stderr, "undercool analyze: %s: cannot encode the result: %v\n", a.rec.File, jerr)
			break
		}
		_, err = o.env.stdout.Write(append(escape.JSON(b), '\n'))
	default:
		r := &a.rec
		o.details[a.index] = &a
		_, err = fmt.Fprintf(o.env.stdout, "%-*s  %-*s  %7d  %8s  %8s  %8s  %6s  %8s  %s\n",
			o.fileW, escape.Line(r.File), o.alloyW, escape.Line(orDash(r.Alloy)), r.Samples,
			cell(r.LiquidusC, 1), cell(r.EutecticMinC, 1), cell(r.EutecticMaxC, 1), cell(r.RecalescenceC, 1),
			cell(r.SolidusC, 1), r.Verdict)
	}
	if err != nil {
		return fmt.Errorf("writing results: %w", err)
	}
	o.showProgress()
	return nil
}

func (o *analyzeOutput) finish() error {
	o.clearProgress()
	if o.json {
		return nil
	}
	w := o.env.stdout
	advised := false
	estimated := false
	for _, a := range o.details {
		if a == nil {
			continue
		}
		r := &a.rec
		if len(r.Problems)+len(r.Reasons)+len(r.Advice)+len(r.Warnings)+len(a.preds) == 0 {
			continue
		}
		fmt.Fprintf(w, "\n%s (%s): %s\n", escape.Line(r.File), escape.Line(orDash(r.Alloy)), r.Verdict)
		notes(w, "problem", r.Problems)
		notes(w, "reason", r.Reasons)
		notes(w, "warning", r.Warnings)
		notes(w, "advice", r.Advice)
		var est []string
		for _, p := range a.preds {
			est = append(est, p.Text)
		}
		notes(w, "estimate", est)
		advised = advised || len(r.Advice) > 0
		estimated = estimated || len(est) > 0
	}
	if advised {
		fmt.Fprintln(w, "\nAdvice only: follow the shop's written procedures and its metallurgist.")
	}
	if estimated {
		fmt.Fprintln(w, forecast.Caution)
	}
	_, err := fmt.Fprintf(w, "\n%d files, %d unreadable\n", len(o.files), o.failed)
	if err != nil {
		return fmt.Errorf("writing results: %w", err)
	}
	return nil
}

func notes(w io.Writer, label string, lines []string) {
	for _, l := range lines {
		fmt.Fprintf(w, "  %-8s %s\n", label+":", escape.Line(l))
	}
}

func (o *analyzeOutput) showProgress() {
	if o.progress {
		fmt.Fprintf(o.env.stderr, "analysed %d of %d files", o.done, len(o.files))
	}
}

func (o *analyzeOutput) clearProgress() {
	if o.progress {
		fmt.Fprint(o.env.stderr, "\r\x1b[K")
	}
}

func cell(v *float64, prec int) string {
	if v == nil {
		return "-"
	}
	return fmt.Sprintf("%.*f", prec, *v)
}

func orDash(s string) string {
	if strings.TrimSpace(s) == "" {
		return "-"
	}
	return s
}
