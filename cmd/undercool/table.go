package main

import (
	"bytes"
	"io"
	"unicode/utf8"
)

// table lays out rows of cells in columns as text/tabwriter does with
// padding 2 and no flags (each column as wide as its widest cell, counted
// in runes, and two spaces; the last cell of a row as it is), for tables of
// tens of thousands of rows, such as a month of plant history. The cells
// are kept as tabwriter's input is, each ended by a tab and a row by a
// newline, in chunks of 1 MiB that are never moved or copied (a row is not
// split between two), with no allocation or formatting call a cell; a tab,
// newline, carriage return, vertical tab or form feed inside a cell becomes
// a space, so that a cell's text cannot break the layout (and the byte
// 0xff is text, not tabwriter's escape). For 30,000 rows of history,
// tabwriter and fmt took 65–85 ms; see BenchmarkHistoryTable.
type table struct {
	ncol   int
	chunks [][]byte // the full chunks
	buf    []byte   // the chunk being filled: a cell's text is appended here, then end
	start  int      // where the cell being added starts in buf
	col    int      // its column
	width  []int    // the widest cell of each column, in runes
	omit   []bool   // columns left out when written
}

const (
	tableChunk  = 1 << 20 // bytes
	tableRowMax = 4 << 10 // a new chunk is begun after a row when less room is left
)

func newTable(ncol int) *table {
	return &table{ncol: ncol, buf: make([]byte, 0, tableChunk), width: make([]int, ncol), omit: make([]bool, ncol)}
}

// cellWidth is the width of a cell in runes (as tabwriter counts it: each
// UTF-8 sequence or invalid byte is one), after turning the characters
// that would break the layout into spaces.
func cellWidth(cell []byte) int {
	ascii := true
	for i, c := range cell {
		if c >= ' ' && c < utf8.RuneSelf { // printable ASCII: most of every cell
			continue
		}
		if c >= utf8.RuneSelf {
			ascii = false
		} else if c == '\t' || c == '\n' || c == '\r' || c == '\v' || c == '\f' {
			cell[i] = ' '
		}
	}
	if ascii {
		return len(cell)
	}
	return utf8.RuneCount(cell)
}

// end ends the cell whose text was appended to t.buf since the last end.
func (t *table) end() {
	t.endWidth(cellWidth(t.buf[t.start:]))
}

// endASCII is end for a cell of printable ASCII that the caller made
// itself (digits, a time): its width is its length, unchecked.
func (t *table) endASCII() {
	t.endWidth(len(t.buf) - t.start)
}

func (t *table) endWidth(w int) {
	if w > t.width[t.col] {
		t.width[t.col] = w
	}
	t.col++
	if t.col < t.ncol {
		t.buf = append(t.buf, '\t')
		t.start = len(t.buf)
		return
	}
	t.buf = append(t.buf, '\n')
	t.col = 0
	if cap(t.buf)-len(t.buf) < tableRowMax {
		t.chunks = append(t.chunks, t.buf)
		t.buf = make([]byte, 0, tableChunk)
	}
	t.start = len(t.buf)
}

// text adds a cell holding s.
func (t *table) text(s string) {
	t.buf = append(t.buf, s...)
	t.end()
}

const spaces = "                                " // padding, a piece at a time

// write writes the rows to w, the cells padded into columns, but for the
// columns omitted.
func (t *table) write(w io.Writer) error {
	const padding = 2
	var line []byte
	for _, chunk := range append(t.chunks, t.buf) {
		for col := 0; len(chunk) > 0; col = (col + 1) % t.ncol {
			sep := byte('\t')
			if col == t.ncol-1 {
				sep = '\n'
			}
			i := bytes.IndexByte(chunk, sep)
			if i < 0 { // a row not ended (never written)
				break
			}
			text := chunk[:i]
			chunk = chunk[i+1:]
			if !t.omit[col] {
				line = append(line, text...)
			}
			if col < t.ncol-1 {
				for n := t.width[col] + padding - cellWidth(text); n > 0 && !t.omit[col]; n -= len(spaces) {
					line = append(line, spaces[:min(n, len(spaces))]...)
				}
				continue
			}
			if _, err := w.Write(append(line, '\n')); err != nil {
				return err
			}
			line = line[:0]
		}
	}
	return nil
}
