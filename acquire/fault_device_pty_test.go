//go:build linux

package acquire

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/escape"
	"github.com/undercool-foundry/undercool/internal/feed"
)

// TestFaultDeviceValuesPTY: a device on a pseudo-terminal that sends
// hostile text and makes things up. Before the fixes: a key with an empty
// value put its raw bytes (an xterm title sequence, an OSC 52 clipboard
// write) into the garbage warning; `! fw=1.3\xff` and C1 or bidi
// characters in info values passed into the files' metadata; every new
// channel id, info key and thermocouple name was kept for ever (200,000
// channel ids took 247 MB); and a sample id of 224 bytes or more made the
// file name too long, so that the pour failed and acquisition ended for
// every channel. Now: such lines are garbage, counted, and said with
// visible escapes; channels, device keys and warnings are bounded; a long
// id is cut in the file name (its metadata keeps it whole) with a warning;
// and the file reads back.
func TestFaultDeviceValuesPTY(t *testing.T) {
	amp := newFakeAmp(t)
	dir := t.TempDir()
	open, cfg := ptyConfig(amp, dir)
	cfg.Trigger.Manual = true
	a, col, _ := startAcq(t, open, cfg)
	col.until("connected", 5*time.Second, func() bool { return col.has(feed.KindConnected, "") != nil })

	hostile := []string{
		"\x1b]0;pwned\x07=\n",
		"c=1 \x1b]52;c;Zm9v\x07=\n",
		"! fw=1.3\xff\n",
		"! fw=1.3\u009b2J\n",
		"! fw=1.3\x9b2J\n",
		"! sample=L-2405\u202e1\n",
	}
	for _, l := range hostile {
		amp.write(l)
	}
	garbage := len(hostile)
	// 100 made-up channels: the first MaxChannels are read, the rest
	// are garbage (channel "1" comes first, to be recorded).
	amp.write("ch=1 c=25\n")
	for i := range 99 {
		amp.write(fmt.Sprintf("ch=x%d c=25\n", i))
	}
	garbage += 100 - MaxChannels
	// 200 made-up device keys in lines of 8, and 300 made-up
	// thermocouple types.
	for i := 0; i < 200; i += 8 {
		var b strings.Builder
		b.WriteString("!")
		for k := i; k < i+8; k++ {
			fmt.Fprintf(&b, " k%d=v", k)
		}
		amp.write(b.String() + "\n")
	}
	for i := range 300 {
		amp.write(fmt.Sprintf("! tc=Z%d\n", i))
	}
	col.until("every line", 10*time.Second, func() bool { return col.last.Lines >= len(hostile)+100+25+300 })

	long := strings.Repeat("L-2405 cup 1 of Cindermoth ", 12) // 324 bytes
	a.SetMeta("1", 0, []curvefile.Meta{{Key: "sample", Value: long}})
	time.Sleep(50 * time.Millisecond) // SetMeta and Start go in order; the sleep only lets readings arrive
	a.Start("1")
	col.until("started", 5*time.Second, func() bool { return col.has(feed.KindStarted, "1") != nil })
	for i := range 20 {
		amp.write(fmt.Sprintf("ch=1 c=%d\n", 1300-i))
	}
	col.until("readings", 5*time.Second, func() bool { return col.last.Channels["1"].Readings >= 21 })
	a.Stop("1", 0, "freezing done")
	col.until("done", 5*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })

	ended := col.has(feed.KindEnded, "1")
	if ended.Failed || len(filepath.Base(ended.Path)) > 160 {
		t.Fatalf("ended %+v", ended)
	}
	c, err := curvefile.ReadFile(ended.Path)
	if err != nil {
		t.Fatalf("the device made its own file unreadable: %v", err)
	}
	if c.Get("sample") != strings.TrimSpace(long) {
		t.Errorf("the file's sample id %q, want it whole", c.Get("sample"))
	}
	if dev := c.Get("device"); strings.Count(dev, "=") > MaxDeviceKeys || strings.Contains(dev, "\xff") {
		t.Errorf("device line keeps %d keys: %.200q", strings.Count(dev, "="), dev)
	}
	s := col.last
	// the 22 distinct device keys beyond MaxDeviceKeys... are counted per
	// key and line: at least the channels and the hostile lines
	if s.Garbage < garbage || len(s.Channels) > MaxChannels {
		t.Errorf("garbage %d (want at least %d), %d channels", s.Garbage, garbage, len(s.Channels))
	}
	if !escape.Safe(s.LastGarbage) {
		t.Errorf("last garbage holds raw control text: %q", s.LastGarbage)
	}
	warnings := 0
	var texts []string
	for _, e := range col.events {
		if !escape.Safe(e.Text) {
			t.Errorf("%s item holds raw control text: %q", e.Kind, e.Text)
		}
		for _, m := range e.Meta {
			if !escape.Safe(m.Value) {
				t.Errorf("%s item's %s holds raw control text: %q", e.Kind, m.Key, m.Value)
			}
		}
		if e.Kind == feed.KindWarning {
			warnings++
			texts = append(texts, e.Text)
		}
	}
	if warnings > maxWarnings+10 {
		t.Errorf("%d warnings: not bounded", warnings)
	}
	joined := strings.Join(texts, "\n")
	for _, want := range []string{"garbage line", "more than 64 device keys", "the sample id is 323 bytes long"} {
		if !strings.Contains(joined, want) {
			t.Errorf("no warning saying %q", want)
		}
	}
}

