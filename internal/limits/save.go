package limits

import (
	"bytes"
	"fmt"
	"maps"
	"os"
	"os/user"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/BurntSushi/toml"

	"github.com/undercool-foundry/undercool/internal/atomicfile"
)

// now is the clock of Save (replaced in tests).
var now = time.Now

// Save is SaveBy with the system's user name as the editor.
func Save(path string, b *Book) error { return SaveBy(path, b, "") }

// SaveBy validates the book and writes it to path, recording who made the
// change (empty: the system's user name, UserName).
//
// An existing file is edited in place: only the values that differ from
// the file's own book change, byte for byte everything else stays
// (comments, inline notes, order, untouched zero values), and the stamp is
// renewed: "edited" (now), "edited_by" (who) and "version". The version is
// b.Version where the caller changed it, else the file's version counted
// up (NextVersion), so every saved book has a version of its own that the
// results judged by it record. Before the old text is replaced, the edited
// text is read back and must give the book asked for; the old file is
// copied to PATH.YYYYMMDDTHHMMSSZ.bak (never overwritten), the new text is
// written to a temporary file and renamed over path, and one line is
// appended to PATH.log: time, editor, version old → new, and each changed
// key with its old and new value. A missing file is written whole
// (Encode); so is one whose old text no longer reads, and the log says so.
// On success b carries the new stamp.
func SaveBy(path string, b *Book, who string) error {
	if err := b.Validate(); err != nil {
		return fmt.Errorf("limits: not saved: %w", err)
	}
	if who == "" {
		who = UserName()
	}
	if msg := checkText("edited_by", who); msg != "" {
		return fmt.Errorf("limits: not saved: the editor's name %s", msg)
	}
	t := now().UTC()
	old, err := readExisting(path)
	if err != nil {
		return err
	}
	var oldBook *Book
	if old != nil {
		oldBook, _ = Parse(old, path)
	}
	want := b.Clone()
	want.Calibration = b.Calibration
	want.Edited, want.EditedBy = t.Format(time.RFC3339), who
	oldVersion := ""
	if oldBook != nil {
		oldVersion = oldBook.Version
	}
	if b.Version == oldVersion {
		want.Version = unusedVersion(path, NextVersion(oldVersion))
	}
	var text []byte
	var changed []string
	switch {
	case old == nil:
		text, changed = Encode(want), []string{"created"}
	case oldBook == nil:
		text, changed = Encode(want), []string{"rewritten whole: the old text did not read as a limits file"}
	default:
		var edits []textEdit
		edits, changed = diffBooks(oldBook, want)
		if text, err = applyEdits(old, edits); err != nil {
			return fmt.Errorf("limits: not saved: %s: %w", path, err)
		}
	}
	back, err := Parse(text, path)
	if err != nil {
		return fmt.Errorf("limits: not saved, the edited text does not read back: %w", err)
	}
	if !bytes.Equal(Encode(back), Encode(want)) {
		return fmt.Errorf("limits: not saved: %s: the edited text does not read back as the book asked for (please report this)", path)
	}
	if _, err := backup(path, old, t); err != nil {
		return err
	}
	if err := writeFile(path, text); err != nil {
		return fmt.Errorf("limits: %w", err)
	}
	b.Version, b.Edited, b.EditedBy = want.Version, want.Edited, want.EditedBy
	if len(changed) == 0 {
		changed = []string{"no value changed"}
	}
	return appendLog(path, fmt.Sprintf("%s\t%s\tversion %s → %s\t%s\n", want.Edited, visible(who),
		visible(or(oldVersion, "-")), visible(want.Version), strings.Join(changed, "; ")))
}

// SaveEdits applies edits to the limits file at path (read afresh) and
// saves it with SaveBy: the edited values change in place, nothing else
// does. It returns the saved book (Source path) for the caller to use from
// then on, or an error naming the edit or the rule the edits break; the
// file is then left alone.
func SaveEdits(path string, edits []Edit, who string) (*Book, error) {
	b, err := Load(path)
	if err != nil {
		return nil, err
	}
	for _, e := range edits {
		if err := b.Apply(e); err != nil {
			return nil, fmt.Errorf("limits: not saved: %w", err)
		}
	}
	if err := SaveBy(path, b, who); err != nil {
		return nil, err
	}
	return b, nil
}

