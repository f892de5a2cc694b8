package sample

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/protocol"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// channel is one channel's samples: the one shown (recording, or finished)
// and what the next one will be.
type channel struct {
	id    string
	state State
	n     int  // the source's number of the sample shown
	meta  Meta // the sample shown
	next  Meta // the next sample's

	in         assess.Input   // the sample as assess sees it: alloy, limits, the file's metadata
	opt        arrest.Options // the detector options, assess.Options(in)
	byCurve    bool           // no alloy named: the options follow the curve's highest reading
	peak       float64        // the highest reading the options were made for
	an         Analyzer
	fileMeta   []curvefile.Meta // the file's metadata as it started
	path       string
	startS     float64   // acquisition time of the file's first reading
	t, v       []float64 // the curve: a new array for every sample, only appended to
	st, sd     []float64 // T′ copied from the analyser, likewise
	result     arrest.Result
	rec        *assess.Record
	grew       bool
	faultsIn   int     // fault readings in the sample's file
	frozenAt   float64 // sample time when freezing was seen to end
	frozenHost float64 // the source's host clock then (feed.Status.HostS; 0: none)
	stopAt     float64 // once stopped: the sample time it ends at (Command.AtS)
	stopped    bool    // the stop was asked
	// a cup with two thermocouples: the wall thermocouple's channel ("" for
	// one), its readings in the sample (s of the file, °C; NaN for a
	// fault reading) and, once finished, its curve on the sample's times
	wall   string
	wt, wv []float64
	wallV  []float64
	radii  solidpath.Geometry // where the two thermocouples sit, from the file's metadata

	fault     Fault   // the sample's thermocouple fault, once found
	nowS      float64 // sample time of the last reading, a fault reading too
	runV      float64 // the value of the latest run of identical readings
	runFrom   float64 // and the sample time it began
	simulated bool    // the sample's file says simulated: true

	last     feed.Reading
	hasLast  bool
	readings int
	faults   int
}

// setNext decides the next sample's metadata and tells the source when it
// changed.
func (c *channel) setNext(t *Tracker, m Meta) {
	if m.Equal(c.next) {
		return
	}
	c.next = m
	t.command(Command{Kind: CommandMeta, Channel: c.id, Meta: m})
}

func (c *channel) reading(t *Tracker, r feed.Reading) {
	c.last, c.hasLast = r, true
	c.readings++
	if !r.Valid() {
		c.faults++
	}
	if c.state.Busy() {
		c.nowS = feed.FileTime(r.TimeS, c.startS)
	}
	if c.state.Busy() && !r.Valid() && c.fault.Kind == FaultNone {
		k := FaultDevice
		if r.Flags&feed.FlagOpen != 0 {
			k = FaultOpen
		}
		c.fault = Fault{Kind: k, TimeS: feed.FileTime(r.TimeS, c.startS)}
	}
	if c.state.Busy() && c.add(t, r) {
		c.watch(t)
	}
}

// add takes a reading of the sample into its curve, as its file holds it;
// false for a fault reading (kept in the file as a #fault line only).
func (c *channel) add(t *Tracker, r feed.Reading) bool {
	ft := feed.FileTime(r.TimeS, c.startS)
	if t.endAtStop && c.stopped && ft > c.stopAt {
		return false // after the end the tracker asked for
	}
	if !r.Valid() {
		c.faultsIn++
		return false
	}
	c.t = append(c.t, ft)
	c.v = append(c.v, r.TempC)
	c.grew = true
	c.pegged(ft, r.TempC)
	return true
}

// Pegged readings: a thermocouple amplifier with up-scale burnout
// protection reads an open circuit as the top of its range (1372 °C for
// type K, NIST Monograph 175) and sends it as a reading (practice: up-scale
// burnout). Metal in a cup is never that still: a run of identical
// readings at least PeggedMinC lasting PeggedS is taken for a fault.
const (
	PeggedMinC = 1350 // °C
	PeggedS    = 2    // s
)

// pegged follows the runs of identical readings and marks the sample's
// fault where one is pegged.
func (c *channel) pegged(t, v float64) {
	if len(c.t) == 1 || v != c.runV {
		c.runV, c.runFrom = v, t
		return
	}
	if c.fault.Kind == FaultNone && v >= PeggedMinC && t-c.runFrom >= PeggedS-1e-6 { // (file times are whole microseconds)
		c.fault = Fault{Kind: FaultPegged, TimeS: c.runFrom, ValueC: v}
	}
}

