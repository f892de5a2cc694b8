package acquire

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/protocol"
)

// channel is the sample lifecycle of one channel id: waiting for the pour
// (keeping the last Trigger.PreS seconds), recording into its raw log,
// frozen (recording the margin after the end of freezing), done (and
// waiting for the next pour).
type channel struct {
	id    string
	state State
	pre   []Reading        // the last PreS seconds while not recording
	preAt []time.Time      // host arrival times of pre
	form  []curvefile.Meta // form data for the next sample

	log       *rawLog
	startT    float64   // acquisition time of the file's first reading
	startHost time.Time // host time of the same
	t, temp   []float64 // valid readings of the sample, t from startT
	finished  func(t, temp []float64) bool
	nextCheck float64
	frozenAt  float64
	gapBefore bool // the port was lost since this channel's last reading
}

func valid(r Reading) bool {
	return r.Flags&(FlagOpen|FlagFault) == 0 && !math.IsNaN(r.TempC)
}

func (c *channel) setForm(m []curvefile.Meta) {
	if c.log != nil {
		c.log.extra = mergeMeta(c.log.extra, m)
		return
	}
	c.form = mergeMeta(c.form, m)
}

func (c *channel) markGap() {
	c.gapBefore = true
	if c.log != nil {
		c.log.gapAtEnd = true
	}
}

// rel is a reading's time in the sample's file: s from its first reading,
// rounded to the microsecond so that device milliseconds stay exact.
func (c *channel) rel(t float64) float64 {
	return math.Round((t-c.startT)*1e6) / 1e6
}

func (c *channel) add(a *Acquirer, r Reading, at time.Time) error {
	c.gapBefore = false
	switch c.state {
	case StateWaiting, StateDone:
		c.buffer(r, at, a.cfg.Trigger.PreS)
		if a.cfg.Trigger.Manual || (a.cfg.MaxSamples > 0 && a.started >= a.cfg.MaxSamples) {
			return nil
		}
		if why, ok := c.triggered(r, a.cfg.Trigger); ok {
			c.trimPre(r.TimeS - a.cfg.Trigger.WithinS)
			return c.start(a, why, r.TimeS, at)
		}
		return nil
	}
	rel := c.rel(r.TimeS)
	if err := c.record(r, rel); err != nil {
		return err
	}
	if rel >= a.cfg.MaxS {
		return c.finish(a, fmt.Sprintf("time limit of %g s reached", a.cfg.MaxS))
	}
	switch c.state {
	case StateRecording:
		if rel >= c.nextCheck && len(c.t) > 0 {
			c.nextCheck = rel + a.cfg.FinishCheckS
			if c.finished(c.t, c.temp) {
				c.state, c.frozenAt = StateFrozen, rel
				a.event(Event{Kind: EventSampleFrozen, Channel: c.id, TimeS: r.TimeS, Path: c.log.partial,
					Text: fmt.Sprintf("channel %s: freezing has ended at %.1f s; recording %g s more", c.id, rel, a.cfg.FreezeMarginS)})
			}
		}
	case StateFrozen:
		if rel-c.frozenAt >= a.cfg.FreezeMarginS {
			return c.finish(a, "freezing done")
		}
	}
	return nil
}

func (c *channel) record(r Reading, rel float64) error {
	if err := c.log.write(r, rel); err != nil {
		return err
	}
	if valid(r) {
		c.t = append(c.t, rel)
		c.temp = append(c.temp, r.TempC)
	}
	return nil
}

// buffer keeps r (which arrived at host time at) and drops readings older
// than preS seconds.
func (c *channel) buffer(r Reading, at time.Time, preS float64) {
	c.pre = append(c.pre, r)
	c.preAt = append(c.preAt, at)
	i := 0
	for i < len(c.pre) && c.pre[i].TimeS < r.TimeS-preS {
		i++
	}
	c.pre, c.preAt = c.pre[i:], c.preAt[i:]
}

