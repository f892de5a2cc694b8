package store

import (
	"context"
	"database/sql"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"strings"
	"time"
)

// Filter selects samples for History. Zero fields select everything.
type Filter struct {
	Site    string // where the sample was taken (plant-wide records)
	Deck    string // the melt deck there
	Alloy   string
	Ladle   string
	Furnace string
	Since   time.Time // recorded at or after
	Until   time.Time // recorded before
	Verdict string    // of the result shown
	Limit   int       // at most this many rows (0: no limit)

	// AllResults gives one row for every result of each sample, not only
	// the latest.
	AllResults bool
	// Oldest gives the oldest first (export); the default is newest first.
	Oldest bool
	// Full decodes each row's whole stored record (keys that have no
	// column of their own included) instead of building Result.Record from
	// the columns; it costs about 20 µs a row.
	Full bool
}

// Entry is one row of history: a sample and the result shown with it
// (in Result; Sample.Record and Sample.LimitsVersion are left empty).
type Entry struct {
	Sample Sample
	Result Result
}

// summaryColumns are what a history row reads; fullColumns add the rest
// of the sample and the whole record.
const (
	summaryColumns = `s.id, s.recorded_at, s.sample, s.ladle, s.alloy, s.furnace, s.operator, s.site, s.deck, s.interrupted, s.simulated,
	r.id, r.analysed_at, r.limits_version, r.verdict, r.reasons, r.problems, r.file, r.packed,
	CASE WHEN r.packed IS NULL THEN r.record END`
	fullColumns = summaryColumns + `, s.created_at, s.channel, s.thermocouple, s.note, s.curve_path, s.curve_sha256, s.uid, r.uid, r.record,
	s.tc_wall_channel, s.tc_centre_radius_mm, s.tc_wall_radius_mm`
)

// History returns the samples the filter selects, newest first unless
// f.Oldest, each with its latest result (every result with f.AllResults).
// Without f.Full, a row holds the sample's id, times, names and flags
// (not its channels, thermocouple, note or curve file) and a Result.Record
// holding every number that has a column (the characteristic points and
// times, the metallurgy figures, samples, rate), problems and verdict; keys
// the Record gained after schema version 1 are left zero. f.Full gives
// everything, decoding each stored record. For a long history,
// HistoryEach gives the same entries one by one, without the slice.
func (db *DB) History(ctx context.Context, f Filter) ([]Entry, error) {
	// count first, so that the Entries (about 1.6 kB each) go straight
	// into a slice of the right size rather than being copied as it grows
	fast, from, args := db.historyFrom(f)
	var n int
	if err := db.sql.QueryRowContext(ctx, db.q("SELECT count(*)"+from), args...).Scan(&n); err != nil {
		return nil, db.fail("reading history from", err)
	}
	if f.Limit > 0 && f.Limit < n {
		n = f.Limit
	}
	out := make([]Entry, 0, n)
	if err := db.historyEach(ctx, f, fast, from, args, func(e *Entry) error {
		out = append(out, *e)
		return nil
	}); err != nil {
		return nil, err
	}
	return out, nil
}

// HistoryEach calls fn with each entry of History in turn, and returns
// fn's first error as it is. The Entry is reused for the next one: fn may
// keep what it holds (strings, slices), not the Entry itself. A month of
// plant history (30,000 rows) needs a few MB this way, not the 48 MB of a
// slice of Entries, and no count of the rows first.
func (db *DB) HistoryEach(ctx context.Context, f Filter, fn func(*Entry) error) error {
	fast, from, args := db.historyFrom(f)
	return db.historyEach(ctx, f, fast, from, args, fn)
}

