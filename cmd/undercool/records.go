package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"slices"
	"strings"
	"sync"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/mailbox"
	"github.com/undercool-foundry/undercool/internal/sample"
	"github.com/undercool-foundry/undercool/internal/store"
	"github.com/undercool-foundry/undercool/tui"
)

// recordWriter is the one place samples go into the records database:
// every command that stores (analyze --store, record, monitor and demo,
// on the screen or in lines) hands its analysed curve files to one. It
// writes on a goroutine of its own, in order, so that the live session
// never waits on the database; List (the dashboard's history) waits for
// what was handed over before it; Close waits for everything, and the
// database is closed only after it. The writes run on a context that an
// interrupt does not cancel: a sample handed over is stored.
//
// Its use of the store is these few calls (Put, History, Path, Close), in
// this file only, so that it can move onto another records back end.
type recordWriter struct {
	db   *store.DB
	read func(string) (*curvefile.Curve, error) // reads a curve file for its metadata (default curvefile.ReadFile)
	ctx  context.Context
	jobs *mailbox.Box[writeJob]
	done chan struct{}

	mu      sync.Mutex
	closed  bool
	counts  map[store.PutOutcome]int
	errs    []error // every sample not stored
	unread  []error // failures not yet said by List
	onError func(error)
	// stored, when set (before the first Add), hears of each sample
	// stored, on the writer's goroutine: the plant forwarder's Kick.
	stored func()
}

// writeJob is one curve file to store with its record, or (flushed) a
// marker that everything before it is written.
type writeJob struct {
	path    string
	rec     assess.Record
	flushed chan struct{}
}

// newRecordWriter starts the writer of db. onError, if set, hears of each
// sample that could not be stored, on the writer's goroutine (a log; the
// commands that print say them after Close, from Errors).
func newRecordWriter(ctx context.Context, db *store.DB, onError func(error)) *recordWriter {
	w := &recordWriter{db: db, read: curvefile.ReadFile, ctx: context.WithoutCancel(ctx), jobs: mailbox.New[writeJob](), done: make(chan struct{}),
		counts: map[store.PutOutcome]int{}, onError: onError}
	go w.run()
	return w
}

// Add hands over one analysed curve file; it never blocks.
func (w *recordWriter) Add(path string, rec assess.Record) {
	w.jobs.Push(writeJob{path: path, rec: rec})
}

// Finished hands over a finished sample (the session's Options.Finished).
func (w *recordWriter) Finished(f sample.Finished) { w.Add(f.Path, f.Record) }

func (w *recordWriter) run() {
	defer close(w.done)
	var jobs []writeJob
	for range w.jobs.Ready() {
		jobs = w.jobs.Take(jobs)
		for _, j := range jobs {
			switch {
			case j.flushed != nil:
				close(j.flushed)
				if j.path == "close" {
					return
				}
			default:
				w.put(j.path, j.rec)
			}
		}
	}
}

func (w *recordWriter) put(path string, rec assess.Record) {
	err := func() error {
		if path == "" {
			return errors.New("the sample has no curve file")
		}
		if strings.HasSuffix(path, ".partial.csv") {
			// its file could not be completed: stored once it is
			// recovered, at the next start, under its own name
			return fmt.Errorf("%s: the curve file could not be completed; it is recovered and stored at the next start", path)
		}
		c, err := w.read(path) // for the metadata; the analysis is rec
		if err != nil {
			return err
		}
		s := sampleFromCurve(path, c, rec)
		if s.CurveSHA256, err = store.HashFile(path); err != nil {
			return err
		}
		_, outcome, err := w.db.Put(w.ctx, s)
		if err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		w.mu.Lock()
		w.counts[outcome]++
		w.mu.Unlock()
		if w.stored != nil {
			w.stored()
		}
		return nil
	}()
	if err == nil {
		return
	}
	err = fmt.Errorf("not stored: %w", err)
	w.mu.Lock()
	w.errs = append(w.errs, err)
	w.unread = append(w.unread, err)
	w.mu.Unlock()
	if w.onError != nil {
		w.onError(err)
	}
}

// flush waits until everything handed over before it is written, or ctx
// ends.
func (w *recordWriter) flush(ctx context.Context) error {
	j := writeJob{flushed: make(chan struct{})}
	w.jobs.Push(j)
	select {
	case <-j.flushed:
		return nil
	case <-w.done:
		return nil
	case <-ctx.Done():
		return ctx.Err()
	}
}

