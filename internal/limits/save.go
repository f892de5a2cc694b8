package limits

import (
	"bytes"
	"fmt"
	"maps"
	"os"
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

// Save validates the book and writes it to path as a limits file, setting
// its "edited" stamp. An existing file is first copied to a backup beside it
// (PATH.YYYYMMDDTHHMMSSZ.bak, never overwritten), the new text is written to
// a temporary file and renamed over path, and the change is appended with
// its time, editor and the keys that changed to the sidecar log PATH.log.
func Save(path string, b *Book) error {
	if err := b.Validate(); err != nil {
		return fmt.Errorf("limits: not saved: %w", err)
	}
	t := now().UTC()
	saved := *b
	saved.Edited = t.Format(time.RFC3339)
	text := Encode(&saved)
	if _, err := Parse(text, path); err != nil {
		return fmt.Errorf("limits: not saved, the encoded text does not read back: %w", err)
	}
	old, err := backup(path, t)
	if err != nil {
		return err
	}
	if err := writeFile(path, text); err != nil {
		return fmt.Errorf("limits: %w", err)
	}
	b.Edited = saved.Edited
	return appendLog(path, fmt.Sprintf("%s\t%s\tversion %s\t%s\n", saved.Edited, or(saved.EditedBy, "unknown editor"),
		or(saved.Version, "-"), strings.Join(changes(old, text), "; ")))
}

// backup copies an existing file to PATH.<time>.bak (never overwriting an
// older backup) and returns its old contents; nil when there was no file.
func backup(path string, t time.Time) ([]byte, error) {
	old, err := os.ReadFile(path)
	if os.IsNotExist(err) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("limits: %w", err)
	}
	stamp := t.Format("20060102T150405Z")
	bak := fmt.Sprintf("%s.%s.bak", path, stamp)
	for i := 1; exists(bak); i++ {
		bak = fmt.Sprintf("%s.%s-%d.bak", path, stamp, i)
	}
	if err := writeFile(bak, old); err != nil {
		return nil, fmt.Errorf("limits: backup before saving: %w", err)
	}
	return old, nil
}

func exists(p string) bool { _, err := os.Stat(p); return err == nil }

// writeFile writes data to a temporary file beside path, syncs it and
// renames it over path, so a crash leaves either the old or the new file.
func writeFile(path string, data []byte) error {
	return atomicfile.WriteBytes(path, data, 0o644)
}

// changes lists the keys whose values differ between two limits texts:
// "alloy.grey-iron.metric.eutectic_min_c.pass_min 1142 → 1143". The edited
// stamp itself is left out.
func changes(old, new []byte) []string {
	if old == nil {
		return []string{"created"}
	}
	a, b := flatten(old), flatten(new)
	var out []string
	for _, k := range slices.Sorted(maps.Keys(merge(a, b))) {
		if k == "edited" {
			continue
		}
		va, oka := a[k]
		vb, okb := b[k]
		switch {
		case !oka:
			out = append(out, k+" added "+vb)
		case !okb:
			out = append(out, k+" removed (was "+va+")")
		case va != vb:
			out = append(out, k+" "+va+" → "+vb)
		}
	}
	if len(out) == 0 {
		return []string{"no value changed"}
	}
	return out
}

func merge(a, b map[string]string) map[string]string {
	m := maps.Clone(a)
	maps.Copy(m, b)
	return m
}

func flatten(data []byte) map[string]string {
	var v map[string]any
	if _, err := toml.Decode(string(data), &v); err != nil {
		return map[string]string{"(unreadable)": err.Error()}
	}
	out := map[string]string{}
	var walk func(prefix string, x any)
	walk = func(prefix string, x any) {
		if m, ok := x.(map[string]any); ok {
			for k, y := range m {
				walk(strings.TrimPrefix(prefix+"."+k, "."), y)
			}
			return
		}
		out[prefix] = fmt.Sprint(x)
	}
	walk("", v)
	return out
}

// Encode writes the book as limits-file text: top-level stamp, then the
// calibration, then each alloy in name order with its metrics in the fixed
// metric order. Unset optional values are left out.
func Encode(b *Book) []byte {
	var w bytes.Buffer
	w.WriteString("# undercool limits file (format: README.md, \"Limits file\"). Temperatures in °C,\n")
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
	old, err := backup(path, t)
	if err != nil {
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
			ac.Metrics = make(map[string]*Limit, len(a.Metrics))
			for m, l := range a.Metrics {
				lc := *l
				lc.PassMin, lc.PassMax = copyPtr(l.PassMin), copyPtr(l.PassMax)
				lc.MarginalMin, lc.MarginalMax = copyPtr(l.MarginalMin), copyPtr(l.MarginalMax)
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
