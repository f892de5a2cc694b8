package limits

import (
	"bytes"
	"fmt"
	"slices"
	"strings"
)

// textEdit sets (Value non-nil: TOML value text) or removes (nil) one key
// of a limits text.
type textEdit struct {
	path  []string
	value *string
}

// applyEdits makes each edit in place and keeps every other byte of data:
// a changed value replaces the old value's text (a comment after it stays);
// a removed key loses its line (a comment on that line stays, on a line of
// its own); a new key goes after the last key of its table, or into its
// inline table, or, where its table does not exist, under a new [table]
// header after the last table of the same group (alloy.NAME...). Text
// scanText cannot follow, or a key inside an array of tables, is refused.
func applyEdits(data []byte, edits []textEdit) ([]byte, error) {
	out := bytes.Clone(data)
	for _, e := range edits {
		var err error
		if out, err = applyEdit(out, e); err != nil {
			return nil, fmt.Errorf("%s: %w", dotted(e.path), err)
		}
	}
	return out, nil
}

func dotted(path []string) string {
	parts := make([]string, len(path))
	for i, p := range path {
		parts[i] = quoteKey(p)
	}
	return strings.Join(parts, ".")
}

func splice(data []byte, from, to int, with string) []byte {
	out := make([]byte, 0, len(data)-(to-from)+len(with))
	out = append(out, data[:from]...)
	out = append(out, with...)
	return append(out, data[to:]...)
}

func applyEdit(data []byte, e textEdit) ([]byte, error) {
	doc, err := scanText(data)
	if err != nil {
		return nil, fmt.Errorf("cannot edit the file in place (%v)", err)
	}
	for _, t := range doc.tables {
		if t.array && hasPrefix(e.path, t.path) {
			return nil, fmt.Errorf("is inside an array of tables [[%s]], which a limits file does not use", dotted(t.path))
		}
	}
	if i := doc.find(e.path); i >= 0 {
		en := doc.entries[i]
		if e.value != nil {
			return splice(data, en.valStart, en.valEnd, *e.value), nil
		}
		return doc.remove(en), nil
	}
	if e.value == nil {
		return data, nil // already absent
	}
	return doc.insert(e.path, *e.value), nil
}

func hasPrefix(path, prefix []string) bool {
	return len(path) >= len(prefix) && slices.Equal(path[:len(prefix)], prefix)
}

// find is the index of the entry with exactly this key, or -1.
func (doc *tomlText) find(path []string) int {
	for i, en := range doc.entries {
		if slices.Equal(en.path, path) {
			return i
		}
	}
	return -1
}

// remove deletes an entry: from its inline table with one comma, or its
// whole line (keeping a trailing comment where there is one).
func (doc *tomlText) remove(en tomlEntry) []byte {
	d := doc.data
	if en.inline {
		from, to := en.keyStart, en.valEnd
		j := to
		for j < len(d) && (d[j] == ' ' || d[j] == '\t') {
			j++
		}
		if j < len(d) && d[j] == ',' { // "a = 1, b = 2" → "b = 2"
			to = j + 1
			for to < len(d) && (d[to] == ' ' || d[to] == '\t') {
				to++
			}
		} else { // the last one: "a = 1, b = 2" → "a = 1"
			k := from
			for k > 0 && (d[k-1] == ' ' || d[k-1] == '\t') {
				k--
			}
			if k > 0 && d[k-1] == ',' {
				from = k - 1
			}
		}
		return splice(d, from, to, "")
	}
	if en.comment >= 0 {
		indent := d[en.lineStart:en.keyStart]
		return splice(d, en.lineStart, en.lineEnd, string(indent)+string(d[en.comment:en.lineEnd]))
	}
	return splice(d, en.lineStart, en.lineEnd, "")
}

// insert adds a key that the text does not have.
func (doc *tomlText) insert(path []string, value string) []byte {
	d := doc.data
	parent, last := path[:len(path)-1], path[len(path)-1]
	line := func(rel []string) string { return dotted(rel) + " = " + value + "\n" }
	at := func(pos int, text string) []byte {
		if pos > 0 && d[pos-1] != '\n' {
			text = "\n" + text
		}
		return splice(d, pos, pos, text)
	}
	// Its table has a header: after the table's last key.
	for _, t := range doc.tables {
		if slices.Equal(t.path, parent) {
			return at(t.lastEntryLineEnd, line([]string{last}))
		}
	}
	// Its table (or an enclosing one) is an inline table: inside the braces.
	best := -1
	for i, en := range doc.entries {
		if len(en.path) < len(path) && hasPrefix(path, en.path) && d[en.valStart] == '{' &&
			(best < 0 || len(en.path) > len(doc.entries[best].path)) {
			best = i
		}
	}
	if best >= 0 {
		en := doc.entries[best]
		kv := dotted(path[len(en.path):]) + " = " + value
		inner := bytes.TrimRight(d[en.valStart+1:en.valEnd-1], " \t")
		if len(bytes.TrimSpace(inner)) == 0 {
			return splice(d, en.valStart, en.valEnd, "{ "+kv+" }")
		}
		pos := en.valStart + 1 + len(inner)
		return splice(d, pos, pos, ", "+kv)
	}
	// Its table is made by dotted keys (ce.pass_min = 1 under [alloy.x.metric]):
	// after the last of them, with the same dotted form.
	for i := len(doc.entries) - 1; i >= 0; i-- {
		en := doc.entries[i]
		if !en.inline && len(en.path) > len(parent) && hasPrefix(en.path, parent) {
			head := doc.header(en)
			if len(head) < len(parent) {
				return at(en.lineEnd, line(path[len(head):]))
			}
		}
	}
	// A top-level key: after the last top-level key, else before the first
	// table (and the comment lines directly above it).
	if len(parent) == 0 {
		first := len(d)
		if len(doc.tables) > 0 {
			first = doc.tables[0].start
		}
		end := -1
		for _, en := range doc.entries {
			if !en.inline && en.lineStart < first {
				end = max(end, en.lineEnd)
			}
		}
		if end >= 0 {
			return at(end, line(path))
		}
		pos := first
		for pos > 0 {
			prev := bytes.LastIndexByte(d[:pos-1], '\n') + 1
			if !bytes.HasPrefix(bytes.TrimLeft(d[prev:pos], " \t"), []byte("#")) {
				break
			}
			pos = prev
		}
		return at(pos, line(path))
	}
	// A new table: its header after the last table of the longest group it
	// shares (alloy.grey-iron for alloy.grey-iron.metric.plateau_s), else at
	// the end of the file.
	pos, depth := len(d), 0
	for _, t := range doc.tables {
		n := 0
		for n < len(t.path) && n < len(parent) && t.path[n] == parent[n] {
			n++
		}
		if n > 0 && n >= depth {
			pos, depth = t.lastEntryLineEnd, n
		}
	}
	return at(pos, "\n["+dotted(parent)+"]\n"+line([]string{last}))
}

// header is the path of the table section an entry is written in.
func (doc *tomlText) header(en tomlEntry) []string {
	var head []string
	for _, t := range doc.tables {
		if t.start > en.keyStart {
			break
		}
		head = t.path
	}
	return head
}
