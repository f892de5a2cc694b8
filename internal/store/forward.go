package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"strings"
	"sync"
	"time"
)

// Forwarding: a deck writes every sample to its own SQLite file first;
// each result written there joins the file's outbox (table outbox), and is
// sent to the plant database from there, oldest first, in batches of one
// transaction each. A batch leaves the outbox only after the plant
// database has committed it, and every sample and result goes in by its
// uid (a row already there is left as it is), so a deck killed between
// the two, a link that drops mid-batch or a batch sent twice stores each
// row once. Samples stored without a site or deck get the deck's Origin on
// the way.

// Queue is what waits in a SQLite file's outbox.
type Queue struct {
	Results int       // results not yet forwarded
	Samples int       // the samples they belong to
	Oldest  time.Time // when the oldest of them was queued (zero: none)
}

// Queued reports the outbox (always empty for PostgreSQL, which forwards
// nowhere).
func (db *DB) Queued(ctx context.Context) (Queue, error) {
	var q Queue
	if db.pg {
		return q, nil
	}
	var oldest sql.NullString
	err := db.sql.QueryRowContext(ctx, `SELECT count(*), count(DISTINCT r.sample_id), min(o.queued_at)
		FROM outbox o JOIN results r ON r.id = o.result_id`).Scan(&q.Results, &q.Samples, &oldest)
	if err != nil {
		return q, db.fail("reading the outbox of", err)
	}
	if oldest.Valid {
		q.Oldest, err = parseTime(oldest.String)
	}
	return q, err
}

// copyRow is one result and its sample as read for another database, with
// the record's JSON exactly as stored.
type copyRow struct {
	Entry
	js []byte
}

// readCopies reads up to n results with their samples, oldest first: the
// outbox's (outbox true), or every result after result id after.
func (db *DB) readCopies(ctx context.Context, outbox bool, after int64, n int) ([]copyRow, error) {
	q := "SELECT " + fullColumns + " FROM samples s JOIN results r ON r.sample_id = s.id WHERE r.id > ? ORDER BY r.id LIMIT ?"
	if outbox {
		q = "SELECT " + fullColumns + " FROM outbox o JOIN results r ON r.id = o.result_id JOIN samples s ON s.id = r.sample_id WHERE r.id > ? ORDER BY r.id LIMIT ?"
	}
	rows, err := db.sql.QueryContext(ctx, db.q(q), after, n)
	if err != nil {
		return nil, db.fail("reading", err)
	}
	defer rows.Close()
	var out []copyRow
	sc := newScanner(true)
	for rows.Next() {
		var c copyRow
		if err := sc.scan(rows, &c.Entry); err != nil {
			return nil, db.fail("reading", err)
		}
		c.js = []byte(sc.record.String)
		out = append(out, c)
	}
	if err := rows.Err(); err != nil {
		return nil, db.fail("reading", err)
	}
	return out, nil
}

// receive stores copies of results and their samples from another
// database in one transaction: each sample and result once, by uid; a
// sample without a site or deck gets origin's. It returns how many
// results were new here.
func (db *DB) receive(ctx context.Context, rows []copyRow, origin Origin) (int, error) {
	added := 0
	err := db.write(ctx, "storing forwarded samples in", func(tx *sql.Tx) error {
		w, err := db.newWriter(ctx, tx)
		if err != nil {
			return err
		}
		defer w.Close()
		for _, c := range rows {
			s, r := c.Sample, c.Result
			s.ID, r.ID, r.SampleID = 0, 0, 0
			if s.Site == "" && s.Deck == "" {
				s.Site, s.Deck = origin.Site, origin.Deck
			}
			if s.UID == "" || r.UID == "" {
				return fmt.Errorf("sample %q: a row without a uid cannot be copied", s.Sample)
			}
			ok, err := w.put(ctx, &s, &r, c.js, false)
			if err != nil {
				return fmt.Errorf("sample %q (uid %s): %w", s.Sample, s.UID, err)
			}
			if ok {
				added++
			}
		}
		return nil
	})
	return added, err
}

