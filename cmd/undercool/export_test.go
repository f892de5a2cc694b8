package main

import (
	"bufio"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/store"
)

// exportParse reads an export back with encoding/csv (the standard
// library's RFC 4180 reader) and returns the rows keyed by header name.
func exportParse(t *testing.T, text string, comma rune) []map[string]string {
	t.Helper()
	r := csv.NewReader(strings.NewReader(text))
	r.Comma = comma
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatalf("export does not parse as CSV: %v\n%s", err, text)
	}
	var out []map[string]string
	for _, row := range rows[1:] {
		m := map[string]string{}
		for i, h := range rows[0] {
			m[h] = row[i]
		}
		out = append(out, m)
	}
	return out
}

func TestExportCSV(t *testing.T) {
	start := time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC)
	db, ids := recordsSeed(t, start, 4)
	code, out, errs := recordsRun(t, db, "export")
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	if !strings.HasSuffix(out, "\r\n") {
		t.Error("rows do not end in CRLF (RFC 4180)")
	}
	head, _, _ := strings.Cut(out, "\r\n")
	for _, m := range store.Metrics() {
		if !strings.Contains(head, ","+m+",") {
			t.Errorf("header lacks metric %s", m)
		}
	}
	rows := exportParse(t, out, ',')
	if len(rows) != 4 {
		t.Fatalf("%d rows, want 4", len(rows))
	}
	for i, r := range rows { // oldest first
		if r["sample_id"] != strconv.FormatInt(ids[i], 10) || r["recorded_at"] != start.Add(time.Duration(i)*time.Hour).Format(time.RFC3339) {
			t.Errorf("row %d: id %s at %s", i, r["sample_id"], r["recorded_at"])
		}
		if v, err := strconv.ParseFloat(r["eutectic_min_c"], 64); err != nil || v != 1140.5+float64(i) {
			t.Errorf("row %d eutectic_min_c %q", i, r["eutectic_min_c"])
		}
		if r["liquidus_c"] != "" || r["operator"] != "Pell Brasswick" || r["note"] != "'=not a formula" ||
			r["advice"] != "consider inoculating and re-sampling" || r["simulated"] != "no" {
			t.Errorf("row %d: %v", i, r)
		}
	}
}

func TestExportDecimalCommaBOMFile(t *testing.T) {
	db, _ := recordsSeed(t, time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC), 3)
	path := filepath.Join(t.TempDir(), "shift.csv")
	code, _, errs := recordsRun(t, db, "export", "--decimal-comma", "--bom", "--out", path, "--alloy", "grey-iron")
	if code != 0 || !strings.Contains(errs, "wrote 3 samples to "+path) {
		t.Fatalf("status %d: %s", code, errs)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	text, ok := strings.CutPrefix(string(b), "\uFEFF")
	if !ok {
		t.Fatal("no UTF-8 byte-order mark")
	}
	rows := exportParse(t, text, ';')
	if len(rows) != 3 {
		t.Fatalf("%d rows", len(rows))
	}
	for i, r := range rows {
		want := strconv.FormatFloat(1140.5+float64(i), 'f', -1, 64)
		want = strings.Replace(want, ".", ",", 1)
		if r["eutectic_min_c"] != want || r["recalescence_c"] != "2,25" || r["rate_hz"] != "10" {
			t.Errorf("row %d: eutectic_min_c %q recalescence_c %q, want %q and 2,25", i, r["eutectic_min_c"], r["recalescence_c"], want)
		}
		v, err := strconv.ParseFloat(strings.Replace(r["eutectic_min_c"], ",", ".", 1), 64)
		if err != nil || v != 1140.5+float64(i) {
			t.Errorf("row %d does not read back: %v %v", i, v, err)
		}
	}
	left, _ := filepath.Glob(filepath.Join(filepath.Dir(path), ".*"))
	if len(left) > 0 {
		t.Errorf("temporary files left: %v", left)
	}
}

func TestExportJSONLines(t *testing.T) {
	db, ids := recordsSeed(t, time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC), 3)
	code, out, errs := recordsRun(t, db, "export", "--json")
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	var got []int64
	sc := bufio.NewScanner(strings.NewReader(out))
	for sc.Scan() {
		var line struct {
			SampleID int64          `json:"sample_id"`
			Record   map[string]any `json:"record"`
			Reasons  []string       `json:"reasons"`
		}
		if err := json.Unmarshal(sc.Bytes(), &line); err != nil {
			t.Fatalf("not JSON: %v: %s", err, sc.Text())
		}
		if line.Record["verdict"] == nil || len(line.Reasons) != 1 {
			t.Errorf("line %s", sc.Text())
		}
		got = append(got, line.SampleID)
	}
	if !slices.Equal(got, ids) {
		t.Fatalf("ids %v, want %v oldest first", got, ids)
	}
	if code, _, _ := recordsRun(t, db, "export", "--json", "--decimal-comma"); code != 2 {
		t.Errorf("--json --decimal-comma: status %d, want 2", code)
	}
}

func TestCSVText(t *testing.T) {
	for in, want := range map[string]string{"=SUM(A1)": "'=SUM(A1)", "+1": "'+1", "@x": "'@x", "-2": "'-2", "L-2417": "L-2417", "": ""} {
		if got := csvText(in); got != want {
			t.Errorf("csvText(%q) = %q, want %q", in, got, want)
		}
	}
}
