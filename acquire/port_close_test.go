package acquire

import (
	"errors"
	"os"
	"sync/atomic"
	"testing"
	"time"

	"go.bug.st/serial"
)

// fakeSerial is a serial.Port whose Read takes a while (as a read with a
// timeout does) and which records whether Close ran during a Read.
type fakeSerial struct {
	serial.Port
	reading, closedDuringRead, closed atomic.Bool
}

func (f *fakeSerial) Read(b []byte) (int, error) {
	f.reading.Store(true)
	time.Sleep(20 * time.Millisecond)
	f.reading.Store(false)
	return 0, nil
}

func (f *fakeSerial) Close() error {
	if f.reading.Load() {
		f.closedDuringRead.Store(true)
	}
	f.closed.Store(true)
	return nil
}

// The port's descriptor is never closed while a read uses it (a descriptor
// closed under a pending read can be given to a file opened meanwhile, which
// the read then takes for the device): Close waits for the read, and a
// read after Close is refused.
func TestSerialPortCloseWaitsForRead(t *testing.T) {
	f := &fakeSerial{}
	p := &serialPort{p: f}
	done := make(chan struct{})
	go func() {
		defer close(done)
		for range 5 {
			p.Read(make([]byte, 8))
		}
	}()
	for !f.reading.Load() {
		time.Sleep(time.Millisecond)
	}
	if err := p.Close(); err != nil {
		t.Fatal(err)
	}
	<-done
	if !f.closed.Load() || f.closedDuringRead.Load() {
		t.Errorf("closed %v, closed during a read %v; want closed, never during a read", f.closed.Load(), f.closedDuringRead.Load())
	}
	if _, err := p.Read(make([]byte, 8)); !errors.Is(err, os.ErrClosed) {
		t.Errorf("read after close: %v, want os.ErrClosed", err)
	}
}
