package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"log"
	"os"
	"path/filepath"
	"sync"

	"github.com/charmbracelet/x/term"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/session"
	"github.com/undercool-foundry/undercool/internal/store"
	"github.com/undercool-foundry/undercool/tui"
)

func init() {
	register(command{
		name:    "monitor",
		summary: "the live dashboard on a real amplifier (serial port)",
		run:     runMonitor,
	})
}

func runMonitor(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("monitor", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	port := fs.String("port", "", "serial port of the amplifier, e.g. /dev/ttyUSB0 (required)")
	mode := acquire.DefaultPortMode
	addPortFlags(fs, &mode)
	var cfg acquire.Config
	addEMFFlags(fs, &cfg)
	data := fs.String("data", "", "data directory for curve files and the log (default: the records database's directory)")
	dbPath := fs.String("db", "", "records database (default: $UNDERCOOL_DB, else the user's data directory; with --data, DIR/undercool.db)")
	limitsPath := fs.String("limits", "", "limits file (default: the built-in examples)")
	plant := fs.String("plant", "", "the plant database's postgres:// `connection string` stored samples are forwarded to (default $UNDERCOOL_PLANT; none: they stay queued in the deck's file)")
	cupf := addCupFlags(fs)
	fs.Usage = func() {
		fmt.Fprintln(env.stderr, "usage: undercool monitor --port PATH [--baud N] [--frame 8N1] [--tc K] [--cj C] [--data DIR] [--db PATH] [--limits FILE]")
		fmt.Fprintln(env.stderr, "        [--wall-channel [CENTRE:]WALL --wall-radius-mm R [--centre-radius-mm R]]")
		fs.PrintDefaults()
	}
	if help, err := parseFlags(fs, args); help || err != nil {
		return err
	}
	if *port == "" || fs.NArg() > 0 {
		fmt.Fprintln(env.stderr, "undercool monitor: --port is required (and no other arguments)")
		return errUsage
	}
	if err := mode.Check(); err != nil {
		return fmt.Errorf("--baud/--frame: %w", err)
	}
	cfg.Port = *port
	cups, err := cupf.cups("")
	if err != nil {
		return err
	}
	cfg.Cups = cups
	dir, db := *data, *dbPath
	if db == "" && dir == "" {
		p, err := store.DefaultPath(env.getenv)
		if err != nil {
			return err
		}
		db = p
	}
	if dir == "" {
		dir = filepath.Dir(db)
	}
	return runDashboard(ctx, env, dashboard{
		dir: dir, db: db, limitsPath: *limitsPath, title: "monitor · " + *port,
		open: acquire.SerialOpener(*port, mode), cfg: cfg, forward: true, plant: *plant,
	})
}

// dashboard is one live session: a source of lines, the acquirer over it,
// the records and the screen (or lines when there is no terminal).
type dashboard struct {
	dir        string
	db         string // records database; "" is DIR/undercool.db
	limitsPath string
	title      string
	open       acquire.Opener
	cfg        acquire.Config
	maxSamples int // lines mode: stop after this many samples (0: no limit)
	// feed, when set, runs beside the acquirer (the simulated deck) until
	// the session ends.
	feed func(ctx context.Context) error
	// forward: stored samples are forwarded to the plant database, plant
	// or else $UNDERCOOL_PLANT, when one is set (a real deck, not the demo)
	forward bool
	plant   string
}

// isTerminal reports whether both ends are a terminal.
func isTerminal(env *environ) bool {
	in, ok1 := env.stdin.(*os.File)
	out, ok2 := env.stdout.(*os.File)
	return ok1 && ok2 && term.IsTerminal(in.Fd()) && term.IsTerminal(out.Fd())
}

func runDashboard(ctx context.Context, env *environ, d dashboard) error {
	curves := filepath.Join(d.dir, "curves")
	if err := os.MkdirAll(curves, 0o755); err != nil {
		return fmt.Errorf("data directory: %w", err)
	}
	logf, err := os.OpenFile(filepath.Join(d.dir, "undercool.log"), os.O_CREATE|os.O_APPEND|os.O_WRONLY, 0o644)
	if err != nil {
		return fmt.Errorf("log file: %w", err)
	}
	defer logf.Close()
	book, saver, err := loadLimits(d.limitsPath)
	if err != nil {
		return err
	}
	dbPath := d.db
	if dbPath == "" {
		dbPath = filepath.Join(d.dir, "undercool.db")
	}
	db, err := store.Open(ctx, dbPath)
	if err != nil {
		return err
	}
	defer db.Close()

	// One way: port → acquirer → tracker (the session) → screen, and
	// finished samples → the store writer. The acquisition runs until the
	// screen returns; the session then hands on what the acquirer completed
	// as it stopped, and the writer stores it all before the database is
	// closed.
	d.cfg.Dir = curves
	acq := acquire.New(d.open, d.cfg)
	logger := log.New(logf, "", log.LstdFlags)
	records := newRecordWriter(ctx, db, func(err error) { logger.Print(err) })
	var plant tui.PlantWatch
	if d.forward {
		fw, stopFw := deckForwarding(ctx, env, db, d.plant)
		defer stopFw() // before the database closes
		if fw != nil {
			records.stored = fw.Kick
			plant = plantWatch(fw) // the dashboard shows the link and logs its changes
			if !isTerminal(env) {
				lctx, stopLog := context.WithCancel(context.WithoutCancel(ctx))
				defer stopLog()
				go logLink(lctx, fw, logger)
			}
		}
	}
	sess := session.New(acq, sample.New(sample.Config{Limits: book}), session.Options{Finished: records.Finished})
	acqCtx, stopAcq := context.WithCancel(context.WithoutCancel(ctx))
	defer stopAcq()
	var wg sync.WaitGroup
	var acqErr error
	wg.Go(func() {
		if acqErr = acq.Run(acqCtx); acqErr != nil {
			logger.Printf("acquisition stopped: %v", acqErr)
		}
	})
	wg.Go(sess.Run)
	if d.feed != nil {
		wg.Go(func() {
			if err := d.feed(acqCtx); err != nil && !errors.Is(err, context.Canceled) {
				logger.Printf("feed: %v", err)
			}
		})
	}
	opt := tui.Options{
		Feed: sess, Title: d.title, Limits: book, SaveLimits: saver,
		Records: records, ReadCurve: curvefile.ReadFile, Log: logf, Advise: tui.ForecastAdvice, Plant: plant,
	}
	if isTerminal(env) {
		err = tui.Run(ctx, opt, env.stdin, env.stdout)
	} else {
		err = tui.Lines(ctx, opt, env.stdout, d.maxSamples)
	}
	stopAcq()
	wg.Wait()
	if werr := records.Close(); werr != nil {
		logger.Print(werr)
		err = cmpOr(err, werr)
	}
	if err != nil {
		return err
	}
	if acqErr != nil && !errors.Is(acqErr, context.Canceled) {
		return acqErr
	}
	return nil
}

func cmpOr(a, b error) error {
	if a != nil {
		return a
	}
	return b
}

// loadLimits reads the limits file, or takes the built-in examples (which
// cannot be saved back).
func loadLimits(path string) (*limits.Book, tui.LimitsSaver, error) {
	if path == "" {
		return limits.Builtin(), nil, nil
	}
	b, err := limits.Load(path)
	if err != nil {
		return nil, nil, err
	}
	return b, limitsSaver(path), nil
}

// limitsSaver saves an edited book to path with limits.Save (backup and
// change log beside it).
func limitsSaver(path string) tui.LimitsSaver {
	return func(_ context.Context, b *limits.Book) (string, error) {
		if err := limits.Save(path, b); err != nil {
			return "", err
		}
		return path, nil
	}
}