// List implements tui.Records: the latest result of each sample, newest
// first, once the samples handed over are written. A sample that could not
// be stored since the last List is said in its error.
func (w *recordWriter) List(ctx context.Context, alloy string, n int) ([]tui.Entry, error) {
	if err := w.flush(ctx); err != nil {
		return nil, err
	}
	rows, err := w.db.History(ctx, store.Filter{Alloy: alloy, Limit: n, Full: true})
	if err != nil {
		return nil, err
	}
	out := make([]tui.Entry, 0, len(rows))
	for _, r := range rows {
		sm := r.Sample
		var meta sample.Meta
		for _, kv := range [][2]string{{"sample", sm.Sample}, {"ladle", sm.Ladle}, {"alloy", sm.Alloy}, {"operator", sm.Operator},
			{"furnace", sm.Furnace}, {"note", sm.Note}} {
			meta = meta.With(kv[0], kv[1])
		}
		out = append(out, tui.Entry{ID: sm.ID, At: sm.Recorded, Channel: sm.Channel, Path: sm.CurvePath, Record: r.Result.Record, Meta: meta, Simulated: sm.Simulated})
	}
	w.mu.Lock()
	unread := w.unread
	w.unread = nil
	w.mu.Unlock()
	return out, errors.Join(unread...)
}

// Close waits until everything handed over is written and stops the
// writer; it reports the samples that could not be stored. The database
// stays open (its owner closes it after).
func (w *recordWriter) Close() error {
	w.mu.Lock()
	if w.closed {
		w.mu.Unlock()
		return nil
	}
	w.closed = true
	w.mu.Unlock()
	j := writeJob{path: "close", flushed: make(chan struct{})}
	w.jobs.Push(j)
	<-w.done
	if n := len(w.Errors()); n > 0 {
		return fmt.Errorf("%d sample(s) not stored in %s", n, w.db.Path())
	}
	return nil
}

// Errors are the samples that could not be stored, why.
func (w *recordWriter) Errors() []error {
	w.mu.Lock()
	defer w.mu.Unlock()
	return append([]error(nil), w.errs...)
}

// newResults is how many results were stored (new samples and new
// results of samples already there).
func (w *recordWriter) newResults() int {
	w.mu.Lock()
	defer w.mu.Unlock()
	return w.counts[store.PutNewSample] + w.counts[store.PutNewResult]
}

// summary says what was stored, for analyze --store and record.
func (w *recordWriter) summary() string {
	w.mu.Lock()
	defer w.mu.Unlock()
	return fmt.Sprintf("stored in %s: %d new samples, %d new results (earlier results kept), %d unchanged, %d not stored",
		w.db.Path(), w.counts[store.PutNewSample], w.counts[store.PutNewResult], w.counts[store.PutUnchanged], len(w.errs))
}

// sampleFromCurve fills a store.Sample from a curve file's metadata (keys
// sample, ladle, furnace, operator, channel, thermocouple, note, started,
// simulated, interrupted; a two-thermocouple cup's tc_wall_channel and
// radii) and its record; the hash is left to the caller.
func sampleFromCurve(path string, c *curvefile.Curve, rec assess.Record) store.Sample {
	s := store.Sample{
		Sample: c.Get("sample"), Ladle: c.Get("ladle"), Alloy: rec.Alloy, Furnace: c.Get("furnace"),
		Operator: c.Get("operator"), Channel: c.Get("channel"), Thermocouple: c.Get("thermocouple"),
		Note: c.Get("note"), CurvePath: path, Record: rec, LimitsVersion: rec.LimitsVersion,
		Simulated:   metaTrue(c.Get("simulated")),
		Interrupted: metaTrue(c.Get("interrupted")),
	}
	if s.Alloy == "" {
		s.Alloy = c.Get("alloy")
	}
	s.WallChannel, s.CentreRadiusMm, s.WallRadiusMm = thermocouplesOf(c)
	if t, err := time.Parse(time.RFC3339Nano, c.Get("started")); err == nil {
		s.Recorded = t
	} else if st, err := os.Stat(path); err == nil {
		s.Recorded = st.ModTime() // no start time in the file: when it was last written
	}
	return s
}

func metaTrue(v string) bool {
	switch strings.ToLower(strings.TrimSpace(v)) {
	case "true", "yes", "1":
		return true
	}
	return false
}

// thermocouplesOf is what a curve file says of a cup with two
// thermocouples, for its stored sample (docs/curve-files.md, "Two
// thermocouples in one cup"): the wall thermocouple's channel and the two
// radii (the centre one on the axis unless the file says otherwise; the
// wall one nil when not given). A file with one thermocouple (no wall
// column, no tc_wall_channel) has none.
func thermocouplesOf(c *curvefile.Curve) (wall string, centreMm, wallMm *float64) {
	hasColumn := slices.ContainsFunc(c.Extra, func(col curvefile.Column) bool { return strings.EqualFold(col.Name, curvefile.ColumnWall) })
	p, err := curvefile.PairOf(c.Meta)
	if err != nil || !hasColumn && p.WallChannel == "" {
		return "", nil, nil
	}
	centreMm = &p.CentreMm
	if p.WallMm > 0 {
		wallMm = &p.WallMm
	}
	return p.WallChannel, centreMm, wallMm
}
