package main

import (
	"context"
	"flag"
	"fmt"
	"path/filepath"
	"strings"
	"time"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/session"
	"github.com/undercool-foundry/undercool/internal/store"
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
	addPortFlags(fs, &mode)
	var cfg acquire.Config
	addEMFFlags(fs, &cfg)
	out := fs.String("out", "", "curve file to write, NAME.csv; it must not exist (default: a new name in --dir)")
	dir := fs.String("dir", ".", "directory for the curve file when --out is not given")
	channel := fs.String("channel", "", "record this channel id only (default: the first channel poured)")
	cupf := addCupFlags(fs)
	maxS := fs.Float64("max-s", 600, "time limit of the sample in s: recording stops then even if freezing has not ended")
	waitS := fs.Float64("wait-s", -1, "give up when no sample has started within this many s (default: the --max-s time limit; 0: wait until interrupted)")
	start := fs.Bool("start", false, "start recording at once instead of waiting for the pour")
	rise := fs.Float64("trigger-rise", 100, "pour trigger: a rise of more than this many °C ...")
	within := fs.Float64("trigger-within", 3, "... within this many s ...")
	minC := fs.Float64("trigger-min", 300, "... to at least this many °C")
	alloy := fs.String("alloy", "", "alloy of the sample, e.g. grey-iron, ductile-iron, al-si7mg (its limits entry decides how the end of freezing is found and the verdict)")
	sample_ := fs.String("sample", "", `sample label for the file, e.g. "L-2417 cup 1"`)
	operator := fs.String("operator", "", "who took the sample")
	dbPath := fs.String("db", "", "records database the finished sample is stored in (default $UNDERCOOL_DB or the user's data directory)")
	noStore := fs.Bool("no-store", false, "do not store the finished sample in the records database")
	plant := fs.String("plant", "", "the plant database's postgres:// `connection string` the stored sample is forwarded to (default $UNDERCOOL_PLANT; none: it stays queued in the deck's file)")
	limitsPath := fs.String("limits", "", "limits file the finished sample is judged by (default: the built-in examples)")
	fs.Usage = func() {
		fmt.Fprintln(env.stderr, "usage: undercool record --port PATH [--baud N] [--frame 8N1] [--tc TYPE] [--cj C] [--out FILE] [--channel ID] [--max-s N]")
		fmt.Fprintln(env.stderr, "        [--wall-channel [CENTRE:]WALL --wall-radius-mm R [--centre-radius-mm R]]")
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
	cups, err := cupf.cups(*channel)
	if err != nil {
		return err
	}
	cfg.Cups = cups
	// The sample's own metadata is the tracker's to decide: it writes it
	// into the file, and judges the cup by the alloy's limits entry.
	var meta sample.Meta
	for _, kv := range [][2]string{{"alloy", *alloy}, {"sample", *sample_}, {"operator", *operator}} {
		meta = meta.With(kv[0], kv[1])
	}
	book, _, err := loadLimits(*limitsPath)
	if err != nil {
		return err
	}
	var records *recordWriter
	var fw *store.Forwarder
	if !*noStore {
		// Opened before the pour, so a database that cannot be written is
		// an error now, not after the cup.
		db, err := openRecords(ctx, env, *dbPath)
		if err != nil {
			return err
		}
		defer db.Close()
		records = newRecordWriter(ctx, db, nil)
		var stopFw func()
		fw, stopFw = deckForwarding(ctx, env, db, *plant)
		defer stopFw() // before the database closes
		if fw != nil {
			records.stored = fw.Kick
		}
	}
	rec := &recording{env: env, port: *port, mode: mode, channel: *channel, waitS: *waitS, records: records, fw: fw}
	acq := acquire.New(recordOpener(*port, mode), cfg)
	tr := sample.New(sample.Config{Limits: book, Meta: meta})
	runErr := rec.run(ctx, acq, tr, *start)
	if records != nil {
		err := records.Close()
		for _, e := range records.Errors() {
			fmt.Fprintf(env.stderr, "undercool record: %v\n", e)
		}
		fmt.Fprintln(env.stderr, "undercool record: "+records.summary())
		if fw != nil {
			fmt.Fprintln(env.stderr, "undercool record: "+forwardStored(fw, records.newResults(), 10*time.Second))
		}
		if runErr == nil && err != nil {
			return exitError{1}
		}
	}
	return runErr
}

// recording follows one record run: it prints events and progress to
// stderr, the verdict of each finished sample (and of any recovered at the
// start), and the finished file's path to stdout.
type recording struct {
	env     *environ
	port    string
	mode    acquire.PortMode
	channel string // the sample's channel ("" until one starts)
	waitS   float64
	records *recordWriter
	fw      *store.Forwarder // nil: no plant database

	started  bool
	readings int     // of the sample's channel since it started
	lastC    float64 // its last valid reading, °C
	path     string  // the finished curve file
	status   feed.Status
}

func (r *recording) run(ctx context.Context, a *acquire.Acquirer, tr *sample.Tracker, startNow bool) error {
	runCtx, cancel := context.WithCancel(ctx)
	defer cancel()
	sess := session.New(a, tr, session.Options{Finished: r.finished})
	errc := make(chan error, 1)
	go func() { errc <- a.Run(runCtx) }()
	go sess.Run()
	if startNow {
		ch := r.channel
		if ch == "" {
			ch = "1"
		}
		sess.Start(ch)
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
	updates := sess.Updates()
	for updates != nil {
		select {
		case u, ok := <-updates:
			if !ok {
				updates = nil
				break
			}
			r.update(u)
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
	case strings.HasSuffix(r.path, ".partial.csv"):
		return fmt.Errorf("the curve file could not be completed (the reason is above); the readings are kept in %s and are recovered at the next start", r.path)
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

// finished is given each finished sample by the session (on its
// goroutine): it is stored.
func (r *recording) finished(f sample.Finished) {
	if r.records != nil {
		r.records.Finished(f)
	}
}

// verdict says a finished sample's verdict.
func (r *recording) verdict(f sample.Finished) {
	fmt.Fprintf(r.env.stderr, "undercool record: %s: verdict %s", filepath.Base(f.Path), f.Record.Verdict)
	for _, why := range f.Record.Reasons {
		fmt.Fprintf(r.env.stderr, "; %s", escape.Line(why))
	}
	fmt.Fprintln(r.env.stderr, " (advice only: follow the shop's written procedures)")
}

func (r *recording) update(u sample.Update) {
	r.status = u.Status
	for _, e := range u.Events {
		if e.Kind == sample.EventStarted && !r.started && (r.channel == "" || e.Channel == r.channel) {
			r.started, r.channel = true, e.Channel
		}
		if e.Text != "" {
			fmt.Fprintf(r.env.stderr, "undercool record: %s\n", escape.Line(e.Text))
		}
	}
	for _, f := range u.Finished {
		r.verdict(f)
		if !f.Recovered && f.Channel == r.channel {
			r.path = f.Path
		}
	}
	for _, sn := range u.Channels {
		if r.started && sn.Channel == r.channel {
			r.readings = len(sn.T)
			if sn.HasLast && sn.Last.Valid() {
				r.lastC = sn.Last.TempC
			}
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
	state := "recording"
	if !s.Channels[r.channel].Recording {
		state = "done"
	}
	plant := ""
	if r.fw != nil {
		plant = "; " + escape.Line(r.fw.Status().String())
	}
	fmt.Fprintf(r.env.stderr, "undercool record: %s, %s: channel %s %s; %d readings, %.1f °C, %d faults%s\n",
		r.port, conn, r.channel, state, r.readings, r.lastC, s.Faults, plant)
}

// noSample explains why no sample started in --wait-s. When most lines
// were garbage the hint is the line settings, even if a few garbage lines
// happened to read as numbers: text read at the wrong baud rate is mostly
// garbage, with now and then a line of digits.
func (r *recording) noSample() error {
	s := r.status
	settings := fmt.Sprintf("%d baud, %s", r.mode.Baud, r.mode.Frame())
	switch {
	case s.Lines == 0 && s.Partial == 0 && s.Overlong == 0:
		return fmt.Errorf("no data from %s in %g s: is the amplifier on, connected and sending? (check the cable, --baud and --frame; read at %s)", r.port, r.waitS, settings)
	case s.Readings == 0:
		return fmt.Errorf("only garbage from %s at %s in %g s (%d lines, last %s): check --baud and --frame", r.port, settings, r.waitS, s.Garbage, s.LastGarbage)
	case s.Garbage > s.Readings:
		return fmt.Errorf("mostly garbage from %s at %s in %g s (%d garbage lines, %d readings, last %s): check --baud and --frame",
			r.port, settings, r.waitS, s.Garbage, s.Readings, s.LastGarbage)
	}
	return fmt.Errorf("no pour seen on %s in %g s (%d readings); --start records without waiting for the pour", r.port, r.waitS, s.Readings)
}
