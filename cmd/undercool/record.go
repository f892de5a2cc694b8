package main

import (
	"context"
	"flag"
	"fmt"
	"path/filepath"
	"time"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
)

func init() {
	register(command{
		name:    "record",
		summary: "record one cup sample from a serial port into a curve file (no screen)",
		run:     runRecord,
	})
}

// recordOpener opens the port for record (replaced in tests).
var recordOpener = acquire.SerialOpener

func runRecord(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("record", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	port := fs.String("port", "", "serial port of the amplifier (required): "+portNameHelp())
	mode := acquire.DefaultPortMode
	mode.AddFlags(fs)
	var cfg acquire.Config
	cfg.AddEMFFlags(fs)
	out := fs.String("out", "", "curve file to write, NAME.csv; it must not exist (default: a new name in --dir)")
	dir := fs.String("dir", ".", "directory for the curve file when --out is not given")
	channel := fs.String("channel", "", "record this channel id only (default: the first channel poured)")
	maxS := fs.Float64("max-s", 600, "time limit of the sample in s: recording stops then even if freezing has not ended")
	waitS := fs.Float64("wait-s", -1, "give up when no sample has started within this many s (default: the --max-s time limit; 0: wait until interrupted)")
	start := fs.Bool("start", false, "start recording at once instead of waiting for the pour")
	rise := fs.Float64("trigger-rise", 100, "pour trigger: a rise of more than this many °C ...")
	within := fs.Float64("trigger-within", 3, "... within this many s ...")
	minC := fs.Float64("trigger-min", 300, "... to at least this many °C")
	alloy := fs.String("alloy", "", "alloy of the sample, e.g. grey-iron, ductile-iron, al-si7mg (metadata; tells the end-of-freezing detector the family)")
	sample := fs.String("sample", "", `sample label for the file, e.g. "L-2417 cup 1"`)
	operator := fs.String("operator", "", "who took the sample")
	dbPath := fs.String("db", "", "records database the finished sample is stored in (default $UNDERCOOL_DB or the user's data directory)")
	noStore := fs.Bool("no-store", false, "do not store the finished sample in the records database")
	limitsPath := fs.String("limits", "", "limits file the finished sample is judged by (default: the built-in examples)")
	fs.Usage = func() {
		fmt.Fprintln(env.stderr, "usage: undercool record --port PATH [--baud N] [--frame 8N1] [--tc TYPE] [--cj C] [--out FILE] [--channel ID] [--max-s N]")
		fmt.Fprintln(env.stderr, "Waits for the pour, records one sample and prints the curve file's path when it is done.")
		fmt.Fprintln(env.stderr, "Interrupted samples left in the output directory by a crash are recovered first.")
		fmt.Fprintln(env.stderr, "Molten metal: follow your shop's procedures; this tool only records.")
		fs.PrintDefaults()
	}
	if help, err := parseFlags(fs, args); help || err != nil {
		return err
	}
	if *port == "" || fs.NArg() > 0 {
		fmt.Fprintln(env.stderr, "undercool record: --port is required (and no other arguments)")
		return errUsage
	}
	if err := mode.Check(); err != nil {
		return fmt.Errorf("--baud/--frame: %w", err)
	}
	if *maxS <= 0 || *rise <= 0 || *within <= 0 {
		return fmt.Errorf("--max-s, --trigger-rise and --trigger-within must be positive")
	}
	if *waitS < 0 {
		*waitS = *maxS
	}
	cfg.Port, cfg.OutPath, cfg.Dir, cfg.MaxSamples, cfg.MaxS = *port, *out, *dir, 1, *maxS
	cfg.Trigger = acquire.Trigger{RiseC: *rise, WithinS: *within, MinC: *minC, Manual: *start}
	if *channel != "" {
		cfg.Channels = []string{*channel}
	}
	if *alloy != "" {
		cfg.Family = limits.Family(*alloy)
	}
	for _, m := range []curvefile.Meta{{Key: "alloy", Value: *alloy}, {Key: "sample", Value: *sample}, {Key: "operator", Value: *operator}} {
		if m.Value != "" {
			cfg.Meta = append(cfg.Meta, m)
		}
	}
	book, _, err := loadLimits(*limitsPath)
	if err != nil {
		return err
	}
	var records *analyzeStore
	if !*noStore {
		// Opened before the pour, so a database that cannot be written is
		// an error now, not after the cup.
		if records, err = openAnalyzeStore(ctx, env, *dbPath); err != nil {
			return err
		}
	}
	rec := &recording{env: env, port: *port, channel: *channel, waitS: *waitS}
	runErr := rec.run(ctx, acquire.New(recordOpener(*port, mode), cfg), *start)
	for _, p := range rec.recovered {
		rec.judge(context.WithoutCancel(ctx), p, "", book, records)
	}
	if rec.path != "" {
		rec.judge(context.WithoutCancel(ctx), rec.path, *alloy, book, records)
	}
	if records != nil {
		records.finish(env)
		if runErr == nil && records.anyFailed() {
			return exitError{1}
		}
	}
	return runErr
}

// judge analyses a finished (or recovered) curve file, prints its verdict
// and stores it (the curve file is complete and safe before this runs: a
// failure here loses nothing already recorded).
func (r *recording) judge(ctx context.Context, path, alloy string, book *limits.Book, records *analyzeStore) {
	res := analyzeOne(ctx, 0, path, alloy, book, nil, nil)
	if res.err != nil {
		fmt.Fprintf(r.env.stderr, "undercool record: %s could not be analysed: %v\n", path, res.err)
		return
	}
	fmt.Fprintf(r.env.stderr, "undercool record: %s: verdict %s", filepath.Base(path), res.rec.Verdict)
	for _, why := range res.rec.Reasons {
		fmt.Fprintf(r.env.stderr, "; %s", why)
	}
	fmt.Fprintln(r.env.stderr, " (advice only: follow the shop's written procedures)")
	if records != nil {
		records.add(ctx, r.env, path, res.rec)
	}
}

// recording follows one record run: it prints events and progress to
// stderr and the finished file's path to stdout.
type recording struct {
	env     *environ
	port    string
	channel string // the sample's channel ("" until one starts)
	waitS   float64

	started   bool
	readings  int      // of the sample's channel since it started
	lastC     float64  // its last valid reading, °C
	path      string   // the finished curve file
	recovered []string // samples an earlier run left interrupted, recovered at the start
	status    acquire.Status
}

func (r *recording) run(ctx context.Context, a *acquire.Acquirer, startNow bool) error {
	runCtx, cancel := context.WithCancel(ctx)
	defer cancel()
	errc := make(chan error, 1)
	go func() { errc <- a.Run(runCtx) }()
	if startNow {
		ch := r.channel
		if ch == "" {
			ch = "1"
		}
		a.Start(ch)
	}
	var wait <-chan time.Time
	if r.waitS > 0 {
		t := time.NewTimer(time.Duration(r.waitS * float64(time.Second)))
		defer t.Stop()
		wait = t.C
	}
	progress := time.NewTicker(2 * time.Second)
	defer progress.Stop()
	var giveUp error
	batches := a.Batches()
	for batches != nil {
		select {
		case b, ok := <-batches:
			if !ok {
				batches = nil
				break
			}
			r.batch(b)
			if r.path != "" {
				cancel()
			}
		case <-wait:
			if !r.started {
				giveUp = r.noSample()
				cancel()
			}
		case <-progress.C:
			r.progress()
		}
	}
	runErr := <-errc
	switch {
	case runErr != nil:
		return runErr
	case giveUp != nil:
		return giveUp
	case r.path != "" && ctx.Err() != nil:
		fmt.Fprintln(r.env.stdout, r.path)
		fmt.Fprintf(r.env.stderr, "undercool record: interrupted; the sample so far is complete in %s\n", r.path)
		return exitError{130}
	case r.path != "" && r.readings == 0:
		return fmt.Errorf("no readings from %s: %s holds none (is the amplifier sending? check --baud and --frame)", r.port, r.path)
	case r.path != "":
		fmt.Fprintln(r.env.stdout, r.path)
		return nil
	}
	fmt.Fprintln(r.env.stderr, "undercool record: interrupted before a sample started")
	return exitError{130}
}

func (r *recording) batch(b acquire.Batch) {
	r.status = b.Status
	for _, e := range b.Events {
		if e.Kind == acquire.EventSampleStarted && !r.started && (r.channel == "" || e.Channel == r.channel) {
			r.started, r.channel = true, e.Channel
		}
		fmt.Fprintf(r.env.stderr, "undercool record: %s\n", e.Text)
		if e.Kind == acquire.EventSampleDone && e.Channel == r.channel {
			r.path = e.Path
		}
		if e.Kind == acquire.EventRecovered && e.Path != "" {
			r.recovered = append(r.recovered, e.Path)
		}
	}
	for _, rd := range b.Readings {
		if !r.started || rd.Channel != r.channel {
			continue
		}
		r.readings++
		if rd.Flags&(acquire.FlagOpen|acquire.FlagFault) == 0 {
			r.lastC = rd.TempC
		}
	}
}

func (r *recording) progress() {
	s := r.status
	conn := "connected"
	switch {
	case s.Reconnecting:
		conn = "reconnecting"
	case !s.Connected:
		conn = "not connected"
	}
	if !r.started {
		fmt.Fprintf(r.env.stderr, "undercool record: %s, %s: waiting for pour; %d lines, %d garbage, %.0f readings/s\n",
			r.port, conn, s.Lines, s.Garbage, s.ReadingsPerS)
		return
	}
	fmt.Fprintf(r.env.stderr, "undercool record: %s, %s: channel %s %s; %d readings, %.1f °C, %d faults\n",
		r.port, conn, r.channel, s.Channels[r.channel], r.readings, r.lastC, s.Faults)
}

// noSample explains why no sample started in --wait-s.
func (r *recording) noSample() error {
	s := r.status
	switch {
	case s.Lines == 0 && s.Partial == 0 && s.Overlong == 0:
		return fmt.Errorf("no data from %s in %g s: is the amplifier on, connected and sending? (check the cable, --baud and --frame)", r.port, r.waitS)
	case s.Readings == 0:
		return fmt.Errorf("only garbage from %s in %g s (%d lines, last %s): check --baud and --frame", r.port, r.waitS, s.Garbage, s.LastGarbage)
	}
	return fmt.Errorf("no pour seen on %s in %g s (%d readings); --start records without waiting for the pour", r.port, r.waitS, s.Readings)
}