// historyFrom gives the FROM and WHERE clauses of history with their
// arguments; fast: the rows are read from the history table, one narrow
// row per sample (id, latest result id, summary).
func (db *DB) historyFrom(f Filter) (fast bool, from string, args []any) {
	fast = !f.Full && !f.AllResults
	var where []string
	for _, c := range []struct{ col, v string }{
		{"s.site", f.Site}, {"s.deck", f.Deck}, {"s.alloy", f.Alloy}, {"s.ladle", f.Ladle}, {"s.furnace", f.Furnace},
	} {
		if c.v != "" {
			where, args = append(where, c.col+" = ?"), append(args, c.v)
		}
	}
	if !f.Since.IsZero() {
		where, args = append(where, "s.recorded_at >= ?"), append(args, db.ts(f.Since))
	}
	if !f.Until.IsZero() {
		where, args = append(where, "s.recorded_at < ?"), append(args, db.ts(f.Until))
	}
	if f.Verdict != "" {
		col := "r.verdict"
		if fast {
			col = "s.latest_verdict"
		}
		where, args = append(where, col+" = ?"), append(args, f.Verdict)
	}
	from = " FROM samples s " + db.latestJoin()
	switch {
	case fast:
		from = " FROM " + db.historyTable() + " s"
		where = append(where, "s.latest_result_id IS NOT NULL")
	case f.AllResults:
		from = " FROM samples s JOIN results r ON r.sample_id = s.id"
	}
	if len(where) > 0 {
		from += " WHERE " + strings.Join(where, " AND ")
	}
	return fast, from, args
}

// historyEach runs history's query (historyFrom's clauses) for fn.
func (db *DB) historyEach(ctx context.Context, f Filter, fast bool, from string, args []any, fn func(*Entry) error) error {
	q := "SELECT " + summaryColumns
	switch {
	case fast:
		q = "SELECT s.id, s.latest_result_id, s.summary"
	case f.Full:
		q = "SELECT " + fullColumns
	}
	q += from
	switch {
	case fast && f.Oldest:
		q += " ORDER BY s.recorded_at, s.id"
	case fast:
		q += " ORDER BY s.recorded_at DESC, s.id DESC"
	case f.Oldest:
		q += " ORDER BY s.recorded_at, s.id, r.id"
	default:
		q += " ORDER BY s.recorded_at DESC, s.id DESC, r.id DESC"
	}
	if f.Limit > 0 {
		q += " LIMIT ?"
		args = append(args, f.Limit)
	}
	if fast {
		return db.historyFast(ctx, db.q(q), args, fn)
	}
	rows, err := db.sql.QueryContext(ctx, db.q(q), args...)
	if err != nil {
		return db.fail("reading history from", err)
	}
	defer rows.Close()
	sc := newScanner(f.Full)
	var e Entry
	for rows.Next() {
		e = Entry{}
		if err := sc.scan(rows, &e); err != nil {
			return db.fail("reading history from", err)
		}
		if err := fn(&e); err != nil {
			return err
		}
	}
	if err := rows.Err(); err != nil {
		return db.fail("reading history from", err)
	}
	return nil
}

