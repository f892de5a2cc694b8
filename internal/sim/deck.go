package sim

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strconv"
	"time"

	"github.com/undercool-foundry/undercool/internal/protocol"
)

// Clock is the deck's time source; tests replace it.
type Clock interface {
	Now() time.Time
	After(d time.Duration) <-chan time.Time
}

type realClock struct{}

func (realClock) Now() time.Time                         { return time.Now() }
func (realClock) After(d time.Duration) <-chan time.Time { return time.After(d) }

// DeckOptions configure a simulated melt deck.
type DeckOptions struct {
	Seed   uint64
	Speed  float64 // 1 = real time, 10 = ten times faster; ≤ 0 means 1
	RateHz float64 // readings per second per channel (0: 10 Hz)
	// Channels are the channel ids, each with its own stand and stream of
	// cups; nil gives one channel whose lines carry no ch= token ("1").
	Channels []string
	Checksum bool // end every line with the protocol's *XX checksum
	// Walls gives channels of Channels a second thermocouple near the
	// wall of their cup, served on the channel named: those channels pour
	// radial cups (Params.Cup = CupRadial), each cup's info line pairs the
	// two ("wall_ch=W wall_r_mm=R centre_r_mm=0", docs/line-protocol.md),
	// and every reading of the centre is followed by the wall
	// thermocouple's at the same device time (Output.Wall, to 0.01 °C).
	Walls map[string]string
	// Cup, when set, makes every ladle pour this cup (with its labels
	// replaced and a fresh seed per cup) instead of the deck's mix.
	Cup   *Params
	Clock Clock // nil: the real clock
}

// Ladle is one sample the deck will pour.
type Ladle struct {
	Channel  string
	Ladle    string // "L-2417"
	Sample   string // "L-2417 cup 1"
	Operator string
	Furnace  string // "IF-1", "IF-2", "holder H3"
	Label    string // what kind of cup this is, e.g. "poorly inoculated", "open thermocouple"
	Params   Params
	AfterS   float64 // idle seconds after the curve before the next ladle
}

// Our invented scenario: Cindermoth Iron & Light Alloy works.
var deckOperators = []string{"Pell Brasswick", "Tobin Quenchmoor", "Odile Flintcaster"}

// scenario is one kind of cup and how often the deck pours it.
type scenario struct {
	weight float64
	label  string
	make   func(r *rand.Rand) Params
}

func uniform(r *rand.Rand, lo, hi float64) float64 { return lo + (hi-lo)*r.Float64() }

func presetOr(alloy string, inoc float64) Params {
	p, err := Preset(alloy, inoc, 0)
	if err != nil {
		panic("sim: " + err.Error())
	}
	return p
}

