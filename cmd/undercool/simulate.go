package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/undercool-foundry/undercool/internal/atomicfile"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/sim"
)

func init() {
	register(command{
		name:    "simulate",
		summary: "write a simulated cup curve (and its truth), or serve a virtual melt-deck device",
		run:     runSimulate,
	})
}

// simFlags are the options of `undercool simulate`.
type simFlags struct {
	alloy, out, fault, channels string
	cup, walls                  string
	inoc, mod, ce, c, si, p     float64
	pour, hold, rate, noise     float64
	spikes, mass                float64
	seed                        uint64
	serve, checksum             bool
	speed                       float64
	add                         addFlags
}

func runSimulate(ctx context.Context, env *environ, args []string) error {
	var f simFlags
	fs := flag.NewFlagSet("simulate", flag.ContinueOnError)
	fs.SetOutput(env.stderr)
	fs.StringVar(&f.alloy, "alloy", "", "alloy: "+strings.Join(sim.Alloys, ", "))
	fs.Float64Var(&f.inoc, "inoculation", 0.7, "inoculation (iron) or grain-refiner (Al) level, 0..1")
	fs.Float64Var(&f.mod, "modification", 0, "Sr/Na modification level of Al-Si, 0..1")
	fs.Float64Var(&f.ce, "ce", 0, "carbon equivalent C + (Si+P)/3 of iron (sets C at the given Si)")
	fs.Float64Var(&f.c, "c", 0, "carbon, wt % (iron)")
	fs.Float64Var(&f.si, "si", 0, "silicon, wt %")
	fs.Float64Var(&f.p, "p", 0, "phosphorus, wt % (iron)")
	fs.Float64Var(&f.pour, "pour", 0, "melt temperature in the full cup, °C (0: the alloy's default)")
	fs.Float64Var(&f.mass, "cup-kg", 0, "metal in the cup, kg (0: the alloy's default)")
	fs.Float64Var(&f.hold, "hold-min", 0, "minutes held since inoculation (the inoculant fades)")
	fs.Float64Var(&f.rate, "rate", 10, "logger rate, readings per second")
	fs.Float64Var(&f.noise, "noise", 0.05, "logger white noise, standard deviation in °C")
	fs.Float64Var(&f.spikes, "spikes", 0, "fraction of readings that are single-sample spikes of 10–40 °C")
	fs.StringVar(&f.fault, "fault", "", "make a bad sample: open-thermocouple, short-pour or pulled-early")
	fs.Uint64Var(&f.seed, "seed", 1, "random seed (the same seed gives the same curve)")
	fs.StringVar(&f.out, "out", "", "curve file to write; the truth goes to FILE.truth.json")
	fs.BoolVar(&f.serve, "serve", false, "serve a virtual device on a pseudo-terminal instead of writing a file")
	fs.Float64Var(&f.speed, "speed", 1, "with --serve: run this many times faster than real time")
	fs.StringVar(&f.channels, "channels", "", "with --serve: comma-separated channel ids, each with its own stand")
	fs.StringVar(&f.cup, "cup", "", "the cup model: lumped (the default) or radial (zones from the axis to the wall, with a second thermocouple near the wall: the wall_tc_c column)")
	fs.StringVar(&f.walls, "wall-channel", "", "with --serve: `CENTRE:WALL[,...]`: channel CENTRE pours radial cups whose wall thermocouple is served on channel WALL")
	fs.BoolVar(&f.checksum, "checksum", false, "with --serve: end each line with the protocol's checksum")
	f.add.register(fs)
	fs.Usage = func() {
		fmt.Fprintln(env.stderr, "usage: undercool simulate --alloy ALLOY [options] --out FILE")
		fmt.Fprintln(env.stderr, "       undercool simulate --serve [--alloy ALLOY ...] [--speed X]")
		fmt.Fprintln(env.stderr, "Writes a SIMULATED cup from the undercool cup model (not a measurement).")
		fmt.Fprintln(env.stderr, "With --add-inoculant PCT --delay-min M, the cup of the same melt after that addition")
		fmt.Fprintln(env.stderr, "(an inoculant table of --limits FILE, else the shipped examples), poured M minutes later.")
		fs.PrintDefaults()
	}
	if help, err := parseFlags(fs, args); help || err != nil {
		return err
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(env.stderr, "undercool simulate: unexpected argument %q\n", fs.Arg(0))
		return errUsage
	}
	set := map[string]bool{}
	fs.Visit(func(fl *flag.Flag) { set[fl.Name] = true })

	var cup *sim.Params
	if f.alloy != "" || !f.serve {
		p, err := f.params(set)
		if err != nil {
			return err
		}
		cup = &p
	}
	if f.serve {
		if f.out != "" {
			return fmt.Errorf("--serve and --out do not go together")
		}
		if f.speed <= 0 || f.speed > 1000 {
			return fmt.Errorf("--speed %g: want more than 0 and at most 1000", f.speed)
		}
		opt := sim.DeckOptions{Seed: f.seed, Speed: f.speed, RateHz: f.rate, Checksum: f.checksum, Cup: cup}
		if f.channels != "" {
			opt.Channels = strings.Split(f.channels, ",")
		}
		if f.walls != "" {
			opt.Walls = map[string]string{}
			for pair := range strings.SplitSeq(f.walls, ",") {
				c, w, ok := strings.Cut(strings.TrimSpace(pair), ":")
				if !ok || c == "" || w == "" {
					return fmt.Errorf("--wall-channel %q: want CENTRE:WALL, e.g. 1:2", pair)
				}
				opt.Walls[c] = w
			}
		}
		return serveDevice(ctx, env, sim.NewDeck(opt), opt)
	}
	if f.out == "" {
		fmt.Fprintln(env.stderr, "undercool simulate: --out FILE is needed (or --serve)")
		return errUsage
	}
	return writeSimulated(*cup, f.out)
}

