package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/store"
)

// recordsRun runs the command line with UNDERCOOL_DB set to db and returns
// status, stdout, stderr.
func recordsRun(t *testing.T, db string, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	env := &environ{stdin: strings.NewReader(""), stdout: &out, stderr: &errb, getenv: func(k string) string {
		if k == "UNDERCOOL_DB" {
			return db
		}
		return ""
	}}
	code := runMain(context.Background(), env, args)
	return code, out.String(), errb.String()
}

func recordsF(v float64) *float64 { return &v }

// recordsSeed stores constructed (not measured) samples from the
// Cindermoth demo scenario: per hour from start, grey iron and one
// aluminium sample; returns the database path and the ids.
func recordsSeed(t *testing.T, start time.Time, n int) (string, []int64) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "records.db")
	db, err := store.Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	ss := constructedSamples(start, time.Hour, n, func(i int) string {
		if i%4 == 3 {
			return "al-si7mg"
		}
		return "grey-iron"
	})
	ids, err := db.AddSamples(context.Background(), ss)
	if err != nil {
		t.Fatal(err)
	}
	return path, ids
}

// constructedSamples gives n constructed (not measured) samples from the
// Cindermoth demo scenario, one every step from start, sample i of
// alloy(i), verdicts cycling.
func constructedSamples(start time.Time, step time.Duration, n int, alloy func(i int) string) []store.Sample {
	verdicts := []string{assess.VerdictPass, assess.VerdictMarginal, assess.VerdictFail}
	ss := make([]store.Sample, n)
	for i := range ss {
		a := alloy(i)
		rec := assess.Record{Alloy: a, Samples: 2400, RateHz: 10, EutecticMinC: recordsF(1140.5 + float64(i)),
			RecalescenceC: recordsF(2.25), UndercoolingC: recordsF(9.5), Problems: []string{},
			Reasons: []string{fmt.Sprintf("eutectic minimum %.1f °C", 1140.5+float64(i))}, Verdict: verdicts[i%3],
			Advice: []string{"consider inoculating and re-sampling"}, LimitsVersion: "2026-11.2"}
		ss[i] = store.Sample{
			Recorded: start.Add(time.Duration(i) * step), Sample: fmt.Sprintf("L-%d cup 1", 2417+i), Ladle: fmt.Sprintf("L-%d", 2417+i),
			Alloy: a, Furnace: "IF-2", Operator: "Pell Brasswick", Channel: "1", Thermocouple: "K",
			Note: "=not a formula", Record: rec,
		}
	}
	return ss
}

func TestHistoryTableAndFilters(t *testing.T) {
	start := time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC)
	db, _ := recordsSeed(t, start, 8)
	code, out, errs := recordsRun(t, db, "history")
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 10 || !strings.HasPrefix(lines[0], "ID") || !strings.Contains(lines[1], "L-2424 cup 1") ||
		!strings.Contains(lines[9], "8 samples from "+db) || !strings.Contains(lines[9], "Advice only") {
		t.Fatalf("table:\n%s", out)
	}
	if !strings.Contains(lines[1], "1147.5") || !strings.Contains(lines[1], "9.5") {
		t.Errorf("newest row lacks its figures: %q", lines[1])
	}
	for _, tc := range []struct {
		args []string
		want int
	}{
		{[]string{"--alloy", "al-si7mg"}, 2},
		{[]string{"--verdict", "fail"}, 2},
		{[]string{"--since", start.Add(5 * time.Hour).Format(time.RFC3339)}, 3},
		{[]string{"--until", start.Add(2 * time.Hour).Format(time.RFC3339)}, 2},
		{[]string{"--ladle", "L-2419"}, 1},
		{[]string{"--limit", "3"}, 3},
	} {
		code, out, errs := recordsRun(t, db, append([]string{"history", "--json"}, tc.args...)...)
		if code != 0 {
			t.Fatalf("%v: status %d: %s", tc.args, code, errs)
		}
		n := strings.Count(out, "\n")
		if n != tc.want {
			t.Errorf("%v: %d rows, want %d\n%s", tc.args, n, tc.want, out)
		}
	}
}

