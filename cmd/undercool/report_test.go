package main

import (
	"context"
	"image/png"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
	"github.com/undercool-foundry/undercool/internal/store"
)

// reportCurveFile writes a simulated (not measured) grey-iron cup from
// internal/sim as a curve file, with the Cindermoth demo's form data.
func reportCurveFile(t *testing.T, dir string) string {
	t.Helper()
	p, err := sim.Preset("grey-iron", 0.6, 2418)
	if err != nil {
		t.Fatal(err)
	}
	p.Sample, p.Ladle, p.Operator = "L-2418 cup 1", "L-2418", "Odile Flintcaster"
	out := sim.Simulate(p)
	c := &curvefile.Curve{Meta: append(out.Meta, curvefile.Meta{Key: "started", Value: "2026-12-01T07:40:00.000Z"},
		curvefile.Meta{Key: "furnace", Value: "holder H3"}), Time: out.Time, Temp: out.Temp}
	path := filepath.Join(dir, "L-2418.csv")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := curvefile.WriteCurve(f, c); err != nil {
		t.Fatal(err)
	}
	f.Close()
	return path
}

func TestReportFromCurveFile(t *testing.T) {
	dir := t.TempDir()
	curve := reportCurveFile(t, dir)
	page := filepath.Join(dir, "page.png")
	code, _, errs := recordsRun(t, "", "report", curve, "--out", page)
	if code != 0 || !strings.Contains(errs, "wrote "+page) || !strings.Contains(errs, "L-2418 cup 1") {
		t.Fatalf("status %d: %s", code, errs)
	}
	f, err := os.Open(page)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("not a PNG: %v", err)
	}
	if b := img.Bounds(); b.Dx() != 1240 || b.Dy() != 1754 { // A4 at 150 dpi
		t.Fatalf("page %v", b)
	}
}

// reportStoreSample is the simulated cup of reportCurveFile in dir, its
// record (assess.Assess) and its stored sample as sampleFromCurve makes it,
// with an open records database for it.
func reportStoreSample(t *testing.T, dir string) (curve, dbPath string, db *store.DB, rec assess.Record, s store.Sample) {
	t.Helper()
	curve = reportCurveFile(t, dir)
	c, err := curvefile.ReadFile(curve)
	if err != nil {
		t.Fatal(err)
	}
	dbPath = filepath.Join(dir, "records.db")
	if db, err = store.Open(context.Background(), dbPath); err != nil {
		t.Fatal(err)
	}
	rec = assess.Assess(assess.Input{File: curve, Alloy: c.Get("alloy"), Time: c.Time, Temp: c.Temp, Meta: c.Meta})
	return curve, dbPath, db, rec, sampleFromCurve(curve, c, rec)
}

func TestReportFromStoreNotesChangedCurve(t *testing.T) {
	dir := t.TempDir()
	curve, dbPath, db, _, s := reportStoreSample(t, dir)
	if s.Recorded.Format("15:04") != "07:40" || s.Furnace != "holder H3" || !s.Simulated || s.Operator != "Odile Flintcaster" {
		t.Fatalf("sample from the curve's metadata: %+v", s)
	}
	s.CurveSHA256, _ = store.HashFile(curve)
	id, err := db.AddSample(context.Background(), s)
	if err != nil {
		t.Fatal(err)
	}
	db.Close()

	page := filepath.Join(dir, "page.svg")
	code, _, errs := recordsRun(t, dbPath, "report", strconv.FormatInt(id, 10), "--out", page)
	if code != 0 || strings.Contains(errs, "CHANGED") {
		t.Fatalf("status %d: %s", code, errs)
	}
	svg, _ := os.ReadFile(page)
	if !strings.Contains(string(svg), "record #"+strconv.FormatInt(id, 10)) || !strings.Contains(string(svg), "holder H3") {
		t.Errorf("page lacks the record id or furnace")
	}

	// one reading changed in the file: the page says so
	data, _ := os.ReadFile(curve)
	os.WriteFile(curve, []byte(strings.Replace(string(data), "\n10,", "\n10.0,", 1)), 0o644)
	code, _, errs = recordsRun(t, dbPath, "report", "--out", page, strconv.FormatInt(id, 10))
	if code != 0 || !strings.Contains(errs, "CHANGED") {
		t.Fatalf("tampered: status %d: %s", code, errs)
	}
	svg, _ = os.ReadFile(page)
	if !strings.Contains(string(svg), "CHANGED since it was stored") {
		t.Error("page does not note the changed curve file")
	}
}

func TestReportErrors(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"report"}, 2, "usage"},
		{[]string{"report", "x.csv"}, 2, "usage"},
		{[]string{"report", filepath.Join(dir, "none.csv"), "--out", filepath.Join(dir, "p.png")}, 1, "none.csv"},
		{[]string{"report", "99", "--out", filepath.Join(dir, "p.png"), "--db", filepath.Join(dir, "r.db")}, 1, "r.db does not exist"},
	} {
		code, _, errs := recordsRun(t, "", tc.args...)
		if code != tc.code || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: status %d, stderr %q; want %d and %q", tc.args, code, errs, tc.code, tc.want)
		}
	}
}