// preTrimC: the pre-trigger readings kept are those within this many °C
// of the coolest reading before the pour, so that the tail of a previous
// cup (a thermocouple still hot from it) does not start the file.
const preTrimC = 20

// trimPre drops the pre-trigger readings before the run of readings near
// the coolest one before riseFrom (the start of the rise window).
func (c *channel) trimPre(riseFrom float64) {
	lo, k := math.Inf(1), -1
	for i, p := range c.pre {
		if p.TimeS > riseFrom {
			break
		}
		if valid(p) && p.TempC <= lo {
			lo, k = p.TempC, i
		}
	}
	if k < 0 {
		return
	}
	for k > 0 && (!valid(c.pre[k-1]) || c.pre[k-1].TempC <= lo+preTrimC) {
		k--
	}
	c.pre, c.preAt = c.pre[k:], c.preAt[k:]
}

// triggered reports whether r completes a pour transient: at least MinC
// and more than RiseC above the lowest valid reading of the last WithinS.
func (c *channel) triggered(r Reading, tr Trigger) (string, bool) {
	if !valid(r) || r.TempC < tr.MinC {
		return "", false
	}
	lo, loT := math.Inf(1), 0.0
	for i := len(c.pre) - 1; i >= 0 && c.pre[i].TimeS >= r.TimeS-tr.WithinS; i-- {
		if p := c.pre[i]; valid(p) && p.TempC < lo {
			lo, loT = p.TempC, p.TimeS
		}
	}
	if r.TempC-lo <= tr.RiseC {
		return "", false
	}
	return fmt.Sprintf("pour detected: %.0f °C, up %.0f °C in %.1f s", r.TempC, r.TempC-lo, r.TimeS-loT), true
}

// start opens the sample's raw log with the buffered readings; at and
// atHost are the acquisition and host times of the start.
func (c *channel) start(a *Acquirer, why string, at float64, atHost time.Time) error {
	if c.state == StateRecording || c.state == StateFrozen {
		return nil
	}
	c.startT, c.startHost = at, atHost
	if len(c.pre) > 0 {
		c.startT, c.startHost = c.pre[0].TimeS, c.preAt[0]
	}
	now := a.cfg.Now()
	emf := slices.ContainsFunc(c.pre, func(r Reading) bool { return r.Flags&FlagEMF != 0 })
	form := c.form
	c.form = nil
	path, err := a.newPath(c.id, metaValue(form, "sample"), now)
	if err != nil {
		return err
	}
	meta := a.sampleMeta(c, form, why)
	log, err := createLog(path, meta, emf, a.cfg.SyncEvery)
	if err != nil {
		return err
	}
	c.finished = a.cfg.finishedFor(metaValue(meta, "alloy"))
	c.log, c.state = log, StateRecording
	c.t, c.temp, c.nextCheck = c.t[:0], c.temp[:0], 0
	a.started++
	a.event(Event{Kind: EventSampleStarted, Channel: c.id, TimeS: c.startT, Path: log.partial,
		Text: fmt.Sprintf("channel %s: %s; recording to %s", c.id, why, log.partial)})
	for _, r := range c.pre {
		if err := c.record(r, c.rel(r.TimeS)); err != nil {
			return err
		}
	}
	c.pre, c.preAt = c.pre[:0], c.preAt[:0]
	return nil
}

// finish completes the sample's file.
func (c *channel) finish(a *Acquirer, reason string) error {
	log := c.log
	c.log, c.state = nil, StateDone
	n := len(c.t)
	dur := 0.0
	if n > 0 {
		dur = c.t[n-1]
	}
	log.extra = mergeMeta(log.extra, []curvefile.Meta{{Key: "ended", Value: reason}})
	path, err := log.finish()
	if err != nil {
		a.event(Event{Kind: EventWarning, Channel: c.id, TimeS: a.tb.last, Path: log.partial,
			Text: fmt.Sprintf("channel %s: %v (the readings stay in %s)", c.id, err, log.partial)})
		return err
	}
	a.st.SamplesDone++
	a.event(Event{Kind: EventSampleDone, Channel: c.id, TimeS: a.tb.last, Path: path,
		Text: fmt.Sprintf("channel %s: sample done (%s): %d readings over %.1f s in %s", c.id, reason, log.rows, dur, path)})
	return nil
}