// dequeue takes forwarded results out of the outbox.
func (db *DB) dequeue(ctx context.Context, rows []copyRow) error {
	return db.write(ctx, "emptying the outbox of", func(tx *sql.Tx) error {
		st, err := tx.PrepareContext(ctx, `DELETE FROM outbox WHERE result_id = ?`)
		if err != nil {
			return err
		}
		defer st.Close()
		for _, c := range rows {
			if _, err := st.ExecContext(ctx, c.Result.ID); err != nil {
				return err
			}
		}
		return nil
	})
}

// Sent counts what a forward or an import did.
type Sent struct {
	Results int // results sent
	New     int // of them, new where they went (the rest were there already)
}

// forwardBatch is how many results go in one transaction.
const forwardBatch = 200

// Forward sends local's outbox to plant, oldest first, a batch at a time,
// until the outbox is empty, and reports what it sent; progress, when not
// nil, is called after each batch. On an error, what was sent before it
// is out of the outbox and the rest stays queued.
func Forward(ctx context.Context, local, plant *DB, progress func(Sent)) (Sent, error) {
	var total Sent
	if local.pg {
		return total, errors.New("store: forwarding is from a deck's SQLite file")
	}
	for {
		rows, err := local.readCopies(ctx, true, 0, forwardBatch)
		if err != nil || len(rows) == 0 {
			return total, err
		}
		n, err := plant.receive(ctx, rows, local.origin)
		if err != nil {
			return total, err
		}
		if err := local.dequeue(ctx, rows); err != nil {
			return total, err
		}
		total.Results += len(rows)
		total.New += n
		if progress != nil {
			progress(total)
		}
	}
}

// Import copies every sample and every result of from (a SQLite file, an
// earlier deck's history say) into to, oldest first, each once by uid:
// importing the same file again adds nothing. Samples without a site or
// deck get origin's. from's outbox is left as it is.
func Import(ctx context.Context, from, to *DB, origin Origin, progress func(Sent)) (Sent, error) {
	var total Sent
	var after int64
	for {
		rows, err := from.readCopies(ctx, false, after, forwardBatch)
		if err != nil || len(rows) == 0 {
			return total, err
		}
		n, err := to.receive(ctx, rows, origin)
		if err != nil {
			return total, err
		}
		after = rows[len(rows)-1].Result.ID
		total.Results += len(rows)
		total.New += n
		if progress != nil {
			progress(total)
		}
	}
}

// Forwarder keeps a deck's outbox flowing to the plant database in the
// background, and says how the link is (Status), for the dashboard's
// device line and record's progress.
//
//	fw := store.NewForwarder(local, plantTarget)
//	go fw.Run(ctx)            // until ctx ends
//	... after each stored sample: fw.Kick()
//	... on screen: fw.Status().String()
//
// While the plant database cannot be reached (or refuses), the results
// stay queued in the deck's file and the forwarder tries again, from 1 s
// up to every 30 s, and at once on Kick.
type Forwarder struct {
	local  *DB
	target string
	kick   chan struct{}

	// RetryMin and RetryMax bound the wait between attempts while the
	// link is down (defaults 1 s and 30 s); Poll is how often the outbox
	// is looked at while the link is up and nobody kicks (default 30 s:
	// another program may write to the same file). Set before Run.
	RetryMin, RetryMax, Poll time.Duration

	mu      sync.Mutex
	st      LinkStatus
	changed chan struct{}
}

// LinkStatus is the state of a deck's link to the plant database.
type LinkStatus struct {
	Plant  string    // the plant database, by name (never a password)
	Up     bool      // the last attempt reached it and forwarded everything
	Since  time.Time // when the link came up or went down (zero: not tried yet)
	Queued int       // results waiting in the deck's outbox
	Sent   int       // results forwarded since the forwarder started
	Err    string    // why it is down (one line, no secrets)
}

// String is the status in a few words, e.g. "plant: linked, nothing
// queued" or "plant: link down since 14:02:05 (cannot reach the server),
// 3 queued".
func (s LinkStatus) String() string {
	q := "nothing queued"
	if s.Queued > 0 {
		q = fmt.Sprintf("%d queued", s.Queued)
	}
	switch {
	case s.Since.IsZero():
		return "plant: connecting, " + q
	case s.Up:
		return "plant: linked, " + q
	}
	why := ""
	if s.Err != "" {
		why = " (" + s.Err + ")"
	}
	return fmt.Sprintf("plant: link down since %s%s, %s", s.Since.Local().Format("15:04:05"), why, q)
}

