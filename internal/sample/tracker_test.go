package sample

import (
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

func meta(kv ...string) Meta {
	var m Meta
	for i := 0; i+1 < len(kv); i += 2 {
		m = m.With(kv[i], kv[i+1])
	}
	return m
}

func TestMeta(t *testing.T) {
	m := MetaOf([]curvefile.Meta{{Key: "operator", Value: "Pell Brasswick"}, {Key: "dev", Value: "amp"},
		{Key: "sample", Value: "L-1 cup 1"}, {Key: "alloy", Value: "grey-iron"}, {Key: "sample", Value: "L-2 cup 1"}})
	if want := (Meta{{Key: "sample", Value: "L-2 cup 1"}, {Key: "alloy", Value: "grey-iron"}, {Key: "operator", Value: "Pell Brasswick"}}); !m.Equal(want) {
		t.Fatalf("MetaOf = %v, want %v (sample keys only, protocol order, last wins)", m, want)
	}
	n := m.Merge(meta("note", "re-sample", "sample", "L-3 cup 1"))
	if n.Get("sample") != "L-3 cup 1" || n.Get("note") != "re-sample" || m.Get("sample") != "L-2 cup 1" {
		t.Fatalf("Merge gave %v and changed %v", n, m)
	}
	if c := n.carried(); c.Get("sample") != "" || c.Get("note") != "" || c.Get("alloy") != "grey-iron" || c.Get("operator") != "Pell Brasswick" {
		t.Fatalf("carried %v: the next cup keeps the stand's alloy and operator, never the cup's id", c)
	}
	if m.With("dev", "x").Equal(m) == false || m.With("alloy", "").Get("alloy") != "" {
		t.Fatal("With: non-sample keys are ignored, an empty value removes")
	}
}

// source is a scripted source for the tracker: it numbers samples and
// does what the tracker's commands ask, as the acquirer does.
type source struct {
	t       *testing.T
	tr      *Tracker
	clock   float64 // acquisition time of the next reading
	rec     map[string]int
	next    map[string]Meta // CommandMeta with sample 0, by channel
	fixed   map[string]Meta // CommandMeta for the sample recording
	stops   []Command
	updates []Update
	n       map[string]int
}

func newSource(t *testing.T, cfg Config) *source {
	s := &source{t: t, tr: New(cfg), rec: map[string]int{}, next: map[string]Meta{}, fixed: map[string]Meta{}, n: map[string]int{}}
	s.obey(s.tr.Initial())
	return s
}

func (s *source) obey(u Update) Update {
	s.updates = append(s.updates, u)
	for _, c := range u.Commands {
		switch c.Kind {
		case CommandMeta:
			if c.Sample == 0 {
				s.next[c.Channel] = c.Meta
			} else if s.rec[c.Channel] == c.Sample {
				s.fixed[c.Channel] = c.Meta
			}
		case CommandStop:
			s.stops = append(s.stops, c)
		}
	}
	return u
}

func (s *source) apply(items ...feed.Item) Update {
	return s.obey(s.tr.Apply(feed.Batch{Items: items}))
}

// nextMeta is what the source writes into channel ch's next file.
func (s *source) nextMeta(ch string) Meta {
	if m, ok := s.next[ch]; ok {
		return m
	}
	return s.next[""]
}

// pour starts a sample on ch with the readings pre, as the acquirer does.
func (s *source) pour(ch string, pre []feed.Reading) Update {
	s.n[ch]++
	s.rec[ch] = s.n[ch]
	start := s.clock
	if len(pre) > 0 {
		start = pre[0].TimeS
	}
	return s.apply(feed.Item{Kind: feed.KindStarted, Channel: ch, Sample: s.n[ch], Path: "/curves/" + ch + ".partial.csv",
		Meta: append([]curvefile.Meta{{Key: "channel", Value: ch}}, s.nextMeta(ch)...), Pre: pre, StartS: start, Text: "pour detected"})
}

func (s *source) end(ch, why string) Update {
	n := s.rec[ch]
	s.rec[ch] = 0
	return s.apply(feed.Item{Kind: feed.KindEnded, Channel: ch, Sample: n, Path: "/curves/" + ch + ".csv", Text: why})
}

// feedCurve sends readings of ch at 10 Hz, one batch of per readings at
// a time, and ends the sample when the tracker asks; it returns the
// readings sent.
func (s *source) feedCurve(ch string, temps []float64, per int) []feed.Reading {
	var sent []feed.Reading
	for i := 0; i < len(temps); i += per {
		var items []feed.Item
		for _, v := range temps[i:min(i+per, len(temps))] {
			r := feed.Reading{TimeS: s.clock, TempC: v, Channel: ch}
			s.clock = math.Round((s.clock+0.1)*1e6) / 1e6
			items = append(items, feed.Item{Kind: feed.KindReading, Channel: ch, TimeS: r.TimeS, Reading: r})
			if s.rec[ch] != 0 {
				sent = append(sent, r)
			}
		}
		k := len(s.stops)
		s.apply(items...)
		if len(s.stops) > k && s.rec[ch] != 0 {
			s.end(ch, s.stops[len(s.stops)-1].Reason)
		}
	}
	return sent
}

// cup is a SIMULATED grey-iron cup (internal/sim) at 10 Hz.
func cup(t *testing.T, alloy string, seed uint64) []float64 {
	t.Helper()
	p, err := sim.Preset(alloy, 0.8, seed)
	if err != nil {
		t.Fatal(err)
	}
	p.Logger.RateHz = 10
	return sim.Simulate(p).Temp
}

func (s *source) finished() []Finished {
	var out []Finished
	for _, u := range s.updates {
		out = append(out, u.Finished...)
	}
	return out
}

func (s *source) snap(ch string) Snapshot {
	sn, ok := s.tr.Snapshot(ch)
	if !ok {
		s.t.Fatalf("channel %s not seen", ch)
	}
	return sn
}

func idle(n int) []float64 { return slices.Repeat([]float64{25}, n) }

// A sample from the pour to its record: the form before the pour names it
// (and the source is told, for its file); the pre-trigger readings open
// the curve; the tracker sees freezing end, asks the source to stop after
// the margin, and gives the record once, equal to the offline analysis of
// the same readings (assess.Assess, the `analyze` command's).
func TestSampleFromPourToRecord(t *testing.T) {
	s := newSource(t, Config{})
	s.feedCurve("1", idle(30), 5)
	s.obey(s.tr.SetForm("1", meta("sample", "L-2417 cup 1", "alloy", "grey-iron", "operator", "Pell Brasswick")))
	if got := s.nextMeta("1"); got.Get("sample") != "L-2417 cup 1" {
		t.Fatalf("the source's next file gets %v", got)
	}
	temps := cup(t, sim.GreyIron, 7)
	// the trigger: 3 s of ambient before the pour open the file (the
	// acquirer's pre-trigger buffer)
	var pre []feed.Reading
	for i := range 30 {
		pre = append(pre, feed.Reading{TimeS: s.clock + float64(i)*0.1, TempC: temps[i], Channel: "1"})
	}
	s.clock += 3
	u := s.pour("1", pre)
	if len(s.fixed) != 0 {
		t.Fatalf("the file started with the decided metadata, yet a fix was asked: %v", s.fixed)
	}
	if sn := s.snap("1"); sn.State != Recording || sn.Meta.Get("sample") != "L-2417 cup 1" || len(sn.T) != 30 || sn.T[0] != 0 {
		t.Fatalf("after the start: %v %v, %d readings from %v", sn.State, sn.Meta, len(sn.T), sn.T)
	}
	if sn := s.snap("1"); sn.Next.Get("sample") != "" || sn.Next.Get("alloy") != "grey-iron" {
		t.Fatalf("the next sample after the start: %v (the cup's id is used up, the alloy carries over)", sn.Next)
	}
	if len(u.Events) == 0 || u.Events[len(u.Events)-1].Kind != EventStarted {
		t.Fatalf("events %v", u.Events)
	}
	sent := append(pre, s.feedCurve("1", temps[30:], 7)...)
	s.feedCurve("1", idle(100), 7)

	fs := s.finished()
	if len(fs) != 1 {
		t.Fatalf("%d finished samples, want 1", len(fs))
	}
	f := fs[0]
	if len(s.stops) != 1 || s.stops[0].Reason != "freezing done" || s.stops[0].Sample != 1 {
		t.Fatalf("stops %v", s.stops)
	}
	var frozen *Event
	for _, u := range s.updates {
		for i, e := range u.Events {
			if e.Kind == EventFrozen {
				frozen = &u.Events[i]
			}
		}
	}
	if frozen == nil {
		t.Fatal("no freezing-done event")
	}
	// stopped DefaultFreezeMarginS after freezing was seen to end (within a batch)
	last := f.T[len(f.T)-1]
	if frozenAt := frozen.TimeS - sent[0].TimeS; last-frozenAt < DefaultFreezeMarginS || last-frozenAt > DefaultFreezeMarginS+0.8 {
		t.Errorf("the curve ends %.1f s after freezing ended, want the %d s margin", last-frozenAt, DefaultFreezeMarginS)
	}
	// the curve is the file's: every reading recorded, at its file time
	if len(f.T) != len(sent) {
		t.Fatalf("curve of %d readings, %d sent while recording", len(f.T), len(sent))
	}
	for i, r := range sent {
		if f.T[i] != feed.FileTime(r.TimeS, sent[0].TimeS) || f.V[i] != r.TempC {
			t.Fatalf("reading %d: %v %v, sent %v", i, f.T[i], f.V[i], r)
		}
	}
	offline := assess.Assess(assess.Input{File: f.Path, Alloy: "grey-iron", Time: f.T, Temp: f.V,
		Meta: []curvefile.Meta{{Key: "channel", Value: "1"}, {Key: "sample", Value: "L-2417 cup 1"}, {Key: "alloy", Value: "grey-iron"}, {Key: "operator", Value: "Pell Brasswick"}}})
	if !reflect.DeepEqual(f.Record, offline) {
		t.Errorf("the live record differs from the offline one:\n live %+v\n offl %+v", f.Record, offline)
	}
	if f.Record.Verdict == "" || f.Record.Verdict == assess.VerdictInvalid {
		t.Errorf("verdict %s %v", f.Record.Verdict, f.Record.Reasons)
	}
	sn := s.snap("1")
	if sn.State != Done || sn.Record == nil || !reflect.DeepEqual(*sn.Record, f.Record) {
		t.Fatalf("snapshot after the end: %v", sn.State)
	}
	// the T′ shown is the analyser's: the offline analysis' where both
	// have it, through the end of freezing
	var an arrest.Analyzer
	an.Analyze(f.T, f.V, arrest.Options{Family: arrest.FamilyIron})
	wt, wd := an.Slope()
	n := min(len(wd), len(sn.SlopeD))
	if !slices.Equal(sn.SlopeT[:n], wt[:n]) || !sameNaN(sn.SlopeD[:n], wd[:n]) {
		t.Errorf("T′ differs from the analyser's")
	}
	if sol := f.Record.SolidusS; sol == nil || sn.SlopeT[len(sn.SlopeT)-1] < *sol {
		t.Errorf("T′ shown does not reach the end of freezing")
	}
	// a repeated end makes no second record
	s.end("1", "again")
	if len(s.finished()) != 1 {
		t.Error("a sample was finished twice")
	}
}

func sameNaN(a, b []float64) bool {
	return slices.EqualFunc(a, b, func(x, y float64) bool { return x == y || math.IsNaN(x) && math.IsNaN(y) })
}

// The form saved while a sample records, or once it is DONE, is for the
// next sample: the sample shown keeps its metadata and its record, and the
// source is told only about the next file. The form sets its own keys
// (a field left empty is emptied) and leaves the device's others.
func TestFormIsForTheNextSample(t *testing.T) {
	s := newSource(t, Config{})
	s.obey(s.tr.SetForm("1", meta("sample", "L-1 cup 1", "alloy", "grey-iron")))
	s.feedCurve("1", idle(10), 5)
	s.pour("1", nil)
	s.feedCurve("1", []float64{1300, 1290, 1280}, 3)
	s.obey(s.tr.SetForm("1", meta("sample", "L-2 cup 1")))
	if sn := s.snap("1"); sn.Meta.Get("sample") != "L-1 cup 1" || sn.Next.Get("sample") != "L-2 cup 1" {
		t.Fatalf("while recording: shown %v, next %v", sn.Meta, sn.Next)
	}
	if len(s.fixed) != 0 || s.nextMeta("1").Get("sample") != "L-2 cup 1" {
		t.Fatalf("the source was told fixed %v, next %v", s.fixed, s.nextMeta("1"))
	}
	s.end("1", "stopped by hand")
	done := s.snap("1")
	s.obey(s.tr.SetForm("1", meta("sample", "L-3 cup 1", "alloy", "grey-iron")))
	s.apply(feed.Item{Kind: feed.KindDeviceInfo, Channel: "1", Meta: []curvefile.Meta{{Key: "operator", Value: "Tobin Quenchmoor"}}})
	sn := s.snap("1")
	if sn.State != Done || sn.Meta.Get("sample") != "L-1 cup 1" || sn.Record != done.Record || sn.Record.Alloy != "grey-iron" {
		t.Fatalf("the DONE sample was relabelled: %v %v", sn.State, sn.Meta)
	}
	if sn.Next.Get("sample") != "L-3 cup 1" || sn.Next.Get("operator") != "Tobin Quenchmoor" {
		t.Fatalf("next %v", sn.Next)
	}
	s.pour("1", nil)
	if sn := s.snap("1"); sn.Meta.Get("sample") != "L-3 cup 1" || sn.Meta.Get("alloy") != "grey-iron" {
		t.Fatalf("the next sample is %v", sn.Meta)
	}
}

// A file that started before the source heard the decision (the device's
// line and the pour close together) is to be completed with the decided
// metadata: the tracker asks for it, addressed to that sample.
func TestStaleFileMetaIsFixed(t *testing.T) {
	s := newSource(t, Config{})
	s.feedCurve("1", idle(5), 5)
	s.n["1"]++
	s.rec["1"] = 1
	s.apply(
		feed.Item{Kind: feed.KindDeviceInfo, Meta: []curvefile.Meta{{Key: "sample", Value: "L-9 cup 1"}, {Key: "dev", Value: "amp"}}},
		feed.Item{Kind: feed.KindStarted, Channel: "1", Sample: 1, Meta: []curvefile.Meta{{Key: "channel", Value: "1"}}, StartS: s.clock})
	if got := s.fixed["1"]; got.Get("sample") != "L-9 cup 1" {
		t.Fatalf("fix asked %v", got)
	}
	if s.snap("1").Meta.Get("sample") != "L-9 cup 1" {
		t.Fatal("the sample is not the one the device named")
	}
}

// A device line without ch= names the next sample of every channel, and of
// channels not seen yet.
func TestDeviceLineForEveryChannel(t *testing.T) {
	s := newSource(t, Config{Meta: meta("operator", "Odile Flintcaster")})
	if s.nextMeta("").Get("operator") != "Odile Flintcaster" {
		t.Fatalf("initial defaults %v", s.next)
	}
	s.feedCurve("1", idle(2), 2)
	s.apply(feed.Item{Kind: feed.KindDeviceInfo, Meta: []curvefile.Meta{{Key: "alloy", Value: "ductile-iron"}}})
	if s.nextMeta("1").Get("alloy") != "ductile-iron" || s.nextMeta("").Get("alloy") != "ductile-iron" || s.nextMeta("").Get("operator") != "Odile Flintcaster" {
		t.Fatalf("next %v", s.next)
	}
	s.feedCurve("tell", idle(2), 2)
	if sn := s.snap("tell"); sn.Next.Get("alloy") != "ductile-iron" {
		t.Fatalf("a new channel's next %v", sn.Next)
	}
}

// An alloy named outside the naming rule is analysed by its limits entry's
// family: a356 with family = "aluminum" freezes as Al-Si (the name rule
// alone would wait for a cast-iron cup that never comes).
func TestCustomAlloyResolvedByItsEntry(t *testing.T) {
	book, err := limits.Parse([]byte(strings.ReplaceAll(strings.ReplaceAll(string(limits.Example()), "[alloy.al-si7mg", "[alloy.a356"), `"al-si7mg"`, `"a356"`)), "custom.toml")
	if err != nil {
		t.Fatal(err)
	}
	s := newSource(t, Config{Limits: book, Meta: meta("alloy", "a356")})
	s.feedCurve("1", idle(10), 5)
	s.pour("1", nil)
	s.feedCurve("1", cup(t, sim.AlSi7Mg, 3), 10)
	s.feedCurve("1", idle(200), 10)
	fs := s.finished()
	if len(fs) != 1 || len(s.stops) != 1 {
		t.Fatalf("%d finished, stops %v: freezing was never seen to end", len(fs), s.stops)
	}
	if r := fs[0].Record; r.Family != string(arrest.FamilyAluminum) || r.Verdict == assess.VerdictInvalid || r.LimitsSource != "custom.toml" {
		t.Fatalf("record family %s verdict %s %v", r.Family, r.Verdict, r.Reasons)
	}
}

// A snapshot handed out never changes: the curve grows in the tracker's
// own arrays beyond the snapshot's length, and a new sample gets new ones.
func TestSnapshotsDoNotChange(t *testing.T) {
	s := newSource(t, Config{})
	s.pour("1", nil)
	s.feedCurve("1", cup(t, sim.GreyIron, 2)[:400], 10)
	old := s.snap("1")
	keepT, keepD := slices.Clone(old.T), slices.Clone(old.SlopeD)
	s.feedCurve("1", cup(t, sim.GreyIron, 2)[400:800], 10)
	s.end("1", "stopped by hand")
	s.pour("1", nil)
	s.feedCurve("1", cup(t, sim.GreyIron, 4)[:800], 10)
	if !slices.Equal(old.T, keepT) || !sameNaN(old.SlopeD, keepD) {
		t.Fatal("a snapshot's slices changed after it was handed out")
	}
	if cap(old.T) != len(old.T) {
		t.Fatal("a snapshot's slices can be appended to")
	}
}

// A recovered file is judged from its own readings and given as finished,
// without touching the channel's state or its next sample.
func TestRecoveredSample(t *testing.T) {
	s := newSource(t, Config{})
	temps := cup(t, sim.GreyIron, 9)
	tm := make([]float64, len(temps))
	for i := range tm {
		tm[i] = float64(i) / 10
	}
	c := &curvefile.Curve{Meta: []curvefile.Meta{{Key: "sample", Value: "L-5 cup 2"}, {Key: "alloy", Value: "grey-iron"}, {Key: "interrupted", Value: "true"}}, Time: tm, Temp: temps}
	u := s.apply(feed.Item{Kind: feed.KindRecovered, Channel: "1", Path: "/curves/old.csv", Curve: c})
	if len(u.Finished) != 1 || !u.Finished[0].Recovered || u.Finished[0].Meta.Get("sample") != "L-5 cup 2" {
		t.Fatalf("finished %+v", u.Finished)
	}
	want := assess.Assess(assess.Input{File: "/curves/old.csv", Alloy: "grey-iron", Time: tm, Temp: temps, Meta: c.Meta})
	if !reflect.DeepEqual(u.Finished[0].Record, want) {
		t.Errorf("recovered record differs from the offline analysis of its file")
	}
	if sn, ok := s.tr.Snapshot("1"); ok && (sn.State != Waiting || sn.Next.Get("sample") != "") {
		t.Errorf("the recovered sample changed channel 1: %v %v", sn.State, sn.Next)
	}
}
