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

	"github.com/undercool-foundry/undercool/internal/assess"
)

// Sample is one finished sample: its metadata, its curve file and its
// analysis. For AddSample, Record and LimitsVersion are the first analysis;
// Get returns the latest result's there (History returns them in Entry.Result).
type Sample struct {
	ID       int64
	Created  time.Time // when the row was written (set by the store)
	Recorded time.Time // when the sample was taken; the zero time means now

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

	Record        assess.Record
	LimitsVersion string
}

// Result is one analysis of a sample.
type Result struct {
	ID            int64
	SampleID      int64
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
// own accessor, assess.Value); false when it is null or not a metric.
func Value(rec assess.Record, metric string) (float64, bool) {
	if _, ok := metricByKey(metric); !ok {
		return 0, false
	}
	return assess.Value(&rec, metric)
}

func metricByKey(key string) (metricField, bool) {
	for _, f := range metricFields {
		if f.key == key {
			return f, true
		}
	}
	return metricField{}, false
}

// resultColumns are the results columns every insert writes, in the order
// of insertResult's arguments.
var resultColumns = append([]string{"sample_id", "analysed_at", "limits_version", "verdict", "reasons", "problems",
	"file", "samples", "skipped_lines", "despiked", "rate_hz", "packed", "record"}, pointColumns...)

var insertResultSQL = "INSERT INTO results(" + strings.Join(resultColumns, ", ") + ") VALUES (?" +
	strings.Repeat(", ?", len(resultColumns)-1) + ")"

const insertSampleSQL = `INSERT INTO samples(created_at, recorded_at, sample, ladle, alloy, furnace, operator,
	channel, thermocouple, note, curve_path, curve_sha256, interrupted, simulated)
	VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`

const setLatestSQL = `UPDATE samples SET latest_result_id = ?, latest_verdict = ?, summary = ? WHERE id = ?`

// sampleMetaSQL reads what a result's summary needs of its sample.
const sampleMetaSQL = `SELECT id, recorded_at, sample, ladle, alloy, furnace, operator, interrupted, simulated FROM samples WHERE id = ?`

// inserter holds one write transaction's prepared statements.
type inserter struct {
	sample, result, latest *sql.Stmt
}

func prepare(ctx context.Context, tx *sql.Tx) (*inserter, error) {
	var in inserter
	var err error
	if in.sample, err = tx.PrepareContext(ctx, insertSampleSQL); err != nil {
		return nil, err
	}
	if in.result, err = tx.PrepareContext(ctx, insertResultSQL); err != nil {
		return nil, err
	}
	if in.latest, err = tx.PrepareContext(ctx, setLatestSQL); err != nil {
		return nil, err
	}
	return &in, nil
}

// Close closes the statements (the transaction's end would too).
func (in *inserter) Close() {
	in.sample.Close()
	in.result.Close()
	in.latest.Close()
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
// and returns the sample's id.
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
		in, err := prepare(ctx, tx)
		if err != nil {
			return err
		}
		defer in.Close()
		now := time.Now()
		for i := range ss {
			id, err := in.addSample(ctx, &ss[i], now)
			if err != nil {
				return fmt.Errorf("sample %q: %w", ss[i].Sample, err)
			}
			ids = append(ids, id)
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return ids, nil
}

func (in *inserter) addSample(ctx context.Context, s *Sample, now time.Time) (int64, error) {
	rec := s.Recorded
	if rec.IsZero() {
		rec = now
	}
	path := s.CurvePath
	if path != "" {
		if abs, err := filepath.Abs(path); err == nil {
			path = abs
		}
	}
	res, err := in.sample.ExecContext(ctx, formatTime(now), formatTime(rec), s.Sample, s.Ladle, s.Alloy, s.Furnace,
		s.Operator, s.Channel, s.Thermocouple, s.Note, path, s.CurveSHA256, s.Interrupted, s.Simulated)
	if err != nil {
		return 0, err
	}
	id, err := res.LastInsertId()
	if err != nil {
		return 0, err
	}
	meta := *s
	meta.ID, meta.Recorded = id, rec
	if _, err := in.addResult(ctx, &meta, s.Record, s.LimitsVersion, now); err != nil {
		return 0, err
	}
	return id, nil
}

// addResult inserts a result of sample s (its id and the metadata its
// summary shows) and makes it the sample's latest.
func (in *inserter) addResult(ctx context.Context, s *Sample, rec assess.Record, limitsVersion string, now time.Time) (int64, error) {
	if limitsVersion == "" {
		limitsVersion = rec.LimitsVersion
	}
	js, err := recordJSON(rec)
	if err != nil {
		return 0, err
	}
	if rec.Problems == nil {
		rec.Problems = []string{}
	}
	r := Result{SampleID: s.ID, Analysed: now, LimitsVersion: limitsVersion, Verdict: rec.Verdict, Reasons: Reasons(rec), Record: rec}
	numbers := packNumbers(&rec)
	args := make([]any, 0, len(resultColumns))
	args = append(args, s.ID, formatTime(now), limitsVersion, rec.Verdict, joinLines(r.Reasons),
		joinLines(rec.Problems), rec.File, rec.Samples, rec.SkippedLines, rec.Despiked, rec.RateHz, numbers, string(js))
	for _, p := range pointDests(&rec) {
		if p == nil || *p == nil {
			args = append(args, nil)
		} else {
			args = append(args, **p)
		}
	}
	res, err := in.result.ExecContext(ctx, args...)
	if err != nil {
		return 0, err
	}
	if r.ID, err = res.LastInsertId(); err != nil {
		return 0, err
	}
	if _, err := in.latest.ExecContext(ctx, r.ID, r.Verdict, packSummary(s, &r, numbers), s.ID); err != nil {
		return 0, err
	}
	return r.ID, nil
}

// sampleMeta reads sample id's metadata for a new result's summary.
func sampleMeta(ctx context.Context, tx *sql.Tx, id int64) (*Sample, error) {
	var (
		s        Sample
		recorded string
	)
	err := tx.QueryRowContext(ctx, sampleMetaSQL, id).Scan(&s.ID, &recorded, &s.Sample, &s.Ladle, &s.Alloy, &s.Furnace, &s.Operator, &s.Interrupted, &s.Simulated)
	if errors.Is(err, sql.ErrNoRows) {
		return nil, fmt.Errorf("sample %d: %w", id, ErrNoSample)
	}
	if err != nil {
		return nil, err
	}
	s.Recorded, err = parseTime(recorded)
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
// becomes a space); splitLines undoes it.
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

func splitLines(s string) []string {
	if s == "" {
		return []string{}
	}
	return strings.Split(s, "\n")
}

// ErrNoSample is returned for a sample id that is not in the database.
var ErrNoSample = errors.New("no such sample")

// AddResult stores a further analysis of an existing sample (after a
// limits change, say) and returns the result's id; the earlier results
// are kept.
func (db *DB) AddResult(ctx context.Context, sampleID int64, rec assess.Record, limitsVersion string) (int64, error) {
	var id int64
	err := db.write(ctx, "adding a result to", func(tx *sql.Tx) error {
		meta, err := sampleMeta(ctx, tx, sampleID)
		if err != nil {
			return err
		}
		in, err := prepare(ctx, tx)
		if err != nil {
			return err
		}
		defer in.Close()
		id, err = in.addResult(ctx, meta, rec, limitsVersion, time.Now())
		return err
	})
	return id, err
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
		in, err := prepare(ctx, tx)
		if err != nil {
			return err
		}
		defer in.Close()
		now := time.Now()
		err = tx.QueryRowContext(ctx, `SELECT id FROM samples WHERE curve_sha256 = ? ORDER BY id LIMIT 1`, s.CurveSHA256).Scan(&id)
		switch {
		case errors.Is(err, sql.ErrNoRows):
			out = PutNewSample
			id, err = in.addSample(ctx, &s, now)
			return err
		case err != nil:
			return err
		}
		var lastVersion, lastRecord string
		if err := tx.QueryRowContext(ctx, `SELECT r.limits_version, r.record FROM samples s JOIN results r ON r.id = s.latest_result_id WHERE s.id = ?`, id).
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
		if lastVersion == lv && lastRecord == string(js) {
			out = PutUnchanged
			return nil
		}
		meta, err := sampleMeta(ctx, tx, id)
		if err != nil {
			return err
		}
		out = PutNewResult
		_, err = in.addResult(ctx, meta, s.Record, s.LimitsVersion, now)
		return err
	})
	return id, out, err
}

// write runs fn in one write transaction (begun IMMEDIATE, so it holds the
// write lock from the start and waits for another writer rather than
// failing half-way) and commits it; any error rolls it all back.
func (db *DB) write(ctx context.Context, doing string, fn func(*sql.Tx) error) error {
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
