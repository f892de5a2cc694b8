package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/store"
)

func init() {
	register(command{
		name:    "history",
		summary: "list the stored samples and their verdicts",
		run:     runHistory,
	})
}

const historyUsage = `usage: undercool history [--site S] [--deck D] [--alloy A] [--furnace F] [--ladle L]
                         [--since D] [--until D] [--verdict V] [--limit N] [--all-results]
                         [--json|--csv] [--db PATH|postgres://…]

Lists the stored samples, newest first, each with its latest result
(--all-results: every result, older analyses included).

D is a date (2026-12-01, local time; --until takes the whole day), a date
and time (2026-12-01T14:30), or a span back from now (30m, 8h, 7d, 2w).
The records live in --db PATH, else $UNDERCOOL_DB, else the user's data
directory (see 'undercool help'). A postgres:// connection string reads
the plant database instead (docs/plant-database.md): every deck's
samples, or with --site and --deck one deck's.
`

// recordsFlags are the options history and export share.
type recordsFlags struct {
	db, site, deck, alloy, furnace, ladle, since, until, verdict string
	limit                                                        int
	allResults, json, csv                                        bool
}

func (f *recordsFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&f.db, "db", "", dbFlagHelp)
	fs.StringVar(&f.site, "site", "", "only samples taken at this `site`")
	fs.StringVar(&f.deck, "deck", "", "only samples taken on this melt `deck`")
	fs.StringVar(&f.alloy, "alloy", "", "only this `alloy`")
	fs.StringVar(&f.furnace, "furnace", "", "only samples from this `furnace` or holder")
	fs.StringVar(&f.ladle, "ladle", "", "only this `ladle` id")
	fs.StringVar(&f.since, "since", "", "recorded at or after `D` (2026-12-01, 2026-12-01T14:30, 8h, 7d)")
	fs.StringVar(&f.until, "until", "", "recorded before `D` (a bare date includes that day)")
	fs.StringVar(&f.verdict, "verdict", "", "only this `verdict` (pass, marginal, fail, invalid, unchecked)")
	fs.BoolVar(&f.allResults, "all-results", false, "every result of each sample, not only the latest")
	fs.BoolVar(&f.json, "json", false, "JSON lines, one sample a line")
	fs.BoolVar(&f.csv, "csv", false, "CSV for a spreadsheet")
}

// open checks the filter flags and opens the records database they name,
// for reading. A bad filter flag is a usage error (named on stderr under
// the command's name).
func (f *recordsFlags) open(ctx context.Context, env *environ, cmd string) (*store.DB, store.Filter, error) {
	flt, err := f.filter(time.Now())
	if err != nil {
		fmt.Fprintf(env.stderr, "undercool %s: %v\n", cmd, err)
		return nil, flt, errUsage
	}
	db, err := readRecords(ctx, env, f.db)
	return db, flt, err
}

// entrySink takes a command's entries as the store reads them (add), then
// ends the output (end, with the name of the database they came from).
type entrySink interface {
	add(e *store.Entry) error
	end(dbPath string) error
}

// writeEntries passes the entries flt selects from db through sink as they
// are read: a month of plant history is written without a slice of all
// its entries (store.DB.HistoryEach).
func writeEntries(ctx context.Context, db *store.DB, flt store.Filter, sink entrySink) error {
	if err := db.HistoryEach(ctx, flt, sink.add); err != nil {
		return err
	}
	return sink.end(db.Path())
}

// filter turns the flags into a store filter.
func (f *recordsFlags) filter(now time.Time) (store.Filter, error) {
	flt := store.Filter{Site: f.site, Deck: f.deck, Alloy: f.alloy, Furnace: f.furnace, Ladle: f.ladle,
		Verdict: f.verdict, Limit: f.limit, AllResults: f.allResults}
	switch f.verdict {
	case "", "pass", "marginal", "fail", "invalid", "unchecked":
	default:
		return flt, fmt.Errorf("--verdict %q: want pass, marginal, fail, invalid or unchecked", f.verdict)
	}
	if f.limit < 0 {
		return flt, fmt.Errorf("--limit %d: want 0 (no limit) or more", f.limit)
	}
	var err error
	if f.since != "" {
		if flt.Since, err = parseWhen(f.since, now, false); err != nil {
			return flt, fmt.Errorf("--since: %w", err)
		}
	}
	if f.until != "" {
		if flt.Until, err = parseWhen(f.until, now, true); err != nil {
			return flt, fmt.Errorf("--until: %w", err)
		}
	}
	if !flt.Since.IsZero() && !flt.Until.IsZero() && !flt.Since.Before(flt.Until) {
		return flt, fmt.Errorf("--since %s is not before --until %s", f.since, f.until)
	}
	return flt, nil
}

