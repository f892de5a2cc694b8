package store

import (
	"encoding/binary"
	"errors"
	"strings"
	"time"
)

// The summary column of samples holds everything a history row shows of
// the sample and its latest result in one blob, so that a month of history
// is one narrow row per sample without a join (each column costs the
// driver about a quarter of a microsecond a row; see BenchmarkHistoryMonth).
// It is a copy, rewritten in the transaction that adds each result; the
// columns and the record JSON stay the truth.
//
// The plant database keeps the same blob, written by the deck that sent
// the result (so it names no row id of either database: the result's id
// is a column beside it).
//
// Layout: byte 0 the format (2); the sample's recorded and the result's
// analysed times as varint Unix milliseconds; then, each as a uvarint
// length and UTF-8 bytes: limits_version, verdict, reasons, problems (one
// a line), file, sample, ladle, alloy, furnace, operator, site, deck; a
// flags byte (1 interrupted, 2 simulated); then the packed numbers
// (packed.go) to the end. Format 1 (to schema version 5) had the result id
// after the format byte and no site or deck; a row holding one (written by
// an earlier undercool) is read the slow way until rebuilt.
const summaryFormat = 2

// summaryStrings is the number of strings in a summary.
const summaryStrings = 12

var errSummary = errors.New("summary is damaged")

func packSummary(s *Sample, r *Result, numbers []byte) []byte {
	strs := [summaryStrings]string{r.LimitsVersion, r.Verdict, joinLines(r.Reasons), joinLines(r.Record.Problems),
		r.Record.File, s.Sample, s.Ladle, s.Alloy, s.Furnace, s.Operator, s.Site, s.Deck}
	n := 12 + len(numbers)
	for _, x := range strs {
		n += len(x) + 2
	}
	b := make([]byte, 0, n)
	b = append(b, summaryFormat)
	b = binary.AppendVarint(b, s.Recorded.UnixMilli())
	b = binary.AppendVarint(b, r.Analysed.UnixMilli())
	for _, x := range strs {
		b = binary.AppendUvarint(b, uint64(len(x)))
		b = append(b, x...)
	}
	var flags byte
	if s.Interrupted {
		flags |= 1
	}
	if s.Simulated {
		flags |= 2
	}
	b = append(b, flags)
	return append(b, numbers...)
}

// summaryRows are history rows of the fast path kept to be decoded after
// the query (see historyFast): each row's sample and result id, and its
// summary. A driver's copy of a row is valid only until the next row, so
// the summaries are copied, one after another, into chunks of a MiB
// (never moved again: one allocation a chunk rather than one a row).
type summaryRows struct {
	ids    []int64 // the sample id and the result id of each row
	spans  []span  // where each row's summary is in chunks
	chunks [][]byte
}

type span struct{ chunk, start, end int }

// chunkSize is the size of the chunks that summaryRows and cells copy
// rows' bytes into (a summary is a few hundred bytes; a longer one gets a
// chunk of its own size).
const chunkSize = 1 << 20

func (r *summaryRows) add(id, resultID int64, summary []byte) {
	r.ids = append(r.ids, id, resultID)
	n := len(r.chunks)
	if n == 0 || cap(r.chunks[n-1])-len(r.chunks[n-1]) < len(summary) {
		r.chunks = append(r.chunks, make([]byte, 0, max(chunkSize, len(summary))))
		n++
	}
	c := &r.chunks[n-1]
	start := len(*c)
	*c = append(*c, summary...)
	r.spans = append(r.spans, span{n - 1, start, len(*c)})
}

// len is the number of rows.
func (r *summaryRows) len() int { return len(r.spans) }

// row gives row i: its ids and its summary.
func (r *summaryRows) row(i int) (id, resultID int64, summary []byte) {
	sp := r.spans[i]
	return r.ids[2*i], r.ids[2*i+1], r.chunks[sp.chunk][sp.start:sp.end]
}

// cells hands out the strings, string lists and numbers of decoded rows
// from shared chunks, one allocation a chunk rather than several a row. A
// slice handed out has its capacity cut to its length, so appending to it
// copies rather than writing into the next row's cells.
type cells struct {
	text  strings.Builder // the rows' text; its String shares the chunk, uncopied
	lines []string
	nums  []float64
}

// string copies b into the text chunk (starting a new chunk when it has
// too little room left) and returns it.
func (c *cells) string(b []byte) string {
	if c.text.Cap()-c.text.Len() < len(b) {
		c.text = strings.Builder{} // the strings cut from the last chunk keep it
		c.text.Grow(max(chunkSize, len(b)))
	}
	start := c.text.Len()
	c.text.Write(b)
	return c.text.String()[start:]
}

// take cuts n cells off the chunk, starting a new chunk when it has fewer
// left; the slice is never nil.
func take[T any](chunk *[]T, n int) []T {
	if *chunk == nil || cap(*chunk)-len(*chunk) < n {
		*chunk = make([]T, 0, max(n, 1024))
	}
	l := len(*chunk)
	*chunk = (*chunk)[:l+n]
	return (*chunk)[l : l+n : l+n]
}

// split splits s, as joinLines joined it, into a list whose cells come
// from c; no lines give an empty list, not nil.
func (c *cells) split(s string) []string {
	if s == "" {
		return take(&c.lines, 0)
	}
	out := take(&c.lines, strings.Count(s, "\n")+1)
	for i := range out {
		out[i], s, _ = strings.Cut(s, "\n")
	}
	return out
}

// current reports whether b is a summary of the current format (not
// missing, not of an earlier format).
func current(b []byte) bool { return len(b) > 0 && b[0] == summaryFormat }

// unpackSummary fills e (whose Sample.ID and Result.ID the caller sets)
// from the summary b, which may be a driver's buffer: e's strings are
// copied into c's text chunk, all of a row's text at once.
func unpackSummary(b []byte, e *Entry, c *cells) error {
	if len(b) < 2 || !current(b) {
		return errSummary
	}
	off := 1
	var ms [2]int64
	for i := range ms {
		v, k := binary.Varint(b[off:])
		if k <= 0 {
			return errSummary
		}
		ms[i], off = v, off+k
	}
	// the strings, each after its length: their span of b is copied once
	var at, lens [summaryStrings]int
	textStart := off
	for i := range lens {
		l, k := binary.Uvarint(b[off:])
		if k <= 0 || uint64(len(b)-off-k) < l {
			return errSummary
		}
		at[i], lens[i] = off+k-textStart, int(l)
		off += k + int(l)
	}
	if off >= len(b) {
		return errSummary
	}
	text := c.string(b[textStart:off])
	var strs [summaryStrings]string
	for i := range strs {
		strs[i] = text[at[i] : at[i]+lens[i]]
	}
	flags := b[off]
	s, r := &e.Sample, &e.Result
	r.SampleID = s.ID
	s.Recorded, r.Analysed = time.UnixMilli(ms[0]).UTC(), time.UnixMilli(ms[1]).UTC()
	r.LimitsVersion, r.Verdict = strs[0], strs[1]
	r.Reasons, r.Record.Problems, r.Record.File = c.split(strs[2]), c.split(strs[3]), strs[4]
	s.Sample, s.Ladle, s.Alloy, s.Furnace, s.Operator, s.Site, s.Deck = strs[5], strs[6], strs[7], strs[8], strs[9], strs[10], strs[11]
	s.Interrupted, s.Simulated = flags&1 != 0, flags&2 != 0
	r.Record.Alloy, r.Record.Verdict = s.Alloy, r.Verdict
	return unpackNumbers(b[off+1:], &r.Record, c)
}