// historyFast runs the fast path's query q (sample id, latest result id,
// summary) and decodes each row for fn as it arrives. A row without a
// current summary (stored before the summary existed, or by a program
// that writes another format) is read by a join, which cannot run while
// the query's rows are arriving on the connection: from the first such
// row on, the rows are kept (summaryRows) and decoded after the query.
func (db *DB) historyFast(ctx context.Context, q string, args []any, fn func(*Entry) error) error {
	var (
		e     Entry
		c     cells
		later summaryRows // the rows from the first without a current summary
		fnErr error       // fn's, returned as it is
	)
	row := func(id, resultID int64, summary []byte) error {
		if later.len() > 0 || !current(summary) {
			later.add(id, resultID, summary)
			return nil
		}
		e = Entry{}
		e.Sample.ID, e.Result.ID = id, resultID
		if err := unpackSummary(summary, &e, &c); err != nil {
			return fmt.Errorf("sample %d: %w", id, err)
		}
		fnErr = fn(&e)
		return fnErr
	}
	var err error
	if db.pg {
		err = db.rawRowsPG(ctx, q, args, func(vals [][]byte) error {
			if len(vals) != 3 || len(vals[0]) != 8 || len(vals[1]) != 8 {
				return errors.New("unexpected history row")
			}
			return row(int64(binary.BigEndian.Uint64(vals[0])), int64(binary.BigEndian.Uint64(vals[1])), vals[2])
		})
	} else {
		err = db.eachRow(ctx, q, args, func(r *sql.Rows) error {
			var id, resultID int64
			var summary sql.RawBytes // valid until the next row
			if err := r.Scan(&id, &resultID, &summary); err != nil {
				return err
			}
			return row(id, resultID, summary)
		})
	}
	switch {
	case fnErr != nil:
		return fnErr
	case err != nil:
		return db.fail("reading history from", err)
	}
	for i := range later.len() {
		id, resultID, summary := later.row(i)
		if current(summary) {
			e = Entry{}
			e.Sample.ID, e.Result.ID = id, resultID
			if err := unpackSummary(summary, &e, &c); err != nil {
				return db.fail("reading history from", fmt.Errorf("sample %d: %w", id, err))
			}
		} else if e, err = db.latestEntry(ctx, id); err != nil {
			return err
		}
		if err := fn(&e); err != nil {
			return err
		}
	}
	return nil
}

// eachRow runs a query through database/sql and calls fn on each row.
func (db *DB) eachRow(ctx context.Context, q string, args []any, fn func(*sql.Rows) error) error {
	rows, err := db.sql.QueryContext(ctx, q, args...)
	if err != nil {
		return err
	}
	defer rows.Close()
	for rows.Next() {
		if err := fn(rows); err != nil {
			return err
		}
	}
	return rows.Err()
}

// latestJoin joins a sample (s) to its latest result (r): in SQLite
// through the sample row's latest_result_id, in the plant database
// through its latest table (see migrations/postgres/0001_base.sql).
func (db *DB) latestJoin() string {
	if db.pg {
		return "JOIN latest l ON l.id = s.id JOIN results r ON r.id = l.latest_result_id"
	}
	return "JOIN results r ON r.id = s.latest_result_id"
}

// historyTable holds a history row per sample (id, latest_result_id,
// latest_verdict, summary and the columns the filters use): the samples
// table in SQLite, the narrow latest table in the plant database.
func (db *DB) historyTable() string {
	if db.pg {
		return "latest"
	}
	return "samples"
}

// latestEntry reads one sample's history row the slow way, by a join.
func (db *DB) latestEntry(ctx context.Context, id int64) (Entry, error) {
	rows, err := db.sql.QueryContext(ctx, db.q("SELECT "+summaryColumns+
		" FROM samples s "+db.latestJoin()+" WHERE s.id = ?"), id)
	if err != nil {
		return Entry{}, db.fail("reading history from", err)
	}
	defer rows.Close()
	var e Entry
	if !rows.Next() {
		if err := rows.Err(); err != nil {
			return e, db.fail("reading history from", err)
		}
		return e, fmt.Errorf("store: database %s: sample %d has no result: %w", db.path, id, ErrNoSample)
	}
	if err := newScanner(false).scan(rows, &e); err != nil {
		return e, db.fail("reading history from", err)
	}
	return e, nil
}