// NewForwarder makes a forwarder from local (the deck's SQLite file) to
// the plant database plantTarget (a postgres:// connection string, or
// another file); nothing is opened until Run.
func NewForwarder(local *DB, plantTarget string) *Forwarder {
	name := plantTarget
	if IsServer(plantTarget) {
		if cfg, err := pgConfig(plantTarget, func(string) string { return "" }); err == nil {
			name = pgName(cfg)
		} else {
			name = "the plant database"
		}
	}
	return &Forwarder{local: local, target: plantTarget, kick: make(chan struct{}, 1),
		RetryMin: time.Second, RetryMax: 30 * time.Second, Poll: 30 * time.Second,
		st: LinkStatus{Plant: name}, changed: make(chan struct{})}
}

// Kick asks the forwarder to forward now (a sample was stored, or the
// user asked); it never blocks.
func (f *Forwarder) Kick() {
	select {
	case f.kick <- struct{}{}:
	default:
	}
}

// Status returns the link's state now.
func (f *Forwarder) Status() LinkStatus {
	f.mu.Lock()
	defer f.mu.Unlock()
	return f.st
}

// Changed returns a channel that is closed at the next change of Status.
func (f *Forwarder) Changed() <-chan struct{} {
	f.mu.Lock()
	defer f.mu.Unlock()
	return f.changed
}

func (f *Forwarder) update(fn func(*LinkStatus)) {
	f.mu.Lock()
	defer f.mu.Unlock()
	before := f.st
	fn(&f.st)
	if f.st != before {
		close(f.changed)
		f.changed = make(chan struct{})
	}
}

// Run forwards until ctx ends, then returns ctx's error. Failures are
// never returned: they are the link's status, and the results wait.
func (f *Forwarder) Run(ctx context.Context) error {
	var plant *DB
	defer func() {
		if plant != nil {
			plant.Close()
		}
	}()
	wait := f.RetryMin
	for {
		err := f.attempt(ctx, &plant)
		now := time.Now()
		if ctx.Err() != nil {
			return ctx.Err()
		}
		if err != nil {
			if plant != nil {
				plant.Close()
				plant = nil
			}
			f.update(func(s *LinkStatus) {
				if s.Up || s.Since.IsZero() {
					s.Since = now
				}
				s.Up, s.Err = false, oneLine(err)
			})
		} else {
			wait = f.RetryMin
			f.update(func(s *LinkStatus) {
				if !s.Up {
					s.Since = now
				}
				s.Up, s.Err = true, ""
			})
		}
		pause := f.Poll
		if err != nil {
			pause = wait
			wait = min(2*wait, f.RetryMax)
		}
		t := time.NewTimer(pause)
		select {
		case <-ctx.Done():
			t.Stop()
			return ctx.Err()
		case <-f.kick:
		case <-t.C:
		}
		t.Stop()
	}
}

// attempt opens the plant database if need be and forwards the outbox.
func (f *Forwarder) attempt(ctx context.Context, plant **DB) error {
	q, err := f.local.Queued(ctx)
	if err != nil {
		return err
	}
	f.update(func(s *LinkStatus) { s.Queued = q.Results })
	if *plant == nil {
		if *plant, err = Open(ctx, f.target); err != nil {
			return err
		}
	}
	prev := 0 // Forward's running total, this attempt
	_, err = Forward(ctx, f.local, *plant, func(sent Sent) {
		left, qerr := f.local.Queued(ctx)
		f.update(func(s *LinkStatus) {
			s.Sent += sent.Results - prev
			if qerr == nil {
				s.Queued = left.Results
			}
		})
		prev = sent.Results
	})
	return err
}

// oneLine is an error's first line, at most 200 bytes.
func oneLine(err error) string {
	s, _, _ := strings.Cut(err.Error(), "\n")
	if len(s) > 200 {
		s = s[:200] + "…"
	}
	return s
}
