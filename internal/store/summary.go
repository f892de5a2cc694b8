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

// unpackSummary fills e (whose Sample.ID and Result.ID the caller sets).
func unpackSummary(b []byte, e *Entry) error {
	if len(b) < 2 || b[0] != summaryFormat {
		return errSummary
	}
	b = b[1:]
	var k int
	var ms [2]int64
	for i := range ms {
		if ms[i], k = binary.Varint(b); k <= 0 {
			return errSummary
		}
		b = b[k:]
	}
	// one string for all the text of the row
	var strs [summaryStrings]string
	var lens [summaryStrings]int
	total := 0
	rest := b
	for i := range lens {
		l, k := binary.Uvarint(rest)
		if k <= 0 || uint64(len(rest)-k) < l {
			return errSummary
		}
		lens[i] = int(l)
		total += int(l)
		rest = rest[k+int(l):]
	}
	var sb strings.Builder
	sb.Grow(total)
	for i := range lens {
		_, k := binary.Uvarint(b)
		sb.Write(b[k : k+lens[i]])
		b = b[k+lens[i]:]
	}
	all, off := sb.String(), 0
	for i, l := range lens {
		strs[i] = all[off : off+l]
		off += l
	}
	if len(b) < 1 {
		return errSummary
	}
	s, r := &e.Sample, &e.Result
	r.SampleID = s.ID
	s.Recorded, r.Analysed = time.UnixMilli(ms[0]).UTC(), time.UnixMilli(ms[1]).UTC()
	r.LimitsVersion, r.Verdict = strs[0], strs[1]
	r.Reasons, r.Record.Problems, r.Record.File = splitLines(strs[2]), splitLines(strs[3]), strs[4]
	s.Sample, s.Ladle, s.Alloy, s.Furnace, s.Operator, s.Site, s.Deck = strs[5], strs[6], strs[7], strs[8], strs[9], strs[10], strs[11]
	s.Interrupted, s.Simulated = b[0]&1 != 0, b[0]&2 != 0
	r.Record.Alloy, r.Record.Verdict = s.Alloy, r.Verdict
	return unpackNumbers(b[1:], &r.Record)
}
