//go:build !darwin || cgo

package acquire

import (
	"fmt"
	"strings"

	"go.bug.st/serial/enumerator"
)

// ListPorts lists the serial ports with the USB details the system gives
// (Linux reads them from sysfs; Windows and macOS ask each USB device).
func ListPorts() ([]PortInfo, error) {
	ds, err := enumerator.GetDetailedPortsList(enumerator.All)
	if err != nil {
		return nil, fmt.Errorf("acquire: listing serial ports: %w", err)
	}
	out := make([]PortInfo, 0, len(ds))
	for _, d := range ds {
		out = append(out, PortInfo{Name: d.Name, USB: d.IsUSB, VID: strings.ToLower(d.VID), PID: strings.ToLower(d.PID),
			Serial: d.SerialNumber, Manufacturer: d.Manufacturer, Product: d.Product})
	}
	return out, nil
}