// TestAnalyzeStore: analyze --store adds a sample once, nothing for the
// same analysis again, and a new result (keeping the old) when the limits
// change.
func TestAnalyzeStore(t *testing.T) {
	dir := t.TempDir()
	curve := reportCurveFile(t, dir)
	dbPath := filepath.Join(dir, "records.db")
	book := limits.Builtin()
	book.Version = "2026-12-01.2"
	lim := filepath.Join(dir, "limits.toml")
	if err := limits.Save(lim, book); err != nil {
		t.Fatal(err)
	}
	for i, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"analyze", "--store", "--db", dbPath, curve}, "1 new samples, 0 new results"},
		{[]string{"analyze", "--json", curve, "--store", "--db", dbPath}, "0 new samples, 0 new results (earlier results kept), 1 unchanged"},
		{[]string{"analyze", "--store", "--db", dbPath, "--limits", lim, curve}, "0 new samples, 1 new results"},
	} {
		code, _, errs := recordsRun(t, "", tc.args...)
		if code != 0 || !strings.Contains(errs, tc.want) {
			t.Fatalf("run %d %v: status %d, stderr %q; want %q", i+1, tc.args, code, errs, tc.want)
		}
	}
	db, err := store.Open(context.Background(), dbPath)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	all, _ := db.History(context.Background(), store.Filter{AllResults: true, Oldest: true})
	if len(all) != 2 || all[0].Sample.ID != all[1].Sample.ID || all[1].Result.LimitsVersion != "2026-12-01.2" ||
		all[0].Sample.Ladle != "L-2418" || !all[0].Sample.Simulated {
		t.Fatalf("stored: %+v", all)
	}
}

// The page says what happened: when the cup was poured, a SIMULATED banner
// for a simulated cup, the curve file's SHA-256 in full, and it is written
// readable by the group as the umask allows (0644 under umask 022). A
// stored sample whose curve file no longer parses is still drawn, from its
// record, with a note naming the file and line that fail.
func TestReportPageRecordsWhatHappened(t *testing.T) {
	dir := t.TempDir()
	curve, dbPath, db, rec, s := reportStoreSample(t, dir)
	if want := "2026-12-01T07:40:00Z"; rec.PourPeakS == nil || !s.Recorded.Equal(mustTime(t, want).Add(time.Duration(*rec.PourPeakS*float64(time.Second)))) {
		t.Fatalf("pour time %v, want %s plus the pour peak's %v s", s.Recorded, want, rec.PourPeakS)
	}
	s.CurveSHA256, _ = store.HashFile(curve)
	id, err := db.AddSample(context.Background(), s)
	if err != nil {
		t.Fatal(err)
	}
	db.Close()

	page := filepath.Join(dir, "page.svg")
	if code, _, errs := recordsRun(t, dbPath, "report", strconv.FormatInt(id, 10), "--out", page); code != 0 {
		t.Fatalf("status %d: %s", code, errs)
	}
	svg, _ := os.ReadFile(page)
	for _, want := range []string{"SIMULATED", s.CurveSHA256, "poured 2026-12-01 07:4", "the figures use C "} {
		if !strings.Contains(string(svg), want) {
			t.Errorf("page lacks %q", want)
		}
	}
	if strings.Contains(string(svg), "-0.0 ") || strings.Contains(string(svg), "−0.0") {
		t.Error("page writes a negative zero")
	}
	probe := filepath.Join(dir, "probe")
	f, err := os.OpenFile(probe, os.O_CREATE|os.O_WRONLY, 0o644)
	if err != nil {
		t.Fatal(err)
	}
	f.Close()
	pst, _ := os.Stat(probe)
	if st, _ := os.Stat(page); st.Mode().Perm() != pst.Mode().Perm() {
		t.Errorf("page mode %v, want %v (0644 less the umask)", st.Mode().Perm(), pst.Mode().Perm())
	}

	os.WriteFile(curve, []byte("time_s,temp_c\n0,1200\n1,not a number\n"), 0o644)
	code, _, errs := recordsRun(t, dbPath, "report", strconv.FormatInt(id, 10), "--out", page)
	if code != 0 || !strings.Contains(errs, curve+":3") || !strings.Contains(errs, "NOT the measured curve") {
		t.Fatalf("unparseable curve: status %d: %s", code, errs)
	}
	if svg, _ = os.ReadFile(page); !strings.Contains(string(svg), "NOT the measured curve") {
		t.Error("the page drawn from the record does not say so")
	}
}

func mustTime(t *testing.T, s string) time.Time {
	t.Helper()
	v, err := time.Parse(time.RFC3339, s)
	if err != nil {
		t.Fatal(err)
	}
	return v
}
