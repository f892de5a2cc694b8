package main

import (
	"context"
	"encoding/csv"
	"flag"
	"fmt"
	"io"
	"strconv"
	"strings"
	"time"

	"github.com/undercool-foundry/undercool/internal/atomicfile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/store"
)

func init() {
	register(command{
		name:    "export",
		summary: "write the stored samples as CSV (for a spreadsheet) or JSON lines",
		run:     runExport,
	})
}

const exportUsage = `usage: undercool export [--csv|--json] [--decimal-comma] [--bom] [--out FILE]
                        [--site S] [--deck D] [--alloy A] [--furnace F] [--ladle L]
                        [--since D] [--until D] [--verdict V] [--all-results]
                        [--db PATH|postgres://…]

Writes the stored samples, oldest first, with every result figure: CSV with
a header row and ISO 8601 UTC times (default), or one JSON object a line.
--decimal-comma writes semicolon-separated CSV with decimal commas, as
spreadsheets set to most European locales expect. Text that a spreadsheet
would take for a formula (starting with = + - @) gets a leading '.
`

func runExport(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("export", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprint(env.stderr, exportUsage); fs.PrintDefaults() }
	var (
		f   recordsFlags
		opt csvOptions
		out string
	)
	f.register(fs)
	fs.BoolVar(&opt.decimalComma, "decimal-comma", false, "CSV with ';' separators and decimal commas")
	fs.BoolVar(&opt.bom, "bom", false, "start the CSV with a UTF-8 byte-order mark (for spreadsheets that need one)")
	fs.StringVar(&out, "out", "", "write to `FILE` (default standard output)")
	if help, err := parseNoArgs(fs, env, args); help || err != nil {
		return err
	}
	if f.json && (f.csv || opt.decimalComma || opt.bom) {
		fmt.Fprintln(env.stderr, "undercool export: --json does not go with --csv, --decimal-comma or --bom")
		return errUsage
	}
	db, flt, err := f.open(ctx, env, "export")
	if err != nil {
		return err
	}
	defer db.Close()
	flt.Full, flt.Oldest = true, true
	n := 0
	write := func(w io.Writer) error {
		var sink entrySink = newRecordsCSV(w, opt)
		if f.json {
			sink = newRecordLines(w)
		}
		return writeEntries(ctx, db, flt, counted{sink, &n})
	}
	if out == "" {
		return buffered(env.stdout, write)
	}
	if err := atomicfile.Write(out, 0o644, write); err != nil {
		return err
	}
	fmt.Fprintf(env.stderr, "wrote %d samples to %s\n", n, out)
	return nil
}

// counted is an entrySink that counts the entries added.
type counted struct {
	entrySink
	n *int
}

func (c counted) add(e *store.Entry) error {
	*c.n++
	return c.entrySink.add(e)
}

type csvOptions struct {
	decimalComma bool // ';' separators, ',' decimal marks
	bom          bool // UTF-8 byte-order mark first
}

// csvTextColumns are the text columns of the CSV, before the figures.
var csvTextColumns = []string{"sample_id", "result_id", "recorded_at", "analysed_at", "site", "deck", "sample", "ladle", "alloy", "furnace",
	"operator", "channel", "thermocouple", "verdict", "limits_version"}

// csvTailColumns follow the figures.
var csvTailColumns = []string{"samples", "rate_hz", "reasons", "advice", "curve_path", "curve_sha256", "interrupted", "simulated", "note", "sample_uid"}

// recordsCSV writes a header row and one row per entry: the sample's
// fields, every metric of store.Metrics() (empty where null), then the
// rest. Times are ISO 8601 UTC; lists are joined with " | ".
type recordsCSV struct {
	w       io.Writer
	cw      *csv.Writer
	opt     csvOptions
	metrics []string
	row     []string
	started bool // the header is written
}

func newRecordsCSV(w io.Writer, opt csvOptions) *recordsCSV {
	cw := csv.NewWriter(w)
	cw.UseCRLF = true // RFC 4180
	if opt.decimalComma {
		cw.Comma = ';'
	}
	return &recordsCSV{w: w, cw: cw, opt: opt, metrics: store.Metrics()}
}

// start writes the byte-order mark (if asked for) and the header, once.
func (c *recordsCSV) start() error {
	if c.started {
		return nil
	}
	c.started = true
	if c.opt.bom {
		if _, err := io.WriteString(c.w, "\uFEFF"); err != nil {
			return err
		}
	}
	head := append(append(append([]string{}, csvTextColumns...), c.metrics...), csvTailColumns...)
	c.row = make([]string, 0, len(head))
	return c.cw.Write(head)
}

func (c *recordsCSV) num(v float64) string {
	s := strconv.FormatFloat(v, 'f', -1, 64)
	if c.opt.decimalComma {
		s = strings.Replace(s, ".", ",", 1)
	}
	return s
}

func yes(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

func (c *recordsCSV) add(e *store.Entry) error {
	if err := c.start(); err != nil {
		return err
	}
	s, r := &e.Sample, &e.Result
	row := append(c.row[:0], strconv.FormatInt(s.ID, 10), strconv.FormatInt(r.ID, 10),
		s.Recorded.UTC().Format(time.RFC3339), r.Analysed.UTC().Format(time.RFC3339), csvText(s.Site), csvText(s.Deck),
		csvText(s.Sample), csvText(s.Ladle), csvText(s.Alloy), csvText(s.Furnace), csvText(s.Operator), csvText(s.Channel),
		csvText(s.Thermocouple), r.Verdict, csvText(r.LimitsVersion))
	for _, m := range c.metrics {
		if v, ok := store.Value(&r.Record, m); ok {
			row = append(row, c.num(v))
		} else {
			row = append(row, "")
		}
	}
	row = append(row, strconv.Itoa(r.Record.Samples), c.num(r.Record.RateHz),
		csvText(strings.Join(r.Reasons, " | ")), csvText(strings.Join(r.Record.Advice, " | ")),
		csvText(s.CurvePath), s.CurveSHA256, yes(s.Interrupted), yes(s.Simulated), csvText(s.Note), s.UID)
	c.row = row
	return c.cw.Write(row)
}

// end writes the header if no entry did, and flushes.
func (c *recordsCSV) end(string) error {
	if err := c.start(); err != nil {
		return err
	}
	c.cw.Flush()
	return c.cw.Error()
}

// csvText keeps a spreadsheet from taking text for a formula (OWASP, "CSV
// injection"): text starting with = + - @ (or a tab or CR) gets a leading '.
// Control characters are written as visible escapes (package escape), line
// breaks and tabs kept.
func csvText(s string) string {
	s = escape.Text(s)
	if s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return "'" + s
	}
	return s
}