func TestHistoryJSONLines(t *testing.T) {
	start := time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC)
	db, ids := recordsSeed(t, start, 3)
	code, out, errs := recordsRun(t, db, "history", "--json", "--alloy", "grey-iron")
	if code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	sc := bufio.NewScanner(strings.NewReader(out))
	n := 0
	for sc.Scan() {
		var line map[string]any
		if err := json.Unmarshal(sc.Bytes(), &line); err != nil {
			t.Fatalf("line %d is not JSON: %v\n%s", n+1, err, sc.Text())
		}
		rec, _ := line["record"].(map[string]any)
		if line["sample_id"] != float64(ids[2-n]) || line["operator"] != "Pell Brasswick" || rec["undercooling_c"] != 9.5 ||
			line["limits_version"] != "2026-11.2" || line["recorded_at"] != start.Add(time.Duration(2-n)*time.Hour).Format(time.RFC3339) {
			t.Errorf("line %d: %s", n+1, sc.Text())
		}
		n++
	}
	if n != 3 {
		t.Fatalf("%d lines, want 3", n)
	}
}

func TestHistoryAllResults(t *testing.T) {
	db, ids := recordsSeed(t, time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC), 2)
	s, err := store.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	rec := assess.Record{Alloy: "grey-iron", Verdict: assess.VerdictPass, Problems: []string{}}
	if _, err := s.AddResult(context.Background(), ids[0], rec, "2026-12.1"); err != nil {
		t.Fatal(err)
	}
	s.Close()
	_, latest, _ := recordsRun(t, db, "history", "--json")
	_, all, _ := recordsRun(t, db, "history", "--json", "--all-results")
	if strings.Count(latest, "\n") != 2 || strings.Count(all, "\n") != 3 {
		t.Fatalf("latest %d lines, all %d; want 2, 3", strings.Count(latest, "\n"), strings.Count(all, "\n"))
	}
	if !strings.Contains(latest, `"limits_version":"2026-12.1"`) || !strings.Contains(all, `"limits_version":"2026-11.2"`) {
		t.Errorf("latest shows the old result or all lacks it:\n%s\n%s", latest, all)
	}
}

func TestHistoryUsageErrors(t *testing.T) {
	db, _ := recordsSeed(t, time.Date(2026, 12, 1, 6, 0, 0, 0, time.UTC), 1)
	for _, args := range [][]string{
		{"history", "--since", "yesterday"},
		{"history", "--verdict", "good"},
		{"history", "--json", "--csv"},
		{"history", "--since", "2026-12-02", "--until", "2026-12-01"},
		{"history", "stray"},
	} {
		code, _, errs := recordsRun(t, db, args...)
		if code != 2 || errs == "" {
			t.Errorf("%v: status %d, stderr %q; want 2 and a message", args, code, errs)
		}
	}
	// a mistyped --db: refused with its path, and no database made
	typo := filepath.Join(t.TempDir(), "x.db")
	code, _, errs := recordsRun(t, "", "history", "--db", typo, "--alloy", "grey-iron")
	if _, err := os.Stat(typo); code != 1 || !strings.Contains(errs, typo+" does not exist") || err == nil {
		t.Errorf("history --db of no database: status %d %q, stat %v; want 1, the path named, no file made", code, errs, err)
	}
}

func TestParseWhen(t *testing.T) {
	now := time.Date(2026, 12, 1, 14, 30, 0, 0, time.Local)
	day := time.Date(2026, 11, 28, 0, 0, 0, 0, time.Local)
	for _, tc := range []struct {
		in    string
		until bool
		want  time.Time
	}{
		{"2026-11-28", false, day},
		{"2026-11-28", true, day.AddDate(0, 0, 1)},
		{"2026-11-28T06:15", false, day.Add(6*time.Hour + 15*time.Minute)},
		{"2026-11-28 06:15:30", false, day.Add(6*time.Hour + 15*time.Minute + 30*time.Second)},
		{"2026-11-28T06:00:00Z", false, time.Date(2026, 11, 28, 6, 0, 0, 0, time.UTC)},
		{"8h", false, now.Add(-8 * time.Hour)},
		{"90m", false, now.Add(-90 * time.Minute)},
		{"7d", false, now.Add(-7 * 24 * time.Hour)}, // spans are exact hours, not calendar days
		{"2w", false, now.Add(-14 * 24 * time.Hour)},
	} {
		got, err := parseWhen(tc.in, now, tc.until)
		if err != nil || !got.Equal(tc.want) {
			t.Errorf("parseWhen(%q, until=%v) = %v, %v; want %v", tc.in, tc.until, got, err, tc.want)
		}
	}
	for _, bad := range []string{"", "-8h", "7x", "d", "2026-13-01", "last week"} {
		if _, err := parseWhen(bad, now, false); err == nil {
			t.Errorf("parseWhen(%q) accepted", bad)
		}
	}
}
