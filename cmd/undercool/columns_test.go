package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/sim"
)

// loggerDialects writes one simulated cup (internal/sim, Al-Si7Mg; not a
// measurement) in the project's own format, as a logger export whose
// header names its columns without units (date, clock time, analog input,
// time), and without a header with the temperature first; it returns the
// three paths.
func loggerDialects(t *testing.T, dir string) (own, export, tempFirst string) {
	t.Helper()
	own = simulatedCup(t, dir, "own.csv", "al-si7mg", 7)
	p, err := sim.Preset("al-si7mg", 0.6, 7)
	if err != nil {
		t.Fatal(err)
	}
	out := sim.Simulate(p)
	var ex, tf strings.Builder
	ex.WriteString("Date\tTime\tAI:2  Analog Input\tMT2   Time\n")
	for i := range out.Time {
		sec := int(out.Time[i])
		fmt.Fprintf(&ex, "02-Jan-26\t07:%02d:%02d\t%v\t%v\n", 10+sec/60, sec%60, out.Temp[i], out.Time[i])
		fmt.Fprintf(&tf, "%v\t%v\n", out.Temp[i], out.Time[i])
	}
	return own, writeText(t, dir, "export.txt", ex.String()), writeText(t, dir, "temp-first.txt", tf.String())
}

var pointKeys = []string{"samples", "pour_peak_c", "liquidus_c", "eutectic_min_c", "eutectic_max_c", "recalescence_c", "solidus_c"}

// TestAnalyzeColumnOptions: a logger export is refused with a hint naming
// the options; with them it reads as the same cup in the own format does
// (the same points, exactly: the numbers are the same float64s). A file
// with the temperature first reads swapped, with a warning. Bad options
// are usage errors.
func TestAnalyzeColumnOptions(t *testing.T) {
	dir := t.TempDir()
	own, export, tempFirst := loggerDialects(t, dir)
	code, _, errs := filesRun(t, "analyze", "--json", "--alloy", "al-si7mg", export)
	if code != 1 || !strings.Contains(errs, export+":1: no temperature column") || !strings.Contains(errs, "--temp-column") || !strings.Contains(errs, `"AI:2  Analog Input"`) {
		t.Errorf("without options: exit %d: %s", code, errs)
	}
	code, out, errs := filesRun(t, "analyze", "--json", "--alloy", "al-si7mg", own)
	if code != 0 {
		t.Fatalf("own format: exit %d: %s", code, errs)
	}
	want := jsonLines(t, out)[0]
	for _, args := range [][]string{
		{"--time-column", "MT2 Time", "--temp-column", "ai:2 analog input", "--time-unit", "s", "--temp-unit", "C", export},
		{export, "--time-column", "4", "--temp-column", "3"},
		{tempFirst},
	} {
		code, out, errs := filesRun(t, append([]string{"analyze", "--json", "--alloy", "al-si7mg"}, args...)...)
		recs := jsonLines(t, out)
		if code != 0 || len(recs) != 1 {
			t.Fatalf("%q: exit %d: %s", args, code, errs)
		}
		for _, k := range pointKeys {
			if fmt.Sprint(recs[0][k]) != fmt.Sprint(want[k]) {
				t.Errorf("%q: %s = %v, own format %v", args, k, recs[0][k], want[k])
			}
		}
		swapNote := strings.Contains(fmt.Sprint(recs[0]["warnings"]), "second column as the time")
		if swapNote != (args[0] == tempFirst) {
			t.Errorf("%q: warnings %v", args, recs[0]["warnings"])
		}
	}
	for _, bad := range [][]string{{"--temp-unit", "R"}, {"--time-unit", "h"}, {"--temp-column", "0"}} {
		code, _, errs := filesRun(t, append(append([]string{"analyze"}, bad...), own)...)
		if code != 2 || !strings.Contains(errs, "undercool analyze: ") {
			t.Errorf("%q: exit %d: %s", bad, code, errs)
		}
	}
	// --store reads the files with the same options for their metadata
	db := filepath.Join(dir, "records.db")
	code, _, errs = recordsRun(t, db, "analyze", "--store", "--alloy", "al-si7mg", "--time-column", "4", "--temp-column", "3", export)
	if code != 0 || !strings.Contains(errs, "1 new samples") {
		t.Errorf("--store: exit %d: %s", code, errs)
	}
}

// TestReplayAndReportColumnOptions: replay and report take the same
// options.
func TestReplayAndReportColumnOptions(t *testing.T) {
	dir := t.TempDir()
	_, export, _ := loggerDialects(t, dir)
	if code, _, errs := filesRun(t, "replay", "--end", export); code != 1 || !strings.Contains(errs, "--temp-column") {
		t.Errorf("replay without options: exit %d: %s", code, errs)
	}
	if code, out, errs := filesRun(t, "replay", "--end", "--time-column", "4", "--temp-column", "3", export); code != 0 || !strings.Contains(out, "RESULT") {
		t.Errorf("replay with options: exit %d: %s%s", code, out, errs)
	}
	page := filepath.Join(dir, "page.svg")
	code, _, errs := recordsRun(t, "", "report", export, "--out", page, "--alloy", "al-si7mg", "--time-column", "MT2 Time", "--temp-column", "AI:2 Analog Input")
	if code != 0 || !strings.Contains(errs, "wrote "+page) {
		t.Errorf("report with options: exit %d: %s", code, errs)
	}
	if code, _, errs := recordsRun(t, "", "report", export, "--out", page, "--time-unit", "fortnights"); code != 2 || !strings.Contains(errs, "time unit") {
		t.Errorf("report with a bad unit: exit %d: %s", code, errs)
	}
}

// TestAnalyzeRealLoggerFiles reads the measured Al-Si and Sn-Bi files kept
// beside the repository (skipped where absent) the
// way a user would: the logger export with its columns named, the
// temperature-first files as they are, one column of the Sn-Bi table.
func TestAnalyzeRealLoggerFiles(t *testing.T) {
	const real = "../../../shared/realdata/"
	if _, err := os.Stat(real + "joebee-alsi-before-after/beforeB.txt"); err != nil {
		t.Skipf("measured curves not available (%v): they live beside the repository in ../shared/realdata", err)
	}
	tests := []struct {
		args    []string
		samples float64
		warning string
	}{
		{[]string{"--alloy", "al-si7mg", "--time-column", "MT2 Time", "--temp-column", "AI:2 Analog Input", real + "joebee-alsi-before-after/beforeB.txt"}, 1886, ""},
		{[]string{"--alloy", "al-si7mg", real + "joebee-alsi-before-after/beforeA.txt"}, 1345, "second column as the time"},
		{[]string{"--temp-column", "Sn40", real + "mignard-snbi-arduino/EutecticData.csv"}, 515, "padding"},
	}
	for _, tt := range tests {
		code, out, errs := filesRun(t, append([]string{"analyze", "--json"}, tt.args...)...)
		recs := jsonLines(t, out)
		if code != 0 || len(recs) != 1 || recs[0]["samples"] != tt.samples {
			t.Errorf("%q: exit %d, %v: %s", tt.args, code, recs, errs)
			continue
		}
		if w := fmt.Sprint(recs[0]["warnings"]); !strings.Contains(w, tt.warning) {
			t.Errorf("%q: warnings %s", tt.args, w)
		}
	}
}
