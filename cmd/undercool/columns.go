package main

import (
	"flag"
	"fmt"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// columnsUsage is the usage text of the column options, for the commands
// that read curve files.
const columnsUsage = `Curve files from other loggers: --time-column and --temp-column name the
time and temperature columns by header text (case and runs of blanks
ignored) or position (1 is the first column); --time-unit s|ms|min and
--temp-unit C|F|K give their units where the header does not.`

// columnFlags adds the curve-file column options (curvefile.Options) to
// fs; check them with checkColumns after parsing.
func columnFlags(fs *flag.FlagSet) *curvefile.Options {
	o := new(curvefile.Options)
	fs.StringVar(&o.TimeColumn, "time-column", "", "time column of the curve files: header `NAME` or position from 1 (default: found from the header)")
	fs.StringVar(&o.TempColumn, "temp-column", "", "temperature column: header `NAME` or position from 1 (default: found from the header)")
	fs.StringVar(&o.TimeUnit, "time-unit", "", "unit of the time column, `s|ms|min` (default: from the header, else s)")
	fs.StringVar(&o.TempUnit, "temp-unit", "", "unit of the temperature column, `C|F|K` (default: from the header, else °C)")
	return o
}

// checkColumns reports bad column options as a usage error of the command.
func checkColumns(env *environ, command string, o *curvefile.Options) error {
	if err := o.Check(); err != nil {
		fmt.Fprintf(env.stderr, "undercool %s: %v\n", command, err)
		return errUsage
	}
	return nil
}
