package limits

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// TestApplyEdits: each edit changes its own bytes only. The texts are
// constructed in the forms TOML allows for one key (table headers, dotted
// keys, inline tables, comments beside values).
func TestApplyEdits(t *testing.T) {
	v := func(s string) *string { return &s }
	const base = `# head comment
version = "t1"   # the label

# grey iron
[alloy.grey-iron]
family = "iron"
chemistry = { c = 3.4, si = 2.1 }

[alloy.grey-iron.metric.ce]   # CEL
pass_min = 3.90               # low end
pass_max = 4.20

[alloy.grey-iron.metric]
recalescence_c.pass_max = 4.0

# ---- aluminium
[alloy.al-si7mg]
family = "aluminum"
`
	for _, c := range []struct {
		name      string
		edit      textEdit
		old, want string // the one change expected: old replaced by want
	}{
		{"a value beside a comment", textEdit{[]string{"alloy", "grey-iron", "metric", "ce", "pass_min"}, v("3.85")},
			"pass_min = 3.90               # low end", "pass_min = 3.85               # low end"},
		{"a top-level value", textEdit{[]string{"version"}, v(`"t2"`)}, `version = "t1"   #`, `version = "t2"   #`},
		{"a key added after the table's last key", textEdit{[]string{"alloy", "grey-iron", "metric", "ce", "marginal_max"}, v("4.28")},
			"pass_max = 4.20\n", "pass_max = 4.20\nmarginal_max = 4.28\n"},
		{"a key removed, its comment kept", textEdit{[]string{"alloy", "grey-iron", "metric", "ce", "pass_min"}, nil},
			"pass_min = 3.90               # low end\n", "# low end\n"},
		{"a key removed", textEdit{[]string{"alloy", "grey-iron", "metric", "ce", "pass_max"}, nil}, "pass_max = 4.20\n", ""},
		{"inside an inline table", textEdit{[]string{"alloy", "grey-iron", "chemistry", "si"}, v("2.3")},
			"{ c = 3.4, si = 2.1 }", "{ c = 3.4, si = 2.3 }"},
		{"added to an inline table", textEdit{[]string{"alloy", "grey-iron", "chemistry", "p"}, v("0.04")},
			"{ c = 3.4, si = 2.1 }", "{ c = 3.4, si = 2.1, p = 0.04 }"},
		{"removed from an inline table", textEdit{[]string{"alloy", "grey-iron", "chemistry", "c"}, nil},
			"{ c = 3.4, si = 2.1 }", "{ si = 2.1 }"},
		{"the last removed from an inline table", textEdit{[]string{"alloy", "grey-iron", "chemistry", "si"}, nil},
			"{ c = 3.4, si = 2.1 }", "{ c = 3.4 }"},
		{"a dotted key changed", textEdit{[]string{"alloy", "grey-iron", "metric", "recalescence_c", "pass_max"}, v("5.0")},
			"recalescence_c.pass_max = 4.0", "recalescence_c.pass_max = 5.0"},
		{"a dotted key added beside its kin", textEdit{[]string{"alloy", "grey-iron", "metric", "recalescence_c", "marginal_max"}, v("6.0")},
			"recalescence_c.pass_max = 4.0\n", "recalescence_c.pass_max = 4.0\nrecalescence_c.marginal_max = 6.0\n"},
		{"a new table after its alloy's last table", textEdit{[]string{"alloy", "grey-iron", "metric", "plateau_s", "pass_min"}, v("60.0")},
			"recalescence_c.pass_max = 4.0\n", "recalescence_c.pass_max = 4.0\n\n[alloy.grey-iron.metric.plateau_s]\npass_min = 60.0\n"},
		{"a top-level key after the others", textEdit{[]string{"edited_by"}, v(`"Odile Flintcaster"`)},
			"version = \"t1\"   # the label\n", "version = \"t1\"   # the label\nedited_by = \"Odile Flintcaster\"\n"},
		{"removing an absent key changes nothing", textEdit{[]string{"alloy", "grey-iron", "metric", "ce", "marginal_min"}, nil}, "", ""},
	} {
		t.Run(c.name, func(t *testing.T) {
			got, err := applyEdits([]byte(base), []textEdit{c.edit})
			if err != nil {
				t.Fatal(err)
			}
			want := strings.Replace(base, c.old, c.want, 1)
			if c.old == "" {
				want = base
			}
			if string(got) != want {
				t.Errorf("got\n%s\nwant\n%s", got, want)
			}
			if _, err := Parse(got, "edited.toml"); err != nil && !strings.Contains(err.Error(), "sets no band") {
				t.Errorf("the edited text does not parse: %v", err)
			}
		})
	}
	// A file with no top-level keys gets them above the first table's own
	// comment lines.
	got, err := applyEdits([]byte("# file comment\n\n# grey\n[alloy.grey-iron]\nfamily = \"iron\"\n"), []textEdit{{[]string{"version"}, v(`"t1"`)}})
	if want := "# file comment\n\nversion = \"t1\"\n# grey\n[alloy.grey-iron]\nfamily = \"iron\"\n"; err != nil || string(got) != want {
		t.Errorf("top-level key in a file without one: %v\n%s", err, got)
	}
	// Keys in an array of tables are not edited.
	if _, err := applyEdits([]byte("[[alloy]]\nx = 1\n"), []textEdit{{[]string{"alloy", "x"}, v("2")}}); err == nil {
		t.Error("an edit inside an array of tables was made")
	}
}