// readExisting reads the current file for an in-place save (nil when there
// is none).
func readExisting(path string) ([]byte, error) {
	if _, err := os.Stat(path); os.IsNotExist(err) {
		return nil, nil
	}
	return readBounded(path)
}

// diffBooks lists the key edits that turn old into new and the log text of
// each ("alloy.grey-iron.metric.eutectic_min_c.pass_min 1142 → 1143"). Both
// are compared in their canonical form (Encode), so a value the file
// writes differently (a zero offset left in, 3.90 for 3.9) is no change.
// The stamp keys (version, edited, edited_by) are edited but not listed:
// the log line names them on its own.
func diffBooks(old, new *Book) ([]textEdit, []string) {
	var edits []textEdit
	var log []string
	for _, c := range diffLeaves(leaves(Encode(old)), leaves(Encode(new))) {
		if c.gone {
			edits = append(edits, textEdit{path: c.path})
		} else {
			v := tomlValue(c.new)
			edits = append(edits, textEdit{path: c.path, value: &v})
		}
		if len(c.path) != 1 || !slices.Contains([]string{"version", "edited", "edited_by"}, c.path[0]) {
			log = append(log, c.String())
		}
	}
	return edits, log
}

// leafChange is one key whose value differs between two texts.
type leafChange struct {
	path        []string
	old, new    any
	added, gone bool
}

// String is the change for a log: "KEY 1142 → 1143", "KEY added 3.9",
// "KEY removed (was 0.5)".
func (c leafChange) String() string {
	key := visible(dotted(c.path))
	switch {
	case c.added:
		return key + " added " + display(c.new)
	case c.gone:
		return key + " removed (was " + display(c.old) + ")"
	}
	return key + " " + display(c.old) + " → " + display(c.new)
}

// diffLeaves lists the changed keys in key order.
func diffLeaves(a, b map[string]leaf) []leafChange {
	keys := map[string][]string{}
	for k, l := range a {
		keys[k] = l.path
	}
	for k, l := range b {
		keys[k] = l.path
	}
	var out []leafChange
	for _, k := range slices.Sorted(maps.Keys(keys)) {
		la, oka := a[k]
		lb, okb := b[k]
		if oka && okb && reflect.DeepEqual(la.value, lb.value) {
			continue
		}
		out = append(out, leafChange{path: keys[k], old: la.value, new: lb.value, added: !oka, gone: !okb})
	}
	return out
}

type leaf struct {
	path  []string
	value any
}

// leaves decodes a canonical limits text into its scalar and array values
// by key (parts joined by NUL, which no key holds).
func leaves(text []byte) map[string]leaf {
	var v map[string]any
	if _, err := toml.Decode(string(text), &v); err != nil {
		return nil
	}
	out := map[string]leaf{}
	var walk func(path []string, x any)
	walk = func(path []string, x any) {
		if m, ok := x.(map[string]any); ok && len(m) > 0 {
			for k, y := range m {
				walk(append(slices.Clone(path), k), y)
			}
			return
		}
		out[strings.Join(path, "\x00")] = leaf{path: path, value: x}
	}
	walk(nil, v)
	return out
}

// tomlValue writes a decoded TOML value as TOML text.
func tomlValue(x any) string {
	switch v := x.(type) {
	case string:
		return quote(v)
	case float64:
		return formatFloat(v)
	case int64:
		return strconv.FormatInt(v, 10)
	case bool:
		return strconv.FormatBool(v)
	case []any:
		parts := make([]string, len(v))
		for i, y := range v {
			parts[i] = tomlValue(y)
		}
		return "[" + strings.Join(parts, ", ") + "]"
	case map[string]any:
		parts := make([]string, 0, len(v))
		for _, k := range slices.Sorted(maps.Keys(v)) {
			parts = append(parts, quoteKey(k)+" = "+tomlValue(v[k]))
		}
		return "{ " + strings.Join(parts, ", ") + " }"
	}
	return quote(fmt.Sprint(x))
}