// fillSummaries writes the summary of samples stored before the summary
// column existed (migration 0004) or in an earlier format (cleared by a
// migration), so history reads them the fast way (SQLite).
func (db *DB) fillSummaries(ctx context.Context) error {
	rows, err := db.sql.QueryContext(ctx, `SELECT id FROM samples WHERE (summary IS NULL OR substr(summary, 1, 1) != x'02') AND latest_result_id IS NOT NULL`)
	if err != nil {
		return db.fail("migrating", err)
	}
	var ids []int64
	for rows.Next() {
		var id int64
		if err := rows.Scan(&id); err != nil {
			rows.Close()
			return db.fail("migrating", err)
		}
		ids = append(ids, id)
	}
	rows.Close()
	if len(ids) == 0 {
		return nil
	}
	sums := make([][]byte, len(ids))
	for i, id := range ids {
		e, err := db.latestEntry(ctx, id)
		if err != nil {
			return err
		}
		sums[i] = packSummary(&e.Sample, &e.Result, packNumbers(&e.Result.Record))
	}
	return db.write(ctx, "migrating", func(tx *sql.Tx) error {
		for i, id := range ids { // a result added meanwhile has written its own summary
			if _, err := tx.ExecContext(ctx, `UPDATE samples SET summary = ? WHERE id = ? AND (summary IS NULL OR substr(summary, 1, 1) != x'02')`, sums[i], id); err != nil {
				return err
			}
		}
		return nil
	})
}

// scanner reads entry rows straight into the caller's Entry.
type scanner struct {
	cells             cells
	reasons, problems string
	packed            []byte
	record, fallback  sql.NullString
	dest              []any
	full              bool
}

func newScanner(full bool) *scanner {
	return &scanner{full: full, dest: make([]any, 0, 32)}
}

func (sc *scanner) scan(rows *sql.Rows, e *Entry) error {
	s, r := &e.Sample, &e.Result
	sc.dest = append(sc.dest[:0], &s.ID, dbTime{&s.Recorded}, &s.Sample, &s.Ladle, &s.Alloy, &s.Furnace, &s.Operator, &s.Site, &s.Deck,
		&s.Interrupted, &s.Simulated,
		&r.ID, dbTime{&r.Analysed}, &r.LimitsVersion, &r.Verdict, &sc.reasons, &sc.problems, &r.Record.File, &sc.packed, &sc.fallback)
	if sc.full {
		sc.dest = append(sc.dest, dbTime{&s.Created}, &s.Channel, &s.Thermocouple, &s.Note, &s.CurvePath, &s.CurveSHA256,
			&s.UID, &r.UID, &sc.record, &s.WallChannel, &s.CentreRadiusMm, &s.WallRadiusMm)
	}
	if err := rows.Scan(sc.dest...); err != nil {
		return err
	}
	r.SampleID = s.ID
	r.Reasons = sc.cells.split(sc.reasons)
	switch {
	case sc.full || sc.fallback.Valid:
		js := sc.record.String
		if !sc.full {
			js = sc.fallback.String
		}
		if err := json.Unmarshal([]byte(js), &r.Record); err != nil {
			return fmt.Errorf("result %d: record: %w", r.ID, err)
		}
	default:
		rec := &r.Record
		rec.Alloy, rec.Verdict, rec.Problems = s.Alloy, r.Verdict, sc.cells.split(sc.problems)
		if err := unpackNumbers(sc.packed, rec, &sc.cells); err != nil {
			return fmt.Errorf("result %d: %w", r.ID, err)
		}
	}
	return nil
}

// Get returns one sample, with its latest result in Sample.Record, and all
// its results, oldest first, each with its whole stored record. A missing
// id gives an error wrapping ErrNoSample.
func (db *DB) Get(ctx context.Context, id int64) (Sample, []Result, error) {
	rows, err := db.sql.QueryContext(ctx, db.q("SELECT "+fullColumns+
		" FROM samples s JOIN results r ON r.sample_id = s.id WHERE s.id = ? ORDER BY r.id"), id)
	if err != nil {
		return Sample{}, nil, db.fail("reading", err)
	}
	defer rows.Close()
	var (
		s   Sample
		res []Result
	)
	sc := newScanner(true)
	for rows.Next() {
		var e Entry
		if err := sc.scan(rows, &e); err != nil {
			return Sample{}, nil, db.fail("reading", err)
		}
		s = e.Sample
		s.Record, s.LimitsVersion = e.Result.Record, e.Result.LimitsVersion
		res = append(res, e.Result)
	}
	if err := rows.Err(); err != nil {
		return Sample{}, nil, db.fail("reading", err)
	}
	if len(res) == 0 {
		return Sample{}, nil, fmt.Errorf("store: database %s: sample %d: %w", db.path, id, ErrNoSample)
	}
	return s, res, nil
}

