package acquire

// PortInfo describes a serial port found on the system.
type PortInfo struct {
	Name         string // what to pass as --port: /dev/ttyUSB0, COM3, /dev/cu.usbserial-1410
	USB          bool
	VID, PID     string // USB vendor and product ids, lower-case hex, where known
	Serial       string // USB serial number, where known
	Manufacturer string
	Product      string
}
