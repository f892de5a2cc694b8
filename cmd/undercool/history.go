package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

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

// filter turns the flags into a store filter.
// entries reads the stored samples the flags select, after adjust has set
// what the command needs of the filter, and says which database they came
// from. A bad filter flag is a usage error (named on stderr under the
// command's name).
func (f *recordsFlags) entries(ctx context.Context, env *environ, cmd string, adjust func(*store.Filter)) ([]store.Entry, string, error) {
	flt, err := f.filter(time.Now())
	if err != nil {
		fmt.Fprintf(env.stderr, "undercool %s: %v\n", cmd, err)
		return nil, "", errUsage
	}
	adjust(&flt)
	db, err := readRecords(ctx, env, f.db)
	if err != nil {
		return nil, "", err
	}
	defer db.Close()
	es, err := db.History(ctx, flt)
	return es, db.Path(), err
}

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
	entries, dbPath, err := f.entries(ctx, env, "history", func(flt *store.Filter) { flt.Full = f.json || f.csv })
	if err != nil {
		return err
	}
	switch {
	case f.json:
		return writeJSONLines(env.stdout, entries)
	case f.csv:
		return writeRecordsCSV(env.stdout, entries, csvOptions{})
	}
	return writeHistoryTable(env.stdout, entries, dbPath)
}

// historyColumns are the figures the history table shows, with headings.
var historyColumns = []struct{ key, head string }{
	{"eutectic_min_c", "EUT MIN °C"},
	{"recalescence_c", "RECAL °C"},
	{"undercooling_c", "UNDERCOOL °C"},
	{"liquidus_c", "LIQUIDUS °C"},
}

func writeHistoryTable(w io.Writer, entries []store.Entry, dbPath string) error {
	if len(entries) == 0 {
		_, err := fmt.Fprintf(w, "no samples match in %s\n", dbPath)
		return err
	}
	decks := false // a DECK column once the rows come from more than one place
	for _, e := range entries {
		if e.Sample.Site != entries[0].Sample.Site || e.Sample.Deck != entries[0].Sample.Deck {
			decks = true
			break
		}
	}
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprint(tw, "ID\tRECORDED")
	if decks {
		fmt.Fprint(tw, "\tDECK")
	}
	fmt.Fprint(tw, "\tSAMPLE\tLADLE\tALLOY\tVERDICT")
	for _, c := range historyColumns {
		fmt.Fprintf(tw, "\t%s", c.head)
	}
	fmt.Fprintln(tw, "\tFLAGS")
	for i := range entries {
		s, r := &entries[i].Sample, &entries[i].Result
		fmt.Fprintf(tw, "%d\t%s", s.ID, s.Recorded.Local().Format("2006-01-02 15:04"))
		if decks {
			fmt.Fprintf(tw, "\t%s", dash(strings.Trim(s.Site+"/"+s.Deck, "/")))
		}
		fmt.Fprintf(tw, "\t%s\t%s\t%s\t%s", dash(s.Sample), dash(s.Ladle), dash(s.Alloy), r.Verdict)
		for _, c := range historyColumns {
			if v, ok := store.Value(&r.Record, c.key); ok {
				fmt.Fprintf(tw, "\t%.1f", v)
			} else {
				fmt.Fprint(tw, "\t–")
			}
		}
		var flags []string
		if s.Interrupted {
			flags = append(flags, "interrupted")
		}
		if s.Simulated {
			flags = append(flags, "simulated")
		}
		fmt.Fprintf(tw, "\t%s\n", strings.Join(flags, ","))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	_, err := fmt.Fprintf(w, "%d samples from %s. Advice only: follow the shop's written procedures.\n", len(entries), dbPath)
	return err
}

func dash(s string) string {
	if s == "" {
		return "–"
	}
	return s
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

func writeJSONLines(w io.Writer, entries []store.Entry) error {
	enc := json.NewEncoder(w)
	enc.SetEscapeHTML(false)
	for _, e := range entries {
		s, r := e.Sample, e.Result
		if err := enc.Encode(recordLine{
			SampleID: s.ID, ResultID: r.ID, SampleUID: s.UID, Site: s.Site, Deck: s.Deck, RecordedAt: s.Recorded.UTC(), AnalysedAt: r.Analysed.UTC(), StoredAt: s.Created.UTC(),
			Sample: s.Sample, Ladle: s.Ladle, Alloy: s.Alloy, Furnace: s.Furnace, Operator: s.Operator,
			Channel: s.Channel, Thermocouple: s.Thermocouple, Note: s.Note, CurvePath: s.CurvePath, CurveSHA256: s.CurveSHA256,
			Interrupted: s.Interrupted, Simulated: s.Simulated, LimitsVersion: r.LimitsVersion, Verdict: r.Verdict,
			Reasons: r.Reasons, Record: r.Record,
		}); err != nil {
			return err
		}
	}
	return nil
}
