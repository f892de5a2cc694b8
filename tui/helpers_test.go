package tui

import (
	"math"
	"regexp"
	"sort"

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

// constructedBatches cuts a constructed curve into acquirer-like batches of
// per readings on channel ch, with a start event at the first reading and a
// done event after the last.
func constructedBatches(ch string, seconds, rate float64, per int) []Batch {
	return constructedBatchesAt(ch, 0, seconds, rate, per)
}

// constructedBatchesAt is constructedBatches with the sample starting at
// acquirer time t0.
func constructedBatchesAt(ch string, t0, seconds, rate float64, per int) []Batch {
	t, v := constructedCurve(seconds, rate)
	for i := range t {
		t[i] += t0
	}
	st := Status{Port: "sim:deck", Connected: true, ReadingsPerS: rate, Lines: 0, Channels: map[string]State{ch: StateRecording}}
	var out []Batch
	for i := 0; i < len(t); i += per {
		var b Batch
		if i == 0 {
			b.Events = append(b.Events, Event{Kind: EventDeviceInfo, Channel: ch, Info: map[string]string{"sample": "L-2417 cup 1", "alloy": "grey-iron", "operator": "Pell Brasswick"}},
				Event{Kind: EventSampleStarted, Channel: ch, TimeS: t0})
		}
		for k := i; k < min(i+per, len(t)); k++ {
			b.Readings = append(b.Readings, Reading{TimeS: t[k], TempC: v[k], Channel: ch})
		}
		st.Lines += len(b.Readings)
		b.Status = st
		out = append(out, b)
	}
	last := &out[len(out)-1]
	last.Events = append(last.Events, Event{Kind: EventSampleDone, Channel: ch, TimeS: t[len(t)-1], Path: "/data/L-2417-cup1.csv"})
	last.Status.Channels = map[string]State{ch: StateDone}
	return out
}

// constructedAnalyzer reports the constructed curve's designed points once
// the curve has grown past them: a screen-test stand-in with known answers
// (the real detector is tested in internal/arrest).
func constructedAnalyzer(t, v []float64, _ arrest.Family, _ bool) arrest.Result {
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
	rec := assess.FromResult(assess.Input{File: in.File, Alloy: in.Alloy, Family: in.Family}, res)
	rec.Verdict = assess.VerdictMarginal
	rec.Problems = nil
	rec.Reasons = []string{"constructed reason: recalescence 4.0 °C is near its limit"}
	rec.Advice = []string{"constructed advice: consider re-sampling, per the shop's practice"}
	uc := 12.5 + float64(len(in.Time)%7)
	rec.UndercoolingC = &uc
	return rec
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