// params turns the flags into the model's parameters.
func (f *simFlags) params(set map[string]bool) (sim.Params, error) {
	if f.alloy == "" {
		return sim.Params{}, fmt.Errorf("--alloy is needed (one of %s)", strings.Join(sim.Alloys, ", "))
	}
	for _, r := range []struct {
		name   string
		v      float64
		lo, hi float64
	}{
		{"inoculation", f.inoc, 0, 1}, {"modification", f.mod, 0, 1}, {"rate", f.rate, 1, 1000},
		{"noise", f.noise, 0, 50}, {"spikes", f.spikes, 0, 0.5}, {"hold-min", f.hold, 0, 600},
	} {
		if r.v < r.lo || r.v > r.hi || r.v != r.v {
			return sim.Params{}, fmt.Errorf("--%s %g is outside %g..%g", r.name, r.v, r.lo, r.hi)
		}
	}
	if set["ce"] && set["c"] {
		return sim.Params{}, fmt.Errorf("give --ce or --c, not both")
	}
	p, err := sim.Preset(f.alloy, f.inoc, f.seed)
	if err != nil {
		return sim.Params{}, fmt.Errorf("--alloy: %w", err)
	}
	if set["si"] {
		p.Si = f.si
	}
	if set["p"] {
		p.P = f.p
	}
	if set["c"] {
		p.C = f.c
	}
	if set["ce"] {
		p.C, p.CE = 0, f.ce
	}
	if set["pour"] {
		p.PourC = f.pour
	}
	if set["cup-kg"] {
		p.CupMassKg = f.mass
	}
	p.Modification, p.HoldMin = f.mod, f.hold
	p.Logger.RateHz, p.Logger.NoiseC = f.rate, f.noise
	if f.spikes > 0 {
		p.Logger.SpikeRate, p.Logger.SpikeMinC, p.Logger.SpikeMaxC = f.spikes, 10, 40
	}
	switch f.cup {
	case "", "lumped":
		p.Cup = sim.CupLumped
	case string(sim.CupRadial):
		p.Cup = sim.CupRadial
	default:
		return sim.Params{}, fmt.Errorf("--cup %q: want lumped or radial", f.cup)
	}
	switch sim.Fault(f.fault) {
	case sim.FaultNone, sim.FaultOpen, sim.FaultShortPour, sim.FaultPulledEarly:
		p.Fault = sim.Fault(f.fault)
	default:
		return sim.Params{}, fmt.Errorf("--fault %q: want open-thermocouple, short-pour or pulled-early", f.fault)
	}
	p.Ladle, p.Sample, p.Operator = "L-2417", "L-2417 cup 1", "Pell Brasswick"
	if err := f.add.apply(&p, set); err != nil {
		return sim.Params{}, err
	}
	if err := p.Validate(); err != nil {
		return sim.Params{}, err
	}
	if p.PourC != 0 && p.PourC < 100 {
		return sim.Params{}, fmt.Errorf("--pour %g °C is too cold to be molten metal", p.PourC)
	}
	return p, nil
}

// writeSimulated writes the curve file and FILE.truth.json beside it.
func writeSimulated(p sim.Params, path string) error {
	// as record does, never over an existing file (a measured curve could
	// be lost under a simulated one)
	for _, f := range []string{path, path + ".truth.json"} {
		if _, err := os.Lstat(f); err == nil {
			return fmt.Errorf("simulate --out %s: %s exists; give a new name or remove it first", path, f)
		}
	}
	out := sim.Simulate(p)
	c := out.Curve(path)
	js, err := out.TruthJSON()
	if err != nil {
		return fmt.Errorf("truth of %s: %w", path, err)
	}
	if err := atomicfile.Write(path, 0o644, func(w io.Writer) error { return curvefile.WriteCurve(w, c) }); err != nil {
		return err
	}
	return atomicfile.Write(path+".truth.json", 0o644, func(w io.Writer) error {
		_, err := w.Write(js)
		return err
	})
}

// deckSummary says in one line what the virtual device serves.
func deckSummary(opt sim.DeckOptions) string {
	what := "a simulated melt deck (mixed alloys, now and then a bad sample)"
	if opt.Cup != nil {
		what = "repeated simulated " + opt.Cup.Alloy + " cups"
	}
	ch := "1"
	if len(opt.Channels) > 0 {
		ch = strings.Join(opt.Channels, ",")
	}
	return fmt.Sprintf("%s, channel %s, %s Hz, %s× real time", what, ch,
		strconv.FormatFloat(opt.RateHz, 'g', -1, 64), strconv.FormatFloat(opt.Speed, 'g', -1, 64))
}
