package acquire

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"strconv"
	"strings"
	"sync"
	"time"

	"go.bug.st/serial"
)

// Opener opens the device once; the acquirer calls it again to reconnect.
// The returned reader is read until it fails; closing it must wake a
// blocked Read.
type Opener func(ctx context.Context) (io.ReadCloser, error)

// PortMode is a serial line setting: baud rate and frame.
type PortMode struct {
	Baud     int     // bit/s
	DataBits int     // 5 to 8
	Parity   byte    // 'N' none, 'E' even, 'O' odd, 'M' mark, 'S' space
	StopBits float64 // 1, 1.5 or 2
}

// DefaultPortMode is 115200 bit/s, 8 data bits, no parity, 1 stop bit.
var DefaultPortMode = PortMode{Baud: 115200, DataBits: 8, Parity: 'N', StopBits: 1}

// Frame gives the frame in the usual short form, e.g. "8N1".
func (m PortMode) Frame() string {
	return strconv.Itoa(m.DataBits) + string(m.Parity) + strconv.FormatFloat(m.StopBits, 'f', -1, 64)
}

// ParseFrame parses a frame like "8N1", "7E1", "8N2" or "8N1.5" (data
// bits, parity N/E/O/M/S, stop bits) into m, keeping m's baud rate.
func (m *PortMode) ParseFrame(s string) error {
	u := strings.ToUpper(strings.TrimSpace(s))
	if len(u) < 3 {
		return fmt.Errorf("frame %q: want data bits, parity and stop bits, e.g. 8N1", s)
	}
	bits, par, stop := u[0], u[1], u[2:]
	if bits < '5' || bits > '8' {
		return fmt.Errorf("frame %q: data bits must be 5 to 8", s)
	}
	if !strings.ContainsRune("NEOMS", rune(par)) {
		return fmt.Errorf("frame %q: parity must be N, E, O, M or S", s)
	}
	var sb float64
	switch stop {
	case "1":
		sb = 1
	case "1.5":
		sb = 1.5
	case "2":
		sb = 2
	default:
		return fmt.Errorf("frame %q: stop bits must be 1, 1.5 or 2", s)
	}
	m.DataBits, m.Parity, m.StopBits = int(bits-'0'), par, sb
	return nil
}

// Check reports a baud rate or frame the serial driver cannot take.
func (m PortMode) Check() error {
	if m.Baud < 50 || m.Baud > 4_000_000 {
		return fmt.Errorf("baud rate %d is out of range (50 to 4000000)", m.Baud)
	}
	var probe PortMode
	if err := probe.ParseFrame(m.Frame()); err != nil {
		return err
	}
	return nil
}

func (m PortMode) serial() *serial.Mode {
	sm := &serial.Mode{BaudRate: m.Baud, DataBits: m.DataBits, StopBits: serial.OneStopBit}
	switch m.StopBits {
	case 1.5:
		sm.StopBits = serial.OnePointFiveStopBits
	case 2:
		sm.StopBits = serial.TwoStopBits
	}
	switch m.Parity {
	case 'E':
		sm.Parity = serial.EvenParity
	case 'O':
		sm.Parity = serial.OddParity
	case 'M':
		sm.Parity = serial.MarkParity
	case 'S':
		sm.Parity = serial.SpaceParity
	default:
		sm.Parity = serial.NoParity
	}
	return sm
}

// SerialOpener opens the serial port at path (a device path such as
// /dev/ttyUSB0, /dev/ttyACM0 or /dev/cu.usbserial-1410, or a Windows name
// such as COM3) with mode. The port is read without a read timeout: the
// acquirer wakes a blocked read by closing the port when its context ends
// (go.bug.st/serial returns (0, nil) on a timeout, which a bufio.Scanner
// would take for a stream that makes no progress).
func SerialOpener(path string, mode PortMode) Opener {
	return func(ctx context.Context) (io.ReadCloser, error) {
		if err := mode.Check(); err != nil {
			return nil, fmt.Errorf("serial port %s: %w", path, err)
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		p, err := serial.Open(path, mode.serial())
		if err != nil {
			return nil, fmt.Errorf("serial port %s: %s: %w", path, openHint(err), err)
		}
		if err := p.SetReadTimeout(portPoll); err != nil {
			p.Close()
			return nil, fmt.Errorf("serial port %s: %w", path, err)
		}
		return &serialPort{p: p}, nil
	}
}

// portPoll is how long one read of a serial port waits for data before it
// returns empty (waitForData reads again): how long a Close may wait.
const portPoll = 50 * time.Millisecond

// serialPort is a serial port whose Close never runs while a Read is using
// its descriptor. go.bug.st/serial closes the descriptor before it wakes a
// pending read, so a file opened in that gap (a curve file being
// completed) could take the descriptor's number and be read as the device,
// and moved under its writer. Reads wait at most portPoll, so Close waits
// no longer than that.
type serialPort struct {
	p      serial.Port
	mu     sync.Mutex // held by Read while it uses the port, and by Close
	closed bool
}

func (s *serialPort) Read(b []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.closed {
		return 0, os.ErrClosed
	}
	return s.p.Read(b)
}

func (s *serialPort) Close() error {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.closed {
		return nil
	}
	s.closed = true
	return s.p.Close()
}

func openHint(err error) string {
	var pe *serial.PortError
	if errors.As(err, &pe) {
		switch pe.Code() {
		case serial.PortNotFound:
			return "no such port (list them with 'undercool ports')"
		case serial.PermissionDenied:
			return "permission denied (on Linux, is your user in the dialout group?)"
		case serial.PortBusy:
			return "the port is in use by another program"
		}
	}
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return "no such port (list them with 'undercool ports')"
	case errors.Is(err, fs.ErrPermission):
		return "permission denied (on Linux, is your user in the dialout group?)"
	}
	return "cannot open"
}

// readFunc is an io.Reader made of a function.
type readFunc func([]byte) (int, error)

func (f readFunc) Read(b []byte) (int, error) { return f(b) }

// waitForData turns a run of empty reads into waiting, so that a reader
// that returns (0, nil) (a serial port with a read timeout) never stops a
// bufio.Scanner with io.ErrNoProgress. It gives up when ctx ends.
func waitForData(ctx context.Context, r io.Reader) io.Reader {
	return readFunc(func(b []byte) (int, error) {
		for empty := 0; ; empty++ {
			n, err := r.Read(b)
			if n > 0 || err != nil || len(b) == 0 {
				return n, err
			}
			if err := ctx.Err(); err != nil {
				return 0, err
			}
			if empty > 10 {
				time.Sleep(time.Millisecond)
			}
		}
	})
}
