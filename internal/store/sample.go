package store

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"time"

	"github.com/jackc/pgx/v5/pgconn"

	"github.com/undercool-foundry/undercool/internal/assess"
)

// Sample is one finished sample: its metadata, its curve file and its
// analysis. For AddSample, Record and LimitsVersion are the first analysis;
// Get returns the latest result's there (History returns them in Entry.Result).
type Sample struct {
	ID int64 // in this database (each copy has its own)
	// UID names the sample on every copy (a deck's file, the plant
	// database): the curve file's SHA-256 when it has one, else an id made
	// when it was first stored. Set by the store.
	UID      string
	Created  time.Time // when the row was first written (set by the store)
	Recorded time.Time // when the sample was taken; the zero time means now

	Site string // where it was taken; empty: the database's Origin
	Deck string

	Sample       string // sample id, e.g. "L-2417 cup 1"
	Ladle        string // ladle or tap id, e.g. "L-2417"
	Alloy        string
	Furnace      string // e.g. "IF-2", "holder H3"
	Operator     string
	Channel      string
	Thermocouple string // type letter, e.g. "K"
	Note         string

	CurvePath   string // the curve file (stored as an absolute path)
	CurveSHA256 string // hex SHA-256 of the curve file, from HashFile

	Interrupted bool // the recording ended before freezing was done
	Simulated   bool // from the simulator, not a real cup

	// A cup with two thermocouples (Channel is the centre one's):
	// WallChannel is the channel of the one near the wall ("" for a cup
	// with one, or not named); CentreRadiusMm and WallRadiusMm are their
	// distances from the cup's axis, mm (nil: not given).
	WallChannel                  string
	CentreRadiusMm, WallRadiusMm *float64

	Record        assess.Record
	LimitsVersion string
}

// Result is one analysis of a sample.
type Result struct {
	ID            int64
	SampleID      int64
	UID           string // the same on every copy (set by the store)
	Analysed      time.Time
	LimitsVersion string
	Verdict       string
	Reasons       []string // problems and the reasons for the verdict, in plain words
	Record        assess.Record
}