// TrendPoint is one sample's value of a metric.
type TrendPoint struct {
	SampleID int64
	Time     time.Time // when the sample was taken
	Sample   string
	Ladle    string
	Value    float64
	Verdict  string
	// Beyond is true when Value lies outside the SPC control limits.
	Beyond bool
}

// SPC is the statistical process control summary of a series of
// individual values (one per sample), as for an individuals (X) chart
// (Montgomery, Introduction to Statistical Quality Control, ch. 6, the
// individuals and moving range chart) (memory):
//
//	Mean  = Σx/n
//	SD    = sqrt(Σ(x−Mean)²/(n−1))        sample standard deviation
//	MRBar = Σ|x_i − x_{i−1}|/(n−1)        mean moving range of span 2
//	Sigma = MRBar/d2, d2 = 1.128 (n = 2)  short-term σ estimate
//	UCL, LCL = Mean ± 3·Sigma
//
// The moving-range σ is the textbook choice for individuals: it reflects
// sample-to-sample variation and is not inflated by a drift across the
// shift, which the chart is there to show. With fewer than two values the
// spread and limits are NaN.
type SPC struct {
	N        int
	Mean     float64
	SD       float64
	MRBar    float64
	Sigma    float64
	UCL, LCL float64
}

// d2 is the bias-correction constant of the range of two observations
// (Montgomery, Appendix table VI: d2 = 1.128 for n = 2) (memory).
const d2 = 1.128

// ComputeSPC summarises values in the order given (time order for the
// moving range).
func ComputeSPC(values []float64) SPC {
	s := SPC{N: len(values), Mean: math.NaN(), SD: math.NaN(), MRBar: math.NaN(), Sigma: math.NaN(), UCL: math.NaN(), LCL: math.NaN()}
	if s.N == 0 {
		return s
	}
	var sum float64
	for _, v := range values {
		sum += v
	}
	s.Mean = sum / float64(s.N)
	if s.N < 2 {
		return s
	}
	var ss, mr float64
	for i, v := range values {
		d := v - s.Mean
		ss += d * d
		if i > 0 {
			mr += math.Abs(v - values[i-1])
		}
	}
	s.SD = math.Sqrt(ss / float64(s.N-1))
	s.MRBar = mr / float64(s.N-1)
	s.Sigma = s.MRBar / d2
	s.UCL = s.Mean + 3*s.Sigma
	s.LCL = s.Mean - 3*s.Sigma
	return s
}

// ErrUnknownMetric is returned by Trend for a name not in Metrics().
var ErrUnknownMetric = errors.New("unknown metric")

