package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"

	"github.com/undercool-foundry/undercool/internal/thermocouple"
)

func init() {
	register(command{
		name:    "tc",
		summary: "thermocouple calculator: EMF to °C or °C to EMF (ITS-90, types B E J K N R S T)",
		run:     runTC,
	})
}

const tcUsage = `usage:
  undercool tc TYPE --emf MV [--cj C] [--json]    temperature of the measuring junction
  undercool tc TYPE --temp C [--cj C] [--json]    EMF the thermocouple gives at C

TYPE is B, E, J, K, N, R, S or T. --cj is the cold-junction (reference)
temperature, 0 °C by default. Conversions use the ITS-90 reference
functions (NIST Monograph 175); values outside a type's range are refused.`

// tcResult is the --json output.
type tcResult struct {
	Type          string  `json:"type"`
	TempC         float64 `json:"temp_c"`
	EMFMV         float64 `json:"emf_mv"`
	ColdJunctionC float64 `json:"cold_junction_c"`
}

func runTC(ctx context.Context, env *environ, args []string) error {
	fs := flag.NewFlagSet("tc", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.Usage = func() { fmt.Fprintln(env.stderr, tcUsage) }
	emf := fs.Float64("emf", 0, "measured EMF, mV")
	temp := fs.Float64("temp", 0, "measuring-junction temperature, °C")
	cj := fs.Float64("cj", 0, "cold-junction temperature, °C")
	asJSON := fs.Bool("json", false, "print one JSON object")
	pos, err := parseLimitsArgs(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil // -h: the usage, exit 0
		}
		return errUsage
	}
	set := map[string]bool{}
	fs.Visit(func(f *flag.Flag) { set[f.Name] = true })
	if len(pos) != 1 || set["emf"] == set["temp"] {
		fmt.Fprintln(env.stderr, tcUsage)
		return errUsage
	}
	ty, err := thermocouple.Lookup(pos[0])
	if err != nil {
		return err
	}
	res := tcResult{Type: ty.Name(), ColdJunctionC: *cj}
	if set["emf"] {
		res.EMFMV = *emf
		res.TempC, err = ty.Temp(*emf, *cj)
	} else {
		res.TempC = *temp
		res.EMFMV, err = ty.EMF(*temp, *cj)
	}
	if err != nil {
		return err
	}
	if *asJSON {
		b, err := json.Marshal(res)
		if err != nil {
			return err
		}
		_, err = fmt.Fprintf(env.stdout, "%s\n", b)
		return err
	}
	if set["emf"] {
		_, err = fmt.Fprintf(env.stdout, "%.3f °C  (%s, %.4f mV, cold junction %g °C)\n", res.TempC, ty, res.EMFMV, res.ColdJunctionC)
	} else {
		_, err = fmt.Fprintf(env.stdout, "%.4f mV  (%s, %g °C, cold junction %g °C)\n", res.EMFMV, ty, res.TempC, res.ColdJunctionC)
	}
	return err
}