// TestFaultOneChannelsFileProblem: one channel's file cannot be completed
// (its final name was taken while it recorded); that channel says so, its
// readings stay in the partial file, and the other channel records on and
// completes its sample. Before the fix the error ended acquisition for
// every channel.
func TestFaultOneChannelsFileProblem(t *testing.T) {
	amp := newFakeAmp(t)
	dir := t.TempDir()
	open, cfg := ptyConfig(amp, dir)
	cfg.Trigger.Manual = true
	a, col, _ := startAcq(t, open, cfg)
	col.until("connected", 5*time.Second, func() bool { return col.has(feed.KindConnected, "") != nil })
	amp.write("ch=1 c=25\nch=2 c=25\n")
	col.until("both channels", 5*time.Second, func() bool { return len(col.last.Channels) == 2 })
	a.Start("1")
	a.Start("2")
	col.until("started", 5*time.Second, func() bool {
		return col.count(feed.KindStarted) == 2
	})
	var partial2 string
	for _, e := range col.events {
		if e.Kind == feed.KindStarted && e.Channel == "2" {
			partial2 = e.Path
		}
	}
	// another program takes channel 2's final name
	if err := os.WriteFile(strings.TrimSuffix(partial2, ".partial.csv")+".csv", []byte("x\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for i := range 10 {
		amp.write(fmt.Sprintf("ch=1 c=%d\nch=2 c=%d\n", 1300-i, 1300-i))
	}
	col.until("readings", 5*time.Second, func() bool { return col.last.Channels["2"].Readings >= 11 })
	a.Stop("2", 0, "freezing done")
	col.until("channel 2 ended", 5*time.Second, func() bool { return col.has(feed.KindEnded, "2") != nil })
	if e := col.has(feed.KindEnded, "2"); !e.Failed || !strings.Contains(e.Text, "already exists") || e.Path != partial2 {
		t.Fatalf("channel 2: %+v", e)
	}
	for i := range 10 {
		amp.write(fmt.Sprintf("ch=1 c=%d\n", 1290-i))
	}
	col.until("channel 1 readings", 5*time.Second, func() bool { return col.last.Channels["1"].Readings >= 21 })
	a.Stop("1", 0, "freezing done")
	col.until("channel 1 done", 5*time.Second, func() bool { return col.has(feed.KindEnded, "1") != nil })
	e := col.has(feed.KindEnded, "1")
	c, err := curvefile.ReadFile(e.Path)
	if e.Failed || err != nil || len(c.Time) != 21 { // with the one before the start
		t.Fatalf("channel 1: %+v %v", e, err)
	}
	if c2, err := curvefile.ReadFile(partial2); err != nil || len(c2.Time) != 11 {
		t.Fatalf("channel 2's readings not kept in %s: %v", partial2, err)
	}
	// the next start completes them under a name of their own, beside
	// the file that took theirs
	recs, err := recoverDir(dir, time.Now())
	if err != nil || len(recs) != 1 || recs[0].Rows != 11 || !strings.HasSuffix(recs[0].Path, "-recovered.csv") {
		t.Fatalf("recovery of channel 2: %+v %v", recs, err)
	}
}
