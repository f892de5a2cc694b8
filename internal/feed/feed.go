// Package feed holds the stream a source of readings hands on: the
// acquirer (serial port, line protocol, pour trigger, crash-safe files) and
// the replay of a curve file send one ordered list of items per batch,
// readings and what happened between them, with the source's status. The
// sample tracker (internal/sample) is its one reader. The package holds
// types only: no I/O.
package feed

import (
	"math"
	"strconv"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// Flag marks a reading.
type Flag uint16

// Reading flags.
const (
	FlagOpen      Flag = 1 << iota // thermocouple open circuit reported by the device
	FlagFault                      // other device fault (short, out of range)
	FlagGapAfter                   // the connection dropped before the next reading
	FlagEMF                        // converted on the host from a raw EMF reading
	FlagGapBefore                  // the first reading of its channel after a reconnection
)

var flagNames = [...]string{"open", "fault", "gap_after", "emf", "gap_before"}

// String lists the flags as the curve files write them, joined by '|':
// open, fault, emf, gap_after, gap_before; "" for none.
func (f Flag) String() string {
	var b []byte
	for i, name := range flagNames {
		if f&(1<<i) != 0 {
			if len(b) > 0 {
				b = append(b, '|')
			}
			b = append(b, name...)
		}
	}
	return string(b)
}

// Reading is one thermocouple reading.
type Reading struct {
	TimeS    float64 // s since the start of acquisition (device time where the device sends one)
	TempC    float64 // °C; meaningless when Flags has FlagOpen or FlagFault
	Channel  string  // channel id, "1" when the device sends none
	Flags    Flag
	EMFmV    float64 // raw EMF in mV when the device sent one (FlagEMF)
	ColdJctC float64 // cold-junction temperature in °C that came with an EMF reading
}

// Valid reports whether the reading is a temperature: no fault, not NaN.
func (r Reading) Valid() bool {
	return r.Flags&(FlagOpen|FlagFault) == 0 && !math.IsNaN(r.TempC)
}

// FileTime is a reading's time in its sample's curve file: s from the
// file's first reading (at acquisition time startS), rounded to the
// microsecond so that device milliseconds stay exact. The acquirer writes
// the files with it and the tracker builds the curve with it, so that the
// live curve and the file hold the same numbers.
func FileTime(t, startS float64) float64 {
	return math.Round((t-startS)*1e6) / 1e6
}

// Kind tells what an item is.
type Kind uint8

// Kinds of item.
const (
	KindReading      Kind = iota + 1 // Reading holds it
	KindConnected                    // the port is open (again)
	KindDisconnected                 // the port failed or closed; reconnecting
	KindDeviceInfo                   // a "!" line: Meta holds its key=value pairs in line order
	KindStarted                      // a channel's sample file was opened (Sample, Path, Meta, Pre, StartS)
	KindEnded                        // a channel's sample file is complete (Sample, Path; Text: why it ended)
	KindRecovered                    // an interrupted sample was completed at start-up (Path, Curve)
	KindWarning                      // something the operator should know (Text)
)

var kindNames = [...]string{
	KindReading:      "reading",
	KindConnected:    "connected",
	KindDisconnected: "disconnected",
	KindDeviceInfo:   "device info",
	KindStarted:      "sample started",
	KindEnded:        "sample done",
	KindRecovered:    "recovered",
	KindWarning:      "warning",
}

func (k Kind) String() string {
	if int(k) < len(kindNames) && kindNames[k] != "" {
		return kindNames[k]
	}
	return "kind(" + strconv.Itoa(int(k)) + ")"
}

// Item is one thing in the stream: a reading, or what happened between
// readings. Fields other than Kind, Channel, TimeS and Text belong to the
// kinds named beside them.
type Item struct {
	Kind    Kind
	Channel string  // the channel concerned; "" for the port as a whole
	TimeS   float64 // acquisition time: the reading's, else that of the latest reading
	Text    string  // plain words for the operator

	Reading Reading // KindReading

	// Sample is the channel's sample number, counted from 1 by the source
	// (KindStarted, KindEnded).
	Sample int
	// Path is the curve file: in progress (KindStarted), complete
	// (KindEnded, KindRecovered), or where the readings stay when it could
	// not be completed (KindEnded with Failed).
	Path string
	// Meta is the metadata the file starts with, as written (KindStarted),
	// or the key=value pairs of a device line (KindDeviceInfo).
	Meta []curvefile.Meta
	// Pre are the readings the file starts with that arrived before the
	// start (the pre-trigger readings, already sent as reading items), and
	// StartS the acquisition time of the file's first reading, from which
	// FileTime counts (KindStarted).
	Pre    []Reading
	StartS float64
	// Wall is the channel of the sample's wall thermocouple, for a cup with
	// two thermocouples (its curve file's tc_wall_channel; "" for one
	// thermocouple): from the start to the end of the sample, that
	// channel's reading items are the file's wall readings, and WallPre
	// are those it starts with (KindStarted).
	Wall    string
	WallPre []Reading
	// Failed says the file could not be completed (KindEnded); Text says why.
	Failed bool
	// Curve is the recovered file as read back (KindRecovered).
	Curve *curvefile.Curve
}

// ChannelStatus is one channel as the source sees it.
type ChannelStatus struct {
	Recording bool    // a sample file is open
	Sample    int     // the number of the sample recording, or of the last one
	Readings  int     // readings received (faults included)
	Faults    int     // open-circuit and fault readings
	SilentS   float64 // s since the channel's last reading (host clock)
	// WallOf is the channel whose cup this channel's thermocouple is the
	// wall thermocouple of ("" for a cup's own channel): its readings go
	// into that channel's samples, and it starts none of its own.
	WallOf string
}

// Status is the state of the source when a batch was sent. Counters run
// from the start of the source.
type Status struct {
	Port         string
	Connected    bool
	Reconnecting bool    // the port is lost and being reopened
	ReadingsPerS float64 // over about the last second
	Lines        int     // lines received (blank lines excluded)
	Garbage      int     // lines that broke the protocol, over-long lines included
	Faults       int     // open-circuit and fault readings
	Reconnects   int     // successful reconnections after a loss
	Channels     map[string]ChannelStatus

	Partial      int     // lines cut off by a disconnection, dropped
	Overlong     int     // lines longer than the protocol allows, dropped (also in Garbage)
	Blank        int     // empty lines, ignored
	LF, CRLF, CR int     // lines by terminator
	SilentS      float64 // s since the last line arrived (0 before the first)
	// HostS is when the batch was sent, s since the source started by
	// the computer's monotonic clock; 0 for a source without one (a
	// replay). The tracker ends a sample's margin after freezing by it
	// too, so that a device whose clock stalls or that falls silent
	// cannot hold a sample open.
	HostS         float64
	Readings      int     // readings accepted
	SamplesDone   int     // samples completed
	LastGarbage   string  // the last garbage line and why, for the operator
	Thermocouple  string  // the type EMF readings are converted with ("" before one is needed)
	ColdJunctionC float64 // the cold junction used for EMF lines without cj= (NaN when none is set)
}

// Batch is what a source hands over at a time: its items in the order they
// happened, and its status when the batch was sent. The receiver owns the
// slices and the map.
type Batch struct {
	Items  []Item
	Status Status
}
