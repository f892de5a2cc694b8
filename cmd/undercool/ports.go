package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"runtime"
	"sort"
	"strings"

	"github.com/undercool-foundry/undercool/acquire"
	"github.com/undercool-foundry/undercool/internal/escape"
)

func init() {
	register(command{
		name:    "ports",
		summary: "list the serial ports (USB vendor, product and serial number where known)",
		run:     runPorts,
	})
}

// listPorts is the port enumerator (replaced in tests).
var listPorts = acquire.ListPorts

// portNameHelp says how serial ports are named on this kind of system.
func portNameHelp() string {
	switch runtime.GOOS {
	case "windows":
		return "ports are named COM1, COM3, COM10 ..."
	case "darwin":
		return "ports are named /dev/cu.usbserial-XXXX or /dev/cu.usbmodemXXXX (use the cu. name, not tty.)"
	default:
		return "ports are named /dev/ttyUSB0 (USB serial adapters), /dev/ttyACM0 (boards with native USB), /dev/ttyS0 (built-in); a stable name is under /dev/serial/by-id/"
	}
}

func runPorts(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("ports", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	asJSON := fs.Bool("json", false, "one JSON object a line: name, usb, vid, pid, serial, product, manufacturer")
	fs.Usage = func() {
		fmt.Fprintln(env.stderr, "usage: undercool ports [--json]")
		fmt.Fprintln(env.stderr, "Lists the serial ports this computer has; "+portNameHelp()+".")
		fs.PrintDefaults()
	}
	if help, err := parseFlags(fs, args); help || err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return errUsage
	}
	ports, err := listPorts()
	if err != nil {
		return err
	}
	sort.Slice(ports, func(i, j int) bool { return ports[i].Name < ports[j].Name })
	if *asJSON {
		enc := json.NewEncoder(escape.JSONWriter(env.stdout))
		for _, p := range ports {
			if err := enc.Encode(portJSON{Name: p.Name, USB: p.USB, VID: p.VID, PID: p.PID,
				Serial: p.Serial, Product: p.Product, Manufacturer: p.Manufacturer}); err != nil {
				return err
			}
		}
		return nil
	}
	if len(ports) == 0 {
		fmt.Fprintln(env.stdout, "no serial ports found: plug in the amplifier (and on Linux check that your user is in the dialout group); "+portNameHelp())
		return nil
	}
	for _, p := range ports {
		fmt.Fprintln(env.stdout, describePort(p))
	}
	return nil
}

type portJSON struct {
	Name         string `json:"name"`
	USB          bool   `json:"usb"`
	VID          string `json:"vid,omitempty"`
	PID          string `json:"pid,omitempty"`
	Serial       string `json:"serial,omitempty"`
	Product      string `json:"product,omitempty"`
	Manufacturer string `json:"manufacturer,omitempty"`
}

// describePort is one line: the name, then what the system knows of it.
func describePort(p acquire.PortInfo) string {
	parts := []string{escape.Line(p.Name)}
	if !p.USB {
		return parts[0]
	}
	parts = append(parts, "USB")
	add := func(label, v string) {
		if v = escape.Line(strings.TrimSpace(v)); v != "" {
			parts = append(parts, label+v)
		}
	}
	add("vid ", p.VID)
	add("pid ", p.PID)
	add("serial ", p.Serial)
	add("", quoteIfSpaced(p.Manufacturer))
	add("", quoteIfSpaced(p.Product))
	return strings.Join(parts, "  ")
}

func quoteIfSpaced(s string) string {
	if strings.ContainsAny(s, " \t") {
		return fmt.Sprintf("%q", s)
	}
	return s
}