// Trend returns one alloy's metric (a name from Metrics) for each sample
// recorded in [since, until) (zero times: unbounded), oldest first, from
// each sample's latest result; samples where the metric is null are left
// out. It also gives the series' SPC summary and marks points beyond its
// control limits.
func (db *DB) Trend(ctx context.Context, alloy, metric string, since, until time.Time) ([]TrendPoint, SPC, error) {
	mf, ok := metricByKey(metric)
	if !ok {
		return nil, SPC{}, fmt.Errorf("store: trend of %q: %w (known: %s)", metric, ErrUnknownMetric, strings.Join(Metrics(), ", "))
	}
	col := "r." + mf.key
	switch { // key is a Go struct tag (metricByKey), not user text
	case !mf.column && db.pg:
		col = "(r.record ->> '" + mf.key + "')::double precision"
	case !mf.column:
		col = "json_extract(r.record, '$." + mf.key + "')"
	}
	where := []string{"s.alloy = ?", col + " IS NOT NULL"}
	args := []any{alloy}
	if !since.IsZero() {
		where, args = append(where, "s.recorded_at >= ?"), append(args, db.ts(since))
	}
	if !until.IsZero() {
		where, args = append(where, "s.recorded_at < ?"), append(args, db.ts(until))
	}
	q := "SELECT s.id, s.recorded_at, s.sample, s.ladle, r.verdict, " + col +
		" FROM samples s " + db.latestJoin() + " WHERE " + strings.Join(where, " AND ") +
		" ORDER BY s.recorded_at, s.id"
	rows, err := db.sql.QueryContext(ctx, db.q(q), args...)
	if err != nil {
		return nil, SPC{}, db.fail("reading a trend from", err)
	}
	defer rows.Close()
	var (
		pts  []TrendPoint
		vals []float64
	)
	for rows.Next() {
		var p TrendPoint
		if err := rows.Scan(&p.SampleID, dbTime{&p.Time}, &p.Sample, &p.Ladle, &p.Verdict, &p.Value); err != nil {
			return nil, SPC{}, db.fail("reading a trend from", err)
		}
		pts = append(pts, p)
		vals = append(vals, p.Value)
	}
	if err := rows.Err(); err != nil {
		return nil, SPC{}, db.fail("reading a trend from", err)
	}
	spc := ComputeSPC(vals)
	for i := range pts {
		pts[i].Beyond = pts[i].Value > spc.UCL || pts[i].Value < spc.LCL
	}
	return pts, spc, nil
}

// CurveState is what Verify found for one sample's curve file.
type CurveState int

// States of a curve file.
const (
	CurveOK         CurveState = iota // contents match the stored hash
	CurveChanged                      // the file is there but its contents differ
	CurveMissing                      // the file is gone
	CurveUnreadable                   // the file is there but cannot be read
	CurveNone                         // no curve file was recorded for the sample
)

func (c CurveState) String() string {
	switch c {
	case CurveOK:
		return "ok"
	case CurveChanged:
		return "changed"
	case CurveMissing:
		return "missing"
	case CurveUnreadable:
		return "unreadable"
	case CurveNone:
		return "no curve file"
	}
	return fmt.Sprintf("CurveState(%d)", int(c))
}

// Check is Verify's finding for one sample.
type Check struct {
	SampleID int64
	Sample   string
	Path     string
	Want     string // stored SHA-256
	Got      string // SHA-256 now ("" when missing or unreadable)
	State    CurveState
	Err      error // why the file could not be read
}

// Verify re-hashes every sample's curve file and reports each one's state,
// in sample order.
func (db *DB) Verify(ctx context.Context) ([]Check, error) {
	rows, err := db.sql.QueryContext(ctx, `SELECT id, sample, curve_path, curve_sha256 FROM samples ORDER BY id`)
	if err != nil {
		return nil, db.fail("reading", err)
	}
	var checks []Check
	for rows.Next() {
		var c Check
		if err := rows.Scan(&c.SampleID, &c.Sample, &c.Path, &c.Want); err != nil {
			rows.Close()
			return nil, db.fail("reading", err)
		}
		checks = append(checks, c)
	}
	err = rows.Err()
	rows.Close()
	if err != nil {
		return nil, db.fail("reading", err)
	}
	for i := range checks { // hash after the query, so no read transaction stays open meanwhile
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		c := &checks[i]
		if c.Path == "" {
			c.State = CurveNone
			continue
		}
		got, err := HashFile(c.Path)
		switch {
		case err == nil:
			c.Got = got
			c.State = CurveOK
			if got != c.Want {
				c.State = CurveChanged
			}
		case errors.Is(err, fs.ErrNotExist):
			c.State = CurveMissing
		default:
			c.State, c.Err = CurveUnreadable, err
		}
	}
	return checks, nil
}