// sampleMeta is the metadata a sample's file starts with.
func (a *Acquirer) sampleMeta(c *channel, form []curvefile.Meta, why string) []curvefile.Meta {
	meta := mergeMeta(slices.Clone(a.cfg.Meta), form)
	add := func(k, v string) { meta = mergeMeta(meta, []curvefile.Meta{{Key: k, Value: v}}) }
	add("channel", c.id)
	if a.tcName != "" {
		add("thermocouple", a.tcName)
	}
	if a.cfg.ColdJunctionSet {
		add("cold_junction_c", strconv.FormatFloat(a.cfg.ColdJunctionC, 'f', -1, 64))
	}
	if a.cfg.Port != "" {
		add("port", a.cfg.Port)
	}
	start := c.startHost
	add("started", start.Format("2006-01-02T15:04:05.000Z07:00"))
	add("trigger", why)
	if len(a.devInfo) > 0 {
		var b strings.Builder
		for i, m := range a.devInfo {
			if i > 0 {
				b.WriteByte(' ')
			}
			b.WriteString(m.Key + "=" + m.Value)
		}
		add("device", b.String())
	}
	// a device that says it is simulated (the virtual melt deck) makes a
	// simulated sample, marked as the simulator's own curve files are, so
	// that records and report pages never pass it off as a measurement
	for _, m := range a.devInfo {
		if m.Key == "simulated" && strings.EqualFold(m.Value, "true") {
			add("simulated", "true")
		}
	}
	add("recorder", "undercool acquire, line protocol 1")
	return meta
}

// newPath names a new sample's curve file: OutPath for the first, else
// DIR/YYYYMMDD-HHMMSS-chID[-SAMPLE].csv, never an existing name.
func (a *Acquirer) newPath(ch, sample string, now time.Time) (string, error) {
	if a.cfg.OutPath != "" && a.started == 0 {
		if exists(a.cfg.OutPath) || exists(partialName(a.cfg.OutPath)) {
			return "", fmt.Errorf("acquire: output file %s already exists; not overwritten", a.cfg.OutPath)
		}
		return a.cfg.OutPath, nil
	}
	base := now.Format("20060102-150405") + "-ch" + slug(ch)
	if s := slug(sample); s != "" {
		base += "-" + s
	}
	dir := a.outDir()
	for i := 1; ; i++ {
		name := base
		if i > 1 {
			name += "-" + strconv.Itoa(i)
		}
		p := filepath.Join(dir, name+".csv")
		if !exists(p) && !exists(partialName(p)) {
			return p, nil
		}
	}
}

func exists(p string) bool {
	_, err := os.Lstat(p)
	return err == nil
}

// slug keeps letters, digits, '-' and '_' of s and turns the rest into '-'.
func slug(s string) string {
	b := []byte(s)
	for i, c := range b {
		if !protocol.IsIDByte(c) {
			b[i] = '-'
		}
	}
	return strings.Trim(string(b), "-")
}

// mergeMeta sets each of add in m, replacing the value of a key that is
// there and appending new keys.
func mergeMeta(m, add []curvefile.Meta) []curvefile.Meta {
	for _, x := range add {
		i := slices.IndexFunc(m, func(y curvefile.Meta) bool { return y.Key == x.Key })
		if i >= 0 {
			m[i].Value = x.Value
		} else {
			m = append(m, x)
		}
	}
	return m
}

func metaValue(m []curvefile.Meta, key string) string {
	for _, x := range m {
		if x.Key == key {
			return x.Value
		}
	}
	return ""
}