// display writes a value for the change log: numbers as the shortest
// decimal, text quoted, control characters escaped.
func display(x any) string {
	switch v := x.(type) {
	case float64:
		return strconv.FormatFloat(v, 'g', -1, 64)
	case string:
		return visible(strconv.Quote(v))
	}
	return visible(tomlValue(x))
}

// NextVersion counts a version label up: the number after its last dot
// goes up by one ("2026-12-01.1" → "2026-12-01.2"), and a label without
// one gets ".1" ("example-1" → "example-1.1"; "" → "1").
func NextVersion(v string) string {
	if v == "" {
		return "1"
	}
	if i := strings.LastIndexByte(v, '.'); i >= 0 {
		if n, err := strconv.ParseUint(v[i+1:], 10, 32); err == nil {
			return v[:i+1] + strconv.FormatUint(n+1, 10)
		}
	}
	return v + ".1"
}

// unusedVersion counts v up past every version the change log beside path
// has given a book before (a file restored from a backup would otherwise
// give an old number to a new book).
func unusedVersion(path, v string) string {
	logText, _ := os.ReadFile(path + ".log")
	used := map[string]bool{}
	for _, line := range strings.Split(string(logText), "\n") {
		f := strings.Split(line, "\t")
		if len(f) >= 3 && strings.HasPrefix(f[2], "version ") {
			if _, after, ok := strings.Cut(f[2], " → "); ok {
				used[after] = true
			}
		}
	}
	for used[v] {
		v = NextVersion(v)
	}
	return v
}

// UserName is the system's name for the user running the program ($USER,
// $USERNAME, else the account's name), or "unknown user".
func UserName() string {
	for _, k := range []string{"USER", "USERNAME", "LOGNAME"} {
		if v := strings.TrimSpace(os.Getenv(k)); v != "" && checkText("edited_by", v) == "" {
			return v
		}
	}
	if u, err := user.Current(); err == nil && u.Username != "" && checkText("edited_by", u.Username) == "" {
		return u.Username
	}
	return "unknown user"
}

// backup copies the old contents of path (nil: there was no file) to
// PATH.<time>.bak, never overwriting an older backup.
func backup(path string, old []byte, t time.Time) (string, error) {
	if old == nil {
		return "", nil
	}
	stamp := t.Format("20060102T150405Z")
	bak := fmt.Sprintf("%s.%s.bak", path, stamp)
	for i := 1; exists(bak); i++ {
		bak = fmt.Sprintf("%s.%s-%d.bak", path, stamp, i)
	}
	if err := writeFile(bak, old); err != nil {
		return "", fmt.Errorf("limits: backup before saving: %w", err)
	}
	return bak, nil
}

func exists(p string) bool { _, err := os.Stat(p); return err == nil }

// writeFile writes data to a temporary file beside path, syncs it and
// renames it over path, so a crash leaves either the old or the new file.
func writeFile(path string, data []byte) error {
	return atomicfile.WriteBytes(path, data, 0o644)
}

// changes lists the keys whose values differ between two calibration
// texts, as diffBooks does for books: "calibration.liquidus.a 1660 → 1662".
func changes(old, new []byte) []string {
	if old == nil {
		return []string{"created"}
	}
	var out []string
	for _, c := range diffLeaves(leaves(old), leaves(new)) {
		out = append(out, c.String())
	}
	if len(out) == 0 {
		return []string{"no value changed"}
	}
	return out
}

// Encode writes the book as limits-file text: top-level stamp, then the
// calibration, then each alloy in name order with its metrics in the fixed
// metric order. Unset optional values are left out.
func Encode(b *Book) []byte {
	var w bytes.Buffer
	w.WriteString("# undercool limits file (format: docs/limits.md). Temperatures in °C,\n")
	w.WriteString("# times in s, chemistry in wt %. The shop's metallurgist is responsible for every number;\n")
	w.WriteString("# verdicts assist the shop's written procedures and never replace them.\n\n")
	scalar(&w, "version", b.Version)
	scalar(&w, "edited", b.Edited)
	scalar(&w, "edited_by", b.EditedBy)
	scalar(&w, "note", b.Note)
	if b.CalibrationFile != "" {
		scalar(&w, "calibration_file", b.CalibrationFile)
	} else if b.Calibration != nil {
		EncodeCalibration(&w, b.Calibration)
	}
	for _, n := range b.Names() {
		a := b.Alloys[n]
		base := "alloy." + quoteKey(n)
		fmt.Fprintf(&w, "\n[%s]\n", base)
		fields(&w, base, reflect.ValueOf(a).Elem())
		for _, m := range sortedMetrics(a.Metrics) {
			fmt.Fprintf(&w, "\n[%s.metric.%s]\n", base, quoteKey(m))
			fields(&w, base+".metric."+quoteKey(m), reflect.ValueOf(a.Metrics[m]).Elem())
		}
	}
	encodeInoculants(&w, b)
	return w.Bytes()
}