// HashFile returns the hex SHA-256 of the file's contents (FIPS 180-4).
func HashFile(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", fmt.Errorf("store: hashing curve file: %w", err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("store: hashing curve file %s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// Metrics lists the names of the per-sample numbers a trend can follow:
// every numeric key of assess.Record that may be null (the characteristic
// points, their times and the derived figures), in the Record's order.
// Keys the Record gains later appear here without a change to the store.
func Metrics() []string {
	out := make([]string, len(metricFields))
	for i, f := range metricFields {
		out[i] = f.key
	}
	return out
}

// metricField is one *float64 field of assess.Record.
type metricField struct {
	key    string // JSON key
	column bool   // results has a column of this name
}

// points are the results columns that copy Record numbers, one per
// *float64 key (migration 0001, then one migration per key the Record
// gained: see 0005), each with its Record field; keys without a column yet
// are read from the record JSON. New columns go at the end: the packed
// bitmap counts in this order.
var points = []struct {
	column string
	field  func(*assess.Record) **float64
}{
	{"pour_peak_c", func(r *assess.Record) **float64 { return &r.PourPeakC }},
	{"pour_peak_s", func(r *assess.Record) **float64 { return &r.PourPeakS }},
	{"liquidus_min_c", func(r *assess.Record) **float64 { return &r.LiquidusMinC }},
	{"liquidus_min_s", func(r *assess.Record) **float64 { return &r.LiquidusMinS }},
	{"liquidus_c", func(r *assess.Record) **float64 { return &r.LiquidusC }},
	{"liquidus_s", func(r *assess.Record) **float64 { return &r.LiquidusS }},
	{"eutectic_min_c", func(r *assess.Record) **float64 { return &r.EutecticMinC }},
	{"eutectic_min_s", func(r *assess.Record) **float64 { return &r.EutecticMinS }},
	{"eutectic_max_c", func(r *assess.Record) **float64 { return &r.EutecticMaxC }},
	{"eutectic_max_s", func(r *assess.Record) **float64 { return &r.EutecticMaxS }},
	{"recalescence_c", func(r *assess.Record) **float64 { return &r.RecalescenceC }},
	{"solidus_c", func(r *assess.Record) **float64 { return &r.SolidusC }},
	{"solidus_s", func(r *assess.Record) **float64 { return &r.SolidusS }},
	{"plateau_s", func(r *assess.Record) **float64 { return &r.PlateauS }},
	{"cooling_rate_c_per_s", func(r *assess.Record) **float64 { return &r.CoolingRateCps }},
	{"freezing_time_s", func(r *assess.Record) **float64 { return &r.FreezingTimeS }},
	{"stable_eutectic_c", func(r *assess.Record) **float64 { return &r.StableEutecticC }},
	{"metastable_eutectic_c", func(r *assess.Record) **float64 { return &r.MetastableEutecticC }},
	{"undercooling_c", func(r *assess.Record) **float64 { return &r.UndercoolingC }},
	{"chill_margin_c", func(r *assess.Record) **float64 { return &r.ChillMarginC }},
	{"ce", func(r *assess.Record) **float64 { return &r.CE }},
	{"ce_classic", func(r *assess.Record) **float64 { return &r.CEClassic }},
	{"cel_koriyama2020", func(r *assess.Record) **float64 { return &r.CELKoriyama2020 }},
	{"cel_heine", func(r *assess.Record) **float64 { return &r.CELHeine }},
	{"cel_shop", func(r *assess.Record) **float64 { return &r.CELShop }},
	{"white_eutectic_c", func(r *assess.Record) **float64 { return &r.WhiteEutecticC }},
	{"c_pct", func(r *assess.Record) **float64 { return &r.CPct }},
	{"si_pct", func(r *assess.Record) **float64 { return &r.SiPct }},
	{"liquidus_ref_c", func(r *assess.Record) **float64 { return &r.LiquidusRefC }},
	{"alpha_undercooling_c", func(r *assess.Record) **float64 { return &r.AlphaUndercoolingC }},
	{"alpha_recalescence_c", func(r *assess.Record) **float64 { return &r.AlphaRecalescenceC }},
	{"eutectic_ref_c", func(r *assess.Record) **float64 { return &r.EutecticRefC }},
	{"eutectic_depression_c", func(r *assess.Record) **float64 { return &r.EutecticDepressionC }},
	{"plateau_c", func(r *assess.Record) **float64 { return &r.PlateauC }},
	{"fixed_point_c", func(r *assess.Record) **float64 { return &r.FixedPointC }},
	{"fixed_point_error_c", func(r *assess.Record) **float64 { return &r.FixedPointErrorC }},
	{"pour_superheat_c", func(r *assess.Record) **float64 { return &r.PourSuperheatC }}, // pour_superheat_c: migration 0005
}

// pointColumns are the column names of points, in order.
var pointColumns = func() []string {
	cols := make([]string, len(points))
	for i, p := range points {
		cols[i] = p.column
	}
	return cols
}()

// pointDests gives the Record's fields for pointColumns, in that order.
func pointDests(r *assess.Record) []**float64 {
	ds := make([]**float64, len(points))
	for i, p := range points {
		ds[i] = p.field(r)
	}
	return ds
}

var metricFields = func() []metricField {
	var fs []metricField
	rt := reflect.TypeFor[assess.Record]()
	ptr := reflect.TypeFor[*float64]()
	for i := range rt.NumField() {
		f := rt.Field(i)
		key, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		if f.Type != ptr || key == "" || key == "-" {
			continue
		}
		fs = append(fs, metricField{key: key, column: slices.Contains(pointColumns, key)})
	}
	return fs
}()

// Value returns a record's value of a metric from Metrics (the record's
// own accessor, assess.Value); false when it is null or not a metric. It
// takes the record by pointer: it is called for every figure of every row
// of a history or an export.
func Value(rec *assess.Record, metric string) (float64, bool) {
	if _, ok := metricByKey(metric); !ok {
		return 0, false
	}
	return assess.Value(rec, metric)
}

// metricIndex finds a metric's place in metricFields by its key (an
// export looks up every metric of every row).
var metricIndex = func() map[string]int {
	m := make(map[string]int, len(metricFields))
	for i, f := range metricFields {
		m[f.key] = i
	}
	return m
}()

func metricByKey(key string) (metricField, bool) {
	i, ok := metricIndex[key]
	if !ok {
		return metricField{}, false
	}
	return metricFields[i], true
}

// sampleColumns are the samples columns every insert writes, in the
// order of sampleArgs.
const sampleColumns = "uid, site, deck, created_at, recorded_at, sample, ladle, alloy, furnace, operator, channel, thermocouple, note, curve_path, curve_sha256, interrupted, simulated, " +
	"tc_wall_channel, tc_centre_radius_mm, tc_wall_radius_mm" // migration 0007 (SQLite), 0004 (PostgreSQL)

func (db *DB) sampleArgs(s *Sample) []any {
	return []any{s.UID, s.Site, s.Deck, db.ts(s.Created), db.ts(s.Recorded), s.Sample, s.Ladle, s.Alloy, s.Furnace,
		s.Operator, s.Channel, s.Thermocouple, s.Note, s.CurvePath, s.CurveSHA256, s.Interrupted, s.Simulated,
		s.WallChannel, s.CentreRadiusMm, s.WallRadiusMm}
}

// nSampleColumns is how many sampleColumns there are.
var nSampleColumns = strings.Count(sampleColumns, ",") + 1

// resultColumns are the results columns every insert writes after the
// engine's own (SQLite: uid, sample_id; PostgreSQL: uid, sample_uid,
// summary), in the order of resultArgs.
var resultColumns = append([]string{"analysed_at", "limits_version", "verdict", "reasons", "problems",
	"file", "samples", "skipped_lines", "despiked", "rate_hz", "packed", "record"}, pointColumns...)

func (db *DB) resultArgs(r *Result, js []byte, numbers []byte) []any {
	rec := &r.Record
	problems := rec.Problems
	if problems == nil {
		problems = []string{}
	}
	args := make([]any, 0, len(resultColumns)+3)
	args = append(args, db.ts(r.Analysed), r.LimitsVersion, r.Verdict, joinLines(r.Reasons),
		joinLines(problems), rec.File, rec.Samples, rec.SkippedLines, rec.Despiked, rec.RateHz, numbers, string(js))
	for _, p := range pointDests(rec) {
		if p == nil || *p == nil {
			args = append(args, nil)
		} else {
			args = append(args, **p)
		}
	}
	return args
}

// The statements of a write. A row whose uid is stored already is not
// written again (ON CONFLICT ... DO NOTHING): that is what makes
// forwarding and importing idempotent.
var (
	sqliteInsertSample = "INSERT INTO samples(" + sampleColumns + ") VALUES (" + placeholders(nSampleColumns) + ") ON CONFLICT (uid) WHERE uid != '' DO NOTHING RETURNING id"
	pgInsertSample     = "INSERT INTO samples(" + sampleColumns + ") VALUES (" + placeholders(nSampleColumns) + ") ON CONFLICT (uid) DO NOTHING RETURNING id"
	sqliteInsertResult = "INSERT INTO results(uid, sample_id, " + strings.Join(resultColumns, ", ") + ") VALUES (" +
		placeholders(2+len(resultColumns)) + ") ON CONFLICT (uid) WHERE uid != '' DO NOTHING RETURNING id"
	pgInsertResult = "INSERT INTO results(uid, sample_uid, summary, " + strings.Join(resultColumns, ", ") + ") VALUES (" +
		placeholders(3+len(resultColumns)) + ") ON CONFLICT (uid) DO NOTHING RETURNING id"
)

const (
	// setLatestSQL makes a result written here the sample's latest.
	setLatestSQL = `UPDATE samples SET latest_result_id = ?, latest_verdict = ?, summary = ? WHERE id = ?`
	// setLatestIfNewerSQL does for a copied result, when it is the newest
	// by analysis time (then arrival), as the plant database's trigger does.
	setLatestIfNewerSQL = `UPDATE samples SET latest_result_id = ?, latest_verdict = ?, summary = ? WHERE id = ?
		AND (latest_result_id IS NULL OR (SELECT r.analysed_at FROM results r WHERE r.id = samples.latest_result_id) <= ?)`
	queueSQL = `INSERT OR IGNORE INTO outbox(result_id, queued_at) VALUES (?, ?)`
)

func placeholders(n int) string { return strings.TrimSuffix(strings.Repeat("?, ", n), ", ") }

// sampleMetaSQL reads what a result's summary needs of its sample.
const sampleMetaSQL = `SELECT id, uid, recorded_at, sample, ladle, alloy, furnace, operator, site, deck, interrupted, simulated FROM samples WHERE id = ?`

// writer holds one write transaction and its prepared statements.
type writer struct {
	db                                   *DB
	tx                                   *sql.Tx
	sample, result, latest, newer, queue *sql.Stmt
	findSample, findResult               *sql.Stmt
}

func (db *DB) newWriter(ctx context.Context, tx *sql.Tx) (*writer, error) {
	w := &writer{db: db, tx: tx}
	var list []struct {
		dst **sql.Stmt
		q   string
	}
	add := func(dst **sql.Stmt, q string) {
		list = append(list, struct {
			dst **sql.Stmt
			q   string
		}{dst, q})
	}
	add(&w.findSample, "SELECT id FROM samples WHERE uid = ?")
	add(&w.findResult, "SELECT id FROM results WHERE uid = ?")
	if db.pg {
		add(&w.sample, pgInsertSample)
		add(&w.result, pgInsertResult)
	} else {
		add(&w.sample, sqliteInsertSample)
		add(&w.result, sqliteInsertResult)
		add(&w.latest, setLatestSQL)
		add(&w.newer, setLatestIfNewerSQL)
		add(&w.queue, queueSQL)
	}
	for _, p := range list {
		st, err := tx.PrepareContext(ctx, db.q(p.q))
		if err != nil {
			w.Close()
			return nil, err
		}
		*p.dst = st
	}
	return w, nil
}

// Close closes the statements (the transaction's end would too).
func (w *writer) Close() {
	for _, st := range []*sql.Stmt{w.sample, w.result, w.latest, w.newer, w.queue, w.findSample, w.findResult} {
		if st != nil {
			st.Close()
		}
	}
}

// newSample completes a sample to be stored now: its uid, site and deck
// (the database's origin where empty), times, and the curve file's
// absolute path.
func (db *DB) newSample(s *Sample, now time.Time) {
	if s.UID == "" {
		s.UID = newSampleUID(s.CurveSHA256)
	}
	if s.Site == "" && s.Deck == "" {
		s.Site, s.Deck = db.origin.Site, db.origin.Deck
	}
	if s.Recorded.IsZero() {
		s.Recorded = now
	}
	s.Created = now
	if s.CurvePath != "" {
		if abs, err := filepath.Abs(s.CurvePath); err == nil {
			s.CurvePath = abs
		}
	}
}

// newResult is the result of an analysis of s stored now, with its uid
// (which names the deck that stored it: two decks that store the same cup
// with the same limits in the same millisecond keep two results).
func (db *DB) newResult(s *Sample, rec assess.Record, limitsVersion string, now time.Time) (Result, []byte, error) {
	if limitsVersion == "" {
		limitsVersion = rec.LimitsVersion
	}
	if rec.Problems == nil {
		rec.Problems = []string{}
	}
	js, err := recordJSON(rec)
	if err != nil {
		return Result{}, nil, err
	}
	r := Result{SampleID: s.ID, Analysed: now, LimitsVersion: limitsVersion, Verdict: rec.Verdict, Reasons: Reasons(rec), Record: rec}
	r.UID = hashUID("result", s.UID, db.origin.Site, db.origin.Deck, formatTime(now), limitsVersion, string(js))
	return r, js, nil
}

// put stores result r (its record as js) of sample s in the write
// transaction: first the sample, unless s.ID is set or a sample with its
// uid is stored already (then that one is used), then the result, unless
// one with its uid is stored already (added is then false). A local
// result (written here now) becomes the sample's latest; a copy from
// another database becomes it when it is the newest by analysis time. In
// SQLite every new result joins the outbox. It sets s.ID and r.ID (0
// where the plant database keeps the row from this role: another deck's).
func (w *writer) put(ctx context.Context, s *Sample, r *Result, js []byte, local bool) (added bool, err error) {
	db := w.db
	meta := s // what the summary shows of the sample: the stored row where there is one
	if s.ID == 0 {
		err := w.sample.QueryRowContext(ctx, db.sampleArgs(s)...).Scan(&s.ID)
		if errors.Is(err, sql.ErrNoRows) { // stored already
			if err = w.findSample.QueryRowContext(ctx, s.UID).Scan(&s.ID); err == nil && !db.pg {
				meta, err = sampleMeta(ctx, w.tx, db, s.ID)
			}
			if errors.Is(err, sql.ErrNoRows) && db.pg {
				err = nil // another deck's row
			}
		}
		if err != nil {
			return false, err
		}
	}
	r.SampleID = s.ID
	numbers := packNumbers(&r.Record)
	summary := packSummary(meta, r, numbers)
	var args []any
	if db.pg {
		args = append([]any{r.UID, s.UID, summary}, db.resultArgs(r, js, numbers)...)
	} else {
		args = append([]any{r.UID, s.ID}, db.resultArgs(r, js, numbers)...)
	}
	err = w.result.QueryRowContext(ctx, args...).Scan(&r.ID)
	if errors.Is(err, sql.ErrNoRows) {
		if err := w.findResult.QueryRowContext(ctx, r.UID).Scan(&r.ID); err != nil && !errors.Is(err, sql.ErrNoRows) {
			return false, err
		}
		return false, nil
	}
	if err != nil || db.pg {
		return err == nil, err
	}
	if local {
		_, err = w.latest.ExecContext(ctx, r.ID, r.Verdict, summary, s.ID)
	} else {
		_, err = w.newer.ExecContext(ctx, r.ID, r.Verdict, summary, s.ID, db.ts(r.Analysed))
	}
	if err == nil {
		_, err = w.queue.ExecContext(ctx, r.ID, formatTime(time.Now()))
	}
	return err == nil, err
}

// Reasons gives the plain-language lines behind a record's verdict: its
// problems, then its reasons, without repeats.
func Reasons(rec assess.Record) []string {
	out := make([]string, 0, len(rec.Problems)+len(rec.Reasons))
	for _, l := range slices.Concat(rec.Problems, rec.Reasons) {
		if l != "" && !slices.Contains(out, l) {
			out = append(out, l)
		}
	}
	return out
}

// AddSample stores a new sample and its first analysis in one transaction
// and returns the sample's id. A sample whose curve file is stored
// already (by its SHA-256) is not stored twice: the analysis is added to
// the stored one, whose id is returned.
func (db *DB) AddSample(ctx context.Context, s Sample) (int64, error) {
	ids, err := db.AddSamples(ctx, []Sample{s})
	if err != nil {
		return 0, err
	}
	return ids[0], nil
}

// AddSamples stores several new samples in one transaction (all or none)
// and returns their ids in order.
func (db *DB) AddSamples(ctx context.Context, ss []Sample) ([]int64, error) {
	ids := make([]int64, 0, len(ss))
	err := db.write(ctx, "adding samples to", func(tx *sql.Tx) error {
		w, err := db.newWriter(ctx, tx)
		if err != nil {
			return err
		}
		defer w.Close()
		now := time.Now()
		for i := range ss {
			s := ss[i]
			db.newSample(&s, now)
			r, js, err := db.newResult(&s, s.Record, s.LimitsVersion, now)
			if err == nil {
				_, err = w.put(ctx, &s, &r, js, true)
			}
			if err != nil {
				return fmt.Errorf("sample %q: %w", ss[i].Sample, err)
			}
			ids = append(ids, s.ID)
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return ids, nil
}

// sampleMeta reads sample id's metadata for a new result's summary.
func sampleMeta(ctx context.Context, tx *sql.Tx, db *DB, id int64) (*Sample, error) {
	var s Sample
	err := tx.QueryRowContext(ctx, db.q(sampleMetaSQL), id).Scan(&s.ID, &s.UID, dbTime{&s.Recorded}, &s.Sample, &s.Ladle, &s.Alloy,
		&s.Furnace, &s.Operator, &s.Site, &s.Deck, &s.Interrupted, &s.Simulated)
	if errors.Is(err, sql.ErrNoRows) {
		return nil, fmt.Errorf("sample %d: %w", id, ErrNoSample)
	}
	return &s, err
}

// recordJSON is the stored form of a record (problems [] rather than null).
func recordJSON(rec assess.Record) ([]byte, error) {
	if rec.Problems == nil {
		rec.Problems = []string{}
	}
	js, err := json.Marshal(rec)
	if err != nil {
		return nil, fmt.Errorf("encoding the record: %w", err)
	}
	return js, nil
}

// joinLines keeps plain-language lines one a line (a line break inside one
// becomes a space); cells.split undoes it.
func joinLines(lines []string) string {
	var b strings.Builder
	for i, l := range lines {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(strings.Map(func(r rune) rune {
			if r == '\n' || r == '\r' {
				return ' '
			}
			return r
		}, l))
	}
	return b.String()
}

// ErrNoSample is returned for a sample id that is not in the database.
var ErrNoSample = errors.New("no such sample")

// AddResult stores a further analysis of an existing sample (after a
// limits change, say) and returns the result's id; the earlier results
// are kept.
func (db *DB) AddResult(ctx context.Context, sampleID int64, rec assess.Record, limitsVersion string) (int64, error) {
	var id int64
	err := db.write(ctx, "adding a result to", func(tx *sql.Tx) error {
		meta, err := sampleMeta(ctx, tx, db, sampleID)
		if err != nil {
			return err
		}
		id, err = db.addResult(ctx, tx, meta, rec, limitsVersion)
		return err
	})
	return id, err
}

func (db *DB) addResult(ctx context.Context, tx *sql.Tx, meta *Sample, rec assess.Record, limitsVersion string) (int64, error) {
	w, err := db.newWriter(ctx, tx)
	if err != nil {
		return 0, err
	}
	defer w.Close()
	r, js, err := db.newResult(meta, rec, limitsVersion, time.Now())
	if err != nil {
		return 0, err
	}
	_, err = w.put(ctx, meta, &r, js, true)
	return r.ID, err
}

// PutOutcome says what Put did.
type PutOutcome int

// Outcomes of Put.
const (
	PutNewSample PutOutcome = iota // a new sample row (and its first result)
	PutNewResult                   // a further result for a sample with the same curve file contents
	PutUnchanged                   // the latest result was already this one: nothing written
)

func (o PutOutcome) String() string {
	switch o {
	case PutNewSample:
		return "new sample"
	case PutNewResult:
		return "new result"
	case PutUnchanged:
		return "unchanged"
	}
	return fmt.Sprintf("PutOutcome(%d)", int(o))
}

// Put stores an analysis of a curve file, for re-analysis: when a sample
// with the same curve hash is stored already, it adds a result to that
// sample (unless its latest result has the same limits version and the same
// record), else it adds a new sample. All in one transaction.
func (db *DB) Put(ctx context.Context, s Sample) (int64, PutOutcome, error) {
	if s.CurveSHA256 == "" {
		id, err := db.AddSample(ctx, s)
		return id, PutNewSample, err
	}
	var (
		id  int64
		out PutOutcome
	)
	err := db.write(ctx, "storing a result in", func(tx *sql.Tx) error {
		uid := s.UID
		if uid == "" {
			uid = newSampleUID(s.CurveSHA256)
		}
		err := tx.QueryRowContext(ctx, db.q(`SELECT id FROM samples WHERE uid = ?`), uid).Scan(&id)
		switch {
		case errors.Is(err, sql.ErrNoRows):
			out = PutNewSample
			w, err := db.newWriter(ctx, tx)
			if err != nil {
				return err
			}
			defer w.Close()
			now := time.Now()
			db.newSample(&s, now)
			r, js, err := db.newResult(&s, s.Record, s.LimitsVersion, now)
			if err != nil {
				return err
			}
			_, err = w.put(ctx, &s, &r, js, true)
			id = s.ID
			return err
		case err != nil:
			return err
		}
		var lastVersion, lastRecord sql.NullString
		if err := tx.QueryRowContext(ctx, db.q(`SELECT r.limits_version, r.record FROM samples s `+db.latestJoin()+` WHERE s.id = ?`), id).
			Scan(&lastVersion, &lastRecord); err != nil && !errors.Is(err, sql.ErrNoRows) {
			return err
		}
		js, err := recordJSON(s.Record)
		if err != nil {
			return err
		}
		lv := s.LimitsVersion
		if lv == "" {
			lv = s.Record.LimitsVersion
		}
		if lastVersion.String == lv && sameRecord(lastRecord.String, js) {
			out = PutUnchanged
			return nil
		}
		meta, err := sampleMeta(ctx, tx, db, id)
		if err != nil {
			return err
		}
		out = PutNewResult
		_, err = db.addResult(ctx, tx, meta, s.Record, s.LimitsVersion)
		return err
	})
	return id, out, err
}

// sameRecord reports whether a stored record (as either engine gives its
// JSON back) is the record encoded as js.
func sameRecord(stored string, js []byte) bool {
	if stored == string(js) {
		return true
	}
	var rec assess.Record
	if err := json.Unmarshal([]byte(stored), &rec); err != nil {
		return false
	}
	again, err := recordJSON(rec)
	return err == nil && string(again) == string(js)
}

// write runs fn in one write transaction (in SQLite begun IMMEDIATE, so
// it holds the write lock from the start and waits for another writer
// rather than failing half-way) and commits it; any error rolls it all
// back.
func (db *DB) write(ctx context.Context, doing string, fn func(*sql.Tx) error) error {
	for try := 1; ; try++ {
		err := db.write1(ctx, doing, fn)
		if try == 3 || !retryable(err) {
			return err
		}
	}
}

// retryable reports whether a transaction failed only for meeting another
// (PostgreSQL's deadlock and serialization failures), so that running it
// again will do.
func retryable(err error) bool {
	var pe *pgconn.PgError
	return errors.As(err, &pe) && (pe.Code == "40P01" || pe.Code == "40001")
}

func (db *DB) write1(ctx context.Context, doing string, fn func(*sql.Tx) error) error {
	tx, err := db.sql.BeginTx(ctx, nil)
	if err != nil {
		return db.fail(doing, err)
	}
	if err := fn(tx); err != nil {
		tx.Rollback()
		if errors.Is(err, ErrNoSample) {
			return fmt.Errorf("store: database %s: %w", db.path, err)
		}
		return db.fail(doing, err)
	}
	if err := tx.Commit(); err != nil {
		return db.fail(doing, err)
	}
	return nil
}
