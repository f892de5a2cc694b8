package tui

import (
	"math"
	"regexp"
	"sort"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sample"

	"github.com/charmbracelet/lipgloss"
	"github.com/muesli/termenv"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
)

// constructedCurve is a CONSTRUCTED cup curve for screen tests (not
// physics, not a reference): a pour to 1290 °C, Newtonian cooling, a
// primary arrest near 1180 °C, an undercooled eutectic at 1142 °C that
// recalesces by 4 °C to a plateau, the end of freezing near 1090 °C and free
// cooling after it. rate is readings per second.
func constructedCurve(seconds, rate float64) (t, v []float64) {
	n := int(seconds * rate)
	for i := 0; i < n; i++ {
		s := float64(i) / rate
		var T float64
		switch {
		case s < 2:
			T = 25 + (1290-25)*s/2
		case s < 40:
			T = 1180 + 110*math.Exp(-(s-2)/8)
		case s < 60:
			T = 1180 - (s-40)*1.0 - 2*math.Sin((s-40)/20*math.Pi)
		case s < 75:
			T = 1160 - (s-60)*1.2
		case s < 85:
			T = 1142 + 4*math.Sin((s-75)/20*math.Pi)
		case s < 150:
			T = 1146 - (s-85)*0.1
		case s < 190:
			T = 1139.5 - (s-150)*1.2
		default:
			T = 1091.5 - (s-190)*0.8
		}
		t = append(t, s)
		v = append(v, T)
	}
	return t, v
}

// Batch and the item kinds, as the tests build the source's stream.
type Batch = feed.Batch

// constructedBatches cuts a constructed curve into source-like batches of
// per readings on channel ch, with the sample's device line and its start
// at the first reading and its end after the last (sample 1).
func constructedBatches(ch string, seconds, rate float64, per int) []Batch {
	return constructedBatchesAt(ch, 0, seconds, rate, per)
}

// constructedBatchesAt is constructedBatches with the sample starting at
// acquirer time t0 (and numbered by it: sample 1 + t0/300).
func constructedBatchesAt(ch string, t0, seconds, rate float64, per int) []Batch {
	t, v := constructedCurve(seconds, rate)
	for i := range t {
		t[i] += t0
	}
	n := 1 + int(t0/300)
	st := feed.Status{Port: "sim:deck", Connected: true, ReadingsPerS: rate, Channels: map[string]feed.ChannelStatus{ch: {Recording: true, Sample: n}}}
	meta := []curvefile.Meta{{Key: "sample", Value: "L-2417 cup 1"}, {Key: "alloy", Value: "grey-iron"}, {Key: "operator", Value: "Pell Brasswick"}}
	var out []Batch
	for i := 0; i < len(t); i += per {
		var b Batch
		if i == 0 {
			b.Items = append(b.Items, feed.Item{Kind: feed.KindDeviceInfo, Channel: ch, TimeS: t0, Meta: meta},
				feed.Item{Kind: feed.KindStarted, Channel: ch, TimeS: t0, Sample: n, StartS: t0, Meta: meta, Path: "/data/L-2417-cup1.partial.csv"})
		}
		for k := i; k < min(i+per, len(t)); k++ {
			r := feed.Reading{TimeS: t[k], TempC: v[k], Channel: ch}
			b.Items = append(b.Items, feed.Item{Kind: feed.KindReading, Channel: ch, TimeS: r.TimeS, Reading: r})
			st.Lines++
			st.Readings++
		}
		b.Status = st
		out = append(out, b)
	}
	last := &out[len(out)-1]
	last.Items = append(last.Items, feed.Item{Kind: feed.KindEnded, Channel: ch, TimeS: t[len(t)-1], Sample: n, Path: "/data/L-2417-cup1.csv", Text: "freezing done"})
	last.Status.Channels = map[string]feed.ChannelStatus{ch: {Sample: n}}
	return out
}

// constructedAnalyzer reports the constructed curve's designed points once
// the curve has grown past them: a screen-test stand-in with known answers
// (the real detector is tested in internal/arrest). Its T′ is the real
// analyser's, of the same readings.
type constructedAnalyzer struct{ arrest.Analyzer }