// deckScenarios are the deck's cups and how often it pours each: mostly
// good ladles, now and then a bad one, as on a deck that runs well (about
// three in four pass against the shipped examples; DeckVerdictMix in the
// tests measures it).
var deckScenarios = []scenario{
	{6, "well inoculated", func(r *rand.Rand) Params {
		p := presetOr(GreyIron, uniform(r, 0.75, 1))
		p.C, p.Si = uniform(r, 3.3, 3.45), uniform(r, 1.9, 2.3) // CE 3.93–4.22: within the examples' band
		return p
	}},
	{0.8, "poorly inoculated", func(r *rand.Rand) Params {
		p := presetOr(GreyIron, uniform(r, 0, 0.3))
		p.C, p.Si = uniform(r, 3.2, 3.45), uniform(r, 1.8, 2.3)
		return p
	}},
	{0.4, "faded (held too long)", func(r *rand.Rand) Params {
		p := presetOr(GreyIron, 1)
		p.HoldMin = uniform(r, 15, 30)
		return p
	}},
	{3, "ductile, well inoculated", func(r *rand.Rand) Params { return presetOr(DuctileIron, uniform(r, 0.7, 1)) }},
	{0.4, "ductile, poorly inoculated", func(r *rand.Rand) Params { return presetOr(DuctileIron, uniform(r, 0, 0.3)) }},
	{3, "refined and modified", func(r *rand.Rand) Params {
		p := presetOr(AlSi7Mg, uniform(r, 0.7, 1))
		p.Modification = uniform(r, 0.7, 1)
		return p
	}},
	{0.4, "unrefined", func(r *rand.Rand) Params {
		p := presetOr(AlSi7Mg, uniform(r, 0, 0.2))
		p.Modification = uniform(r, 0.6, 1)
		return p
	}},
	{0.4, "unmodified", func(r *rand.Rand) Params {
		p := presetOr(AlSi7Mg, uniform(r, 0.6, 1))
		p.Modification = uniform(r, 0, 0.15)
		return p
	}},
	{0.7, "tellurium cup", func(r *rand.Rand) Params { return presetOr(WhiteIron, 0) }},
	{0.3, "pure aluminium check cup", func(r *rand.Rand) Params { return presetOr(PureAl, 0) }},
	{0.25, "open thermocouple", func(r *rand.Rand) Params {
		p := presetOr(GreyIron, 0.8)
		p.Fault = FaultOpen
		return p
	}},
	{0.25, "short, cold pour", func(r *rand.Rand) Params {
		p := presetOr(GreyIron, 0.8)
		p.Fault = FaultShortPour
		return p
	}},
	{0.25, "cup pulled early", func(r *rand.Rand) Params {
		p := presetOr(AlSi7Mg, 0.8)
		p.Modification = 0.8
		p.Fault = FaultPulledEarly
		return p
	}},
}

// Deck is a simulated melt deck: an endless, seeded stream of ladle samples.
type Deck struct {
	opt       DeckOptions
	rng       *rand.Rand // the plan of ladles
	noise     *rand.Rand // idle readings between cups
	next      int        // next ladle number
	count     int        // cups of the current ladle
	lastAlloy string
	buf, num  []byte // the line being written, a number being rounded
}

// NewDeck makes a deck. The same options give the same stream.
func NewDeck(opt DeckOptions) *Deck {
	if opt.Speed <= 0 {
		opt.Speed = 1
	}
	if opt.RateHz <= 0 {
		opt.RateHz = 10
	}
	if opt.Clock == nil {
		opt.Clock = realClock{}
	}
	return &Deck{opt: opt, rng: rand.New(rand.NewPCG(opt.Seed, 0x48415252)),
		noise: rand.New(rand.NewPCG(opt.Seed, 0x4e4f4953)), next: 2401}
}

// scenario draws the next cup's kind by the scenarios' weights.
func (d *Deck) scenario() scenario {
	total := 0.0
	for _, s := range deckScenarios {
		total += s.weight
	}
	x := d.rng.Float64() * total
	for _, s := range deckScenarios {
		if x < s.weight {
			return s
		}
		x -= s.weight
	}
	return deckScenarios[len(deckScenarios)-1]
}

// Next plans the next ladle sample. Run takes its cups from Next too, in
// the order channels come free.
func (d *Deck) Next() Ladle {
	var p Params
	label := "as asked"
	if d.opt.Cup != nil {
		p = *d.opt.Cup // the cup asked for: no scenario is drawn
	} else {
		sc := d.scenario()
		p, label = sc.make(d.rng), sc.label
	}
	p.Seed = d.rng.Uint64()
	p.PourAtS = uniform(d.rng, 4, 8)
	p.Logger.RateHz = d.opt.RateHz
	if d.opt.Cup == nil {
		p.Logger.NoiseC = uniform(d.rng, 0.03, 0.15)
		p.Logger.QuantC = 0.01
		p.Logger.MainsC = uniform(d.rng, 0, 0.05)
		p.Logger.SpikeRate = 1.0 / 800
		p.Logger.SpikeMinC, p.Logger.SpikeMaxC = 10, 40
	}
	// Now and then a second cup of the same ladle (a re-sample), and a
	// tellurium cup is taken beside a normal cup of an iron ladle.
	same := d.rng.Float64() < 0.3 && p.Alloy == d.lastAlloy
	if p.Alloy == WhiteIron {
		same = isIron(d.lastAlloy) && d.lastAlloy != WhiteIron
	}
	if same && d.next > 2401 {
		d.count++
	} else {
		d.count = 1
		d.next++
	}
	d.lastAlloy = p.Alloy
	l := Ladle{
		Ladle:    fmt.Sprintf("L-%d", d.next-1),
		Operator: deckOperators[d.rng.IntN(len(deckOperators))],
		Label:    label,
		AfterS:   uniform(d.rng, 8, 15),
	}
	cup := "cup " + strconv.Itoa(d.count)
	if p.Alloy == WhiteIron {
		cup = "tellurium cup"
	}
	l.Sample = l.Ladle + " " + cup
	switch {
	case p.Alloy == AlSi7Mg || p.Alloy == PureAl:
		l.Furnace = "holder H3"
	case d.next%2 == 0:
		l.Furnace = "IF-1"
	default:
		l.Furnace = "IF-2"
	}
	p.Sample, p.Ladle, p.Operator = l.Sample, l.Ladle, l.Operator
	l.Params = p
	return l
}