// start begins a sample: the source opened its file.
func (c *channel) start(t *Tracker, it *feed.Item) {
	if c.state.Busy() {
		// the source never starts a second file on a channel recording;
		// should it, the first sample is judged as it stands
		c.finish(t, c.path, "a new sample started", false)
	}
	c.state, c.n, c.path, c.startS = Recording, it.Sample, it.Path, it.StartS
	c.meta = c.next
	c.fileMeta = it.Meta
	c.in = assess.Input{Alloy: strings.TrimSpace(c.meta.Get("alloy")), Limits: t.book, Meta: c.finalMeta()}
	c.byCurve, c.peak = c.in.Alloy == "", math.Inf(-1)
	c.opt = assess.Options(c.in)
	if c.an == nil {
		c.an = t.cfg.NewAnalyzer()
	}
	c.an.Reset()
	c.t, c.v, c.st, c.sd = make([]float64, 0, 4096), make([]float64, 0, 4096), nil, nil
	c.result, c.rec, c.faultsIn, c.frozenAt, c.stopped = arrest.Result{}, nil, 0, 0, false
	c.fault, c.simulated, c.nowS = Fault{}, false, 0
	for _, m := range it.Meta {
		if m.Key == "simulated" && strings.EqualFold(m.Value, "true") {
			c.simulated = true
		}
	}
	for _, r := range it.Pre {
		c.add(t, r)
	}
	c.wall, c.wt, c.wv, c.wallV, c.radii = it.Wall, nil, nil, nil, solidpath.Geometry{}
	if c.wall != "" {
		t.walls[c.wall] = c.id
		for _, r := range it.WallPre {
			c.addWall(t, r)
		}
	}
	c.grew = true
	if file := MetaOf(it.Meta); !file.Equal(c.meta) {
		// the file started before the source heard the decision: its
		// complete form is to say what was decided
		t.command(Command{Kind: CommandMeta, Channel: c.id, Sample: c.n, Meta: c.meta})
	}
	t.event(Event{Kind: EventStarted, Channel: c.id, Sample: c.n, TimeS: it.StartS, Text: it.Text, Path: it.Path})
	c.setNext(t, c.meta.carried())
}

// watch decides, reading by reading (however the source batches them),
// when freezing is done and when the source is to stop: the analysis of
// the curve so far says Complete, and the margin after it has been
// recorded.
func (c *channel) watch(t *Tracker) {
	end := c.elapsed()
	if c.state == Recording {
		c.analyse(true)
		c.grew = false // analysed as it stands
		if !c.result.Complete {
			return
		}
		c.state, c.frozenAt, c.frozenHost = Frozen, end, t.status.HostS
		t.event(Event{Kind: EventFrozen, Channel: c.id, Sample: c.n, TimeS: c.startS + end,
			Text: fmt.Sprintf("channel %s: freezing has ended at %.1f s; recording %g s more", c.id, end, t.cfg.FreezeMarginS)})
	}
	if end-c.frozenAt >= t.cfg.FreezeMarginS {
		c.stop(t)
	}
}

// overdue stops a frozen sample whose margin has passed by the source's
// host clock (feed.Status.HostS), readings or not: a device that falls
// silent, or whose clock stalls, after freezing cannot hold the sample
// open until its time limit.
func (c *channel) overdue(t *Tracker) {
	if c.state == Frozen && c.frozenHost > 0 && t.status.HostS-c.frozenHost >= t.cfg.FreezeMarginS {
		c.stop(t)
	}
}

// stop asks the source, once, to end the sample: freezing is done and the
// margin after it recorded.
func (c *channel) stop(t *Tracker) {
	if !c.stopped {
		c.stopped, c.stopAt = true, c.elapsed()
		t.command(Command{Kind: CommandStop, Channel: c.id, Sample: c.n, Reason: "freezing done", AtS: c.stopAt})
	}
}

// settle brings the analysis shown up to date with a sample that grew.
func (c *channel) settle() {
	if !c.grew || !c.state.Busy() {
		return
	}
	c.grew = false
	c.analyse(true)
}

