package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"sync"
	"time"

	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/store"
)

func init() {
	register(command{
		name:    "sync",
		summary: "forward this deck's queued samples to the plant database; say what is queued",
		run:     runSync,
	})
	register(command{
		name:    "import",
		summary: "copy a records file's samples into the plant database (or another records database), once each",
		run:     runImport,
	})
	register(command{
		name:    "migrate",
		summary: "bring a records database's schema up to date (the plant database: as its owner role)",
		run:     runMigrate,
	})
}

const syncUsage = `usage: undercool sync [--db PATH] [--plant postgres://…] [--status | --watch] [--site S] [--deck D]

A deck stores every sample in its own file first (--db PATH, else
$UNDERCOOL_DB, else the user's data directory) and queues it for the plant
database (--plant, else $UNDERCOOL_PLANT). sync forwards what is queued now,
oldest first, and says what is left; a sample already at the plant is not
stored twice. --status only says what is queued and whether the plant
database can be reached. --watch keeps forwarding until interrupted,
printing each change of the link. Samples stored without a site or deck
get --site and --deck (else $UNDERCOOL_SITE, $UNDERCOOL_DECK) on the way.
The password comes from $PGPASSWORD or ~/.pgpass, never the command line;
see docs/plant-database.md. Exit status 1 when something stays queued
because the plant database cannot be reached.
`

func runSync(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("sync", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprint(env.stderr, syncUsage); fs.PrintDefaults() }
	dbFlag := fs.String("db", "", "this deck's records file `PATH` (default $UNDERCOOL_DB or the user's data directory)")
	plantFlag := fs.String("plant", "", "the plant database's postgres:// `connection string` (default $UNDERCOOL_PLANT)")
	status := fs.Bool("status", false, "only say what is queued and whether the plant database can be reached")
	watch := fs.Bool("watch", false, "keep forwarding until interrupted")
	site := fs.String("site", "", "`site` of samples stored without one (default $UNDERCOOL_SITE)")
	deck := fs.String("deck", "", "melt `deck` of samples stored without one (default $UNDERCOOL_DECK)")
	if help, err := parseNoArgs(fs, env, args); help || err != nil {
		return err
	}
	if *status && *watch {
		fmt.Fprintln(env.stderr, "undercool sync: give --status or --watch, not both")
		return errUsage
	}
	local, err := openDeckFile(ctx, env, *dbFlag, *site, *deck)
	if err != nil {
		return err
	}
	defer local.Close()
	plant := *plantFlag
	if plant == "" {
		plant = env.getenv("UNDERCOOL_PLANT")
	}
	q, err := local.Queued(ctx)
	if err != nil {
		return err
	}
	fmt.Fprintf(env.stdout, "%s: %s\n", local.Path(), queueText(q))
	if plant == "" {
		fmt.Fprintln(env.stdout, "no plant database is set (--plant or $UNDERCOOL_PLANT): the samples stay queued here")
		if *status {
			return nil
		}
		return exitError{1}
	}
	if *watch {
		return watchForwarding(ctx, env, local, plant)
	}
	pdb, err := store.Open(ctx, plant)
	if err != nil {
		if *status {
			fmt.Fprintf(env.stdout, "the plant database cannot be reached: %s\n", escape.Text(err.Error()))
			return exitError{1}
		}
		return fmt.Errorf("nothing forwarded, %s: %w", queueText(q), err)
	}
	defer pdb.Close()
	if *status {
		fmt.Fprintf(env.stdout, "the plant database %s can be reached\n", pdb.Path())
		return nil
	}
	sent, err := store.Forward(ctx, local, pdb, func(s store.Sent) {
		fmt.Fprintf(env.stderr, "undercool sync: %d results forwarded…\n", s.Results)
	})
	left, qerr := local.Queued(ctx)
	if qerr != nil {
		return qerr
	}
	fmt.Fprintf(env.stdout, "forwarded %d results to %s (%d new there, %d there already); %s\n",
		sent.Results, pdb.Path(), sent.New, sent.Results-sent.New, queueText(left))
	if err != nil {
		return err
	}
	return nil
}

// queueText says what an outbox holds.
func queueText(q store.Queue) string {
	if q.Results == 0 {
		return "nothing queued"
	}
	return fmt.Sprintf("%d results of %d samples queued (the oldest since %s)", q.Results, q.Samples,
		q.Oldest.Local().Format("2006-01-02 15:04"))
}

// openDeckFile opens this deck's own records file (never the plant
// database) with its site and deck.
func openDeckFile(ctx context.Context, env *environ, dbFlag, site, deck string) (*store.DB, error) {
	path, err := recordsPath(env, dbFlag)
	if err != nil {
		return nil, err
	}
	if store.IsServer(path) {
		return nil, errors.New("--db (or $UNDERCOOL_DB) names a PostgreSQL database; here it is this deck's own file, and the plant database is --plant (or $UNDERCOOL_PLANT)")
	}
	return openAt(ctx, env, path, site, deck)
}

// startForwarding forwards a deck's queued samples to the plant database
// in the background until ctx ends (see store.Forwarder); the returned
// stop ends it and waits. record and the dashboard show
// fw.Status().String() as the link's state and call fw.Kick() after each
// stored sample.
func startForwarding(ctx context.Context, local *store.DB, plant string) (fw *store.Forwarder, stop func()) {
	fw = store.NewForwarder(local, plant)
	ctx, cancel := context.WithCancel(ctx)
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		fw.Run(ctx)
	}()
	return fw, func() { cancel(); wg.Wait() }
}