func newConstructedAnalyzer() sample.Analyzer { return &constructedAnalyzer{} }

func (a *constructedAnalyzer) Analyze(t, v []float64, opt arrest.Options) arrest.Result {
	a.Analyzer.Analyze(t, v, opt)
	end := t[len(t)-1]
	at := func(s float64) arrest.Point {
		if end < s+5 {
			return arrest.Point{}
		}
		i := sort.SearchFloat64s(t, s)
		return arrest.Point{TempC: math.Round(v[i]*10) / 10, TimeS: s, OK: true}
	}
	r := arrest.Result{Samples: len(t), RateHz: 10, PourPeak: at(2), Liquidus: at(50), EutecticMin: at(75), EutecticMax: at(85), Solidus: at(190)}
	if r.EutecticMax.OK {
		r.Recalescence, r.RecalescenceOK = r.EutecticMax.TempC-r.EutecticMin.TempC, true
	}
	r.Complete = r.Solidus.OK
	return r
}

// constructedJudge gives a CONSTRUCTED record for screen tests: the
// points of the result, a marginal verdict and made-up reason and advice
// lines (the real judgement is tested in internal/assess).
func constructedJudge(in assess.Input, res arrest.Result) assess.Record {
	rec := assess.FromResult(assess.Input{File: in.File, Alloy: in.Alloy, Family: in.Family, Limits: in.Limits}, res)
	rec.Verdict = assess.VerdictMarginal
	rec.Problems = nil
	rec.Reasons = []string{"constructed reason: recalescence 4.0 °C is near its limit"}
	rec.Advice = []string{"constructed advice: consider re-sampling, per the shop's practice"}
	uc := 12.5 + float64(len(in.Time)%7)
	rec.UndercoolingC = &uc
	return rec
}

// testFeed is a session for screen tests, run by hand: feed applies
// batches to its tracker and hands the updates to the model; what the
// model asks of it (the form, a start) goes to the tracker and the
// recorded requests, and its finished samples to the records.
type testFeed struct {
	tr      *sample.Tracker
	records *Memory
	queued  []sample.Update // made by requests, not yet delivered
	starts  []string
	stops   []string
	limits  []*limits.Book
}

func newTestFeed(cfg sample.Config, records *Memory) *testFeed {
	f := &testFeed{tr: sample.New(cfg), records: records}
	f.queued = append(f.queued, f.tr.Initial())
	return f
}

func (f *testFeed) Updates() <-chan sample.Update { return nil }
func (f *testFeed) SetForm(ch string, m sample.Meta) {
	f.queued = append(f.queued, f.tr.SetForm(ch, m))
}
func (f *testFeed) SetLimits(b *limits.Book) { f.tr.SetLimits(b); f.limits = append(f.limits, b) }
func (f *testFeed) Start(ch string)          { f.starts = append(f.starts, ch) }
func (f *testFeed) Stop(ch string)           { f.stops = append(f.stops, ch) }

// deliver hands an update to the model as the session would: finished
// samples to the records first.
func (f *testFeed) deliver(m Model, u sample.Update) Model {
	for _, x := range u.Finished {
		f.records.Add(x)
	}
	tm, cmd := m.Update(updateMsg{u})
	return runCmds(tm.(Model), cmd)
}

// asciiStyles are the styles with no colour at all, for golden files.
func asciiStyles() *Styles {
	r := lipgloss.NewRenderer(nil)
	r.SetColorProfile(termenv.Ascii)
	return NewStyles(r)
}

var ansiRE = regexp.MustCompile("\x1b\\[[0-9;?]*[ -/]*[@-~]")

func stripANSI(s string) string { return ansiRE.ReplaceAllString(s, "") }

// colourRenderer renders true colour, as on a modern terminal.
func colourRenderer() *lipgloss.Renderer {
	r := lipgloss.NewRenderer(nil)
	r.SetColorProfile(termenv.TrueColor)
	return r
}
