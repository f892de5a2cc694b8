package main

import (
	"flag"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/undercool-foundry/undercool/acquire"
)

// addPortFlags registers --baud and --frame on fs, writing into m (which
// should hold the defaults).
func addPortFlags(fs *flag.FlagSet, m *acquire.PortMode) {
	fs.IntVar(&m.Baud, "baud", m.Baud, "baud rate in bit/s (the amplifier's setting)")
	fs.Func("frame", "data bits, parity (N E O M S) and stop bits, e.g. 8N1 or 7E1 (default "+m.Frame()+")", m.ParseFrame)
}

// addEMFFlags registers --tc and --cj on fs, writing into c: the
// thermocouple type and the cold-junction temperature for amplifiers that
// send raw EMF.
func addEMFFlags(fs *flag.FlagSet, c *acquire.Config) {
	fs.StringVar(&c.Thermocouple, "tc", c.Thermocouple, "thermocouple type for raw EMF readings, B E J K N R S T (default: what the device announces, else K)")
	fs.Func("cj", "cold-junction temperature in °C for EMF readings that carry no cj= (default: 25, with a warning)", func(s string) error {
		v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v < -50 || v > 150 {
			return fmt.Errorf("%q is not a cold-junction temperature in °C (-50 to 150)", s)
		}
		c.ColdJunctionC, c.ColdJunctionSet = v, true
		return nil
	})
}
