// Package acquire owns all device I/O and timing: serial ports, the line
// protocol (internal/protocol) on them, thermocouple conversion of raw
// readings, the pour trigger and the crash-safe raw log of each sample. It
// runs in its own goroutine and hands over one ordered stream of items per
// batch (internal/feed) on a channel; it never blocks on a consumer. What a
// sample is called and when its freezing is done are the sample tracker's
// to decide (internal/sample): the acquirer writes the metadata SetMeta
// gives and ends a sample when Stop says.
package acquire
