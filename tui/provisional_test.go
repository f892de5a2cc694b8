package tui

import (
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// A point shown live before its arrest's shape is complete is marked as
// provisional (lower-case letter on the charts, "?" after its value), and
// shown as any other once confirmed (docs/dashboard.md, "Screens").
func TestProvisionalPointsMarked(t *testing.T) {
	st := asciiStyles()
	r := arrest.Result{
		PourPeak:    arrest.Point{TimeS: 2, TempC: 1290, OK: true},
		Liquidus:    arrest.Point{TimeS: 50, TempC: 1168, OK: true},
		EutecticMin: arrest.Point{TimeS: 75, TempC: 1142, OK: true, Provisional: true},
	}
	c := &cup{snap: sample.Snapshot{Channel: "1", Result: r}}
	got := map[rune]bool{}
	for _, m := range c.marks() {
		got[m.r] = true
	}
	if !got['P'] || !got['A'] || !got['u'] || got['U'] {
		t.Errorf("chart marks %v: want P, A and a lower-case u for the provisional eutectic minimum", got)
	}
	list := stripANSI(strings.Join(c.pointList(st), "\n"))
	if !strings.Contains(list, "1142.0 °C   75 s?") || strings.Contains(list, "1168.0 °C   50 s?") {
		t.Errorf("point list:\n%s", list)
	}
	if compact := stripANSI(strings.Join(c.compactPoints(st, 80), " ")); !strings.Contains(compact, "u 1142.0?") || !strings.Contains(compact, "A 1168.0 ") {
		t.Errorf("compact list: %s", compact)
	}
	// confirmed: the capital, no mark
	r.EutecticMin.Provisional = false
	c = &cup{snap: sample.Snapshot{Channel: "1", Result: r}}
	if list := stripANSI(strings.Join(c.pointList(st), "\n")); strings.Contains(list, "?") || !strings.Contains(list, "U eutectic min") {
		t.Errorf("confirmed point list:\n%s", list)
	}
}