// channelRun is one channel's current cup.
type channelRun struct {
	id    string
	ladle Ladle
	out   Output
	k     int     // next reading of out
	tail  int     // readings after the curve (pull-out and idle)
	tailN int     // how many
	last  float64 // last reading written, °C

	wall     string  // the channel of the cup's wall thermocouple ("" for none)
	lastWall float64 // its last reading, °C
}

// Run writes the line protocol to w until ctx is cancelled or a write
// fails: a device line, then per channel, for each ladle, an info line
// `! sample="…" alloy=… operator="…"`, room-temperature readings, the pour,
// the cooling curve, the thermocouple pulled out and idle readings. Lines
// are paced at Speed × real time by the deck's clock. It returns nil when
// ctx is cancelled.
func (d *Deck) Run(ctx context.Context, w io.Writer) error {
	bw := bufio.NewWriter(w)
	ids := d.opt.Channels
	tagged := len(ids) > 0
	if !tagged {
		ids = []string{"1"}
	}
	chans := make([]*channelRun, len(ids))
	for i, id := range ids {
		chans[i] = &channelRun{id: id, wall: d.opt.Walls[id]}
	}
	d.line(bw, protocol.Line{Kind: protocol.LineInfo, Info: []protocol.KV{{Key: "dev", Value: "undercool-sim"}, {Key: "fw", Value: "1.0"},
		{Key: "tc", Value: "K"}, {Key: "simulated", Value: "true"}, {Key: "site", Value: "Cindermoth Iron & Light Alloy works"}}})
	start := d.opt.Clock.Now()
	dt := 1 / d.opt.RateHz
	for tick := 0; ; tick++ {
		due := start.Add(time.Duration(float64(tick) * dt / d.opt.Speed * float64(time.Second)))
		if wait := due.Sub(d.opt.Clock.Now()); wait > 0 {
			if err := bw.Flush(); err != nil {
				return fmt.Errorf("sim: deck: %w", err)
			}
			select {
			case <-ctx.Done():
				return nil
			case <-d.opt.Clock.After(wait):
			}
		} else if ctx.Err() != nil {
			return nil
		}
		ms := uint64(math.Round(float64(tick) * dt * 1000))
		for _, c := range chans {
			d.reading(bw, c, tagged, ms)
		}
		if bw.Buffered() > 4096 {
			if err := bw.Flush(); err != nil {
				return fmt.Errorf("sim: deck: %w", err)
			}
		}
	}
}

