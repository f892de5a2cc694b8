package tui

import "github.com/undercool-foundry/undercool/acquire"

// The acquirer's types as the dashboard uses them.
type (
	Reading   = acquire.Reading
	Batch     = acquire.Batch
	Event     = acquire.Event
	EventKind = acquire.EventKind
	Status    = acquire.Status
	State     = acquire.State
)

// Event kinds and sample states, from the acquire package.
const (
	EventConnected     = acquire.EventConnected
	EventDisconnected  = acquire.EventDisconnected
	EventDeviceInfo    = acquire.EventDeviceInfo
	EventSampleStarted = acquire.EventSampleStarted
	EventSampleFrozen  = acquire.EventSampleFrozen
	EventSampleDone    = acquire.EventSampleDone
	EventRecovered     = acquire.EventRecovered
	EventWarning       = acquire.EventWarning

	StateWaiting   = acquire.StateWaiting
	StateRecording = acquire.StateRecording
	StateFrozen    = acquire.StateFrozen
	StateDone      = acquire.StateDone
)
