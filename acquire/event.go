package acquire

import "strconv"

// EventKind tells what happened.
type EventKind uint8

// Kinds of event.
const (
	EventConnected     EventKind = iota + 1 // the port is open (again)
	EventDisconnected                       // the port failed or closed; reconnecting
	EventDeviceInfo                         // a "!" line: Info holds its key=value pairs
	EventSampleStarted                      // a channel started recording (Path: the in-progress file)
	EventSampleFrozen                       // freezing has ended; recording goes on for the margin
	EventSampleDone                         // the sample is complete (Path: its curve file)
	EventRecovered                          // an interrupted sample was recovered (Path: its curve file)
	EventWarning                            // something the operator should know (Text)
)

var eventNames = [...]string{
	EventConnected:     "connected",
	EventDisconnected:  "disconnected",
	EventDeviceInfo:    "device info",
	EventSampleStarted: "sample started",
	EventSampleFrozen:  "freezing done",
	EventSampleDone:    "sample done",
	EventRecovered:     "recovered",
	EventWarning:       "warning",
}

func (k EventKind) String() string {
	if int(k) < len(eventNames) && eventNames[k] != "" {
		return eventNames[k]
	}
	return "event(" + strconv.Itoa(int(k)) + ")"
}

// Event is one thing that happened in acquisition.
type Event struct {
	Kind    EventKind
	Channel string  // the channel concerned, "" for the port as a whole
	TimeS   float64 // acquisition time, s (for EventDisconnected: the last reading before the gap)
	Text    string  // plain words for the operator
	Info    map[string]string
	Path    string // curve file (EventSampleStarted, EventSampleDone, EventRecovered)
}

// State is where a channel's sample is in its life.
type State uint8

// Sample states.
const (
	StateWaiting   State = iota // waiting for the pour
	StateRecording              // recording the sample
	StateFrozen                 // freezing has ended; recording the margin
	StateDone                   // the last sample is complete (a new pour starts the next)
)

var stateNames = [...]string{
	StateWaiting:   "waiting for pour",
	StateRecording: "recording",
	StateFrozen:    "freezing done",
	StateDone:      "done",
}

func (s State) String() string {
	if int(s) < len(stateNames) {
		return stateNames[s]
	}
	return "state(" + strconv.Itoa(int(s)) + ")"
}

// Status is the state of acquisition when a batch was sent. Counters run
// from the start of Run.
type Status struct {
	Port         string
	Connected    bool
	Reconnecting bool    // the port is lost and being reopened
	ReadingsPerS float64 // over about the last second
	Lines        int     // lines received (blank lines excluded)
	Garbage      int     // lines that broke the protocol, over-long lines included
	Faults       int     // open-circuit and fault readings
	Reconnects   int     // successful reconnections after a loss
	Channels     map[string]State

	Partial       int     // lines cut off by a disconnection, dropped
	Overlong      int     // lines longer than protocol.MaxLineLen, dropped (also in Garbage)
	Blank         int     // empty lines, ignored
	LF, CRLF, CR  int     // lines by terminator
	SilentS       float64 // s since the last line arrived (0 before the first)
	Readings      int     // readings accepted
	SamplesDone   int     // samples completed
	LastGarbage   string  // the last garbage line and why, for the operator
	Thermocouple  string  // the type EMF readings are converted with ("" before one is needed)
	ColdJunctionC float64 // the cold junction used for EMF lines without cj= (NaN when none is set)
}

// Batch is what the acquirer hands over at most every Config.BatchEvery.
// The receiver owns the slices and the map.
type Batch struct {
	Readings []Reading
	Events   []Event
	Status   Status
}
