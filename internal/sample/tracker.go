// Package sample is the one home of a sample: a cup poured and freezing on
// one channel. Its Tracker reads the source's stream of items (package
// feed: the acquirer, or the replay of a curve file) and keeps, per
// channel, the sample's curve, its state, the current and the next sample's
// metadata, the alloy's limits entry and detection rules
// (limits.Book.Resolve, through assess.Options, the one rule), one
// growing-curve analyser, the decision that
// freezing is done (the source stops recording on its word) and the
// finished record, produced once. Every user of a sample (the dashboard,
// its headless lines, `record`, replay and the store writer) reads it from
// the tracker's Updates; nobody keeps a second copy of a sample's state.
//
// The package is pure: items in, updates out; no files, ports, clocks or
// terminals. A Tracker is used from one goroutine; the values it hands out
// are never changed afterwards and may be read from any goroutine.
package sample

import (
	"strconv"
	"strings"

	"github.com/undercool-foundry/undercool/internal/arrest"
	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/feed"
	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// State is where a channel's sample is in its life.
type State uint8

// Sample states.
const (
	Waiting   State = iota // no sample yet: waiting for the first pour
	Recording              // the sample is recording and freezing
	Frozen                 // freezing has ended; the source records the margin after it
	Done                   // the sample is finished and judged (a new pour starts the next)
)

var stateNames = [...]string{Waiting: "waiting for pour", Recording: "recording", Frozen: "freezing done", Done: "done"}

func (s State) String() string {
	if int(s) < len(stateNames) {
		return stateNames[s]
	}
	return "state(" + strconv.Itoa(int(s)) + ")"
}

// Busy reports whether a sample is being recorded.
func (s State) Busy() bool { return s == Recording || s == Frozen }

// Analyzer is the analysis of a growing curve: *arrest.Analyzer, or a
// constructed stand-in in tests.
type Analyzer interface {
	Analyze(t, temp []float64, opt arrest.Options) arrest.Result
	Slope() (t, d []float64)
	Reset()
}

// Judge turns a finished analysis into its record; assess.FromResult is
// the one in use.
type Judge func(in assess.Input, res arrest.Result) assess.Record

// Config sets up a Tracker. The zero value works: the built-in example
// limits, no default metadata, a 15 s margin.
type Config struct {
	// Limits is the shop's limits book; nil takes limits.Builtin().
	Limits *limits.Book
	// Meta is every sample's metadata unless the operator or the device
	// says otherwise (e.g. `record --alloy --sample --operator`).
	Meta Meta
	// FreezeMarginS is how long the source goes on recording after freezing
	// has ended, s; 0 takes 15 s. The sample is stopped once that much
	// sample time has been recorded, or that much time has passed by the
	// source's host clock (feed.Status.HostS), whichever comes first.
	FreezeMarginS float64
	// NewAnalyzer makes a channel's analyser; nil makes an arrest.Analyzer.
	NewAnalyzer func() Analyzer
	// Judge, nil for assess.FromResult.
	Judge Judge
}

// DefaultFreezeMarginS is the margin recorded after the end of freezing,
// s: the curve after it shows the free cooling of the solid.
const DefaultFreezeMarginS = 15

// Tracker follows every channel's samples through the items of a source.
type Tracker struct {
	cfg      Config
	book     *limits.Book
	chans    map[string]*channel
	order    []string
	defaults Meta // the next sample's metadata on channels not seen yet
	status   feed.Status
	out      Update
	// endAtStop: readings after a stop's AtS are not the sample's
	// (EndAtStop)
	endAtStop bool
	walls     map[string]string // wall thermocouple channel → the channel of its cup's sample recording
	// simulated: the device said simulated=true (the virtual melt deck)
	simulated bool
}

// New makes a tracker.
func New(cfg Config) *Tracker {
	if cfg.Limits == nil {
		cfg.Limits = limits.Builtin()
	}
	if cfg.FreezeMarginS <= 0 {
		cfg.FreezeMarginS = DefaultFreezeMarginS
	}
	if cfg.NewAnalyzer == nil {
		cfg.NewAnalyzer = func() Analyzer { return new(arrest.Analyzer) }
	}
	if cfg.Judge == nil {
		cfg.Judge = assess.FromResult
	}
	return &Tracker{cfg: cfg, book: cfg.Limits, chans: map[string]*channel{}, defaults: cfg.Meta, walls: map[string]string{}}
}

// Update is what one call of the tracker made: the state of every channel
// after it, what happened, the samples that finished and what the source
// must do.
type Update struct {
	Status   feed.Status // the source's, as of the batch
	Channels []Snapshot  // every channel, in the order first seen
	Events   []Event     // what happened, in order
	Finished []Finished  // samples finished, each given once
	Commands []Command   // for the source, in order
}

// Merge is u followed by next, for a reader that takes updates less often
// than they come: the events, finished samples and commands of both in
// order, the status and channels of next (the channels are every channel,
// so the later snapshot of each is what counts).
func Merge(u, next Update) Update {
	u.Status, u.Channels = next.Status, next.Channels
	u.Events = append(u.Events, next.Events...)
	u.Finished = append(u.Finished, next.Finished...)
	u.Commands = append(u.Commands, next.Commands...)
	return u
}

// Snapshot is one channel as the tracker sees it. Its slices are never
// changed afterwards: a later snapshot of a growing sample shares them and
// sees more.
type Snapshot struct {
	Channel string
	State   State
	Sample  int  // the source's number of the sample shown (0: none yet)
	Meta    Meta // the sample shown: recording, or finished while Done
	Next    Meta // the next sample's metadata (the form's values)
	// Family is the detector family the sample is analysed as (from its
	// alloy's limits entry, else the name rule).
	Family arrest.Family
	// T and V are the sample's curve: s from its file's first reading and
	// °C, the valid readings in order, as in its curve file.
	T, V []float64
	// SlopeT and SlopeD are the T′ the analysis finds the points on
	// (arrest.Analyzer.Slope): despiked, °C/s.
	SlopeT, SlopeD []float64
	Result         arrest.Result
	Record         *assess.Record // the finished record (Done)
	Path           string         // the curve file (in progress while recording)
	ElapsedS       float64        // sample time of the last reading on the curve
	NowS           float64        // sample time of the channel's last reading, a fault reading too (0 before the first)
	Last           feed.Reading   // the channel's last reading, valid or not
	HasLast        bool
	Readings       int // readings of the channel, faults included
	Faults         int // fault readings of the channel
	// WallChannel is the channel of the sample's wall thermocouple (a cup
	// with two; "" for one), and Wall its curve on T's times once the
	// sample is Done (NaN where it has no reading), as its file holds it.
	WallChannel string
	Wall        []float64
	// Radii place the two thermocouples of the finished sample (from its
	// file's metadata, assess.Input.WithWall; zero for one thermocouple).
	Radii solidpath.Geometry
	// WallOf is the channel whose cup this channel's thermocouple is the
	// wall thermocouple of ("" for a cup's own channel), as the source
	// says: it starts no sample of its own.
	WallOf string
	// SilentS is how long the channel has gone without a reading, s of the
	// source's clock (feed.ChannelStatus.SilentS; 0 for a replay).
	SilentS float64
	// Fault is the thermocouple fault of the sample shown, once one is
	// found: the device reported one, or the readings pegged at one value
	// at the top of the range. Zero while there is none.
	Fault Fault
	// Simulated says the sample shown (or, before the first, the device)
	// is simulated: the file or the device line says simulated=true.
	Simulated bool
}

// Fault is a thermocouple fault found in a sample: what it is and when.
type Fault struct {
	Kind   FaultKind
	TimeS  float64 // sample time of the first fault reading, s
	ValueC float64 // FaultPegged: the value the readings stuck at, °C
}

// FaultKind tells which thermocouple fault was found.
type FaultKind uint8

// Thermocouple faults.
const (
	FaultNone   FaultKind = iota
	FaultOpen             // the device reported an open circuit
	FaultDevice           // the device reported another fault (short, out of range)
	FaultPegged           // the readings stuck at one value at the top of the range (up-scale burnout)
)

var faultNames = [...]string{FaultNone: "", FaultOpen: "thermocouple open", FaultDevice: "device fault", FaultPegged: "readings pegged at the top of the range"}

func (k FaultKind) String() string {
	if int(k) < len(faultNames) {
		return faultNames[k]
	}
	return "fault(" + strconv.Itoa(int(k)) + ")"
}

// EventKind tells what happened.
type EventKind uint8

// Kinds of event.
const (
	EventConnected    EventKind = iota + 1 // the port is open (again)
	EventDisconnected                      // the port failed or closed; reconnecting
	EventDeviceInfo                        // a device line (Info)
	EventStarted                           // a sample started recording (Path: its file in progress)
	EventFrozen                            // freezing has ended; the margin is recorded
	EventDone                              // a sample is finished (Path: its curve file)
	EventRecovered                         // an interrupted sample was recovered (Path)
	EventWarning                           // something the operator should know
)

var eventNames = [...]string{
	EventConnected:    "connected",
	EventDisconnected: "disconnected",
	EventDeviceInfo:   "device info",
	EventStarted:      "sample started",
	EventFrozen:       "freezing done",
	EventDone:         "sample done",
	EventRecovered:    "recovered",
	EventWarning:      "warning",
}

func (k EventKind) String() string {
	if int(k) < len(eventNames) && eventNames[k] != "" {
		return eventNames[k]
	}
	return "event(" + strconv.Itoa(int(k)) + ")"
}

// Event is one thing that happened, in words for the operator and the log.
type Event struct {
	Kind    EventKind
	Channel string  // "" for the port as a whole
	Sample  int     // the sample concerned (started, frozen, done)
	TimeS   float64 // acquisition time
	Text    string
	Path    string
	Info    []curvefile.Meta // EventDeviceInfo: the line's pairs
}

// Finished is a finished sample and its record, given once.
type Finished struct {
	Channel   string
	Sample    int
	Meta      Meta
	Path      string // its curve file
	Record    assess.Record
	T, V      []float64 // its curve
	Wall      []float64 // a two-thermocouple cup's wall thermocouple on T's times (NaN: no reading); nil for one
	Recovered bool      // completed after a crash, not recorded by this session
	Simulated bool      // its file says simulated: true (the simulator's, not a real cup)
}

// CommandKind tells what the source is asked.
type CommandKind uint8

// Commands.
const (
	// CommandStop ends sample Sample of Channel (freezing is done and its
	// margin recorded); Reason goes into its file.
	CommandStop CommandKind = iota + 1
	// CommandMeta is the sample metadata of Channel's sample Sample, to go
	// into its file: with Sample 0, of the channel's next sample (Channel
	// "": of channels not seen yet); else of the sample recording, whose
	// file started with other values (the complete file is to say Meta).
	CommandMeta
)

// Command is what the tracker asks of the source.
type Command struct {
	Kind    CommandKind
	Channel string
	Sample  int
	Reason  string
	Meta    Meta
	// AtS (CommandStop) is the sample time, s from the file's first
	// reading, the sample ends at: its last reading the tracker took.
	// Readings after it that reach the source before the command are not
	// the sample's: the tracker leaves them out, and a source that can
	// (acquire.Acquirer.StopAt) leaves them out of the file, so that the
	// sample does not depend on how long the command took to arrive.
	AtS float64
}

// Initial is the update before any item: the metadata the source is to
// write into the first samples' files.
func (t *Tracker) Initial() Update {
	t.command(Command{Kind: CommandMeta, Meta: t.defaults})
	return t.flush()
}

// Apply takes one batch of the source's items, in order, and returns the
// update it made.
func (t *Tracker) Apply(b feed.Batch) Update {
	t.status = b.Status
	for i := range b.Items {
		t.item(&b.Items[i])
	}
	for _, id := range t.order {
		t.chans[id].settle()
		t.chans[id].overdue(t)
	}
	return t.flush()
}

// FormKeys are the sample keys the operator's form sets: sample, alloy,
// operator, note.
func FormKeys() []string { return []string{"sample", "alloy", "operator", "note"} }

// SetForm takes the operator's sample form for channel ch: it is always for
// the channel's next sample (a sample recording or finished keeps its own).
// The form's keys (FormKeys) are set as m says, emptied where it has none;
// the next sample's other keys stay.
func (t *Tracker) SetForm(ch string, m Meta) Update {
	c := t.channel(ch)
	next := c.next
	for _, k := range FormKeys() {
		next = next.With(k, m.Get(k))
	}
	c.setNext(t, next)
	return t.flush()
}

// EndAtStop says that the source ends a sample at its stop command's AtS,
// leaving out of the file the readings after it that it took before the
// command arrived (acquire.Acquirer.StopAt): the tracker then leaves them
// out of the sample too, so that the record is the file's. Without it
// (a replay, whose file is the sample) every reading until the source
// says the sample ended is the sample's. The session calls it.
func (t *Tracker) EndAtStop() { t.endAtStop = true }

// SetLimits takes a new limits book (saved from the editor): samples that
// start from now on are resolved and judged by it.
func (t *Tracker) SetLimits(b *limits.Book) {
	if b != nil {
		t.book = b
	}
}

// Limits is the book the tracker resolves and judges by.
func (t *Tracker) Limits() *limits.Book { return t.book }

// Snapshot is channel ch now; false when it has not been seen.
func (t *Tracker) Snapshot(ch string) (Snapshot, bool) {
	c, ok := t.chans[chanID(ch)]
	if !ok {
		return Snapshot{}, false
	}
	return c.snapshot(), true
}

func chanID(ch string) string {
	if ch == "" {
		return "1"
	}
	return ch
}

func (t *Tracker) channel(id string) *channel {
	id = chanID(id)
	if c, ok := t.chans[id]; ok {
		return c
	}
	c := &channel{id: id, next: t.defaults}
	t.chans[id] = c
	t.order = append(t.order, id)
	return c
}

func (t *Tracker) event(e Event)     { t.out.Events = append(t.out.Events, e) }
func (t *Tracker) command(c Command) { t.out.Commands = append(t.out.Commands, c) }

func (t *Tracker) flush() Update {
	u := t.out
	t.out = Update{}
	u.Status = t.status
	u.Channels = make([]Snapshot, len(t.order))
	for i, id := range t.order {
		u.Channels[i] = t.chans[id].snapshot()
		cs := t.status.Channels[id]
		u.Channels[i].WallOf, u.Channels[i].SilentS = cs.WallOf, cs.SilentS
		u.Channels[i].Simulated = u.Channels[i].Simulated || (t.simulated && u.Channels[i].State == Waiting)
	}
	return u
}

func (t *Tracker) item(it *feed.Item) {
	switch it.Kind {
	case feed.KindReading:
		t.channel(it.Reading.Channel).reading(t, it.Reading)
		if centre, ok := t.walls[chanID(it.Reading.Channel)]; ok {
			t.chans[centre].addWall(t, it.Reading)
		}
	case feed.KindStarted:
		t.channel(it.Channel).start(t, it)
	case feed.KindEnded:
		t.channel(it.Channel).end(t, it)
	case feed.KindDeviceInfo:
		t.deviceInfo(it)
	case feed.KindRecovered:
		t.recovered(it)
	case feed.KindConnected:
		t.event(Event{Kind: EventConnected, TimeS: it.TimeS, Text: it.Text})
	case feed.KindDisconnected:
		t.event(Event{Kind: EventDisconnected, TimeS: it.TimeS, Text: it.Text})
	case feed.KindWarning:
		t.event(Event{Kind: EventWarning, Channel: it.Channel, TimeS: it.TimeS, Text: it.Text, Path: it.Path})
	}
}

// deviceInfo takes a device line: its sample keys name the next sample of
// its channel (a line without ch=: of every channel).
func (t *Tracker) deviceInfo(it *feed.Item) {
	t.event(Event{Kind: EventDeviceInfo, Channel: it.Channel, TimeS: it.TimeS, Text: it.Text, Info: it.Meta})
	for _, kv := range it.Meta {
		if kv.Key == "simulated" {
			t.simulated = strings.EqualFold(kv.Value, "true")
		}
	}
	m := MetaOf(it.Meta)
	if len(m) == 0 {
		return
	}
	if it.Channel != "" {
		c := t.channel(it.Channel)
		c.setNext(t, c.next.Merge(m))
		return
	}
	t.defaults = t.defaults.Merge(m)
	t.command(Command{Kind: CommandMeta, Meta: t.defaults})
	for _, id := range t.order {
		c := t.chans[id]
		c.setNext(t, c.next.Merge(m))
	}
}

// recovered judges a sample completed after a crash, from its file.
func (t *Tracker) recovered(it *feed.Item) {
	t.event(Event{Kind: EventRecovered, Channel: it.Channel, TimeS: it.TimeS, Text: it.Text, Path: it.Path})
	c := it.Curve
	if c == nil {
		return
	}
	meta := MetaOf(c.Meta)
	in, notes := assess.CurveInput(it.Path, c)
	in.Alloy, in.Limits = strings.TrimSpace(meta.Get("alloy")), t.book
	result := t.cfg.NewAnalyzer().Analyze(c.Time, c.Temp, assess.Options(in))
	rec := t.cfg.Judge(in, result)
	rec.Warnings = append(rec.Warnings, notes...)
	t.out.Finished = append(t.out.Finished, Finished{Channel: it.Channel, Meta: meta, Path: it.Path, Record: rec,
		T: c.Time, V: c.Temp, Wall: in.Wall, Recovered: true, Simulated: strings.EqualFold(strings.TrimSpace(c.Get("simulated")), "true")})
}

// Slope is the T′ of a whole curve as the tracker shows a sample's: the
// analyser's (arrest.Analyzer.Slope) with the detector options opt, for a
// stored sample's curve on the dashboard and on the report page.
func Slope(t, temp []float64, opt arrest.Options) (st, sd []float64) {
	var an arrest.Analyzer
	an.Analyze(t, temp, opt)
	ts, d := an.Slope()
	return append([]float64(nil), ts...), append([]float64(nil), d...)
}
