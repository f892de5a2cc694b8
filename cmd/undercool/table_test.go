package main

import (
	"bytes"
	"fmt"
	"io"
	"strings"
	"testing"
	"text/tabwriter"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/store"
)

// tabwriterLayout is the reference: the rows laid out by text/tabwriter
// as the history table was before (minwidth 0, tabwidth 4, padding 2,
// spaces, no flags).
func tabwriterLayout(rows [][]string) string {
	var b bytes.Buffer
	tw := tabwriter.NewWriter(&b, 0, 4, 2, ' ', 0)
	for _, r := range rows {
		fmt.Fprintln(tw, strings.Join(r, "\t"))
	}
	tw.Flush()
	return b.String()
}

func tableLayout(rows [][]string, omit int) string {
	t := newTable(len(rows[0]))
	if omit >= 0 {
		t.omit[omit] = true
	}
	for _, r := range rows {
		for _, c := range r {
			t.text(c)
		}
	}
	var b bytes.Buffer
	if err := t.write(&b); err != nil {
		panic(err)
	}
	return b.String()
}

// TestTableMatchesTabwriter checks table's layout against text/tabwriter's
// on the same cells: multi-byte runes, empty cells (in the last column
// too), an invalid UTF-8 byte, an omitted column, and enough rows to fill
// several chunks.
func TestTableMatchesTabwriter(t *testing.T) {
	small := [][]string{
		{"ID", "RECORDED", "SAMPLE", "EUT MIN °C", "FLAGS"},
		{"17", "2026-12-01 06:00", "L-2417 cup 1", "1147.5", ""},
		{"9", "", "L-24 cup 2 – Odile’s", "–", "interrupted,simulated"},
		{"123456", "2026-12-01 06:10", "bad \xc3 byte", "", "simulated"},
	}
	var many [][]string
	for i := range 25000 { // about 2.5 MB: three chunks
		many = append(many, []string{fmt.Sprint(i), strings.Repeat("é", i%37), fmt.Sprintf("L-%d cup %d", 2000+i, i%3), "–", strings.Repeat("x", i%5)})
	}
	for _, tc := range []struct {
		name string
		rows [][]string
	}{{"small", small}, {"many", many}} {
		if got, want := tableLayout(tc.rows, -1), tabwriterLayout(tc.rows); got != want {
			t.Errorf("%s: layout differs from tabwriter's (%d and %d bytes):\n%q\nwant\n%q", tc.name, len(got), len(want), head(got), head(want))
		}
		without := make([][]string, len(tc.rows))
		for i, r := range tc.rows {
			without[i] = append(append([]string{}, r[:2]...), r[3:]...)
		}
		if got, want := tableLayout(tc.rows, 2), tabwriterLayout(without); got != want {
			t.Errorf("%s, column 2 omitted: layout differs from tabwriter's of the rows without it:\n%s\nwant\n%s", tc.name, head(got), head(want))
		}
	}
}

func head(s string) string {
	if len(s) > 400 {
		return s[:400] + "…"
	}
	return s
}

// TestTableControlCharacters checks that a tab, newline, carriage return,
// vertical tab or form feed inside a cell becomes a space instead of
// breaking the row.
func TestTableControlCharacters(t *testing.T) {
	got := tableLayout([][]string{{"A", "B"}, {"x\ty\nz\r\v\f", "end"}}, -1)
	if want := "A         B\nx y z     end\n"; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
}

// TestHistoryTableDeckColumn checks that the DECK column appears once the
// rows come from more than one place, and only then.
func TestHistoryTableDeckColumn(t *testing.T) {
	for _, tc := range []struct {
		decks []string
		want  bool
	}{{[]string{"deck-1", "deck-1"}, false}, {[]string{"deck-1", "deck-2"}, true}} {
		var b bytes.Buffer
		h := newHistoryTable(&b)
		for i, d := range tc.decks {
			e := store.Entry{Sample: store.Sample{ID: int64(i + 1), Site: "cindermoth-north", Deck: d, Alloy: "grey-iron"}}
			e.Result.Verdict = assess.VerdictPass
			h.add(&e)
		}
		if err := h.end("records.db"); err != nil {
			t.Fatal(err)
		}
		if got := strings.Contains(strings.SplitN(b.String(), "\n", 2)[0], "DECK"); got != tc.want {
			t.Errorf("decks %v: DECK column %v, want %v:\n%s", tc.decks, got, tc.want, b.String())
		}
	}
}

// TestAppendMinute checks appendMinute against time's own AppendFormat
// (the reference) in zones with whole-hour, half-hour and 45-minute
// offsets, across a leap day, at the ends of four-digit years and beyond.
func TestAppendMinute(t *testing.T) {
	zones := []*time.Location{time.UTC, time.Local, time.FixedZone("+0530", 5*3600+1800), time.FixedZone("-0330", -3*3600-1800), time.FixedZone("+0545", 5*3600+2700)}
	times := []time.Time{
		time.Date(2028, 2, 29, 23, 59, 59, 999, time.UTC), time.Date(2026, 12, 31, 18, 30, 0, 0, time.UTC),
		time.Date(1, 1, 1, 0, 0, 0, 0, time.UTC), time.Date(9999, 12, 31, 23, 0, 0, 0, time.UTC),
		time.Date(10000, 1, 1, 0, 0, 0, 0, time.UTC), time.Date(-5, 6, 1, 12, 0, 0, 0, time.UTC),
	}
	for i := range 1000 { // every 7 hours 13 minutes for 300 days
		times = append(times, time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC).Add(time.Duration(i)*(7*time.Hour+13*time.Minute)))
	}
	for _, z := range zones {
		for _, tm := range times {
			tm = tm.In(z)
			if got, want := string(appendMinute([]byte("x"), tm)), "x"+tm.Format("2006-01-02 15:04"); got != want {
				t.Errorf("%v: %q, want %q", tm, got, want)
			}
		}
	}
}

// BenchmarkHistoryTable lays out a month of plant history for one alloy
// (30,000 rows from twenty decks, constructed) as the history command
// does, one reused Entry at a time as the store gives them, and writes it
// to io.Discard: the command's own share of 'undercool history'.
func BenchmarkHistoryTable(b *testing.B) {
	const n = 30000
	names, ladles, decks := make([]string, n), make([]string, n), make([]string, 20)
	for i := range n {
		names[i], ladles[i] = fmt.Sprintf("L-%d cup 1", 2000+i/20), fmt.Sprintf("L-%d", 2000+i/20)
	}
	for d := range decks {
		decks[d] = fmt.Sprintf("deck-%d", d+1)
	}
	eut, recal := 1147.5, 3.25
	start := time.Date(2026, 11, 1, 0, 0, 0, 0, time.UTC)
	for b.Loop() {
		h := newHistoryTable(io.Discard)
		var e store.Entry
		for i := range n {
			e = store.Entry{Sample: store.Sample{ID: int64(90000 - i), Recorded: start.Add(time.Duration(i/20) * 86 * time.Second),
				Site: "cindermoth-north", Deck: decks[i%20], Sample: names[i], Ladle: ladles[i], Alloy: "grey-iron"}}
			e.Result.Verdict = assess.VerdictPass
			e.Result.Record.EutecticMinC, e.Result.Record.RecalescenceC = &eut, &recal
			if err := h.add(&e); err != nil {
				b.Fatal(err)
			}
		}
		if err := h.end("postgres://quality_office@plant-db/undercool"); err != nil {
			b.Fatal(err)
		}
	}
}