// parseWhen reads a history time: a date (local midnight; with endOfDay the
// next midnight, so the day is included), a local date and time, RFC 3339,
// or a span back from now (Go durations plus d for days and w for weeks).
func parseWhen(s string, now time.Time, endOfDay bool) (time.Time, error) {
	if t, err := time.ParseInLocation("2006-01-02", s, time.Local); err == nil {
		if endOfDay {
			t = t.AddDate(0, 0, 1)
		}
		return t, nil
	}
	for _, layout := range []string{time.RFC3339, "2006-01-02T15:04:05", "2006-01-02T15:04", "2006-01-02 15:04:05", "2006-01-02 15:04"} {
		if t, err := time.ParseInLocation(layout, s, time.Local); err == nil {
			return t, nil
		}
	}
	if d, err := parseSpan(s); err == nil {
		return now.Add(-d), nil
	}
	return time.Time{}, fmt.Errorf("%q is not a date (2026-12-01), a date and time (2026-12-01T14:30) or a span (8h, 7d, 2w)", s)
}

// parseSpan reads a Go duration, or a whole number of days (7d) or weeks (2w).
func parseSpan(s string) (time.Duration, error) {
	unit := time.Duration(0)
	switch {
	case strings.HasSuffix(s, "d"):
		unit = 24 * time.Hour
	case strings.HasSuffix(s, "w"):
		unit = 7 * 24 * time.Hour
	}
	if unit != 0 {
		n, err := strconv.Atoi(s[:len(s)-1])
		if err != nil || n < 0 {
			return 0, fmt.Errorf("bad span %q", s)
		}
		return time.Duration(n) * unit, nil
	}
	d, err := time.ParseDuration(s)
	if err != nil || d < 0 {
		return 0, fmt.Errorf("bad span %q", s)
	}
	return d, nil
}

// parseNoArgs parses a records command's flags, which take no positional
// arguments; help is true when -h was asked for (and answered).
func parseNoArgs(fs *flag.FlagSet, env *environ, args []string) (help bool, err error) {
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return true, nil
		}
		return false, errUsage
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(env.stderr, "undercool %s: unexpected argument %q\n", fs.Name(), fs.Arg(0))
		return false, errUsage
	}
	return false, nil
}

// dbFlagHelp describes --db for every records command.
const dbFlagHelp = "records database: a file `PATH`, or the plant database's postgres:// connection string (default $UNDERCOOL_DB or the user's data directory)"

// openRecords opens the records database named by --db, else the default,
// for writing: samples it stores carry the deck's site and deck (origin).
func openRecords(ctx context.Context, env *environ, dbFlag string) (*store.DB, error) {
	path, err := recordsPath(env, dbFlag)
	if err != nil {
		return nil, err
	}
	return openAt(ctx, env, path, "", "")
}

// openAt opens the records database path, for writing, with the deck's
// site and deck (deckOrigin of site and deck).
func openAt(ctx context.Context, env *environ, path, site, deck string) (*store.DB, error) {
	o, err := deckOrigin(env, site, deck)
	if err != nil {
		return nil, err
	}
	db, err := store.Open(ctx, path)
	if err != nil {
		return nil, err
	}
	if err := db.SetOrigin(o); err != nil {
		db.Close()
		return nil, err
	}
	return db, nil
}

// deckOrigin is where this deck's samples are taken: --site and --deck
// where given, else $UNDERCOOL_SITE and $UNDERCOOL_DECK (set once per deck
// in its environment).
func deckOrigin(env *environ, site, deck string) (store.Origin, error) {
	if site == "" {
		site = env.getenv("UNDERCOOL_SITE")
	}
	if deck == "" {
		deck = env.getenv("UNDERCOOL_DECK")
	}
	o := store.Origin{Site: site, Deck: deck}
	if err := store.CheckOrigin(o); err != nil {
		return o, fmt.Errorf("--site/--deck or $UNDERCOOL_SITE/$UNDERCOOL_DECK: %w", err)
	}
	return o, nil
}

