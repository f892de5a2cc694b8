package main

import (
	"flag"
	"fmt"
	"math"
	"strings"

	"github.com/undercool-foundry/undercool/acquire"
)

// cupFlags are --wall-channel, --centre-radius-mm and --wall-radius-mm:
// which channels of the amplifier are one cup's two thermocouples
// (docs/recording.md, "Two thermocouples in one cup").
type cupFlags struct {
	specs            []string // [CENTRE:]WALL, as given
	centreMm, wallMm float64
}

// addCupFlags registers the flags on fs.
func addCupFlags(fs *flag.FlagSet) *cupFlags {
	f := &cupFlags{}
	fs.Func("wall-channel", "`[CENTRE:]WALL`: channel WALL is the thermocouple near the wall of the cup on channel CENTRE (default: --channel, else 1); repeat for more cups", func(s string) error {
		f.specs = append(f.specs, s)
		return nil
	})
	fs.Float64Var(&f.centreMm, "centre-radius-mm", 0, "with --wall-channel: the centre thermocouple's distance from the cup's axis, mm")
	fs.Float64Var(&f.wallMm, "wall-radius-mm", 0, "with --wall-channel: the wall thermocouple's distance from the cup's axis, mm (the Fourier figures need it; else the device's wall_r_mm)")
	return f
}

// cups are the cups the flags describe; centre is the centre channel of a
// --wall-channel that names none.
func (f *cupFlags) cups(centre string) ([]acquire.Cup, error) {
	if centre == "" {
		centre = "1"
	}
	if len(f.specs) == 0 {
		if f.centreMm != 0 || f.wallMm != 0 {
			return nil, fmt.Errorf("--centre-radius-mm and --wall-radius-mm go with --wall-channel")
		}
		return nil, nil
	}
	if !(f.centreMm >= 0) || !(f.wallMm >= 0) || math.IsInf(f.centreMm, 0) || math.IsInf(f.wallMm, 0) {
		return nil, fmt.Errorf("--centre-radius-mm %g, --wall-radius-mm %g: a radius is a distance from the cup's axis, 0 or more", f.centreMm, f.wallMm)
	}
	var out []acquire.Cup
	for _, s := range f.specs {
		c, w, ok := strings.Cut(strings.TrimSpace(s), ":")
		if !ok {
			c, w = centre, c
		}
		out = append(out, acquire.Cup{Centre: strings.TrimSpace(c), Wall: strings.TrimSpace(w), CentreMm: f.centreMm, WallMm: f.wallMm})
	}
	return out, nil
}