// EncodeCalibration writes a [calibration] table (for `undercool calibrate`).
func EncodeCalibration(w *bytes.Buffer, c *Calibration) {
	w.WriteString("\n[calibration]\n")
	fields(w, "calibration", reflect.ValueOf(c).Elem())
}

// fields writes a struct's set scalar fields, then its sub-tables. Maps of
// numbers become inline tables; maps of structs are written by the caller.
func fields(w *bytes.Buffer, path string, v reflect.Value) {
	t := v.Type()
	var subs []int
	for i := range t.NumField() {
		tag := t.Field(i).Tag.Get("toml")
		if tag == "" || tag == "-" {
			continue
		}
		f := v.Field(i)
		switch {
		case f.Kind() == reflect.Pointer && f.Type().Elem().Kind() == reflect.Struct:
			if !f.IsNil() {
				subs = append(subs, i)
			}
		case f.Kind() == reflect.Struct:
			subs = append(subs, i)
		case f.Kind() == reflect.Map && f.Type().Elem().Kind() == reflect.Float64:
			if f.Len() > 0 {
				m := f.Interface().(map[string]float64)
				parts := make([]string, 0, len(m))
				for _, k := range slices.Sorted(maps.Keys(m)) {
					parts = append(parts, quoteKey(k)+" = "+formatFloat(m[k]))
				}
				fmt.Fprintf(w, "%s = { %s }\n", tag, strings.Join(parts, ", "))
			}
		case f.Kind() == reflect.Map:
			// alloy and metric tables: written by Encode
		default:
			if s, ok := value(f); ok {
				fmt.Fprintf(w, "%s = %s\n", tag, s)
			}
		}
	}
	for _, i := range subs {
		f := v.Field(i)
		if f.Kind() == reflect.Pointer {
			f = f.Elem()
		}
		var inner bytes.Buffer
		sub := path + "." + t.Field(i).Tag.Get("toml")
		fields(&inner, sub, f)
		if inner.Len() > 0 {
			fmt.Fprintf(w, "\n[%s]\n", sub)
			w.Write(inner.Bytes())
		}
	}
}

// value formats a set scalar; zero values (and nil pointers) are unset.
func value(f reflect.Value) (string, bool) {
	if f.Kind() == reflect.Pointer {
		if f.IsNil() {
			return "", false
		}
		return value2(f.Elem(), true)
	}
	return value2(f, false)
}

func value2(f reflect.Value, keepZero bool) (string, bool) {
	switch f.Kind() {
	case reflect.String:
		if f.String() == "" && !keepZero {
			return "", false
		}
		return quote(f.String()), true
	case reflect.Float64:
		if f.Float() == 0 && !keepZero {
			return "", false
		}
		return formatFloat(f.Float()), true
	case reflect.Int:
		if f.Int() == 0 && !keepZero {
			return "", false
		}
		return strconv.FormatInt(f.Int(), 10), true
	case reflect.Bool:
		if !f.Bool() && !keepZero {
			return "", false
		}
		return strconv.FormatBool(f.Bool()), true
	case reflect.Slice:
		if f.Len() == 0 {
			return "", false
		}
		parts := make([]string, f.Len())
		for i := range f.Len() {
			s, _ := value2(f.Index(i), true)
			parts[i] = s
		}
		return "[" + strings.Join(parts, ", ") + "]", true
	}
	return "", false
}

func scalar(w *bytes.Buffer, key, v string) {
	if v != "" {
		fmt.Fprintf(w, "%s = %s\n", key, quote(v))
	}
}

