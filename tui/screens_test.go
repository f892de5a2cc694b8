package tui

import (
	"context"
	"fmt"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/forecast"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// judgeAs is constructedJudge with verdict v and, for an invalid sample,
// a CONSTRUCTED failed check on the cup and the figure it withholds.
func judgeAs(v string) sample.Judge {
	return func(in assess.Input, res arrest.Result) assess.Record {
		rec := constructedJudge(in, res)
		rec.Verdict = v
		switch v {
		case assess.VerdictPass:
			rec.Reasons, rec.Advice = []string{"constructed reason: every figure within its pass band"}, nil
		case assess.VerdictFail:
			rec.Reasons = []string{"constructed reason: eutectic undercooling 21.4 °C is above its 18.0 °C limit",
				"constructed reason: recalescence 9.1 °C is above its 8.0 °C limit"}
			rec.Advice = []string{"Large eutectic undercooling: consider a late inoculant addition, per the shop's practice; then re-sample.",
				"constructed advice: consider more inoculant"}
		case assess.VerdictInvalid:
			rec.Reasons = []string{"constructed reason: pour superheat 12 °C is below its 40 °C limit (a check on the sample)"}
			rec.Advice = []string{"The cup was filled cold: the arrests may be distorted. Consider re-sampling with hotter metal and a pre-heated, dry spoon, per the shop's practice."}
			rec.Withheld = []assess.WithheldFigure{{Metric: "ce", Value: 4.31, Why: "pour superheat below its limit"}}
			rec.CE = nil // withheld: null in the record, as assess leaves it
		case assess.VerdictUnchecked:
			rec.Reasons, rec.Advice = []string{"no limits are set for alloy grey-iron"}, nil
		}
		return rec
	}
}

// testModelJudged is testModel with its tracker judging by judge.
func testModelJudged(t testing.TB, judge sample.Judge, w, h int) Model {
	t.Helper()
	book, err := limits.Parse([]byte(constructedLimits), "constructed.toml")
	if err != nil {
		t.Fatal(err)
	}
	mem := &Memory{Clock: fixedClock}
	f := newTestFeed(sample.Config{Limits: book, NewAnalyzer: newConstructedAnalyzer, Judge: judge}, mem)
	m := New(Options{Feed: f, Title: "test deck", Styles: asciiStyles(), Limits: book, Records: mem, Clock: fixedClock})
	return runCmds(m.resize(w, h), nil)
}

// cablePulled is a recording cut off by a pulled cable: the port lost,
// reopening fails, and no reading has come for 14 s.
func cablePulled() []Batch {
	bs := slices.Clone(constructedBatches("1", 100, 10, 5)[:140])
	last := bs[len(bs)-1].Status
	st := last
	st.Connected, st.Reconnecting, st.ReadingsPerS = false, true, 0
	st.Channels = map[string]feed.ChannelStatus{"1": {Recording: true, Sample: 1, SilentS: 14}}
	return append(bs, Batch{Items: []feed.Item{
		{Kind: feed.KindDisconnected, TimeS: 70, Text: "lost /dev/ttyUSB0 (read /dev/ttyUSB0: input/output error); reconnecting"},
		{Kind: feed.KindWarning, TimeS: 70, Text: "open /dev/ttyUSB0: no such file or directory (is the USB adapter plugged in?); retrying"},
	}, Status: st})
}

// faultReadings is a recording whose thermocouple opens at 70 s: the
// device reports it (flag), or, with up-scale burnout, reads 1372 °C.
func faultReadings(pegged bool) []Batch {
	bs := slices.Clone(constructedBatches("1", 100, 10, 5)[:140])
	st := bs[len(bs)-1].Status
	for k := range 3 {
		var b Batch
		for i := range 10 {
			at := 70 + float64(k*10+i)/10
			r := feed.Reading{TimeS: at, Channel: "1", Flags: feed.FlagOpen}
			if pegged {
				r = feed.Reading{TimeS: at, Channel: "1", TempC: 1372}
			}
			b.Items = append(b.Items, feed.Item{Kind: feed.KindReading, Channel: "1", TimeS: at, Reading: r})
		}
		b.Status = st
		bs = append(bs, b)
	}
	return bs
}

// simulatedBatches are a sample whose device says it is simulated (the
// virtual melt deck's simulated=true).
func simulatedBatches() []Batch {
	bs := slices.Clone(constructedBatches("1", 100, 10, 5)[:140])
	for i, it := range bs[0].Items {
		if it.Kind == feed.KindStarted {
			it.Meta = append(slices.Clone(it.Meta), curvefile.Meta{Key: "simulated", Value: "true"})
			bs[0].Items = slices.Clone(bs[0].Items)
			bs[0].Items[i] = it
		}
	}
	return bs
}

func TestGoldenStateScreens(t *testing.T) {
	done := func(v string) func(t *testing.T, w, h int) Model {
		return func(t *testing.T, w, h int) Model {
			return play(testModelJudged(t, judgeAs(v), w, h), constructedBatches("1", 230, 10, 5))
		}
	}
	plain := func(bs func() []Batch, keys ...string) func(t *testing.T, w, h int) Model {
		return func(t *testing.T, w, h int) Model { return press(play(testModel(t, w, h), bs()), keys...) }
	}
	screens := []struct {
		name string
		make func(t *testing.T, w, h int) Model
		want []string // words that must be on screen
	}{
		{"cable-pulled", plain(cablePulled), []string{"no reading for 14 s", "FREEZING  84 s", "retrying"}},
		{"thermocouple-open", plain(func() []Batch { return faultReadings(false) }), []string{"open circuit since 70 s", "FREEZING  73 s"}},
		{"thermocouple-pegged", plain(func() []Batch { return faultReadings(true) }), []string{"stuck at 1372.0 °C since 70 s"}},
		{"done-pass", done(assess.VerdictPass), []string{"PASS · DONE"}},
		{"done-fail", done(assess.VerdictFail), []string{"FAIL · DONE", "→ Consider a late inoculant addition"}},
		{"done-invalid", done(assess.VerdictInvalid), []string{"INVALID · RE-SAMPLE", "withheld"}},
		{"done-unchecked", done(assess.VerdictUnchecked), []string{"NO LIMITS SET"}},
		{"done-two-cups", func(t *testing.T, w, h int) Model {
			return play(testModelJudged(t, judgeAs(assess.VerdictFail), w, h), twoCups(230))
		}, []string{"FAIL · DONE"}},
		{"verdict-dialog", func(t *testing.T, w, h int) Model { return press(done(assess.VerdictInvalid)(t, w, h), "v") },
			[]string{"Why", "Withheld", "ce", "limits version constructed-1"}},
		{"limits-editing", plain(func() []Batch { return nil }, "3", "l", "enter"), []string{"eutectic recalescence, pass max (°C): 6", "enter done • esc back"}},
		{"simulated", plain(simulatedBatches), []string{"[SIMULATED]"}},
		{"stop-ask", plain(func() []Batch { return constructedBatches("1", 100, 10, 5)[:60] }, "x"), []string{"Stop recording cup 1 now?"}},
	}
	for _, sz := range []struct{ w, h int }{{80, 24}, {120, 40}} {
		for _, sc := range screens {
			name := sc.name + "-" + strconv.Itoa(sz.w) + "x" + strconv.Itoa(sz.h)
			t.Run(name, func(t *testing.T) {
				v := sc.make(t, sz.w, sz.h).View()
				checkScreen(t, v, sz.w, sz.h)
				plainV := stripANSI(v)
				for _, s := range sc.want {
					if !strings.Contains(plainV, s) {
						t.Errorf("%q not on screen", s)
					}
				}
				checkGolden(t, name, v)
			})
		}
	}
}

// checkScreen checks a view fills exactly w×h cells and shows the safety
// line.
func checkScreen(t *testing.T, v string, w, h int) {
	t.Helper()
	lines := strings.Split(v, "\n")
	if len(lines) != h {
		t.Errorf("view has %d lines, want %d", len(lines), h)
	}
	for i, l := range lines {
		if n := len([]rune(stripANSI(l))); n > w {
			t.Errorf("line %d is %d cells wide, more than %d", i+1, n, w)
		}
	}
	if !strings.Contains(v, "Molten metal") {
		t.Error("the safety line is missing")
	}
}

// x asks before it stops a sample: n keeps it recording, y asks the
// session to stop it; on a cup not recording it stops nothing.
func TestStopAsksFirst(t *testing.T) {
	m := testModel(t, 80, 24)
	m = press(m, "x")
	f := m.opt.Feed.(*testFeed)
	if m.stopping != "" || len(f.stops) != 0 || !strings.Contains(m.flash, "not recording") {
		t.Fatalf("x on an idle cup: stopping %q, stops %v, flash %q", m.stopping, f.stops, m.flash)
	}
	m = play(m, constructedBatches("1", 100, 10, 5)[:60])
	m = press(m, "x", "n")
	if len(f.stops) != 0 {
		t.Fatalf("n stopped the sample: %v", f.stops)
	}
	m = press(m, "x", "y")
	if !slices.Equal(f.stops, []string{"1"}) {
		t.Fatalf("x y asked stops %v, want [1]", f.stops)
	}
}

// The whole verdict scrolls to its last line and back.
func TestVerdictDialogScrolls(t *testing.T) {
	m := play(testModelJudged(t, judgeAs(assess.VerdictFail), 80, 24), constructedBatches("1", 230, 10, 5))
	m = press(m, "v")
	for range 30 {
		m = press(m, "down")
	}
	if v := stripANSI(m.View()); !strings.Contains(v, "limits version constructed-1") || strings.Contains(v, "↓ for") {
		t.Fatalf("scrolled to the end, the last line is not shown:\n%s", v)
	}
	for range 30 {
		m = press(m, "up")
	}
	if v := stripANSI(m.View()); !strings.Contains(v, "VERDICT · CUP 1") {
		t.Fatalf("scrolled back, the title is not shown:\n%s", v)
	}
	if m = press(m, "esc"); m.verdict != nil {
		t.Fatal("esc left the verdict open")
	}
}

// The history's selection stays on its sample when a newer one comes in
// above it, and enter opens that sample.
func TestHistorySelectionStays(t *testing.T) {
	m := testModel(t, 120, 40)
	m = play(m, constructedBatches("1", 230, 10, 5))
	m = play(m, constructedBatchesAt("1", 300, 200, 10, 5))
	m = press(m, "2", "down") // the older of the two
	want := m.hist.shown()[m.hist.sel].ID
	m = play(m, constructedBatchesAt("1", 600, 215, 10, 5))
	if got := m.hist.shown()[m.hist.sel].ID; got != want {
		t.Fatalf("after a new sample the selection is on #%d, want #%d", got, want)
	}
	m = press(m, "enter")
	if m.hist.open == nil || m.hist.open.ID != want {
		t.Fatalf("enter opened %+v, want #%d", m.hist.open, want)
	}
}

// The trend's metric goes both ways through the metrics measured.
func TestTrendMetricBothWays(t *testing.T) {
	m := play(testModel(t, 120, 40), constructedBatches("1", 230, 10, 5))
	m = press(m, "2")
	first := m.hist.metricName()
	m = press(m, "m")
	if m.hist.metricName() == first {
		t.Fatalf("m stayed on %s", first)
	}
	m = press(m, "M")
	if m.hist.metricName() != first {
		t.Fatalf("m then M gave %s, want %s", m.hist.metricName(), first)
	}
	m = press(m, "M")
	ms := m.hist.metrics()
	if m.hist.metricName() != ms[len(ms)-1] {
		t.Fatalf("M from the first gave %s, want the last, %s", m.hist.metricName(), ms[len(ms)-1])
	}
}

// The cup model's advice on a finished sample, when the adviser gives one
// that applies, shows at DONE as a model estimate, and in the whole
// verdict with its caution; a prediction that does not apply shows nothing.
func TestDoneShowsModelEstimate(t *testing.T) {
	for _, applies := range []bool{true, false} {
		m := testModelJudged(t, judgeAs(assess.VerdictFail), 120, 40)
		m.opt.Advise = func(_ context.Context, f sample.Finished, _ *limits.Book) []forecast.Prediction {
			// CONSTRUCTED: a stand-in for the fit (internal/forecast is tested on its own)
			return []forecast.Prediction{{ModelEstimate: true, Applies: applies, Inoculant: "FeSi75",
				Text: "constructed estimate: consider adding 0.10 % FeSi75 and re-sampling, per the shop's practice", Caution: forecast.Caution}}
		}
		m = play(m, constructedBatches("1", 230, 10, 5))
		v := stripANSI(m.View())
		if got := strings.Contains(v, "≈ model estimate") && strings.Contains(v, "constructed estimate"); got != applies {
			t.Fatalf("applies %v: estimate on screen %v:\n%s", applies, got, v)
		}
		if d := stripANSI(press(m, "v").View()); applies && !strings.Contains(d, "Model estimate") {
			t.Fatalf("the whole verdict lacks the estimate:\n%s", d)
		}
	}
}

// Line 2 keeps its wording as the counts change: the long or short form
// is chosen by the screen's width, not by the numbers of the moment.
func TestStatusLineKeepsItsWording(t *testing.T) {
	for _, w := range []int{80, 120} {
		m := testModel(t, w, 24)
		m.status = feed.Status{Port: "/dev/ttyUSB0", Connected: true, ReadingsPerS: 9}
		short := strings.Contains(stripANSI(m.statusLine()), "reconn.")
		m.status.ReadingsPerS, m.status.Faults, m.status.Garbage, m.status.Reconnecting = 1000, 120, 3400, true
		if again := strings.Contains(stripANSI(m.statusLine()), "reconn."); again != short {
			t.Errorf("at %d columns the status line changed its wording with the counts", w)
		}
	}
}

// The log says a device line's pairs as the line gave them, never as a Go
// value's dump (map[…], {…}).
func TestLogLinesWithoutDumps(t *testing.T) {
	ev := sample.Event{Kind: sample.EventDeviceInfo, Channel: "1", TimeS: 2, Text: "device line",
		Info: []curvefile.Meta{{Key: "sample", Value: "L-2405 cup 1"}, {Key: "alloy", Value: "grey-iron"}}}
	for _, line := range []string{eventLog(ev), eventLine(ev)} {
		if !strings.Contains(line, `sample="L-2405 cup 1" alloy=grey-iron`) || strings.ContainsAny(line, "{}[") {
			t.Errorf("log line %q", line)
		}
	}
}

// While a sample freezes, the figures the deck decides on show as their
// points settle: the carbon equivalent once the liquidus has (worked out
// by assess from the points so far), none before any point.
func TestFiguresSoFarWhileRecording(t *testing.T) {
	m := testModel(t, 80, 24)
	early := play(m, constructedBatches("1", 100, 10, 5)[:4])
	if v := stripANSI(early.View()); strings.Contains(v, "CE ") {
		t.Fatalf("a figure before any point:\n%s", v)
	}
	m = play(testModel(t, 80, 24), constructedBatches("1", 100, 10, 5)[:140])
	c := m.live.activeCup()
	if c.soFar == nil || c.soFar.CE == nil {
		t.Fatal("no record of the points so far after the liquidus")
	}
	if v := stripANSI(m.View()); !strings.Contains(v, fmt.Sprintf("CE %.2f", *c.soFar.CE)) {
		t.Fatalf("CE %.2f not on screen:\n%s", *c.soFar.CE, v)
	}
}