// TestSaveOneLimitKeepsTheRest: saving one edited limit (the dashboard's
// editor through SaveEdits) changes that value and the stamp and no other
// byte of the file: comments, inline source notes, the order of alloys and
// untouched zero offsets stay. The log names exactly the changed key and
// who changed it, and the book gets a new version.
func TestSaveOneLimitKeepsTheRest(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "cindermoth.toml")
	orig := Example()
	if err := os.WriteFile(path, orig, 0o644); err != nil {
		t.Fatal(err)
	}
	now = func() time.Time { return time.Date(2026, 12, 2, 6, 40, 0, 0, time.UTC) }
	defer func() { now = time.Now }()
	v := 5.5
	saved, err := SaveEdits(path, []Edit{{Alloy: "grey-iron", Metric: "undercooling_c", Bound: PassMax, Value: &v}}, "Odile Flintcaster")
	if err != nil {
		t.Fatal(err)
	}
	got, _ := os.ReadFile(path)
	was, now2 := strings.Split(string(orig), "\n"), strings.Split(string(got), "\n")
	if len(was) != len(now2) {
		t.Fatalf("%d lines became %d", len(was), len(now2))
	}
	table := -1
	for i, l := range was {
		if strings.HasPrefix(l, "[alloy.grey-iron.metric.undercooling_c]") {
			table = i
		}
		wantLine := l
		switch {
		case strings.HasPrefix(l, "version = "):
			wantLine = `version = "example-2.1"`
		case strings.HasPrefix(l, "edited = "):
			wantLine = `edited = "2026-12-02T06:40:00Z"`
		case strings.HasPrefix(l, "edited_by = "):
			wantLine = `edited_by = "Odile Flintcaster"`
		case table >= 0 && i > table && strings.HasPrefix(l, "pass_max = ") && !strings.Contains(strings.Join(was[table+1:i], "\n"), "pass_max"):
			wantLine = "pass_max = 5.5" + strings.TrimLeft(strings.TrimPrefix(l, "pass_max = "), "0123456789.")
		}
		if now2[i] != wantLine {
			t.Errorf("line %d: %q, want %q", i+1, now2[i], wantLine)
		}
	}
	if saved.Version != "example-2.1" || saved.EditedBy != "Odile Flintcaster" || *saved.Alloys["grey-iron"].Metrics["undercooling_c"].PassMax != 5.5 {
		t.Errorf("saved book: version %q by %q", saved.Version, saved.EditedBy)
	}
	log, _ := os.ReadFile(path + ".log")
	old := *Builtin().Alloys["grey-iron"].Metrics["undercooling_c"].PassMax
	if want := "2026-12-02T06:40:00Z\tOdile Flintcaster\tversion example-2 → example-2.1\talloy.grey-iron.metric.undercooling_c.pass_max " +
		strconv.FormatFloat(old, 'g', -1, 64) + " → 5.5\n"; string(log) != want {
		t.Errorf("log %q\nwant %q", log, want)
	}
	if bak, err := os.ReadFile(path + ".20261202T064000Z.bak"); err != nil || !bytes.Equal(bak, orig) {
		t.Errorf("backup: %v", err)
	}

	// The dashboard's whole-book path (Save of an edited Load) keeps the
	// file too, names the system's user, and counts the version on.
	b, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	w := 7.0
	if _, err := b.SetLimit("grey-iron", "undercooling_c", PassMax, &w); err != nil {
		t.Fatal(err)
	}
	t.Setenv("USER", "tquenchmoor")
	before, _ := os.ReadFile(path)
	if err := Save(path, b); err != nil {
		t.Fatal(err)
	}
	after, _ := os.ReadFile(path)
	want := strings.Replace(string(before), "pass_max = 5.5", "pass_max = 7.0", 1)
	want = strings.Replace(want, `version = "example-2.1"`, `version = "example-2.2"`, 1)
	want = strings.Replace(want, `edited_by = "Odile Flintcaster"`, `edited_by = "tquenchmoor"`, 1)
	if string(after) != want {
		t.Errorf("whole-book save changed more than the value and the stamp")
	}
	if b.Version != "example-2.2" || b.EditedBy != "tquenchmoor" {
		t.Errorf("the saved book's stamp: %q by %q", b.Version, b.EditedBy)
	}

	// A save that would break the book is refused and leaves everything alone.
	lo := 6.0 // below the pass maximum 7
	before, _ = os.ReadFile(path)
	_, err = SaveEdits(path, []Edit{{Alloy: "grey-iron", Metric: "undercooling_c", Bound: MarginalMax, Value: &lo}}, "x")
	if err == nil || !strings.Contains(err.Error(), "alloy.grey-iron.metric.undercooling_c.marginal_max") {
		t.Errorf("bad edit: %v", err)
	}
	if after, _ := os.ReadFile(path); !bytes.Equal(after, before) {
		t.Error("a refused save changed the file")
	}
	if _, err := SaveEdits(path, []Edit{{Alloy: "grey_iron", Metric: "ce", Bound: PassMin, Value: &lo}}, "x"); err == nil || !strings.Contains(err.Error(), "grey-iron") {
		t.Errorf("unknown alloy: %v", err)
	}
}

// TestNextVersion: the number after the last dot counts up; a label
// without one gets ".1"; versions given before (the change log) are
// skipped.
func TestNextVersion(t *testing.T) {
	for in, want := range map[string]string{
		"2026-12-01.1": "2026-12-01.2", "example-1": "example-1.1", "example-1.9": "example-1.10",
		"cindermoth-2026-12": "cindermoth-2026-12.1", "": "1", "v.": "v..1",
	} {
		if got := NextVersion(in); got != want {
			t.Errorf("NextVersion(%q) = %q, want %q", in, got, want)
		}
	}
	path := filepath.Join(t.TempDir(), "l.toml")
	os.WriteFile(path+".log", []byte("T\tx\tversion a → a.1\tk 1 → 2\nT\tx\tversion a.1 → a.2\tk 2 → 3\n"), 0o644)
	if got := unusedVersion(path, "a.1"); got != "a.3" {
		t.Errorf("unusedVersion = %q, want a.3 (a.1 and a.2 were given before)", got)
	}
}
