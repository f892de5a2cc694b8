package main

import (
	"bytes"
	"database/sql"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// withLines rewrites the simulated cup at path into dir/name, letting edit
// change its reading lines (the lines after the header).
func withLines(t *testing.T, path, dir, name string, edit func(rows []string) []string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
	h := 0
	for h < len(lines) && !strings.HasPrefix(lines[h], "time_s") {
		h++
	}
	rows := edit(append([]string(nil), lines[h+1:]...))
	return writeText(t, dir, name, strings.Join(append(lines[:h+1:h+1], rows...), "\n")+"\n")
}

// TestFaultAnalyzeTimeOrder: a simulated cup (internal/sim, not measured)
// with one timestamp duplicated, and one with two readings swapped (time
// going backwards). The reader keeps them (curvefile TestFaultReadTimeOrder);
// `undercool analyze` reads the files (exit 0), reports the problem and
// gives the verdict invalid with advice to re-sample, while the clean copy
// is judged normally.
func TestFaultAnalyzeTimeOrder(t *testing.T) {
	dir := t.TempDir()
	clean := simulatedCup(t, dir, "L-2417-cup1.csv", "grey-iron", 17)
	dup := withLines(t, clean, dir, "L-2417-dup.csv", func(r []string) []string {
		return append(r[:301:301], append([]string{r[300]}, r[301:]...)...)
	})
	back := withLines(t, clean, dir, "L-2417-back.csv", func(r []string) []string {
		r[300], r[301] = r[301], r[300]
		return r
	})
	code, out, errs := filesRun(t, "analyze", "--json", clean, dup, back)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	by := map[string]map[string]any{}
	for _, r := range jsonLines(t, out) {
		by[r["file"].(string)] = r
	}
	if v := by[clean]["verdict"]; v == "invalid" || v == nil {
		t.Fatalf("the clean simulated cup: verdict %v", v)
	}
	for _, f := range []string{dup, back} {
		r := by[f]
		p, _ := r["problems"].([]any)
		if r == nil || len(p) == 0 || !strings.Contains(p[0].(string), "time goes backwards or repeats") || r["verdict"] != "invalid" {
			t.Errorf("%s: problems %v, verdict %v; want the time problem and invalid", f, r["problems"], r["verdict"])
		}
		if a, _ := r["advice"].([]any); len(a) == 0 || !strings.Contains(a[0].(string), "re-sampling") {
			t.Errorf("%s: advice %v", f, r["advice"])
		}
	}
	// The table says it too.
	_, out, _ = filesRun(t, "analyze", dup)
	if !strings.Contains(out, dup+" (grey-iron): invalid\n  problem: time goes backwards or repeats") {
		t.Errorf("table:\n%s", out)
	}
}

// TestFaultAnalyzeBadFiles runs `undercool analyze` over one good simulated
// cup and a bad file of each kind: each bad one is named with its line in
// stderr, the exit status is 1, and the good one is still analysed.
func TestFaultAnalyzeBadFiles(t *testing.T) {
	dir := t.TempDir()
	good := simulatedCup(t, dir, "good.csv", "ductile-iron", 3)
	bad := map[string]struct{ text, want string }{
		"nan.csv":        {"time_s,temp_c\n0,1300\n0.1,NaN\n0.2,1299\n", `:3: column "temp_c": "NaN" is not a finite number`}, // (a NaN in the last rows is padding, dropped with a warning)
		"inf.csv":        {"time_s,temp_c\n0,+Inf\n", `:2: column "temp_c": "+Inf" is not a finite number`},
		"text.csv":       {"time_s,temp_c\n0,1300\n0.1,hot\n", `:3: column "temp_c": "hot" is not a finite number`},
		"fields.csv":     {"time_s;temp_c;ch\n0;1300;1\n0,1;1299\n", ":3: 2 fields where the header has 3 columns"},
		"comma.csv":      {"time_s,temp_c\n0,1300\n0,1,1299,5\n", ":3: 4 fields where the header has 2 columns (a decimal comma"},
		"noheader.csv":   {"seconds,pressure\n0,1\n", ":1: no temperature column"},
		"units.csv":      {"time_s,Temp [°R]\n0,2832\n", `:1: column "Temp [°R]": temperatures must be in °C, °F or K`},
		"empty.csv":      {"", ":1: empty file"},
		"binary.csv":     {"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00", ":1: invalid UTF-8"},
		"utf16.csv":      {"\xff\xfet\x00i\x00m\x00e\x00", ":1: UTF-16"},
		"latin1.csv":     {"time_s,temp_c\n0,1300\n# operator: Tobin Quenchm\xf6or\n", ":3: invalid UTF-8"},
		"hugeline.csv":   {"time_s,temp_c\n0,1300\n" + strings.Repeat("1", 2<<20) + "\n", ":3: line longer than"},
		"headeronly.csv": {"# alloy: grey-iron\ntime_s,temp_c\n", ":2: a header but no readings"},
	}
	args := []string{"analyze", "--json", good}
	for name, b := range bad {
		args = append(args, writeText(t, dir, name, b.text))
	}
	code, out, errs := filesRun(t, args...)
	if code != 1 {
		t.Errorf("exit %d, want 1", code)
	}
	if recs := jsonLines(t, out); len(recs) != 1 || recs[0]["file"] != good {
		t.Errorf("want exactly the good file's record, got %d: %s", len(recs), out)
	}
	for name, b := range bad {
		if want := filepath.Join(dir, name) + b.want; !strings.Contains(errs, want) {
			t.Errorf("stderr lacks %q", want)
		}
	}
	if t.Failed() {
		t.Logf("stderr:\n%s", errs)
	}
}

// TestFaultAnalyzeBadLimits: `analyze --limits` with a limits file that is
// missing, empty, binary or holds a NaN band stops with exit 1 and an
// error naming the file (and line and key where there is one), before any
// curve is judged against other limits.
func TestFaultAnalyzeBadLimits(t *testing.T) {
	dir := t.TempDir()
	cup := writeText(t, dir, "flat.csv", flatCup())
	nanBand := "version = \"t1\"\n[alloy.grey-iron]\nfamily = \"iron\"\n[alloy.grey-iron.metric.eutectic_min_c]\npass_min = nan\n"
	for _, tc := range []struct{ name, text, want string }{
		{"missing.toml", "", "no such file or directory"},
		{"empty.toml", "", ": version: is required"},
		{"binary.toml", "\x00\x01\xfe\xff", ":1: files cannot contain NULL bytes"},
		{"nan.toml", nanBand, ":5: alloy.grey-iron.metric.eutectic_min_c.pass_min: must be a finite number"},
	} {
		path := filepath.Join(dir, tc.name)
		if tc.name != "missing.toml" {
			writeText(t, dir, tc.name, tc.text)
		}
		code, out, errs := filesRun(t, "analyze", "--json", "--limits", path, cup)
		if code != 1 || out != "" || !strings.Contains(errs, path) || !strings.Contains(errs, tc.want) {
			t.Errorf("%s: exit %d, stdout %q, stderr %q; want 1, nothing, and %q", tc.name, code, out, errs, tc.want)
		}
	}
}

// TestFaultRecordsForeignDatabase points the records commands at another
// program's SQLite file: each stops with exit 1 naming the file, and the
// file is unchanged.
func TestFaultRecordsForeignDatabase(t *testing.T) {
	dir := t.TempDir()
	foreign := filepath.Join(dir, "ledger.db")
	other, err := sql.Open("sqlite", foreign)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := other.Exec("CREATE TABLE ledger(id INTEGER PRIMARY KEY, what TEXT)"); err != nil {
		t.Fatal(err)
	}
	other.Close()
	before, _ := os.ReadFile(foreign)
	cup := writeText(t, dir, "flat.csv", flatCup())
	for _, args := range [][]string{
		{"history", "--db", foreign},
		{"verify", "--db", foreign},
		{"analyze", "--store", "--db", foreign, cup},
	} {
		code, _, errs := recordsRun(t, "", args...)
		if code != 1 || !strings.Contains(errs, foreign) || !strings.Contains(errs, "not an undercool database") {
			t.Errorf("%v: exit %d, stderr %q", args, code, errs)
		}
	}
	if after, _ := os.ReadFile(foreign); !bytes.Equal(before, after) {
		t.Error("the foreign database was changed")
	}
}