// readRecords is openRecords for the commands that only read (history,
// export, report, verify): a database that cannot be written where it is
// (an archive on read-only media) is opened read-only, with a note.
func readRecords(ctx context.Context, env *environ, dbFlag string) (*store.DB, error) {
	path, err := recordsPath(env, dbFlag)
	if err != nil {
		return nil, err
	}
	db, err := store.Open(ctx, path)
	if err == nil || !errors.Is(err, store.ErrNotWritable) || store.IsServer(path) {
		return db, err
	}
	if _, serr := os.Stat(path); serr != nil {
		return nil, err // nothing there to read
	}
	db, rerr := store.OpenReadOnly(ctx, path)
	if rerr != nil {
		return nil, fmt.Errorf("%w; and read-only: %w", err, rerr)
	}
	fmt.Fprintf(env.stderr, "note: %s cannot be written here; its records are read read-only\n", path)
	return db, nil
}

func recordsPath(env *environ, dbFlag string) (string, error) {
	if dbFlag != "" {
		return dbFlag, nil
	}
	return store.DefaultPath(env.getenv)
}

func runHistory(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("history", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprint(env.stderr, historyUsage); fs.PrintDefaults() }
	var f recordsFlags
	f.register(fs)
	fs.IntVar(&f.limit, "limit", 0, "at most `N` rows (0: all)")
	if help, err := parseNoArgs(fs, env, args); help || err != nil {
		return err
	}
	if f.json && f.csv {
		fmt.Fprintln(env.stderr, "undercool history: give --json or --csv, not both")
		return errUsage
	}
	db, flt, err := f.open(ctx, env, "history")
	if err != nil {
		return err
	}
	defer db.Close()
	flt.Full = f.json || f.csv
	return buffered(env.stdout, func(w io.Writer) error {
		var sink entrySink
		switch {
		case f.json:
			sink = newRecordLines(w)
		case f.csv:
			sink = newRecordsCSV(w, csvOptions{})
		default:
			sink = newHistoryTable(w)
		}
		return writeEntries(ctx, db, flt, sink)
	})
}

// buffered runs write on a buffer in front of w, flushed at the end: a
// month of plant history is tens of thousands of lines, each written in
// many pieces (a table's cells, a JSON line), and unbuffered each piece
// would be a system call of its own.
func buffered(w io.Writer, write func(io.Writer) error) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	err := write(bw)
	if ferr := bw.Flush(); err == nil {
		err = ferr
	}
	return err
}

// historyColumns are the figures the history table shows, with headings
// (each read from its field: the table is filled for every row of a
// month of plant history).
var historyColumns = []struct {
	head  string
	value func(*assess.Record) *float64
}{
	{"EUT MIN °C", func(r *assess.Record) *float64 { return r.EutecticMinC }},
	{"RECAL °C", func(r *assess.Record) *float64 { return r.RecalescenceC }},
	{"UNDERCOOL °C", func(r *assess.Record) *float64 { return r.UndercoolingC }},
	{"LIQUIDUS °C", func(r *assess.Record) *float64 { return r.LiquidusC }},
}

// historyTable lays out the history table: the rows are added as they
// are read, and written, in columns, at the end.
type historyTable struct {
	w     io.Writer
	t     *table
	n     int
	first store.Origin // of the first row
	decks bool         // the rows come from more than one place: a DECK column
}

// deckColumn is the place of the DECK column in historyTable's rows.
const deckColumn = 2

func newHistoryTable(w io.Writer) *historyTable {
	head := []string{"ID", "RECORDED", "DECK", "SAMPLE", "LADLE", "ALLOY", "VERDICT"}
	for _, c := range historyColumns {
		head = append(head, c.head)
	}
	head = append(head, "FLAGS")
	h := &historyTable{w: w, t: newTable(len(head))}
	for _, c := range head {
		h.t.text(c)
	}
	return h
}

func (h *historyTable) add(e *store.Entry) error {
	s, r, t := &e.Sample, &e.Result, h.t
	if h.n == 0 {
		h.first = store.Origin{Site: s.Site, Deck: s.Deck}
	} else if s.Site != h.first.Site || s.Deck != h.first.Deck {
		h.decks = true
	}
	h.n++
	t.buf = strconv.AppendInt(t.buf, s.ID, 10)
	t.endASCII()
	t.buf = appendMinute(t.buf, s.Recorded.Local())
	t.endASCII()
	// SITE/DECK, without the slash when one is empty
	start := len(t.buf)
	t.buf = append(append(append(t.buf, s.Site...), '/'), s.Deck...)
	t.buf = append(t.buf[:start], bytes.Trim(t.buf[start:], "/")...)
	if len(t.buf) == start {
		t.buf = append(t.buf, "–"...)
	}
	t.end()
	t.text(dash(s.Sample))
	t.text(dash(s.Ladle))
	t.text(dash(s.Alloy))
	t.text(r.Verdict)
	for _, c := range historyColumns {
		if v := c.value(&r.Record); v != nil {
			t.buf = strconv.AppendFloat(t.buf, *v, 'f', 1, 64)
			t.endASCII()
		} else {
			t.text("–")
		}
	}
	switch {
	case s.Interrupted && s.Simulated:
		t.text("interrupted,simulated")
	case s.Interrupted:
		t.text("interrupted")
	case s.Simulated:
		t.text("simulated")
	default:
		t.text("")
	}
	return nil
}