// analyse runs the channel's analyser over the curve (live while it may
// still grow) and copies the T′ it found the points on.
func (c *channel) analyse(live bool) {
	if len(c.t) == 0 {
		c.result = arrest.Result{}
		return
	}
	if c.byCurve && c.v[len(c.v)-1] > c.peak {
		// the family a curve without an alloy is analysed as follows its
		// highest reading (limits.FamilyOfCurve), as assess.Options says
		c.peak = slices.Max(c.v)
		in := c.in
		in.Temp = []float64{c.peak}
		c.opt = assess.Options(in)
	}
	opt := c.opt
	opt.Live = live
	c.result = c.an.Analyze(c.t, c.v, opt)
	ts, d := c.an.Slope()
	if len(d) < len(c.sd) {
		c.st, c.sd = nil, nil // the analyser started afresh: copy it all again
	}
	c.st = append(c.st, ts[len(c.st):len(d)]...)
	c.sd = append(c.sd, d[len(c.sd):]...)
}

func (c *channel) elapsed() float64 {
	if n := len(c.t); n > 0 {
		return c.t[n-1]
	}
	return 0
}

// end takes the source's word that a sample's file is complete.
func (c *channel) end(t *Tracker, it *feed.Item) {
	if !c.state.Busy() || it.Sample != c.n {
		return
	}
	c.finish(t, it.Path, it.Text, true)
}

// finish judges the sample, once.
func (c *channel) finish(t *Tracker, path, why string, announce bool) {
	in := c.in
	in.File, in.Time, in.Temp, in.Skipped = path, c.t, c.v, c.faultsIn
	c.opt = assess.Options(in) // what Assess of the file takes (the same unless the family follows the curve)
	c.byCurve = false
	c.analyse(false)
	var notes []string
	if c.wall != "" {
		// the wall thermocouple on the sample's times, as its file holds it
		c.wallV = curvefile.OnTimes(c.t, c.wt, c.wv)
		in, notes = in.WithWall(c.wallV)
		c.radii = in.Radii
		if t.walls[c.wall] == c.id {
			delete(t.walls, c.wall)
		}
	}
	rec := t.cfg.Judge(in, c.result)
	rec.Warnings = append(rec.Warnings, notes...)
	c.rec, c.path, c.state = &rec, path, Done
	if announce {
		t.event(Event{Kind: EventDone, Channel: c.id, Sample: c.n, TimeS: c.startS + c.elapsed(), Text: why, Path: path})
	}
	t.out.Finished = append(t.out.Finished, Finished{Channel: c.id, Sample: c.n, Meta: c.meta, Path: path,
		Record: rec, T: c.t, V: c.v, Wall: c.wallV, Simulated: c.simulated})
}

// addWall takes a reading of the sample's wall thermocouple, as its file
// holds it.
func (c *channel) addWall(t *Tracker, r feed.Reading) {
	if n := len(c.wt); t.endAtStop && c.stopped && n > 0 && c.wt[n-1] > c.stopAt {
		return // the first wall reading after the end is kept, for the last centre one
	}
	v := r.TempC
	if !r.Valid() {
		v = math.NaN()
	}
	c.wt = append(c.wt, feed.FileTime(r.TimeS, c.startS))
	c.wv = append(c.wv, v)
}

// finalMeta is the sample's file metadata as completed: as it started,
// its sample keys as decided.
func (c *channel) finalMeta() []curvefile.Meta {
	var out []curvefile.Meta
	for _, m := range c.fileMeta {
		if !protocol.IsSampleKey(m.Key) {
			out = append(out, m)
		}
	}
	return append(out, c.meta...)
}

func (c *channel) snapshot() Snapshot {
	return Snapshot{
		Channel: c.id, State: c.state, Sample: c.n, Meta: c.meta, Next: c.next, Family: c.opt.Family,
		T: c.t[:len(c.t):len(c.t)], V: c.v[:len(c.v):len(c.v)],
		SlopeT: c.st[:len(c.st):len(c.st)], SlopeD: c.sd[:len(c.sd):len(c.sd)],
		Result: c.result, Record: c.rec, Path: c.path, ElapsedS: c.elapsed(), WallChannel: c.wall, Wall: c.wallV,
		Radii: c.radii,
		Last:  c.last, HasLast: c.hasLast, Readings: c.readings, Faults: c.faults,
		Fault: c.fault, Simulated: c.simulated, NowS: c.nowS,
	}
}