// formatFloat writes a TOML float that reads back as a float.
func formatFloat(v float64) string {
	s := strconv.FormatFloat(v, 'g', -1, 64)
	if !strings.ContainsAny(s, ".eEn") {
		s += ".0"
	}
	return s
}

// quote writes a TOML basic string.
func quote(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for _, r := range s {
		switch {
		case r == '"':
			b.WriteString(`\"`)
		case r == '\\':
			b.WriteString(`\\`)
		case r == '\n':
			b.WriteString(`\n`)
		case r == '\t':
			b.WriteString(`\t`)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(&b, `\u%04X`, r)
		default:
			b.WriteRune(r)
		}
	}
	b.WriteByte('"')
	return b.String()
}

// quoteKey quotes a key that is not a bare TOML key.
func quoteKey(k string) string {
	for _, r := range k {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '_' || r == '-') {
			return quote(k)
		}
	}
	if k == "" {
		return `""`
	}
	return k
}

// SaveCalibration writes a file holding only a [calibration] table (what
// `undercool calibrate --out` writes, for a limits file's calibration_file),
// keeping a timestamped backup of an existing file and logging the change in
// PATH.log, as Save does.
func SaveCalibration(path string, c *Calibration) error {
	var w bytes.Buffer
	w.WriteString("# undercool shop calibration, fitted by `undercool calibrate` to the shop's own pairs of cup\n")
	w.WriteString("# results and spectrometer analyses. Name it in the limits file with calibration_file = \"...\".\n")
	w.WriteString("# Check the fit quality figures below with the shop's metallurgist before use.\n")
	EncodeCalibration(&w, c)
	t := now().UTC()
	old, err := readExisting(path)
	if err != nil {
		return err
	}
	if _, err := backup(path, old, t); err != nil {
		return err
	}
	if err := writeFile(path, w.Bytes()); err != nil {
		return fmt.Errorf("limits: %w", err)
	}
	return appendLog(path, fmt.Sprintf("%s\tundercool calibrate\tpairs %s\t%s\n", t.Format(time.RFC3339), c.Pairs, strings.Join(changes(old, w.Bytes()), "; ")))
}

func appendLog(path, entry string) error {
	f, err := os.OpenFile(path+".log", os.O_APPEND|os.O_CREATE|os.O_WRONLY, 0o644)
	if err != nil {
		return fmt.Errorf("limits: saved, but the change log: %w", err)
	}
	_, err = f.WriteString(entry)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("limits: saved, but the change log: %w", err)
	}
	return nil
}

// Clone returns a deep copy of the book (for an editor that may cancel).
func (b *Book) Clone() *Book {
	c := &Book{}
	if parsed, err := Parse(Encode(b), b.Source); err == nil {
		c = parsed
	} else {
		// An invalid book cannot go through the text form: copy by hand.
		*c = *b
		c.Alloys = make(map[string]*Alloy, len(b.Alloys))
		for n, a := range b.Alloys {
			ac := *a
			ac.Chemistry = maps.Clone(a.Chemistry)
			ac.Reference.LiquidusSlopes = maps.Clone(a.Reference.LiquidusSlopes)
			ac.Reference.EutecticDepressors = maps.Clone(a.Reference.EutecticDepressors)
			ac.Detect.LiquidusC = slices.Clone(a.Detect.LiquidusC)
			ac.Detect.EutecticC = slices.Clone(a.Detect.EutecticC)
			ac.Detect.PourMinC = copyPtr(a.Detect.PourMinC)
			ac.Metrics = make(map[string]*Limit, len(a.Metrics))
			for m, l := range a.Metrics {
				lc := *l
				lc.PassMin, lc.PassMax = copyPtr(l.PassMin), copyPtr(l.PassMax)
				lc.MarginalMin, lc.MarginalMax = copyPtr(l.MarginalMin), copyPtr(l.MarginalMax)
				lc.Spoils = slices.Clone(l.Spoils)
				ac.Metrics[m] = &lc
			}
			c.Alloys[n] = &ac
		}
	}
	c.Source = b.Source
	if b.Calibration != nil && b.CalibrationFile != "" {
		cal := *b.Calibration
		c.Calibration = &cal
	}
	return c
}

func copyPtr(p *float64) *float64 {
	if p == nil {
		return nil
	}
	v := *p
	return &v
}