// appendMinute appends t as 2006-01-02 15:04 in t's location, as
// t.AppendFormat would, without reading the layout again for each row
// (that took a tenth of the history command's time for a month of plant
// history).
func appendMinute(b []byte, t time.Time) []byte {
	y, mo, d := t.Date()
	if y < 0 || y > 9999 {
		return t.AppendFormat(b, "2006-01-02 15:04")
	}
	h, mi, _ := t.Clock()
	two := func(b []byte, v int) []byte { return append(b, byte('0'+v/10), byte('0'+v%10)) }
	b = two(two(b, y/100), y%100)
	b = two(append(b, '-'), int(mo))
	b = two(append(b, '-'), d)
	b = two(append(b, ' '), h)
	return two(append(b, ':'), mi)
}

func (h *historyTable) end(dbPath string) error {
	if h.n == 0 {
		_, err := fmt.Fprintf(h.w, "no samples match in %s\n", dbPath)
		return err
	}
	h.t.omit[deckColumn] = !h.decks
	if err := h.t.write(h.w); err != nil {
		return err
	}
	_, err := fmt.Fprintf(h.w, "%d samples from %s. Advice only: follow the shop's written procedures.\n", h.n, dbPath)
	return err
}

func dash(s string) string {
	if s == "" {
		return "–"
	}
	return escape.Line(s)
}

// recordLine is one sample as a JSON line (history --json, export --json).
type recordLine struct {
	SampleID      int64     `json:"sample_id"`
	ResultID      int64     `json:"result_id"`
	SampleUID     string    `json:"sample_uid"`
	Site          string    `json:"site"`
	Deck          string    `json:"deck"`
	RecordedAt    time.Time `json:"recorded_at"`
	AnalysedAt    time.Time `json:"analysed_at"`
	StoredAt      time.Time `json:"stored_at"`
	Sample        string    `json:"sample"`
	Ladle         string    `json:"ladle"`
	Alloy         string    `json:"alloy"`
	Furnace       string    `json:"furnace"`
	Operator      string    `json:"operator"`
	Channel       string    `json:"channel"`
	Thermocouple  string    `json:"thermocouple"`
	Note          string    `json:"note"`
	CurvePath     string    `json:"curve_path"`
	CurveSHA256   string    `json:"curve_sha256"`
	Interrupted   bool      `json:"interrupted"`
	Simulated     bool      `json:"simulated"`
	LimitsVersion string    `json:"limits_version"`
	Verdict       string    `json:"verdict"`
	Reasons       []string  `json:"reasons"`
	Record        any       `json:"record"`
}

// recordLines writes entries as JSON lines, one recordLine each.
type recordLines struct{ enc *json.Encoder }

func newRecordLines(w io.Writer) *recordLines {
	enc := json.NewEncoder(escape.JSONWriter(w))
	enc.SetEscapeHTML(false)
	return &recordLines{enc}
}

func (j *recordLines) add(e *store.Entry) error {
	s, r := &e.Sample, &e.Result
	return j.enc.Encode(recordLine{
		SampleID: s.ID, ResultID: r.ID, SampleUID: s.UID, Site: s.Site, Deck: s.Deck, RecordedAt: s.Recorded.UTC(), AnalysedAt: r.Analysed.UTC(), StoredAt: s.Created.UTC(),
		Sample: s.Sample, Ladle: s.Ladle, Alloy: s.Alloy, Furnace: s.Furnace, Operator: s.Operator,
		Channel: s.Channel, Thermocouple: s.Thermocouple, Note: s.Note, CurvePath: s.CurvePath, CurveSHA256: s.CurveSHA256,
		Interrupted: s.Interrupted, Simulated: s.Simulated, LimitsVersion: r.LimitsVersion, Verdict: r.Verdict,
		Reasons: r.Reasons, Record: &r.Record,
	})
}

func (j *recordLines) end(string) error { return nil }
