package tui

import (
	"bytes"
	"context"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"
)

// hostileText is an xterm title sequence, an OSC 52 clipboard write
// (ECMA-48 operating system commands), a screen clear by the C1 CSI and a
// right-to-left override (Unicode UAX #9).
const hostileText = "L-2405\x1b]0;pwned\x07\x1b]52;c;Zm9v\x07\u009b2J\u202e1"

// rawHostile reports whether s carries any piece of hostileText raw. (The
// dashboard's own styling is ECMA-48 SGR, ESC [ … m, which this does not
// look for.)
func rawHostile(s string) bool {
	return strings.Contains(s, "\x1b]") || strings.ContainsAny(s, "\x07\u009b\u202e")
}

type chanFeed struct{ ch chan sample.Update }

func (f chanFeed) Updates() <-chan sample.Update { return f.ch }
func (chanFeed) SetForm(string, sample.Meta)     {}
func (chanFeed) SetLimits(*limits.Book)          {}
func (chanFeed) Start(string)                    {}
func (chanFeed) Stop(string)                     {}

func hostileUpdate() sample.Update {
	var m sample.Meta
	m = m.With("sample", hostileText).With("alloy", hostileText).With("operator", hostileText)
	rec := assess.Record{Alloy: "grey-iron", Verdict: assess.VerdictFail,
		Reasons: []string{"reason " + hostileText}, Advice: []string{"consider " + hostileText}}
	return sample.Update{
		Status:   feed.Status{Port: "/dev/tty" + hostileText},
		Events:   []sample.Event{{Kind: sample.EventWarning, Channel: "1", Text: "1 garbage line(s), last " + hostileText}},
		Finished: []sample.Finished{{Channel: "1", Sample: 1, Meta: m, Path: "/curves/" + hostileText + ".csv", Record: rec}},
	}
}

// TestHostileTextOnScreen: text from a device or a record reaches neither
// the headless lines nor the dashboard's screen or log raw; it is shown
// with visible escapes (package escape).
func TestHostileTextOnScreen(t *testing.T) {
	f := chanFeed{ch: make(chan sample.Update, 1)}
	f.ch <- hostileUpdate()
	close(f.ch)
	var out bytes.Buffer
	if err := Lines(context.Background(), Options{Feed: f}, &out, 0); err != nil {
		t.Fatal(err)
	}
	if rawHostile(out.String()) || !strings.Contains(out.String(), `L-2405\x1b]0;pwned\x07`) {
		t.Errorf("headless lines:\n%q", out.String())
	}

	var log bytes.Buffer
	m := New(Options{Title: "escape", Styles: asciiStyles(), Clock: fixedClock, Log: &log}).resize(120, 40)
	tm, cmd := m.Update(updateMsg{hostileUpdate()})
	m = runCmds(tm.(Model), cmd)
	if v := m.View(); rawHostile(v) {
		t.Errorf("the screen shows raw control text:\n%q", v)
	}
	if rawHostile(log.String()) || log.Len() == 0 {
		t.Errorf("the log holds raw control text: %q", log.String())
	}
}
