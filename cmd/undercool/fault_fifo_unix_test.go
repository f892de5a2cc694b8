//go:build unix

package main

import (
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestFaultAnalyzeFIFO: a FIFO with no writer given as a curve file is
// refused at once by what it is, and the other files are still analysed
// (issue 18: analyze waited on it for ever, deaf to Ctrl-C). replay and
// report refuse it too.
func TestFaultAnalyzeFIFO(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "L-2417.csv")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFO here: %v", err)
	}
	good := writeText(t, dir, "flat.csv", flatCup())
	code, out, errs := filesRun(t, "analyze", "--json", fifo, good)
	if code != 1 || !strings.Contains(errs, fifo+": a FIFO (named pipe)") || len(jsonLines(t, out)) != 1 {
		t.Errorf("analyze: exit %d: %s%s", code, out, errs)
	}
	for _, args := range [][]string{{"replay", "--end", fifo}, {"report", fifo, "--out", filepath.Join(dir, "p.svg")}} {
		if code, _, errs := filesRun(t, args...); code != 1 || !strings.Contains(errs, "a FIFO") {
			t.Errorf("%s: exit %d: %s", args[0], code, errs)
		}
	}
}
