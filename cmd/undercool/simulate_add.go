package main

import (
	"cmp"
	"flag"
	"fmt"
	"strings"

	"github.com/undercool-foundry/undercool/internal/limits"
	"github.com/undercool-foundry/undercool/internal/sim"
)

// addFlags are simulate's options for an "after" cup: the same melt after
// an addition from the limits file's inoculant tables and a delay.
type addFlags struct {
	pct, delay float64
	inoculant  string
	limits     string
}

func (a *addFlags) register(fs *flag.FlagSet) {
	fs.Float64Var(&a.pct, "add-inoculant", 0, "make the cup of the same melt after adding PCT % of the ladle (an inoculant table of the limits file)")
	fs.Float64Var(&a.delay, "delay-min", 0, "with --add-inoculant: minutes from the addition to the pour of this cup")
	fs.StringVar(&a.inoculant, "inoculant", "", "with --add-inoculant: the inoculant table to use (needed where the alloy has several)")
	fs.StringVar(&a.limits, "limits", "", "with --add-inoculant: limits `FILE` with the inoculant tables (default: the shipped examples)")
}

// apply adds the addition to the cup: the melt's own inoculation fades on
// for the delay, and the addition, as its table describes it, fades from
// the moment it was made (see sim.Addition).
func (a *addFlags) apply(p *sim.Params, set map[string]bool) error {
	if !set["add-inoculant"] {
		if set["delay-min"] || set["inoculant"] || set["limits"] {
			return fmt.Errorf("--delay-min, --inoculant and --limits go with --add-inoculant")
		}
		return nil
	}
	if !(a.pct > 0 && a.pct <= 5) {
		return fmt.Errorf("--add-inoculant %g: want more than 0 and at most 5 %% of the ladle", a.pct)
	}
	if !(a.delay >= 0 && a.delay <= 600) {
		return fmt.Errorf("--delay-min %g: want 0 to 600 minutes", a.delay)
	}
	book := limits.Builtin()
	if a.limits != "" {
		var err error
		if book, err = limits.Load(a.limits); err != nil {
			return err
		}
	}
	tables := book.Inoculants(p.Alloy)
	var names []string
	for _, t := range tables {
		names = append(names, t.Name)
	}
	var t *limits.Inoculant
	switch {
	case a.inoculant != "":
		for _, c := range tables {
			if c.Name == a.inoculant {
				t = c
			}
		}
		if t == nil {
			return fmt.Errorf("--inoculant %q: %s has no such table for %s (it has: %s)", a.inoculant, book.Source, p.Alloy, cmp.Or(strings.Join(names, ", "), "none"))
		}
	case len(tables) == 1:
		t = tables[0]
	case len(tables) == 0:
		return fmt.Errorf("--add-inoculant: %s has no inoculant table for %s", book.Source, p.Alloy)
	default:
		return fmt.Errorf("--add-inoculant: %s has several inoculant tables for %s (%s): choose one with --inoculant", book.Source, p.Alloy, strings.Join(names, ", "))
	}
	if a.pct > t.MaxPct+1e-9 {
		return fmt.Errorf("--add-inoculant %g: %s allows at most %g %% of %s", a.pct, book.Source, t.MaxPct, t.Name)
	}
	p.HoldMin += a.delay
	p.Additions = append(p.Additions, sim.Addition{Effect: sim.Effect(t.Effect), Pct: a.pct, AgeMin: a.delay, Gain: t.Gain, HalfLifeMin: t.HalfLifeMin})
	return nil
}