// deckForwarding starts forwarding db's queue to the plant database in
// the background when one is set (plantFlag, else $UNDERCOOL_PLANT) and db
// is a deck's own file, as record and the dashboard do; fw is nil when
// there is nothing to forward to. The forwarding runs on after ctx is
// interrupted, until stop: what a deck stores is sent up if it can be.
func deckForwarding(ctx context.Context, env *environ, db *store.DB, plantFlag string) (fw *store.Forwarder, stop func()) {
	plant := plantFlag
	if plant == "" {
		plant = env.getenv("UNDERCOOL_PLANT")
	}
	if plant == "" || store.IsServer(db.Path()) {
		return nil, func() {}
	}
	return startForwarding(context.WithoutCancel(ctx), db, plant)
}

// forwardStored waits, up to limit, until the forwarder has sent the
// results stored (the count since it started) or finds the link down; it
// returns the link's status in words. A link already known to be down is
// not waited for: the results stay queued and go up later.
func forwardStored(fw *store.Forwarder, stored int, limit time.Duration) string {
	fw.Kick()
	if st := fw.Status(); !st.Up && !st.Since.IsZero() {
		return escape.Line(st.String())
	}
	deadline := time.NewTimer(limit)
	defer deadline.Stop()
	for {
		ch := fw.Changed()
		st := fw.Status()
		if st.Up && st.Queued == 0 && st.Sent >= stored || !st.Up && !st.Since.IsZero() {
			return escape.Line(st.String())
		}
		select {
		case <-ch:
		case <-deadline.C:
			return escape.Line(fw.Status().String())
		}
	}
}

// logLink writes each change of the link's state to the log (the
// dashboard's), until ctx ends.
func logLink(ctx context.Context, fw *store.Forwarder, logger interface{ Print(...any) }) {
	last := ""
	for {
		ch := fw.Changed()
		if s := fw.Status().String(); s != last {
			logger.Print(escape.Line(s))
			last = s
		}
		select {
		case <-ctx.Done():
			return
		case <-ch:
		}
	}
}

// watchForwarding is sync --watch: forwarding in the background, each
// change of the link printed, until interrupted.
func watchForwarding(ctx context.Context, env *environ, local *store.DB, plant string) error {
	fw, stop := startForwarding(ctx, local, plant)
	defer stop()
	last := ""
	for {
		ch := fw.Changed()
		if s := fw.Status().String(); s != last {
			fmt.Fprintln(env.stdout, escape.Line(s))
			last = s
		}
		select {
		case <-ctx.Done():
			return nil
		case <-ch:
		}
	}
}

const importUsage = `usage: undercool import FILE.db... [--db postgres://…|PATH] [--site S] [--deck D]

Copies every sample and every result of each records FILE (an undercool
SQLite file: a deck's history from before it was linked, or an archive)
into the records database --db (else $UNDERCOOL_DB): the plant database,
usually. Each sample and result is stored once, by the id that is the same
on every copy, so importing a file again, or one whose samples were
forwarded already, adds nothing. Samples without a site or deck get
--site and --deck. A FILE of an earlier undercool is brought up to this
version's schema first, as every undercool command does.
`

func runImport(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("import", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprint(env.stderr, importUsage); fs.PrintDefaults() }
	dbFlag := fs.String("db", "", "the records database to copy into: the plant database's postgres:// `connection string`, or a file (default $UNDERCOOL_DB)")
	site := fs.String("site", "", "`site` of samples stored without one")
	deck := fs.String("deck", "", "melt `deck` of samples stored without one")
	files, err := parseLimitsArgs(fs, args) // flags before or after the files
	if err != nil {
		if err == flag.ErrHelp {
			return nil
		}
		return errUsage
	}
	if len(files) == 0 {
		fmt.Fprint(env.stderr, importUsage)
		return errUsage
	}
	origin := store.Origin{Site: *site, Deck: *deck}
	if err := store.CheckOrigin(origin); err != nil {
		return err
	}
	to, err := openRecords(ctx, env, *dbFlag)
	if err != nil {
		return err
	}
	defer to.Close()
	failed := 0
	for _, f := range files {
		if store.IsServer(f) {
			return fmt.Errorf("import copies from records files; %q is a database server (give it as --db)", "postgres://…")
		}
		from, err := readRecords(ctx, env, f)
		if err != nil {
			fmt.Fprintf(env.stderr, "undercool import: %s\n", escape.Text(err.Error()))
			failed++
			continue
		}
		sent, err := store.Import(ctx, from, to, origin, nil)
		from.Close()
		fmt.Fprintf(env.stdout, "%s: %d results copied to %s, %d of them new there\n", f, sent.Results, to.Path(), sent.New)
		if err != nil {
			fmt.Fprintf(env.stderr, "undercool import: %s: %s (what was copied before it is kept; run the import again)\n", escape.Line(f), escape.Text(err.Error()))
			failed++
		}
	}
	if failed > 0 {
		return exitError{1}
	}
	return nil
}

const migrateUsage = `usage: undercool migrate [--db postgres://…|PATH]

Brings the records database's schema up to date and says its version. A
deck's file is brought up to date by every undercool command that opens
it; the plant database only by its owner role (docs/plant-database.md),
so the plant's IT runs this after installing a new undercool, before the
decks are updated (decks of the previous version go on writing).
`

func runMigrate(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("migrate", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprint(env.stderr, migrateUsage); fs.PrintDefaults() }
	dbFlag := fs.String("db", "", dbFlagHelp)
	if help, err := parseNoArgs(fs, env, args); help || err != nil {
		return err
	}
	path, err := recordsPath(env, *dbFlag)
	if err != nil {
		return err
	}
	db, err := store.Open(ctx, path)
	if err != nil {
		return err
	}
	defer db.Close()
	v, err := db.Version(ctx)
	if err != nil {
		return err
	}
	fmt.Fprintf(env.stdout, "%s: schema version %d, up to date\n", db.Path(), v)
	return nil
}