// reading writes channel c's next line (and an info line when a new cup
// begins).
func (d *Deck) reading(w *bufio.Writer, c *channelRun, tagged bool, ms uint64) {
	if c.out.Time == nil || c.tail >= c.tailN && c.k >= len(c.out.Time) {
		c.ladle = d.Next()
		c.ladle.Channel = c.id
		if c.wall != "" {
			c.ladle.Params.Cup = CupRadial
		}
		c.out = Simulate(c.ladle.Params)
		c.k, c.tail = 0, 0
		c.tailN = int(c.ladle.AfterS * d.opt.RateHz)
		info := protocol.Line{Kind: protocol.LineInfo, Info: []protocol.KV{
			{Key: "sample", Value: c.ladle.Sample}, {Key: "alloy", Value: c.ladle.Params.Alloy},
			{Key: "operator", Value: c.ladle.Operator}, {Key: "ladle", Value: c.ladle.Ladle},
			{Key: "furnace", Value: c.ladle.Furnace}, {Key: "simulated", Value: "true"}}}
		if tagged {
			info.Info = append(info.Info, protocol.KV{Key: "ch", Value: c.id})
		}
		if c.wall != "" {
			info.Info = append(info.Info, protocol.KV{Key: "wall_ch", Value: c.wall},
				protocol.KV{Key: "wall_r_mm", Value: strconv.FormatFloat(math.Round(c.out.Truth.WallTCRadiusMm*100)/100, 'f', -1, 64)},
				protocol.KV{Key: "centre_r_mm", Value: "0"})
		}
		d.line(w, info)
	}
	d.centre(w, c, tagged, ms)
	if c.wall != "" {
		d.wallReading(w, c, ms)
	}
}

// wallReading writes the reading of channel c's wall thermocouple that
// goes with its centre reading just written (k already counted).
func (d *Deck) wallReading(w *bufio.Writer, c *channelRun, ms uint64) {
	l := protocol.Line{Kind: protocol.LineReading, HasMS: true, MS: ms, Channel: c.wall}
	if k := c.k - 1; c.tail == 0 && k < len(c.out.Wall) {
		c.lastWall = c.out.Wall[k]
	} else { // pulled out with the centre one: cooling in air as it does
		amb := c.ladle.Params.AmbientC
		if amb == 0 {
			amb = 25
		}
		c.lastWall = amb + (c.lastWall-amb)*math.Exp(-1/(3*d.opt.RateHz)) + 0.03*d.noise.NormFloat64()
	}
	d.line(w, d.temp(l, c.lastWall))
}

// centre writes channel c's reading of the cup's own thermocouple.
func (d *Deck) centre(w *bufio.Writer, c *channelRun, tagged bool, ms uint64) {
	l := protocol.Line{Kind: protocol.LineReading, HasMS: true, MS: ms}
	if tagged {
		l.Channel = c.id
	}
	if c.k < len(c.out.Time) {
		k := c.k
		c.k++
		if c.out.Open != nil && c.out.Open[k] {
			l.Fault = protocol.FaultOpen
			d.line(w, l)
			return
		}
		c.last = c.out.Temp[k]
		d.line(w, d.temp(l, c.last))
		return
	}
	// Pulled out: the bead cools in air toward room temperature (τ ≈ 3 s,
	// practice), then idles with a little noise.
	c.tail++
	amb := c.ladle.Params.AmbientC
	if amb == 0 {
		amb = 25
	}
	if c.out.Open != nil {
		l.Fault = protocol.FaultOpen // the broken thermocouple stays open until the cup is replaced
		d.line(w, l)
		return
	}
	c.last = amb + (c.last-amb)*math.Exp(-1/(3*d.opt.RateHz)) + 0.03*d.noise.NormFloat64()
	d.line(w, d.temp(l, c.last))
}

// temp makes l a temperature reading of v °C as the amplifier resolves it,
// to 0.01 °C.
func (d *Deck) temp(l protocol.Line, v float64) protocol.Line {
	d.num = strconv.AppendFloat(d.num[:0], v, 'f', 2, 64)
	l.HasTemp = true
	l.TempC, _ = strconv.ParseFloat(string(d.num), 64)
	return l
}

// line writes one protocol line (protocol.AppendLine), with the
// protocol's checksum (protocol.AppendChecksum) when asked.
func (d *Deck) line(w *bufio.Writer, l protocol.Line) {
	d.buf = protocol.AppendLine(d.buf[:0], l)
	if d.opt.Checksum {
		d.buf = protocol.AppendChecksum(d.buf)
	}
	d.buf = append(d.buf, '\n')
	w.Write(d.buf)
}
