//go:build darwin && !cgo

package acquire

import (
	"fmt"

	"go.bug.st/serial"
)

// ListPorts lists the serial ports by name only: USB details on macOS need
// a build with cgo.
func ListPorts() ([]PortInfo, error) {
	names, err := serial.GetPortsList()
	if err != nil {
		return nil, fmt.Errorf("acquire: listing serial ports: %w", err)
	}
	out := make([]PortInfo, 0, len(names))
	for _, n := range names {
		out = append(out, PortInfo{Name: n})
	}
	return out, nil
}
