package limits

import (
	"fmt"
	"github.com/undercool-foundry/undercool/internal/escape"
	"reflect"
	"slices"
	"strings"
	"unicode"
)

// unsafeRune reports whether r may not appear in limits text: the
// characters package escape shows as escapes (C0 controls, DEL, C1
// controls, the Unicode bidirectional controls, the line and paragraph
// separators). Printed raw, such characters move the cursor, retitle the
// terminal or reorder what the operator reads; limits text reaches the
// dashboard, reports and logs.
func unsafeRune(r rune) bool { return escape.Unsafe(r) }

// visible writes every unsafe character of s as a visible escape.
func visible(s string) string { return escape.Text(s) }

// runeName names a character for an error: "U+001B (control)".
func runeName(r rune) string {
	kind := "control"
	if unicode.Is(unicode.Bidi_Control, r) {
		kind = "bidirectional control"
	}
	return fmt.Sprintf("U+%04X (%s)", r, kind)
}

// multiLineKeys may hold line breaks and tabs (free text kept with the
// file); every other text is one line.
var multiLineKeys = []string{"note"}

// checkText reports the first unsafe character of s, or "".
func checkText(key, s string) string {
	last := key[strings.LastIndexByte(key, '.')+1:]
	for _, r := range s {
		if (r == '\n' || r == '\t') && slices.Contains(multiLineKeys, last) {
			continue
		}
		if unsafeRune(r) {
			return fmt.Sprintf("holds the character %s; limits text may not hold control or bidirectional-control characters", runeName(r))
		}
	}
	return ""
}

// validateText walks every string of the book (and the names of its
// tables) and reports unsafe characters by key.
func (b *Book) validateText(add func(key, format string, args ...any)) {
	var walk func(path string, v reflect.Value)
	walk = func(path string, v reflect.Value) {
		switch v.Kind() {
		case reflect.Pointer:
			if !v.IsNil() {
				walk(path, v.Elem())
			}
		case reflect.Struct:
			t := v.Type()
			for i := range t.NumField() {
				tag := t.Field(i).Tag.Get("toml")
				if tag == "" || tag == "-" {
					continue
				}
				walk(strings.TrimPrefix(path+"."+tag, "."), v.Field(i))
			}
		case reflect.Map:
			for _, k := range v.MapKeys() {
				name := k.String()
				key := path + "." + name
				if msg := checkText(key, name); msg != "" {
					add(key, "the name %s", msg)
					continue
				}
				walk(key, v.MapIndex(k))
			}
		case reflect.Slice:
			for i := range v.Len() {
				walk(path, v.Index(i))
			}
		case reflect.String:
			if msg := checkText(path, v.String()); msg != "" {
				add(path, "%s", msg)
			}
		}
	}
	walk("", reflect.ValueOf(b).Elem())
}
