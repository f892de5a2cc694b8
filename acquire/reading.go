// Package acquire owns all device I/O and timing: serial ports, the
// project's line protocol, thermocouple conversion of raw readings, the pour
// trigger and sample lifecycle, and the crash-safe raw log. It runs in its
// own goroutine and hands readings over a channel in batches; it never
// blocks on a consumer.
package acquire

// Flag marks a reading.
type Flag uint16

// Reading flags.
const (
	FlagOpen      Flag = 1 << iota // thermocouple open circuit reported by the device
	FlagFault                      // other device fault (short, out of range)
	FlagGapAfter                   // the connection dropped before the next reading (see Acquirer, "gaps")
	FlagEMF                        // converted on the host from a raw EMF reading
	FlagGapBefore                  // the first reading of its channel after a reconnection
)

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

var flagNames = [...]string{"open", "fault", "gap_after", "emf", "gap_before"}

// Reading is one thermocouple reading.
type Reading struct {
	TimeS    float64 // s since the start of acquisition (device time where the device sends one)
	TempC    float64 // °C; meaningless when Flags has FlagOpen or FlagFault
	Channel  string  // channel id, "1" when the device sends none
	Flags    Flag
	EMFmV    float64 // raw EMF in mV when the device sent one (FlagEMF)
	ColdJctC float64 // cold-junction temperature in °C that came with an EMF reading
}
