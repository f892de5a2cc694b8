package arrest

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"github.com/undercool-foundry/undercool/internal/curve"
)

// Options steer the detector. The zero value analyses a finished cast-iron
// curve.
type Options struct {
	Family Family

	// Live says more readings may follow. Problems that only the end of a
	// recording can establish ("ended-early", "no-pour", "too-few") are then
	// left out; everything else, the points included, is identical, with
	// one exception the end alone can establish: a eutectic plateau that the
	// recording's end interrupts is settled only with Live false (see
	// cutPlateau; after a fault it is settled either way). Call with Live
	// false once the sample has ended to get the offline answer.
	Live bool

	// EutecticTopC overrides the family's hint: an arrest above this
	// temperature, °C, is the primary (liquidus) arrest; the first one at or
	// below it is the eutectic. 0 keeps the family default (see Hints).
	EutecticTopC float64

	// Hints replaces the family's hints when it is not the zero value
	// (an alloy entry of a limits file that carries its own detection
	// windows; see limits.Book.Resolve). EutecticTopC above still
	// overrides its EutecticTopC.
	Hints Hints
}

// Range is a temperature window, °C; the zero value is open.
type Range struct {
	LoC, HiC float64
}

// Open reports whether the window sets no bounds.
func (r Range) Open() bool { return r == Range{} }

// Holds reports whether c, °C, lies in the window (always, when it is
// open).
func (r Range) Holds(c float64) bool { return r.Open() || c >= r.LoC && c <= r.HiC }

// Hints are the family's expectations the detector uses. They steer, they
// never make a point: every point still comes from the curve's own T'.
type Hints struct {
	MinPourC     float64 // a pour must reach this reading, °C
	EutecticTopC float64 // arrests above are primary arrests; +Inf: the first arrest is the plateau
	SmoothS      float64 // Savitzky–Golay window for T, s
	SlopeS       float64 // Savitzky–Golay window for T', s
	ConfirmS     float64 // T' must stay above its minimum this long to settle the end of freezing, s

	// Plausible windows of the arrests, °C (zero: open): a point outside
	// its window is not that point.
	Liquidus Range
	Eutectic Range
	// FixedPointC is the freezing point of a pure-metal check cup, °C
	// (0: not a check cup).
	FixedPointC float64
}

// FamilyHints returns the hints for a family (the zero Family is iron).
// Temperature windows (practice, memory): the iron graphite eutectic sits
// near 1130–1160 °C and hypoeutectic liquidus arrests above it; the white
// (cementite) eutectic near 1100–1148 °C; the Al-Si eutectic at 577 °C
// binary (Murray and McAlister, Bull. Alloy Phase Diagrams 5 (1984) 74;
// recalled), 560–577 °C in casting alloys, with α-Al liquidus arrests near
// 600–640 °C; a pure metal freezes on one plateau.
//
// The eutectic windows (Hints.Eutectic) are what no eutectic of the
// family can lie outside: Al-Si at or below the binary eutectic, 577 °C,
// and above 545 °C, below a strongly modified melt's depressed eutectic
// (Sr or Na lower it by up to about 10 K, and the undercooled minimum lies
// a few kelvin lower again; measured modified A356-class cups freeze their
// eutectic near 559–565 °C, docs/analysis.md); iron 1070–1180 °C and white
// iron 1050–1160 °C, around the stable (graphite) and metastable
// (cementite) eutectics of 1 to 3.5 % Si, until limits.Resolution
// WithChemistry narrows them to the sample's own Tst and Tmst
// (internal/metal).
func FamilyHints(f Family) Hints {
	switch f {
	case FamilyWhite:
		return Hints{MinPourC: 1000, EutecticTopC: 1160, SmoothS: 2, SlopeS: 4, ConfirmS: 8, Eutectic: Range{1050, 1160}}
	case FamilyAluminum:
		return Hints{MinPourC: 560, EutecticTopC: 590, SmoothS: 3, SlopeS: 6, ConfirmS: 10, Eutectic: Range{AlSiEutecticLowC, AlSiEutecticC}}
	case FamilyPure:
		return Hints{MinPourC: 150, EutecticTopC: math.Inf(1), SmoothS: 2, SlopeS: 4, ConfirmS: 8}
	case FamilyEutectic:
		// Without the entry's windows (Resolve sets them) the first arrest
		// is taken for the eutectic, as for a pure metal.
		return Hints{MinPourC: 150, EutecticTopC: math.Inf(1), SmoothS: 2, SlopeS: 4, ConfirmS: 8}
	default:
		return Hints{MinPourC: 1000, EutecticTopC: 1170, SmoothS: 2, SlopeS: 4, ConfirmS: 8, Eutectic: Range{1070, 1180}}
	}
}

// The Al-Si eutectic window: the binary eutectic (Murray and McAlister
// 1984, recalled) and the lowest eutectic minimum of a strongly modified
// casting alloy (see FamilyHints), °C.
const (
	AlSiEutecticC    = 577
	AlSiEutecticLowC = 545
)

// hints are the options' own hints, or the family's.
func (o Options) hints() Hints {
	if o.Hints != (Hints{}) {
		return o.Hints
	}
	return FamilyHints(o.Family)
}

// Limits of the raw reading and the detector's fixed thresholds.
const (
	MaxValidC      = 1800 // above: thermocouple fault (open circuit pegs high, no cup gets this hot)
	MinValidC      = -50  // below: thermocouple fault (reversed or open)
	SpikeMinC      = 3    // smallest spike removed, °C
	MinRateHz      = 0.5  // slower logging is taken for a wrong time column
	MaxRateHz      = 2000 // so is faster
	StepFaultC     = 30   // a sustained jump of more than this between readings after the pour is a fault, °C
	NoisyC         = 1.0  // noise above this, °C (robust σ), makes the curve untrustworthy
	pourDropC      = 3    // the pour peak is settled once the reading is this far below it, °C
	rateReadings   = 21   // readings whose median interval fixes the sample rate
	slopeFloor     = 0.02 // smallest hysteresis on T', °C/s
	promFloor      = 0.05 // smallest prominence of an arrest in T', °C/s
	dropFloor      = 0.3  // smallest temperature drop that settles a recalescence maximum, °C
	promShare      = 0.15 // an arrest's prominence is at least this share of the preceding minimum of |T'|
	longFactor     = 2    // refinement window of a flat eutectic arrest, in SlopeS
	shortShare     = 0.03 // see solidusPoint
	negShare       = 0.05 // see longArrest
	holdShare      = 0.2  // see settle
	flatShare      = 0.2  // see solidusPoint
	belowWindowC   = 10   // see noDistinctEnd, °C
	sharpGain      = 1.1  // see steepestStep
	dipSigmas      = 3    // see solidusWindow
	stepShare      = 0.1  // see steepestStep
	sharpStepShare = 0.2  // see steepestStep
	sharpShare     = 0.65 // see sharpFall
	locShare       = 0.15 // see solidusPoint
	fallShare      = 0.04 // an arrest's fall is at least this share of |T'|min before it
	blockRangeC    = 60   // a 2 s noise block spanning more than this is the pour, not noise, °C
)

// Stable problem codes.
const (
	CodeNoPour     = "no-pour"
	CodeFault      = "tc-fault"
	CodeEndedEarly = "ended-early"
	CodeTooFew     = "too-few"
	CodeTimeOrder  = "time-order"
	CodeNoisy      = "too-noisy"
	CodeRate       = "odd-rate"
	// CodeEutecticWindow: the arrest taken for the eutectic lies outside
	// the alloy's eutectic window (Hints.Eutectic).
	CodeEutecticWindow = "eutectic-window"
	// CodeNoEnd: the curve cooled well below the eutectic window without a
	// distinct end of freezing (not fatal).
	CodeNoEnd = "no-end-of-freezing"
)

// Analyze finds the characteristic points of the curve temp(t), t in s and
// temp in °C, both of the same length. Fed the first k readings of a live
// sample it reports only the points already settled by then; fed the whole
// curve it gives the offline answer.
//
// The method (point definitions in docs/analysis.md):
//   - readings whose time does not increase are dropped ("time-order");
//     a reading that is NaN, infinite, above MaxValidC or below MinValidC, or
//     a jump of more than StepFaultC that outlasts the spike test after the
//     pour, ends the usable data ("tc-fault"); points settled before stay;
//   - the sample rate is the median interval of the first 21 readings, and
//     every window is set in seconds from it (2 Hz to 200 Hz); a rate outside
//     MinRateHz … MaxRateHz stops the analysis ("odd-rate");
//     single-sample spikes are replaced by their neighbours' mean
//     (curve.SpikeAt, threshold max(SpikeMinC, 6σ) plus the local slope);
//   - σ, the noise, is the median of curve.NoiseFast over 2 s blocks (at
//     least 16 readings; not those spanning the pour), using only blocks
//     already complete at each reading, so every decision depends on the
//     data up to a fixed distance after it and never on later data; until
//     a block after the pour has ended, the arrest search takes σ from the
//     readings since it began (earlyNoise);
//   - T is the quadratic Savitzky–Golay smoothing over Hints.SmoothS and T'
//     the quadratic Savitzky–Golay derivative over Hints.SlopeS; at the start
//     T is the polynomial of the first window (scipy's "interp"), and T' is
//     not computed over the first half-window, which the arrest search
//     never reaches (it begins half a T' window after the pour peak); the
//     last half-window of a curve is never used for a point, so a point is
//     only reported once no further reading can change it;
//   - the pour peak is the highest despiked reading once the curve has
//     stayed pourDropC below it for 0.5 s without climbing back by
//     pourDropC (a spike on a slow rise is followed by readings below it
//     that still rise), or has not risen above it for
//     shortArrest (and it reached Hints.MinPourC): a cup poured barely above
//     its first arrest (a short or cold pour, a pure metal poured within a
//     few kelvin of its freezing point) falls from the peak straight onto
//     that arrest and never drops pourDropC until the arrest is over, while
//     no pour transient (filling takes seconds, practice) stays below its
//     highest reading for three T' windows; the arrest search begins half a
//     T' window after the peak (where T' no longer reaches back over it),
//     going back there when the peak is confirmed later. Where no reading
//     fell pourDropC below the peak before it was confirmed and T' there is
//     already within P of zero, the search begins inside the arrest the pour
//     fell onto (its rise is the fall from the peak);
//   - an arrest is a local maximum of T' that rises max(P, 0.15·|T'min|)
//     above the minimum T'min before it and falls max(P, 0.04·|T'min|) after
//     it, P = max(0.05 °C/s, 8σ_T');
//   - recalescence: sign changes of T' count only past a hysteresis
//     h = max(0.02 °C/s, 4σ_T'). T' > +h confirms it; the minimum is T at
//     the last − → + crossing of T' before that, the maximum T at the
//     first crossing + → − after T' was last above +h, settled when T' < −h or T
//     has fallen max(0.3 °C, 6σ_T) below it. Noise crossings on a flat
//     plateau are thus never taken for the underlying one. An arrest that
//     stays below +h is looked at again on a T' window twice as long
//     (refineMax): if that T' turns positive the arrest recalesces after
//     all (crossings as above);
//   - without recalescence the liquidus is T at the local maximum of T'
//     (refined to a fraction of a sample) and the eutectic point is T where
//     the longer-window T' first comes within 2σ of its maximum;
//   - the eutectic is the first long arrest at or below Hints.EutecticTopC
//     (the single plateau of a pure metal); the first arrest before it, above
//     EutecticTopC or short, is the liquidus arrest, and once a liquidus is
//     found the next long arrest is the eutectic whatever its temperature.
//     An arrest is long when T' came within max(P, 0.05·|T'min|) of zero and
//     stayed above halfway from the cooling before it (the lowest T' over
//     3·Hints.SlopeS before its rise) to min(T'max, 0) for 3·Hints.SlopeS (a
//     eutectic's large latent heat holds T' near zero for tens of seconds; a
//     grey-iron liquidus 10–40 °C above the eutectic, inside the hint
//     window, lasts a few seconds or keeps T' clearly negative). An arrest
//     whose kind hangs on its length and that settles sooner is held
//     (settle): long if T' then stays within max(P, 0.2·(top − cooling
//     before)) of its top (zero after a recalescence) for 3·Hints.SlopeS,
//     short once it falls below that. A pure metal's arrest without
//     recalescence whose T' has reached zero is long as soon as it has
//     lasted 3·Hints.SlopeS, and settles then (plateauHeld) without
//     waiting for T' to fall. Liquidus is null when no arrest precedes
//     the eutectic;
//   - the alloy's windows (Hints.Eutectic, Hints.Liquidus): an arrest
//     reaching above the eutectic window is a primary arrest, the liquidus
//     only inside the liquidus window; an arrest taken for the eutectic
//     whose minimum lies below the window leaves the eutectic null with a
//     fatal "eutectic-window" problem, and the analysis ends there;
//   - a real recalescence outranks an earlier shoulder: after a eutectic
//     without recalescence, T' that falls by more than P and then rises past
//     +h reopens the search (shoulderPassed, reopen), and the recalescence
//     becomes the eutectic; after a eutectic with recalescence the same
//     reopens it too, and the next recalescence becomes the eutectic only
//     if its minimum lies below the earlier one's and it rises more than
//     twice as much (outranks: the earlier was the wall's arrest lifting
//     the centre's T' just above zero), else the earlier is restored; the
//     eutectic is therefore provisional until the end of freezing settles
//     (not on a pure metal, whose single plateau is never reopened);
//   - the start of eutectic freezing is T at the largest T″ (the central
//     difference of T' over half a T' window) between the last local
//     minimum of T' (by the hysteresis h) before the eutectic minimum and the
//     minimum (eutecticStart);
//   - the end of freezing is T at the most negative T' after the eutectic,
//     settled when no lower T' has followed for Hints.ConfirmS seconds and
//     the drop below the plateau's T' is at least P and a third of the
//     liquid's cooling rate; it is placed on the shortest window, down from
//     half the T' window, on which the dip is sharper and the noise small
//     against it (solidusWindow), and on a flat-bottomed dip from where T'
//     first reached the bottom (solidusPoint). A curve that cools 10 °C
//     below the eutectic window without such a dip has no distinct end of
//     freezing ("no-end-of-freezing", not fatal);
//   - a point shown live before its arrest's shape is complete is
//     Point.Provisional (the minimum of a recalescence whose kind a window
//     may still change, the eutectic until the end of freezing settles);
//     once confirmed it never changes, and the offline answer has no
//     provisional point;
//   - where the usable data end (the recording stops, or a fault) on a long
//     eutectic plateau before T' has fallen, the eutectic is settled from
//     the data seen, as if T' fell at the last reading examined; its
//     maximum needs the + → − crossing where it recalesced, and the end of
//     freezing stays null ("ended-early" or the fault says why). Points
//     settled before a fault are kept; a point the fault cuts off is null;
//   - the plateau lasts from the eutectic minimum until T' has fallen
//     halfway from its eutectic value to its value at the end of freezing;
//     the freezing time runs from the first arrest point (liquidus minimum,
//     liquidus or eutectic minimum) to the end of freezing; the cooling rate
//     is the mean slope of T over the 10 s before T' has risen halfway into
//     the first arrest.
//
// Analyze takes its work space from a pool of Analyzers (safe for
// concurrent use); no later call touches a Result it returned (an
// Analyzer starts its problem list afresh on every new curve).
func Analyze(t, temp []float64, opt Options) Result {
	a := analyzers.Get().(*Analyzer)
	a.Reset()
	a.reserve = len(t)
	r := a.Analyze(t, temp, opt)
	a.ts, a.raw = nil, nil // keep no reference to the caller's readings
	analyzers.Put(a)
	return r
}

// analyzers is the work space of Analyze.
var analyzers = sync.Pool{New: func() any { return new(Analyzer) }}

// Analyzer holds reusable work space and the state of a growing curve, so
// that repeated live calls do not allocate and do not redo settled work:
// each call processes only the readings added since the previous one.
// Which curve it analyses is said, not guessed: Reset starts a new curve,
// and Extend (Analyze) takes the same curve grown, whose first readings are
// those passed before, unchanged. It starts afresh by itself only where
// that contract cannot hold: other options than Live, or fewer readings
// than it has seen. The zero value is ready to use; it is not safe for
// concurrent use.
type Analyzer struct {
	opt     Options
	h       Hints
	reserve int
	ready   bool

	nIn       int     // input readings consumed
	goodT     int     // readings whose time was in order
	lastGoodT float64 // time of the last of them
	badTime   int
	limit     int   // once done: the last reading the result depends on
	probAt    []int // reading index (accepted) of each problem
	spikes    []int // indices of the despiked readings
	stopped   bool  // a fault or noise ended the usable data
	end       int   // raw readings usable (when stopped)

	ts, raw       []float64 // accepted readings: views of the caller's slices until one is dropped
	own           bool      // ts and raw are copies in tsBuf, rawBuf
	tsBuf, rawBuf []float64
	curF, curD    sigCursor // noise look-ups of the filter and the detector
	x             []float64 // despiked readings
	d             []float64 // T' (°C/s; NaN over the first half-window); the smoothed T is computed where needed (sm)

	rate, dt        float64
	ws, wd          int
	ks, kd          *curve.Kernel
	dl              []float64 // work space: T' over a longer window
	gainS, gainD    float64   // noise gains of T and T' (per °C of σ)
	block           int       // noise block length, readings
	blockSig        []float64
	sigByCount      []float64 // median σ of the first k blocks
	validByCount    []int     // valid block estimates among the first k blocks
	sorted          []float64 // work space for the median
	xmax            float64
	xmaxI, pourConf int
	pourFlat        bool    // the pour peak was confirmed without the reading falling pourDropC below it
	pourBelow       int     // consecutive readings below the peak by the pour drop, none rising above the first of them by it
	pourFrom        float64 // the first reading of that run, °C

	det   detector
	probs []Problem
}

// detector is the state of the point finder over the settled indices.
type detector struct {
	j     int // next index to examine
	stage stage
	sub   phase
	start int // first index of the current arrest search

	dmin, dmax   float64
	dminI, dmaxI int
	lastAbove    int
	cand         int // index after the + → − crossing, −1 none
	minPt, maxPt Point

	riseI     int     // where T' rose halfway into the current recalescing arrest
	minShown  bool    // the current arrest's minimum has been reported
	haveFirst bool    // the first arrest has been seen (cooling rate set)
	eutRefD   float64 // T' at the eutectic point
	eutRecal  bool    // the eutectic recalesced
	hold      heldArrest

	eutI int

	// earlySum is Σ|third differences| of the readings from earlyFrom+3 to
	// earlyTo−1, kept as the readings behind earlyNoise grow
	earlyFrom, earlyTo int
	earlySum           float64

	// prev is the recalescing eutectic a reopened search may outrank
	// (outranks), kept until the next arrest settles
	prev outrankable

	res Result
}

// outrankable is a recalescing eutectic under review: the search reopened
// after it (shoulderPassed), and the next arrest either outranks it or it
// is restored.
type outrankable struct {
	on      bool
	res     Result
	eutI    int
	eutRefD float64
}

// heldArrest is an arrest settled but not yet classified (see settle).
type heldArrest struct {
	on     bool
	lo, hi Point
	recal  bool
	from   int     // where it was settled
	level  float64 // T' below this makes it short
}

// stage is where the point finder is on the curve. Each transition has one
// rule, made in one place:
//
//	stagePour → stageArrest     the pour peak is confirmed and T' no longer reaches
//	                            back over it (detect)
//	stageArrest → stageArrest   a primary arrest is classified; the search starts
//	                            again after it (arrest)
//	stageArrest → stageSolidus  an arrest is classified as the eutectic (arrest)
//	stageArrest → stageDone     the eutectic lies outside the alloy's window
//	                            (outsideWindow)
//	stageSolidus → stageArrest  T' rises beyond the hysteresis after falling from
//	                            the eutectic: a eutectic that did not recalesce
//	                            was a shoulder, one that did is under review
//	                            (reopen, shoulderPassed)
//	stageArrest → stageSolidus  (under review) the next arrest does not outrank
//	                            the eutectic, which is restored (arrest, outranks)
//	stageSolidus → stageDone    the end of freezing settles (solidus)
//	any → stageDone             too noisy to trust (detect)
type stage uint8

const (
	stagePour    stage = iota // looking for the pour peak
	stageArrest               // looking for the next arrest (phase says where in it)
	stageSolidus              // the eutectic found: looking for the end of freezing
	stageDone                 // nothing more to find
)

// phase is where the arrest search is within one arrest. Its transitions
// (arrestStep, with quietRun skipping the readings that change nothing):
//
//	phaseValley → phaseRise  T' rises max(p, promShare·|T'min|) above its minimum
//	phaseValley, phaseRise → phasePos
//	                         T' passes +h: a recalescence
//	phaseRise → settled      T' falls max(p, fallShare·|T'min|) below its maximum
//	phasePos → settled       after the + → − crossing, T' < −h or T has fallen
//	                         max(dropFloor, 6σ_T) below the maximum
//
// A settled arrest is classified at once, or held (heldArrest, settle)
// while its kind hangs on a length not yet seen.
type phase uint8

const (
	phaseValley phase = iota // T' falling to the minimum before an arrest
	phaseRise                // T' rising into an arrest, below +h
	phasePos                 // T' has passed +h: recalescing
)

// Analyze is Extend, under the name the sample tracker's analyser
// interface uses.
func (a *Analyzer) Analyze(t, temp []float64, opt Options) Result { return a.Extend(t, temp, opt) }

// Extend analyses the curve t (s), temp (°C) of the previous call grown by
// the readings after those it was given then (which must be the first of
// these, unchanged: call Reset for another curve), or the first curve after
// Reset. Only the new readings are processed. With opt.Live the problems
// only the end of a recording establishes are left out (see Options).
// Result.Problems may share storage with the Analyzer; the elements already
// returned are never changed.
func (a *Analyzer) Extend(t, temp []float64, opt Options) Result {
	if len(temp) < len(t) {
		t = t[:len(temp)]
	}
	live := opt.Live
	opt.Live = false
	if !a.ready || opt != a.opt || len(t) < a.nIn {
		a.reset(opt, len(t))
	}
	// The readings are taken ingestStep at a time and analysed as they
	// come, as in live use, so that a whole curve handed over at once is
	// range-checked and filtered only as far as its analysis needs; once it
	// is done (or stopped), the rest is checked for time order alone.
	for k := a.nIn; ; {
		k = min(len(t), k+ingestStep)
		a.ingest(t[:k], temp[:k])
		if a.rate == 0 && len(a.ts) >= rateReadings {
			a.setRate()
		}
		if a.rate > 0 {
			a.run()
		}
		if k == len(t) {
			break
		}
		if a.stopped || a.det.stage == stageDone {
			a.ingest(t, temp)
			break
		}
	}
	return a.result(live)
}

// ingestStep is how many readings Analyze takes in at a time.
const ingestStep = 256

// runStep is how many readings the filter takes ahead of the point finder
// at a time (at least; run rounds up to a noise block), so that the
// analysis of a whole curve stops filtering soon after its end of freezing
// has settled.
const runStep = 64

// run filters and examines the readings taken, runStep at a time, until the
// analysis is done or the readings are used up. Once done, the filter still
// covers every reading up to a.limit, so that the spikes and faults that
// count are those a filter of the whole curve finds there.
func (a *Analyzer) run() {
	for a.det.stage != stageDone {
		// at least runStep readings more, up to the end of a noise block,
		// so that the filter's runs (one per block) are not split
		upto := (len(a.x) + runStep + a.block - 1) / a.block * a.block
		a.filter(upto)
		a.detect()
		if a.det.stage == stageDone {
			a.filter(a.limit + 1)
			return
		}
		if len(a.x) < upto {
			return // the filter reached the end of the usable readings
		}
	}
}

// Reset starts a new curve: the next Extend takes its readings from the
// first.
func (a *Analyzer) Reset() { a.ready = false }

func (a *Analyzer) reset(opt Options, n int) {
	r := a.reserve
	if r == 0 {
		r = max(n, 4096)
	}
	if cap(a.x) < r {
		a.x, a.d = make([]float64, 0, r), make([]float64, 0, r)
	}
	if cap(a.blockSig) < 64 {
		slab := make([]float64, 3*256+1)
		a.blockSig, a.sigByCount, a.sorted = slab[:0:256], slab[256:256:513], slab[513:513]
		a.validByCount = make([]int, 0, 257)
	}
	*a = Analyzer{
		opt: opt, h: opt.hints(), reserve: a.reserve,
		tsBuf: a.tsBuf[:0], rawBuf: a.rawBuf[:0], dl: a.dl[:0], x: a.x[:0], d: a.d[:0],
		blockSig: a.blockSig[:0], sigByCount: append(a.sigByCount[:0], 0), sorted: a.sorted[:0],
		validByCount: append(a.validByCount[:0], 0),
		ready:        true, probs: nil, probAt: a.probAt[:0], spikes: a.spikes[:0], end: math.MaxInt, limit: math.MaxInt, xmax: math.Inf(-1), pourConf: -1, // probs never reused: earlier Results share it
	}
	if opt.EutecticTopC != 0 {
		a.h.EutecticTopC = opt.EutecticTopC
	}
	if a.spikes == nil {
		a.spikes = make([]int, 0, 64)
	}
	a.det = detector{stage: stagePour, cand: -1}
}

// problem records a finding at accepted reading index at (the first of
// each code counts).
func (a *Analyzer) problem(at int, code, msg string, fatal bool) {
	for _, p := range a.probs {
		if p.Code == code {
			return
		}
	}
	a.probs = append(a.probs, Problem{Code: code, Message: msg, Fatal: fatal})
	a.probAt = append(a.probAt, at)
}

// ingest takes the new readings: time order, range and noise blocks. The
// time check runs on every reading, before and after a stop, against the
// last reading whose time was in order, so that it depends on the input
// alone.
func (a *Analyzer) ingest(t, temp []float64) {
	ts, raw := a.ts, a.raw // locals: no write barrier per reading
	if !a.own {
		ts, raw = t[:len(ts)], temp[:len(raw)] // the same readings, perhaps moved
	}
	goodT, lastGoodT := a.goodT, a.lastGoodT
	taking := !a.stopped && a.det.stage != stageDone
	i0 := a.nIn
	if taking && !a.own && len(ts) == i0 {
		// Fast path while nothing is dropped: check, and take a view once.
		k := i0
		if k < len(t) && goodT == 0 { // the first time in order: any but NaN
			if ti, v := t[k], temp[k]; ti == ti && v <= MaxValidC && v >= MinValidC {
				goodT, lastGoodT, k = 1, ti, k+1
			}
		}
		if goodT > 0 {
			from := k
			tk := t[k:]
			vk := temp[k:len(t)]
			vk = vk[:len(tk)] // the same length: no bounds checks in the loop
			ok := len(tk)
			for o, ti := range tk {
				if v := vk[o]; !(ti > lastGoodT) || !(v <= MaxValidC && v >= MinValidC) { // NaN fails both
					ok = o
					break
				}
				lastGoodT = ti
			}
			k = from + ok
			goodT += ok
		}
		ts, raw = t[:k], temp[:k]
		i0 = k
	}
	if !taking && goodT > 0 {
		// only the time order counts now: the readings in order are
		// counted here, the general loop takes over at the first that is
		// not (or is NaN)
		ok := inOrder(t[i0:], lastGoodT)
		if ok > 0 {
			lastGoodT = t[i0+ok-1]
		}
		goodT += ok
		i0 += ok
	}
	for i := i0; i < len(t); i++ {
		ti, v := t[i], temp[i]
		if math.IsNaN(ti) || goodT > 0 && !(ti > lastGoodT) {
			a.badTime++
			a.problem(len(ts), CodeTimeOrder, fmt.Sprintf("time goes backwards or repeats at reading %d (t = %g s); such readings were left out", i+1, ti), true)
			continue
		}
		goodT++
		lastGoodT = ti
		if !taking {
			continue
		}
		if math.IsNaN(v) || v > MaxValidC || v < MinValidC {
			a.stop(len(raw), len(raw), CodeFault, fmt.Sprintf("thermocouple fault: reading %g °C at %.1f s (open circuit or out of range); the curve after it was not analysed", v, ti))
			taking = false
			continue
		}
		switch {
		case !a.own && len(ts) == i:
			ts, raw = t[:i+1], temp[:i+1] // no reading dropped yet: a view, no copy
		case !a.own:
			a.tsBuf = append(a.tsBuf[:0], ts...)
			a.rawBuf = append(a.rawBuf[:0], raw...)
			ts, raw = a.tsBuf, a.rawBuf
			a.own = true
			fallthrough
		default:
			ts = append(ts, ti)
			raw = append(raw, v)
		}
	}
	a.nIn = max(a.nIn, len(t))
	a.goodT, a.lastGoodT = goodT, lastGoodT
	a.ts, a.raw = ts, raw
	if a.own {
		a.tsBuf, a.rawBuf = ts, raw
	}
}

// inOrder is the number of leading times of t that increase strictly from
// last (a NaN stops the count). Not inlined: on its own the loop keeps its
// counter in a register.
//
//go:noinline
func inOrder(t []float64, last float64) int {
	for o, ti := range t {
		if !(ti > last) {
			return o
		}
		last = ti
	}
	return len(t)
}

func (a *Analyzer) stop(at, end int, code, msg string) {
	if a.stopped {
		return
	}
	a.stopped = true
	a.end = end
	a.problem(at, code, msg, true)
}

func (a *Analyzer) setRate() {
	var iv [rateReadings - 1]float64
	for i := range iv {
		iv[i] = a.ts[i+1] - a.ts[i]
	}
	slices.Sort(iv[:])
	a.dt = iv[len(iv)/2]
	a.rate = 1 / a.dt
	switch {
	case a.rate < MinRateHz:
		a.stop(0, 0, CodeRate, fmt.Sprintf("the readings are %.4g s apart (%.4g per second); a cup's arrests need at least %g readings per second to be found: if the time column is not in seconds, give its unit (--time-unit); a logger this slow cannot be analysed", a.dt, a.rate, float64(MinRateHz)))
	case a.rate > MaxRateHz:
		a.stop(0, 0, CodeRate, fmt.Sprintf("the readings are %.4g s apart (%.4g per second); cup curves are logged at %g to %g readings per second: is the time column in seconds? (if not, give its unit: --time-unit)", a.dt, a.rate, float64(MinRateHz), float64(MaxRateHz)))
	}
	h := a.h
	a.ws = curve.WindowSamples(h.SmoothS, a.rate, 2, 5)
	a.wd = curve.WindowSamples(h.SlopeS, a.rate, 2, 5)
	a.ks, a.kd = curve.SavGol(a.ws, 2, 0), curve.SavGol(a.wd, 2, 1)
	a.gainS = a.ks.NoiseGain()
	a.gainD = a.kd.NoiseGain() / a.dt
	a.block = max(16, int(math.Round(2*a.rate)))
}

// noiseBlocks estimates σ for the blocks up to block need−1 (those behind
// sigma at the indices of block need) whose readings have all arrived.
func (a *Analyzer) noiseBlocks(need int) {
	for len(a.blockSig) < need {
		b := len(a.blockSig)
		hi := (b+1)*a.block + 1
		if hi > len(a.raw) || hi > a.end {
			return
		}
		blk := a.raw[b*a.block : hi]
		est, within := curve.NoiseFastWithin(blk, blockRangeC)
		sig := math.NaN() // a block spanning the pour says nothing about noise
		if within {
			sig = est
			// insert in order, after the estimates not above it (a binary
			// search: "above" holds for a suffix of the sorted list), so
			// in the order slices.BinarySearch and slices.Insert give
			// (equal values are alike; a NaN, which readings in range
			// cannot give, goes first as there)
			srt := append(a.sorted, sig)
			p, top := 0, len(srt)-1
			for p < top && sig == sig {
				if m := int(uint(p+top) >> 1); srt[m] > sig {
					top = m
				} else {
					p = m + 1
				}
			}
			copy(srt[p+1:], srt[p:len(srt)-1])
			srt[p] = sig
			a.sorted = srt
		}
		a.blockSig = append(a.blockSig, sig)
		// median of the valid estimates among the first b+1 blocks (kept sorted)
		tmp := a.sorted
		m := 0.0
		if len(tmp) > 0 {
			m = tmp[len(tmp)/2]
			if len(tmp)%2 == 0 {
				m = (tmp[len(tmp)/2-1] + m) / 2
			}
		}
		a.sigByCount = append(a.sigByCount, m)
		a.validByCount = append(a.validByCount, len(tmp))
	}
}

// sigCursor caches the noise estimate over one block of indices.
type sigCursor struct {
	lo, hi int
	v      float64
}

// sigmaAt is sigma(i) through a cursor: a division only once per block.
func (a *Analyzer) sigmaAt(c *sigCursor, i int) float64 {
	if i >= c.lo && i < c.hi {
		return c.v
	}
	k := i / a.block
	c.lo, c.hi = k*a.block, (k+1)*a.block
	if k >= len(a.sigByCount) {
		k = len(a.sigByCount) - 1
		c.hi = c.lo // not final yet: do not cache
	}
	c.v = a.sigByCount[k]
	return c.v
}

// sigma is the noise estimate usable at raw index i: from blocks that end at
// or before i.
func (a *Analyzer) sigma(i int) float64 {
	k := i / a.block
	if k >= len(a.sigByCount) {
		k = len(a.sigByCount) - 1
	}
	if k < 0 {
		return 0
	}
	return a.sigByCount[k]
}

// earlyNoise is the noise σ the arrest search judges T' at index j against
// while no noise block after the pour has ended (validBlocks is 0): from
// the third differences e = x[i] − 3x[i−1] + 3x[i−2] − x[i−3] of the
// despiked readings from the search's start to the last one T' at j uses,
// σ = mean|e|·√(π/2)/√20 (white noise gives e the variance 20σ², and a
// bend of the curve up to a parabola none), 0 for fewer than five
// readings. A slow logger ends its first whole block after the pour half a
// minute in (16 readings a block at 1 Hz); until then σ would be 0, the
// thresholds their floors, and the wobble of a noisy T' on the cooling
// liquid would pass for a primary arrest (simulated iron cups at 1 Hz:
// liquidus 50–140 °C high). The sum grows with the readings (det.earlySum),
// one term a reading.
func (a *Analyzer) earlyNoise(j int) float64 {
	e := &a.det
	from, to := e.start, min(j+a.wd/2+1, len(a.x))
	if to-from < 5 {
		return 0
	}
	if e.earlyFrom != from || e.earlyTo < from+3 || e.earlyTo > to {
		e.earlyFrom, e.earlyTo, e.earlySum = from, from+3, 0
	}
	x := a.x
	for i := e.earlyTo; i < to; i++ {
		e.earlySum += math.Abs(x[i] - 3*x[i-1] + 3*x[i-2] - x[i-3])
	}
	e.earlyTo = to
	return e.earlySum / float64(to-from-3) * math.Sqrt(math.Pi/2) / math.Sqrt(20)
}

// validBlocks is the number of valid noise blocks behind sigma(i).
func (a *Analyzer) validBlocks(i int) int {
	return a.validByCount[min(i/a.block, len(a.validByCount)-1)]
}

// filter despikes and differentiates every reading before upto whose
// windows are complete (the noise blocks it needs are estimated first).
func (a *Analyzer) filter(upto int) {
	n := min(len(a.raw), a.end)
	raw := a.raw[:n]
	x := a.x // locals in the hot loops: no write barrier per reading
	pourRun := max(3, int(math.Round(0.5*a.rate)))
	// The noise of every block the chunk needs first (the runs below, at
	// i < min(upto, n), use blocks before i / block): the estimates depend
	// on the raw readings alone, and taken together they no longer wait,
	// block by block, on the despiking in between.
	a.noiseBlocks(min(upto, n) / a.block)
	for i := len(x); i < upto && i+2 < n && n >= 5; {
		// a run of readings that share one noise estimate: the rest of
		// i's block, or one reading while the estimate is not final
		sig := a.sigmaAt(&a.curF, i)
		end := i + 1
		if a.curF.hi > a.curF.lo {
			end = min(n-2, a.curF.hi, upto)
		}
		var maxStep float64
		x, a.spikes, maxStep = curve.DespikeRun(x, a.spikes, raw, i, end, SpikeMinC, sig)
		// pour confirmation and the sustained-step fault, both on the despiked readings
		k := i
		for ; k < end && a.pourConf < 0; k++ {
			v := x[k]
			if v > a.xmax {
				a.xmax, a.xmaxI = v, k
			}
			drop := max(pourDropC, 10*sig)
			switch {
			case a.xmax < a.h.MinPourC || v > a.xmax-drop:
				a.pourBelow = 0
			case a.pourBelow == 0 || v > a.pourFrom+drop:
				// a new run: the first below the peak, or one rising again
				a.pourBelow, a.pourFrom = 1, v
			default:
				a.pourBelow++
			}
			// the fall must last half a second (at least 3 readings) without
			// rising again: a spike on the rise is no peak, even where the
			// rise takes longer than that to climb past it
			// or the reading has stayed below the peak for shortArrest
			// (see Analyze: a pour barely above the first arrest)
			if a.pourBelow >= pourRun || a.xmax >= a.h.MinPourC && a.ts[k]-a.ts[a.xmaxI] >= a.shortArrest() {
				a.pourConf, a.pourFlat = k, slices.Min(x[a.xmaxI:k+1]) > a.xmax-pourDropC
			}
		}
		k = max(k, 1) // ≤ end, as end > i
		last := end
		if maxStep <= StepFaultC {
			// no step within the run can be a fault: only the one into it
			last = min(end, max(k, i+1))
		}
		prev := x[k-1] // the previous reading, carried: no bounds checks in the loop
		for o, v := range x[k:last] {
			if math.Abs(v-prev) > StepFaultC {
				k += o
				a.stop(k, len(a.raw), CodeFault, fmt.Sprintf("thermocouple fault: the reading jumped from %.1f to %.1f °C at %.1f s and stayed; the curve after it was not analysed", x[k-1], v, a.ts[k]))
				a.end = k
				x = x[:k]
				for len(a.spikes) > 0 && a.spikes[len(a.spikes)-1] >= k {
					a.spikes = a.spikes[:len(a.spikes)-1]
				}
				break
			}
			prev = v
		}
		if a.stopped && a.end <= end {
			break
		}
		i = end
	}
	a.x = x
	hs, hd := a.ws/2, a.wd/2
	hm := max(hs, hd)
	if len(x) < max(a.ws, a.wd) {
		return
	}
	d := a.d
	// T' of the first half-window is never looked at (the arrest search
	// begins half a window and more after the pour peak): NaN, not computed
	for j := len(d); j < hd && j+hm < len(x); j++ {
		d = append(d, math.NaN())
	}
	if j := len(d); j+hm < len(x) {
		d = a.appendSlopes(d, a.kd, j, len(x)-hm)
	}
	a.d = d
}

// appendSlopes appends to dst the first derivative of the despiked
// readings by kernel k (quadratic Savitzky–Golay, curve.SavGol(w, 2, 1)) at
// samples from … to−1, °C/s; every one of them must have its whole window
// (from ≥ w/2, to−1+w/2 < len(a.x)).
func (a *Analyzer) appendSlopes(dst []float64, k *curve.Kernel, from, to int) []float64 {
	return k.AppendGrowing(dst, a.x, from, to, a.dt)
}

// crossing interpolates the zero crossing of T' between indices k and k+1.
func (a *Analyzer) crossing(k int) Point {
	d0, d1 := a.d[k], a.d[k+1]
	f := 0.0
	if d1 != d0 {
		f = d0 / (d0 - d1)
	}
	f = max(0, min(1, f))
	return Point{
		TempC: a.sm(k) + f*(a.sm(k+1)-a.sm(k)),
		TimeS: a.ts[k] + f*(a.ts[k+1]-a.ts[k]),
		OK:    true,
	}
}

// sm is the smoothed T at sample i (quadratic Savitzky–Golay over
// Hints.SmoothS), computed where a point needs it rather than for every
// reading.
func (a *Analyzer) sm(i int) float64 { return a.ks.AtGrowing(a.x, i, 1) }

func (a *Analyzer) at(i int) Point { return Point{TempC: a.sm(i), TimeS: a.ts[i], OK: true} }

// extremum refines a local extremum of T' at sample i to a fraction of a
// sample: the vertex of the parabola through T' at i−1, i, i+1, and T there
// by quadratic interpolation of the smoothed T. Without it a point would be
// off by up to T'·dt/2 at low sample rates.
func (a *Analyzer) extremum(i int) Point {
	if i < 1 || i+1 >= len(a.d) {
		return a.at(i)
	}
	return a.vertex(i, a.d[i-1], a.d[i], a.d[i+1])
}

// vertex interpolates T and t at the vertex of the parabola through the
// derivative values d0, d1, d2 at samples i−1, i, i+1.
func (a *Analyzer) vertex(i int, d0, d1, d2 float64) Point {
	den := d0 - 2*d1 + d2
	f := 0.0
	if den != 0 {
		f = max(-0.5, min(0.5, 0.5*(d0-d2)/den))
	}
	s0, s1, s2 := a.sm(i-1), a.sm(i), a.sm(i+1)
	temp := s1 + f*(s2-s0)/2 + f*f*(s0-2*s1+s2)/2
	var ts float64
	if f >= 0 {
		ts = a.ts[i] + f*(a.ts[i+1]-a.ts[i])
	} else {
		ts = a.ts[i] + f*(a.ts[i]-a.ts[i-1])
	}
	return Point{TempC: temp, TimeS: ts, OK: true}
}

// detect runs the point finder over the indices settled since the last call.
func (a *Analyzer) detect() {
	e := &a.det
	lastSig, h, p := math.NaN(), 0.0, 0.0
	for ; e.j < len(a.d) && e.stage != stageDone; e.j++ {
		j := e.j
		d := a.d[j]
		sig := a.sigmaAt(&a.curD, j)
		early := e.stage != stagePour && a.validBlocks(j) == 0
		if early {
			sig = a.earlyNoise(j)
		}
		if e.stage != stagePour && sig > NoisyC && a.validBlocks(j) >= 5 {
			// Too noisy: nothing from here on is used.
			a.stop(j, len(a.raw), CodeNoisy, fmt.Sprintf("too noisy to trust: the reading scatters by about %.1f °C (more than %.1f °C) from %.0f s on; check the thermocouple, its wiring and earthing", sig, float64(NoisyC), a.ts[j]))
			e.stage = stageDone
			a.limit = a.xAvail(j) + 2
			break
		}
		if sig != lastSig { // the thresholds change only with the noise estimate
			lastSig = sig
			sd := sig * a.gainD
			h = max(slopeFloor, 4*sd)
			p = max(promFloor, 8*sd)
		}
		// indices j … end−1 share this noise estimate (and so h and p)
		end := j + 1
		if !early && a.curD.hi > a.curD.lo {
			end = min(len(a.d), a.curD.hi)
		}
		switch e.stage {
		case stagePour:
			// the arrest search starts once T' no longer reaches back over
			// the peak into the pour, where the spike test must let steep
			// readings through
			if a.pourConf < 0 {
				e.j = len(a.d) - 1 // not confirmed in the readings filtered so far
				continue
			}
			if start := a.xmaxI + a.wd/2 + 2; j != start {
				// from half a T' window after the peak, going back to it
				// where the peak was confirmed later
				e.j = min(start, len(a.d)) - 1
				continue
			}
			e.res.PourPeak = Point{TempC: a.x[a.xmaxI], TimeS: a.ts[a.xmaxI], OK: true}
			e.stage = stageArrest
			e.startArrest(j, d)
			if a.pourFlat && d >= -p {
				// the pour fell straight onto an arrest (a cup poured within
				// a few kelvin of it: the reading never fell pourDropC below
				// the peak): T' is within the prominence of zero already, so
				// no rise into the arrest can follow, and the fall from the
				// peak was the arrest's valley
				e.sub, e.dmax, e.dmaxI = phaseRise, d, j
			}
		case stageArrest:
			if e.hold.on {
				a.holding(j, d)
				continue
			}
			if e.j = a.quietRun(j, end, h, p); e.j == end {
				e.j--
				continue
			}
			a.arrestStep(e.j, a.d[e.j], h, p)
		case stageSolidus:
			// the end of freezing settles once the drop below the
			// plateau's T' is large enough and no lower T' has followed
			// for ConfirmS
			need := max(p, math.Abs(e.res.CoolingRateCps)/3)
			dmin, dminI := e.dmin, e.dminI
			dd, ts, confirm := a.d[:end], a.ts, a.h.ConfirmS
			floor := a.solidFloor() // see noDistinctEnd and solidDip
			back, below := false, false
			for ; j < end; j++ {
				v := dd[j]
				if v < dmin {
					dmin, dminI = v, j
				}
				if back = a.shoulderPassed(j, v, dmin, h, p); back {
					break
				}
				if ts[j]-ts[dminI] >= confirm && (e.eutRefD-dmin >= need || a.x[j] < floor && a.solidDip(v, dmin, h, p)) {
					break
				}
				if below = a.x[j] < floor && e.eutRefD-dmin < need && a.h.Eutectic != (Range{}); below {
					break
				}
			}
			e.dmin, e.dminI = dmin, dminI
			if j == end {
				e.j = end - 1
				continue
			}
			e.j = j
			switch {
			case back:
				a.reopen(j, dd[j])
				continue
			case below:
				a.noDistinctEnd(j)
				continue
			}
			a.solidus()
		}
	}
}

// quietRun advances the arrest search over the indices from j before end
// at which only the running minimum (before the rise into an arrest) or
// maximum (on the rise, and while T' stays positive in a recalescence whose
// minimum is shown and no + → − crossing is pending, with the last index
// above +h) of T' changes, and returns the first index at which arrestStep
// has more to do, or end: arrestStep at every index in a loop, without the
// calls.
func (a *Analyzer) quietRun(j, end int, h, p float64) int {
	e := &a.det
	d := a.d[:end]
	switch e.sub {
	case phaseValley:
		dmin, dminI := e.dmin, e.dminI
		rise := dmin + max(p, promShare*math.Abs(dmin))
		for ; j < end; j++ {
			v := d[j]
			if v < dmin {
				dmin, dminI = v, j
				rise = dmin + max(p, promShare*math.Abs(dmin))
			}
			if v > h || v > rise {
				break
			}
		}
		e.dmin, e.dminI = dmin, dminI
	case phaseRise:
		dmax, dmaxI := e.dmax, e.dmaxI
		fall := dmax - max(p, fallShare*math.Abs(e.dmin))
		single := !a.reopens()
		for ; j < end; j++ {
			v := d[j]
			if v > dmax {
				dmax, dmaxI = v, j
				fall = dmax - max(p, fallShare*math.Abs(e.dmin))
			}
			if v > h || v < fall || single && a.ts[j]-a.ts[e.start] >= a.shortArrest() {
				break
			}
		}
		e.dmax, e.dmaxI = dmax, dmaxI
	case phasePos:
		if !e.minShown || e.cand >= 0 {
			return j
		}
		dmax, dmaxI, last := e.dmax, e.dmaxI, e.lastAbove
		for ; j < end; j++ {
			v := d[j]
			if !(v > 0) { // a crossing to come (cand stays −1 while T' > 0)
				break
			}
			if v > dmax {
				dmax, dmaxI = v, j
			}
			if v > h {
				last = j
			}
		}
		e.dmax, e.dmaxI, e.lastAbove = dmax, dmaxI, last
	}
	return j
}

func (e *detector) startArrest(j int, d float64) {
	e.sub, e.start = phaseValley, j
	e.dmin, e.dminI = d, j
	e.cand = -1
}

// arrestStep advances the arrest under way by reading j, whose smoothed T'
// is d (°C/s), with hysteresis h and prominence p (°C/s). In the valley
// and the rise it watches for a recalescence (d above h) or a shoulder
// (a rise and fall of T' by the prominence); in the recalescence the
// maximum is T' crossing back to zero, taken as a candidate and settled
// once T' falls below −h or the curve falls below it by the drop (6·σ_T of
// the smoothed curve, at least dropFloor). A candidate is given up when the
// curve rises above it by the drop: noise took T' below zero on a
// slow climb, and the recalescence goes on (TestSlowRisingEutecticMaximum).
func (a *Analyzer) arrestStep(j int, d, h, p float64) {
	e := &a.det
	switch e.sub {
	case phaseValley, phaseRise:
		if e.sub == phaseValley {
			if d < e.dmin {
				e.dmin, e.dminI = d, j
			}
		} else if d > e.dmax {
			e.dmax, e.dmaxI = d, j
		}
		if d > h {
			// recalescence: the minimum is at the last − → + crossing before j
			k := j - 1
			for k > e.start && a.d[k] > 0 {
				k--
			}
			if a.d[k] > 0 {
				e.minPt = a.at(k)
			} else {
				e.minPt = a.recalMin(k, j)
			}
			e.sub, e.lastAbove, e.cand = phasePos, j, -1
			e.dmax, e.dmaxI = d, j
			e.riseI = a.riseStart(e.dmin/2, j)
			e.minShown = false
			a.showMin(j)
			return
		}
		// the rise into an arrest must also stand out against the cooling
		// rate before it; the fall after it only against the noise
		if e.sub == phaseValley && d > e.dmin+max(p, promShare*math.Abs(e.dmin)) {
			e.sub, e.dmax, e.dmaxI = phaseRise, d, j
			return
		}
		if e.sub == phaseRise && d < e.dmax-max(p, fallShare*math.Abs(e.dmin)) {
			pt := a.extremum(e.dmaxI)
			a.settle(j, pt, pt, false, p)
			return
		}
		// a pure metal's single plateau is settled once it is long, without
		// waiting for T' to fall at its end (plateauHeld)
		if e.sub == phaseRise && a.plateauHeld(j, p) {
			pt := a.extremum(e.dmaxI)
			a.arrest(j, pt, pt, false, true)
		}
	case phasePos:
		if d > e.dmax {
			e.dmax, e.dmaxI = d, j
		}
		if !e.minShown {
			a.showMin(j)
		}
		if d > h {
			e.lastAbove, e.cand = j, -1
			return
		}
		drop := max(dropFloor, 6*(a.sigma(j)*a.gainS)) // 6·σ_T
		if e.cand >= 0 && a.sm(j) > e.maxPt.TempC+drop {
			e.cand = -1 // risen past the crossing by as much: the recalescence goes on
		}
		if e.cand < 0 && d <= 0 {
			e.cand = j
			e.maxPt = a.crossing(j - 1)
		}
		if e.cand >= 0 && (d < -h || a.sm(j) < e.maxPt.TempC-drop) {
			a.settle(j, e.minPt, e.maxPt, true, p)
		}
	}
}

// recalMin is the minimum of a recalescing arrest whose T' crosses zero
// from − to + between samples k and k+1 (examined at j): that crossing,
// located again on windows two thirds as long, down to five samples, while
// each shorter window moves it by more than its own noise allows. The
// undercooling before a recalescence can end in a cusp: a check cup poured
// a few tens of kelvin above its fixed point cools at 1–4 °C/s into a
// minimum 2–4 s after the pour and recalesces at +0.5 °C/s. On a T' window
// longer than the cusp the crossing sits where the window's mean slope is
// zero, up to half a window after the cusp (independent cup model: pure
// Al, Zn and Sn read 0.7–1.2 °C above their minimum, 1 s late). A rounded
// minimum, which every window resolves, does not move by more than the
// noise and keeps the T' window's crossing. A crossing moves by a
// significant amount when the change of T' over the shift (T″ times the
// shift) exceeds twice the shorter window's T' noise. T there is the
// smoothed T (Hints.SmoothS): smoothed on the shorter window, a noisy
// plateau's false recalescence grew beyond the tolerance (simulated pure
// Al, 10 Hz, 0.27 °C of noise).
func (a *Analyzer) recalMin(k, j int) Point {
	pt := a.crossing(k)
	at := float64(k) + (pt.TimeS-a.ts[k])/(a.ts[k+1]-a.ts[k])
	sig := max(a.sigma(j), a.quantum(a.det.start, j)/math.Sqrt(12))
	for w, v := a.wd, max(5, (2*a.wd/3)|1); v < w; w, v = v, max(5, (2*v/3)|1) {
		c := int(math.Floor(at))
		from, to := max(c-w/2, v/2, a.det.start), min(c+w/2, a.xAvail(j)-v/2)
		if from+2 > to {
			break
		}
		dv := a.appendSlopes(a.dl[:0], curve.SavGol(v, 2, 1), from, to+1)
		a.dl = dv[:0]
		// the − → + crossing nearest the one so far
		best, fc := math.Inf(1), 0.0
		for i := 0; i+1 < len(dv); i++ {
			if dv[i] < 0 && dv[i+1] >= 0 {
				f := float64(from+i) + dv[i]/(dv[i]-dv[i+1])
				if math.Abs(f-at) < math.Abs(best-at) {
					best, fc = f, dv[i+1]-dv[i]
				}
			}
		}
		if math.IsInf(best, 1) {
			break
		}
		noise := sig * curve.SavGol(v, 2, 1).NoiseGain() / a.dt
		if math.Abs(best-at)*fc <= 2*noise {
			break // not moved beyond the noise: the minimum is resolved
		}
		at = best
		pt = a.atFrac(at)
	}
	return pt
}

// riseStart is the last index before i where T' was at or below level,
// going back no further than the minimum before the arrest.
func (a *Analyzer) riseStart(level float64, i int) int {
	e := &a.det
	k := i
	for k > e.dminI && a.d[k] > level {
		k--
	}
	return k
}

// primary tells whether an arrest whose minimum is at loC °C is the primary
// (liquidus) arrest rather than the eutectic; long says it is a long arrest
// (see longArrest). The family's EutecticTopC is a hint: before a liquidus
// is found, an arrest at or below it is the eutectic only if it is long, and
// once a liquidus is known a long arrest is the eutectic at any temperature.
// A pure metal (EutecticTopC +Inf) has one plateau.
func (a *Analyzer) primary(loC float64, long bool) bool {
	above := loC > a.h.EutecticTopC
	switch {
	case math.IsInf(a.h.EutecticTopC, 1):
		return false
	case a.det.res.Liquidus.OK:
		return above && !long
	}
	return above || !long
}

// kindKnown tells whether the kind of an arrest with its minimum at loC is
// settled before its length is known (primary does not depend on long).
func (a *Analyzer) kindKnown(loC float64) bool {
	return a.primary(loC, false) == a.primary(loC, true)
}

// showMin reports the minimum of a recalescing arrest (index j in its
// positive phase) as soon as its kind is settled: at once when the
// temperature alone decides, else once T' has been up for shortArrest. It
// is shown provisional unless the temperature settles its kind for good
// (with a eutectic window, a maximum still to come above the window would
// make it a primary arrest), and confirmed or withdrawn when the arrest is
// classified (arrest).
func (a *Analyzer) showMin(j int) {
	e := &a.det
	if e.prev.on {
		// a recalescence that may outrank the eutectic shown: nothing is
		// shown until it settles (arrest)
		e.minShown = true
		return
	}
	lo := e.minPt.TempC
	byTemp := a.kindKnown(lo)
	known := byTemp && (a.h.Eutectic.Open() || lo > a.h.Eutectic.HiC)
	if !byTemp && a.ts[j]-a.ts[e.riseI] < a.shortArrest() {
		return
	}
	e.minShown = true
	r := &e.res
	pt := e.minPt
	pt.Provisional = !known
	switch {
	case !a.primary(lo, true):
		pt.Provisional = pt.Provisional || a.reopens() // may be outranked (outranks)
		r.EutecticMin = pt
	case !r.Liquidus.OK:
		r.LiquidusMin = pt
	}
}

// shortArrest is the length, s, below which an arrest counts as short:
// three T' windows. The eutectic's large latent heat holds T' near or above
// zero for tens of seconds; a primary arrest a few seconds.
func (a *Analyzer) shortArrest() float64 { return 3 * a.h.SlopeS }

// arrestSpan is where the current arrest began for its length: where T'
// rose halfway into it (for a recalescence from T'min to zero, else from
// the cooling before it to min(T'max, 0)). ok is false when the arrest
// can never be long: its T' stayed clearly negative, below
// −max(p, negShare·|T'min|) (a liquidus arrest whose T' stays clearly
// negative is short however slowly it passes).
func (a *Analyzer) arrestSpan(recal bool, p float64) (from int, ok bool) {
	e := &a.det
	if recal && e.sub == phasePos {
		return e.riseI, true
	}
	peak := a.d[e.dmaxI]
	if peak < -max(p, negShare*math.Abs(e.dmin)) {
		return 0, false
	}
	// halfway from the cooling it rose out of: T'min since the search began
	// may lie just after the pour, far steeper than the liquid's cooling
	// just before the arrest, so the lowest T' over the shortArrest before
	// that first rise is taken instead
	top := min(peak, 0)
	k := a.riseStart((e.dmin+top)/2, e.dmaxI)
	return a.riseStart((a.slopeBefore(k)+top)/2, e.dmaxI), true
}

// plateauHeld tells whether a pure metal's arrest without recalescence is
// its single plateau at index j: T' has reached zero and stayed within the
// prominence p of it (T' ≥ −p, and no higher than the hysteresis, else it
// recalesces) for shortArrest. The plateau then needs no fall of T' to
// settle: a check cup's plateau holds T' at zero for minutes, and a rise of
// T' near its end (the centre's last liquid freezing) would otherwise pass
// for the plateau's recalescence, minutes late (on a radial cup of the
// independent model, at 125 s of a plateau that began at 10 s). The time
// near zero counts, not the slow rise before it: a check cup poured a few
// tens of kelvin above its fixed point cools into the plateau at a T' that
// climbs from −4 to −1 °C/s over 25 s, and then recalesces by several
// kelvin (independent model, pure Sn); held at the first touch of zero, it
// was read as a plateau without recalescence at its undercooled minimum.
func (a *Analyzer) plateauHeld(j int, p float64) bool {
	if a.reopens() || a.d[a.det.dmaxI] < 0 {
		return false
	}
	k := j
	for ; a.ts[j]-a.ts[k] < a.shortArrest(); k-- {
		if k <= a.det.start || a.d[k] < -p {
			return false
		}
	}
	return true
}

// longArrest tells whether the arrest is long at index j: it can be
// (arrestSpan) and has lasted shortArrest since it began.
func (a *Analyzer) longArrest(j int, recal bool, p float64) bool {
	from, ok := a.arrestSpan(recal, p)
	return ok && a.ts[j]-a.ts[from] >= a.shortArrest()
}

// settle takes an arrest that has just settled at index j (lo, hi: its
// minimum and maximum points) to arrest, unless its kind hangs on its
// length and it is still short but may yet be long: then it is held
// (holding) until T' falls by max(p, holdShare·(top − T'before)) below its
// top (zero after a recalescence; T'before the lowest T' over the
// shortArrest before the top), or back to where it began (short), or it has
// stayed above that for shortArrest more (long): a eutectic's latent heat
// holds T' near zero long after its top, a primary arrest's T' falls away. A small recalescence, or a near-zero
// arrest, settles within seconds; whether it is a primary arrest or the
// eutectic shows only in how long T' then stays near zero.
func (a *Analyzer) settle(j int, lo, hi Point, recal bool, p float64) {
	e := &a.det
	from, ok := a.arrestSpan(recal, p)
	if !ok || e.prev.on || a.kindKnown(lo.TempC) || a.ts[j]-a.ts[from] >= a.shortArrest() {
		a.arrest(j, lo, hi, recal, ok && a.ts[j]-a.ts[from] >= a.shortArrest())
		return
	}
	// short once T' falls clearly below the arrest's top (or zero, after a
	// recalescence), or back to where the rise into it began
	top := min(a.d[e.dmaxI], 0)
	level := max(a.d[from], top-max(p, holdShare*(top-a.slopeBefore(e.dmaxI))))
	e.hold = heldArrest{on: true, lo: lo, hi: hi, recal: recal, from: j, level: level}
}

// slopeBefore is the lowest T' over the shortArrest before index i (not
// before the arrest search's start): the cooling the arrest rose out of.
func (a *Analyzer) slopeBefore(i int) float64 {
	m := a.d[i]
	for k := i; k > a.det.start && a.ts[i]-a.ts[k] <= a.shortArrest(); k-- {
		m = min(m, a.d[k])
	}
	return m
}

// holding advances a held arrest (settle) at index j, T' = d.
func (a *Analyzer) holding(j int, d float64) {
	e := &a.det
	hd := e.hold
	switch {
	case a.ts[j]-a.ts[hd.from] >= a.shortArrest():
		e.hold = heldArrest{}
		a.arrest(j, hd.lo, hd.hi, hd.recal, true)
	case d < hd.level:
		e.hold = heldArrest{}
		a.arrest(j, hd.lo, hd.hi, hd.recal, false)
	}
}

// arrest classifies a settled arrest (lo, hi: the minimum and maximum points,
// equal without recalescence) found at index j; long says it is a long
// arrest (longArrest).
func (a *Analyzer) arrest(j int, lo, hi Point, recal, long bool) {
	e := &a.det
	r := &e.res
	if !e.haveFirst {
		e.haveFirst = true
		r.CoolingRateCps = a.coolingRate(e)
	}
	w := a.h.Eutectic
	if e.prev.on {
		// the search reopened on a recalescing eutectic: this arrest, below
		// it, is no primary arrest; it is the eutectic if it outranks the
		// earlier one, else the earlier one is restored
		pv := e.prev
		e.prev = outrankable{}
		if !outranks(&pv.res, lo, hi, recal) {
			e.res, e.eutI, e.eutRefD, e.eutRecal = pv.res, pv.eutI, pv.eutRefD, true
			e.stage = stageSolidus
			e.dmin, e.dminI = a.d[j], j
			return
		}
	} else if !w.Open() && hi.TempC > w.HiC || a.primary(lo.TempC, long) {
		a.primaryArrest(j, lo, hi, recal)
		return
	}
	if !recal {
		lo, hi, recal = a.refineMax(e.dminI, j, e.dmaxI, true)
		if !w.Open() && lo.TempC > w.HiC {
			// a flat arrest the longer window places above the window
			a.primaryArrest(j, lo, hi, recal)
			return
		}
	}
	if r.LiquidusMin.Provisional {
		r.LiquidusMin = Point{} // shown early, and the eutectic after all
	}
	if !w.Holds(lo.TempC) {
		r.EutecticMin = Point{}
		a.outsideWindow(j, lo, hi)
		return
	}
	// a eutectic without recalescence may yet turn out a shoulder
	// (shoulderPassed), one with recalescence be outranked (outranks):
	// provisional until the end of freezing settles
	lo.Provisional, hi.Provisional = !recal || a.reopens(), !recal || a.reopens()
	r.EutecticMin, r.EutecticMax = lo, hi
	r.EutecticStart = a.eutecticStart(lo)
	r.Recalescence, r.RecalescenceOK = hi.TempC-lo.TempC, true
	if !recal {
		r.Recalescence = 0
	}
	e.eutRefD = a.d[e.dmaxI] // T' at the arrest; 0 at the maximum of a recalescence
	if recal {
		e.eutRefD = 0
	}
	e.eutI, e.eutRecal = j, recal
	e.stage = stageSolidus
	e.dmin, e.dminI = a.d[j], j
}

// primaryArrest takes the arrest settled at j (lo, hi: its minimum and
// maximum) for a primary one: an arrest reaching above the eutectic window
// is, and only inside the liquidus window (where one is set) the liquidus;
// the search goes on after it.
func (a *Analyzer) primaryArrest(j int, lo, hi Point, recal bool) {
	e := &a.det
	r := &e.res
	if r.EutecticMin.Provisional {
		r.EutecticMin = Point{} // shown early, and not the eutectic after all
	}
	if !r.Liquidus.OK && a.h.Liquidus.Holds(hi.TempC) {
		if !recal {
			// a slight primary recalescence shows on the longer window
			lo, hi, recal = a.refineMax(e.dminI, j, e.dmaxI, false)
		}
		r.Liquidus = hi
		r.LiquidusMin = Point{}
		if recal {
			r.LiquidusMin = lo
			r.LiquidusRecalescence = hi.TempC - lo.TempC
		}
	} else if r.LiquidusMin.Provisional {
		r.LiquidusMin = Point{}
	}
	e.startArrest(j, a.d[j])
}

// eutecticStart is the start of eutectic freezing before the eutectic
// minimum lo: T at the largest T″ on the rise of T' into the eutectic
// arrest, searched from the last local minimum of T' before lo (a minimum
// by the hysteresis h, so that noise makes none) to lo; T″ is the central
// difference of T' over half a T' window. Where T″ still rises at the
// minimum, the start is the minimum itself. The definition
// (docs/analysis.md) is that of computer-aided cooling-curve analysis: the
// inflection where the first latent heat of the eutectic slows the
// cooling, the maximum of d²T/dt² before the arrest.
func (a *Analyzer) eutecticStart(lo Point) Point {
	e, _ := slices.BinarySearch(a.ts, lo.TimeS)
	e = min(e, len(a.d)-1)
	step := max(1, a.wd/4)
	h := max(slopeFloor, 4*a.sigma(e)*a.gainD)
	// the last local minimum of T' before the eutectic minimum
	m := e
	for k := e - 1; k > max(a.det.start, step); k-- {
		if a.d[k] < a.d[m] {
			m = k
		}
		if a.d[k] > a.d[m]+h {
			break
		}
	}
	dd := func(i int) float64 { return a.d[i+step] - a.d[i-step] }
	best, bi := math.Inf(-1), -1
	for i := max(m, step+1); i <= e && i+step+1 < len(a.d); i++ {
		if v := dd(i); v > best {
			best, bi = v, i
		}
	}
	if bi < 0 {
		return Point{}
	}
	pt := a.at(bi)
	if bi > m && bi < e {
		pt = a.vertex(bi, dd(bi-1), best, dd(bi+1))
	}
	if pt.TimeS > lo.TimeS || bi == e {
		pt = lo // T″ still rising at the minimum
	}
	pt.Provisional = lo.Provisional
	return pt
}

// solidFloor is the temperature, °C, below which a curve that has shown no
// dip of T' as deep as a third of the liquid's cooling rate is judged: 10 °C
// (belowWindowC) below the alloy's eutectic window, or, for an alloy
// without one (a pure metal), 10 °C below its plateau's top.
func (a *Analyzer) solidFloor() float64 {
	if w := a.h.Eutectic; !w.Open() {
		return w.LoC - belowWindowC
	}
	r := &a.det.res
	if r.EutecticMax.OK {
		return r.EutecticMax.TempC - belowWindowC
	}
	return r.EutecticMin.TempC - belowWindowC
}

// solidDip reports whether the deepest T' after the eutectic plateau, dmin,
// shallower than a third of the liquid's cooling rate (the depth that
// settles an end of freezing by itself), still marks the end of freezing
// once the curve has cooled below solidFloor (T' is v there): the dip
// stands clear of the noise, more than the prominence p below the
// plateau's T', and T' has come back up from it by the hysteresis h. A
// recovery of p had been asked too: a dip that relaxes slowly, up by
// 0.08–0.1 °C/s by the floor, was left null (five Al-Si cups of the
// independent cup model drawn beyond its first 84), while a T' that falls
// to the solid's cooling rate and keeps steepening slowly makes no false
// end with h on 560 noisy constructed curves (TestNoDistinctEndOfFreezing
// keeps nine of them). A cup whose liquid
// cooled fast (cold sand just after the pour: −2 to −6 °C/s) can end its
// freezing with a dip of under 1 °C/s, a lean eutectic (Sn-Bi with 90 %
// Sn) with one of a few hundredths. Waiting for the floor keeps a shallow
// dip on the way down from the plateau (real Al-Si cups show one some
// 10 °C above their end of freezing) from being taken before the deeper
// one that follows; a curve whose T' falls to the solid's cooling rate and
// stays there has no such minimum and keeps no-end-of-freezing.
func (a *Analyzer) solidDip(v, dmin, h, p float64) bool {
	return a.det.eutRefD-dmin >= p && v >= dmin+h
}

// noDistinctEnd ends the analysis at index j, where the curve has cooled
// belowWindowC below the bottom of the alloy's eutectic window without the
// dip in T' that settles the end of freezing (a dip deep enough but not
// yet confirmed still waits for its confirmation) (a weak eutectic, as in an
// alloy with little of it, freezes out without one): the end of freezing
// stays null, and a problem, not fatal, says why; the recording did not
// end early.
func (a *Analyzer) noDistinctEnd(j int) {
	e := &a.det
	a.problem(j, CodeNoEnd, fmt.Sprintf("no distinct end of freezing: the curve cooled to %.0f °C, below the alloy's eutectic window, without the dip in dT/dt that marks it; the end of freezing and the freezing times are left out", a.x[j]), false)
	e.res.EutecticStart.Provisional, e.res.EutecticMin.Provisional, e.res.EutecticMax.Provisional = false, false, false
	e.res.Complete = true
	e.stage = stageDone
	a.limit = a.xAvail(j) + 2
}

// outsideWindow ends the analysis at index j on an arrest taken for the
// eutectic (lo, hi: its minimum and maximum) that lies outside the alloy's
// eutectic window (Hints.Eutectic): no eutectic of the alloy freezes there,
// so its points stay null and a fatal problem says why; the end of
// freezing, searched only after the eutectic, stays null too.
func (a *Analyzer) outsideWindow(j int, lo, hi Point) {
	e := &a.det
	w := a.h.Eutectic
	at := fmt.Sprintf("%.1f °C", lo.TempC)
	if hi.TempC != lo.TempC {
		at = fmt.Sprintf("%.1f–%.1f °C", lo.TempC, hi.TempC)
	}
	a.problem(j, CodeEutecticWindow, fmt.Sprintf("the eutectic arrest at %s (%.0f s) lies outside this alloy's eutectic window, %.1f–%.1f °C: no eutectic of the alloy freezes there, so the eutectic and the end of freezing are left out (is the alloy right?)", at, lo.TimeS, w.LoC, w.HiC), true)
	e.res.Complete = true
	e.stage = stageDone
	a.limit = a.xAvail(j) + 2
}

// shoulderPassed tells whether T' = v, after falling to dmin since a
// eutectic that did not recalesce, has risen beyond the hysteresis h above
// zero: a real recalescence, which outranks the earlier arrest. That arrest
// was a shoulder (a local maximum of T' below zero, as the cup wall
// freezing before the centre makes), and this is the centre's own
// eutectic. The fall between them must exceed the prominence p, so that
// noise on a plateau is no second arrest. A pure metal's single plateau
// (EutecticTopC +Inf) is reopened only from such a shoulder: a check cup
// whose wall freezes first (a chill layer against a cold wall) shows the
// wall's plateau at the centre as a shoulder some tenths of a kelvin above
// the centre's own undercooled minimum, seconds before the centre
// recalesces (independent cup model: pure Sn, Al, 2–8 s apart); a plateau
// that recalesced is its plateau.
//
// After a eutectic that did recalesce, the same rise reopens the search
// too, but the recalescence that follows becomes the eutectic only if it
// outranks the earlier one (outranks); else the earlier is restored. There
// the rise (at index j) also reopens it where the fall before it was
// shallower than p but the curve has cooled below the earlier minimum by
// more than the drop that settles a recalescence's maximum (dropFloor, or
// 6σ of T): on a noisy T' a wall's recalescence can be followed by a slow
// fall of −0.1 °C/s, under the prominence, for tens of seconds, and the
// centre's own recalescence then comes from several degrees lower.
func (a *Analyzer) shoulderPassed(j int, v, dmin, h, p float64) bool {
	if v <= h {
		return false
	}
	e := &a.det
	if !a.reopens() {
		return !e.eutRecal && e.eutRefD < -h && e.eutRefD-dmin > p
	}
	return e.eutRefD-dmin > p || e.eutRecal && a.sm(j) < e.res.EutecticMin.TempC-max(dropFloor, 6*a.sigma(j)*a.gainS)
}

// reopens tells whether a later arrest may take the eutectic's place
// (shoulderPassed): not on a pure metal's single plateau (EutecticTopC
// +Inf).
func (a *Analyzer) reopens() bool { return !math.IsInf(a.h.EutecticTopC, 1) }

// outranks tells whether a recalescing arrest (lo, hi) found after the
// search reopened on a recalescing eutectic (pr) outranks it: its
// minimum lies below the earlier minimum, so the curve fell back after the
// earlier rise, and it rises more than recalOutrank times as much. A cup
// wall that freezes before the centre can lift the centre's T' just above
// zero some tens of seconds before the centre's own eutectic, whose
// recalescence, once the curve has fallen below that shoulder, is several
// times larger (in the radial cup model the centre's own solid fraction
// grows by under 0.2 % during such a shoulder and by 10–17 % during its own
// recalescence); two recalescences of like size, a plateau wobbling about
// zero, keep the first.
func outranks(pr *Result, lo, hi Point, recal bool) bool {
	return recal && lo.TempC < pr.EutecticMin.TempC && hi.TempC-lo.TempC > recalOutrank*pr.Recalescence
}

// recalOutrank: see outranks.
const recalOutrank = 2

// reopen takes up the arrest search again at index j (T' = d > h), in the
// recalescence after a shoulder that had been taken for the eutectic
// (shoulderPassed): the shoulder's points are withdrawn, and the
// recalescence is examined as the arrest search examines one. A eutectic
// that recalesced is kept, shown, under review (det.prev) until that
// recalescence settles: arrest then takes it for the eutectic if it
// outranks the earlier one, or restores the earlier one.
func (a *Analyzer) reopen(j int, d float64) {
	e := &a.det
	r := &e.res
	if e.eutRecal {
		// a recalescing eutectic stays, shown, until the next arrest
		// outranks it (outranks) or not
		e.prev = outrankable{on: true, res: *r, eutI: e.eutI, eutRefD: e.eutRefD}
	} else {
		r.EutecticStart, r.EutecticMin, r.EutecticMax = Point{}, Point{}, Point{}
		r.Recalescence, r.RecalescenceOK = 0, false
	}
	e.stage, e.sub, e.start = stageArrest, phaseRise, e.eutI
	e.dmax, e.dmaxI, e.cand = d, j, -1
	a.arrestStep(j, d, max(slopeFloor, 4*a.sigma(j)*a.gainD), max(promFloor, 8*a.sigma(j)*a.gainD))
}

// coolingRate is the mean slope of T over the 10 s (less when the pour is
// nearer) ending where T' has risen halfway from its minimum after the pour
// to its value at the first arrest, °C/s.
func (a *Analyzer) coolingRate(e *detector) float64 {
	peak := e.dmax
	if e.sub == phasePos {
		peak = 0
	}
	half := (e.dmin + peak) / 2
	k := e.dmaxI
	for k > e.dminI && a.d[k] > half {
		k--
	}
	lo := k
	for lo > e.start && a.ts[k]-a.ts[lo-1] <= 10 {
		lo--
	}
	if lo == k {
		return a.d[k]
	}
	return (a.sm(k) - a.sm(lo)) / (a.ts[k] - a.ts[lo])
}

// xAvail is the last despiked reading that is final when index j is
// examined; decisions at j use nothing beyond it, so that they do not depend
// on how much of the curve has arrived.
func (a *Analyzer) xAvail(j int) int { return j + max(a.ws, a.wd)/2 }

// refineMax settles an arrest that did not pass the recalescence
// hysteresis, from T' over samples lo … j computed again with a window
// longFactor times as long (√8 times less noise; where T' is near zero, as
// here, the longer window moves a point by a negligible T'·Δt):
//   - if that T' rises above zero by more than 4σ of its own noise (the
//     recalescence hysteresis, on this window) the arrest recalesces after
//     all, and the minimum and maximum are T at its − → + and + → −
//     crossings. Without the margin a long flat plateau of a pure metal
//     (190 s at 4 Hz and 0.25 °C of noise) always had somewhere a stretch
//     of T' just above zero, read as a recalescence of 0.8 °C;
//   - otherwise, for the liquidus (firstReach false), the point stays at the
//     local maximum of T' (fallback), where the T'·Δt error of a long window
//     would count; for the eutectic the point is the first sample where T' comes within 2σ of
//     its maximum: on a flat, noisy plateau the maximum itself could be
//     anywhere along it, while the rise into the arrest is well defined.
//     Without noise this is the maximum itself, refined to a fraction of a
//     sample.
func (a *Analyzer) refineMax(lo, j, fallback int, firstReach bool) (Point, Point, bool) {
	w := curve.WindowSamples(longFactor*a.h.SlopeS, a.rate, 2, 5)
	h := w / 2
	lo, hi := max(lo, h), min(j, a.xAvail(j)-h)
	if lo+2 > hi {
		p := a.extremum(fallback)
		return p, p, false
	}
	dl := a.appendSlopes(a.dl[:0], curve.SavGol(w, 2, 1), lo, hi+1)
	best, bi := math.Inf(-1), lo
	for k := range dl {
		if dl[k] > best {
			best, bi = dl[k], lo+k
		}
	}
	a.dl = dl[:0]
	at := func(c int) float64 { return dl[c-lo] }
	if bi == lo || bi == hi {
		p := a.extremum(fallback)
		return p, p, false
	}
	sdl := a.sigma(j) * curve.SavGol(w, 2, 1).NoiseGain() / a.dt
	if best > 4*sdl { // the hysteresis h = 4σ_T', on this window's T'
		k := bi
		for k > lo && at(k) > 0 {
			k--
		}
		m := bi
		for m < hi && at(m) > 0 {
			m++
		}
		if at(k) <= 0 && at(m) <= 0 {
			return a.levelPoint(k, at(k), at(k+1), 0), a.levelPoint(m-1, at(m-1), at(m), 0), true
		}
	}
	if !firstReach {
		p := a.extremum(fallback)
		return p, p, false
	}
	level := best - 2*sdl
	f := lo
	for at(f) < level {
		f++
	}
	// f is the first sample within 2σ of the maximum (f ≤ bi)
	if f == bi || f == lo {
		p := a.vertex(bi, at(bi-1), best, at(bi+1))
		return p, p, false
	}
	p := a.levelPoint(f-1, at(f-1), at(f), level)
	return p, p, false
}

// levelPoint interpolates T and t where a derivative going from v0 at
// sample k to v1 at k+1 passes level.
func (a *Analyzer) levelPoint(k int, v0, v1, level float64) Point {
	f := 0.0
	if v1 != v0 {
		f = max(0, min(1, (level-v0)/(v1-v0)))
	}
	return Point{TempC: a.sm(k) + f*(a.sm(k+1)-a.sm(k)), TimeS: a.ts[k] + f*(a.ts[k+1]-a.ts[k]), OK: true}
}

// solidusPoint places the end of freezing at the most negative T' (found
// at sample i, settled at j), located again on the window solidusWindow
// picks (half the T' window or shorter, as sharp as the dip and its noise
// allow; the steepest step between two readings for a cliff too sharp for
// five, steepestStep): the drop into the end of freezing is sharp and the
// relaxation after it slow, and a long window would move the minimum toward
// the slow side. The search starts where T' first came within
// max(3σ_T', flatShare·|T'min|) of its minimum, so that on a flat-bottomed
// dip (T' reaching the solid's cooling rate and staying there) the point
// is where the bottom is first reached, not wherever noise puts its lowest
// sample. The bottom is the middle of the run of T' near its minimum
// (dipBottom). That run is then searched again, from a quarter window
// before its start, on a window two thirds as long (at least five
// samples), and its bottom there is taken where it lies earlier: the
// window chosen is as short as the dip's depth and noise allow, which on a
// sharp fall into a slowly relaxing bottom still averages the fall with
// the bottom and puts the point late by up to half its length; the
// shorter window sees the fall sooner, and the point only ever moves
// toward it. After a fall the T' window cannot resolve (sharpFall) the
// search reaches half the shorter window past the bottom so far and is
// repeated on ever shorter windows (each two thirds of the last, down to
// five samples) while the next one's T' noise stays below locShare of the
// dip's depth: a flat bottom reached within a second reads on a 4 s window
// as a bottom a second or more late (simulated 4–5 Hz cups 4.3–5.4 °C
// low). After a gentler fall one step is taken, its search ending at the
// bottom so far: the bottom of a rounded dip has no early side for a
// shorter window to find, and on its noisier T' repeated steps that keep
// only the earlier bottom would walk early (simulated ductile-iron cups up
// to 4.7 °C high). Measured on the simulated cups over four seed sets
// (docs/analysis.md, "Accuracy on simulated cups"), the end of freezing's
// median and 95th-percentile error fall on both cup kinds. The noise every step
// here weighs is at least the logger's rounding (quantum): a rounded quiet
// plateau has a noise estimate near zero, and the first rounding step off
// it would pass for the end of freezing.
func (a *Analyzer) solidusPoint(i, j int) Point {
	sig := max(a.sigma(j), a.quantum(a.det.eutI, j)/math.Sqrt(12))
	w := a.solidusWindow(i, j, sig)
	h := w / 2
	// a flat-bottomed dip (T' reaching the solid's cooling rate and staying
	// there) is searched from where T' first came down to its bottom
	band := max(3*sig*a.gainD, flatShare*math.Abs(a.d[i]))
	k := i
	for k > a.det.eutI && a.d[k-1] <= a.d[i]+band {
		k--
	}
	lo, hi := max(k-a.wd/2, h, a.det.eutI), min(j, a.xAvail(j)-h)
	sharp := a.sharpFall(i)
	if w == 5 {
		if pt, ok := a.steepestStep(i, j, lo, hi, sig, sharp); ok {
			return pt
		}
	}
	if lo+2 > hi {
		return a.extremum(i)
	}
	ds := a.appendSlopes(a.dl[:0], curve.SavGol(w, 2, 1), lo, hi+1)
	defer func() { a.dl = ds[:0] }()
	m, first, mid, ok := a.dipBottom(ds, w, sig)
	switch {
	case m < 0:
		return a.at(lo)
	case !ok:
		return a.at(lo + m)
	}
	// the bottom located again on a window two thirds as long, never
	// later; after a sharp fall again and again down to five samples
	at, start := float64(lo)+mid, float64(lo)+first
	depth := -ds[m]
	for v := max(5, (2*w/3)|1); v < w; w, v = v, max(5, (2*v/3)|1) {
		from := max(int(math.Floor(start))-w/4, v/2, a.det.eutI)
		to := int(math.Ceil(at))
		if sharp {
			to += v / 2
		}
		to = min(to, a.xAvail(j)-v/2)
		if from+2 > to {
			break
		}
		dv := a.appendSlopes(ds[len(ds):], curve.SavGol(v, 2, 1), from, to+1)
		_, fv, mv, ok := a.dipBottom(dv, v, sig)
		if !ok || float64(from)+mv >= at {
			break
		}
		at, start = float64(from)+mv, float64(from)+fv
		if !sharp || curve.SavGol(max(5, (2*v/3)|1), 2, 1).NoiseGain()*sig/a.dt > locShare*depth {
			break
		}
	}
	return a.atFrac(at)
}

// sharpFall reports whether T' fell into the end-of-freezing dip at sample
// i (its most negative value on the T' window) as sharply as that window
// can show: T' took at most sharpShare of the window's span to come down
// from halfway between the eutectic's T' and its minimum (plateauEnd, the
// end of the plateau) to the minimum. A fall much shorter
// than the window, T' dropping by several °C/s within a second, reads on
// it as a ramp half the window long; a fall the window resolves takes
// longer.
func (a *Analyzer) sharpFall(i int) bool {
	return a.ts[i]-a.ts[a.plateauEnd(i)] <= sharpShare*float64(a.wd-1)*a.dt
}

// plateauEnd is the end of the eutectic plateau before the end-of-freezing
// dip whose T' is most negative at sample i: the last index, going back
// from i no further than the eutectic, where T' has not yet fallen halfway
// from the eutectic's value to that minimum.
func (a *Analyzer) plateauEnd(i int) int {
	half := (a.det.eutRefD + a.d[i]) / 2
	k := i
	for k > a.det.eutI && a.d[k] < half {
		k--
	}
	return k
}

// dipBottom finds the bottom of the end-of-freezing dip in ds, T' on a
// window of w samples (j is where the dip settled, for the noise σ): m is
// the index of the most negative value, mid the fractional index of the
// bottom. On a noisy curve the bottom is the run of values within 2σ_T' of
// the minimum, from the first that reaches that level to the last of the
// unbroken run after the minimum, and mid is the middle of that run
// (between interpolated level crossings), steadier than the lowest value,
// which noise moves along the bottom; the run counts at most half a window
// past its first level crossing, since after a sharp end of freezing the
// slow relaxation can keep T' within 2σ of its minimum for seconds and
// would pull the point late (and low: by T'·Δt). Without noise the run is
// one value and mid its parabolic vertex; first is where the run starts.
// ok is false when the minimum or
// its run reaches either end of ds (m is −1 when ds has fewer than three
// values).
func (a *Analyzer) dipBottom(ds []float64, w int, sig float64) (m int, first, mid float64, ok bool) {
	if len(ds) < 3 {
		return -1, 0, 0, false
	}
	m = 0
	for k := range ds {
		if ds[k] < ds[m] {
			m = k
		}
	}
	last := len(ds) - 1
	if m == 0 || m == last {
		return m, 0, 0, false
	}
	level := ds[m] + 2*sig*curve.SavGol(w, 2, 1).NoiseGain()/a.dt
	l, r := 0, m
	for ds[l] > level {
		l++
	}
	for r < last && ds[r+1] <= level {
		r++
	}
	switch {
	case l == 0 || r == last:
		return m, 0, 0, false
	case l == r:
		d0, d1, d2 := ds[m-1], ds[m], ds[m+1]
		f := 0.0
		if den := d0 - 2*d1 + d2; den != 0 {
			f = max(-0.5, min(0.5, 0.5*(d0-d2)/den))
		}
		return m, float64(m) + f, float64(m) + f, true
	}
	// fractional indices of the two level crossings
	fl := float64(l-1) + (level-ds[l-1])/(ds[l]-ds[l-1])
	fr := float64(r) + (level-ds[r])/(ds[r+1]-ds[r])
	// the bottom is resolved to half a window after T' first reaches it:
	// beyond that a long flat run is the slow relaxation, not the dip
	fr = min(fr, fl+float64(w/2))
	return m, fl, (fl + fr) / 2, true
}

// quantum is the logger's resolution as the readings from i to j show it,
// °C: the smallest non-zero step between two despiked readings, where at
// least nine steps in ten are whole multiples of it (the readings lie on a
// grid); 0 otherwise (a smooth or noisy curve, whose steps vary freely).
// A logger that rounds to q °C records a slow cooling as a staircase whose
// noise estimate (the spread of the readings about a smooth curve, within
// one noise block) is near zero, while its steps are q; the rounding error,
// uniform within ±q/2, has σ = q/√12.
func (a *Analyzer) quantum(i, j int) float64 {
	i, j = max(i, 1), min(j, len(a.x)-1)
	q := math.Inf(1)
	for k := i; k <= j; k++ {
		if d := math.Abs(a.x[k] - a.x[k-1]); d > 0 && d < q {
			q = d
		}
	}
	if math.IsInf(q, 1) {
		return 0
	}
	off := 0
	for k := i; k <= j; k++ {
		if r := math.Abs(a.x[k]-a.x[k-1]) / q; math.Abs(r-math.Round(r)) > 1e-6 {
			off++
		}
	}
	if off*10 > j-i+1 {
		return 0
	}
	return q
}

// atFrac is the smoothed T and the time at the fractional sample index f,
// interpolated linearly between its two neighbours.
func (a *Analyzer) atFrac(f float64) Point {
	k := int(math.Floor(f))
	u := f - float64(k)
	return Point{TempC: a.sm(k) + u*(a.sm(k+1)-a.sm(k)), TimeS: a.ts[k] + u*(a.ts[k+1]-a.ts[k]), OK: true}
}

// steepestStep places an end of freezing too sharp even for a 5-sample
// window (a strong gradient's centre logged at a few readings a second
// drops 10–25 °C between two readings) on the cliff's first step: the
// earliest of the unbroken run of steps up to the steepest among lo … hi
// whose slopes lie within stepShare of the steepest's, at the middle of
// that step, T the mean of its two readings. T' is most negative just
// after the fall begins and relaxes after it, so the steepest step may be
// the second of the cliff (simulated 4 Hz cups read 4.2–4.4 °C late on it,
// 1.4 °C early on the first). It does so only where the steps' own noise,
// σ·√2 per interval, is at most stepShare of the step's slope (a
// neighbouring step the noise may pick instead lies on the same cliff) and
// the step is sharpGain times steeper than the 5-sample T' there; ok false
// otherwise. After a fall sharper than the T' window resolves (sharpFall)
// the cliff itself says the dip is sharp, so sharpGain is not asked, and
// its steps may be noisier, up to sharpStepShare of the slope: the steps
// before the cliff lie near
// zero, far outside the cliff's share, and a few readings of nearly equal
// steep steps otherwise read on a 5-sample T' at their middle, a reading
// late (simulated 4–5 Hz cups 4.3–5.1 °C low).
func (a *Analyzer) steepestStep(i, j, lo, hi int, sig float64, sharp bool) (Point, bool) {
	if lo+2 > hi {
		return Point{}, false
	}
	best, bk := 0.0, -1
	for k := lo; k < hi; k++ {
		if v := (a.x[k+1] - a.x[k]) / (a.ts[k+1] - a.ts[k]); v < best {
			best, bk = v, k
		}
	}
	noise := stepShare
	if sharp {
		noise = sharpStepShare
	}
	if bk < 0 || math.Sqrt2*sig/a.dt > noise*-best || !sharp && -best < sharpGain*a.dipDepth(5, i, j) {
		return Point{}, false
	}
	// the cliff's first step within stepShare of the steepest: the noise
	// cannot tell them apart, and T' is most negative just after the fall
	// begins (the relaxation follows)
	for ; bk > lo; bk-- {
		if v := (a.x[bk] - a.x[bk-1]) / (a.ts[bk] - a.ts[bk-1]); v > (1-stepShare)*best {
			break
		}
	}
	return Point{TempC: (a.x[bk] + a.x[bk+1]) / 2, TimeS: (a.ts[bk] + a.ts[bk+1]) / 2, OK: true}, true
}

// solidusWindow is the T' window, samples, the end of freezing (the most
// negative T' at sample i, settled at j) is placed on: Hints.SlopeS/2, or a
// shorter one of SlopeS/4, /8 … (at least 5 samples) where the dip is
// sharper than the longer window resolves (its depth on the shorter window
// exceeds the longer window's by more than dipSigmas times the shorter
// window's T' noise, so that noise alone, which deepens the lowest sample
// of a noisier T' by a sigma or two, cannot make the step), each while its
// T' noise is at most shortShare of the dip's depth; the T' window itself
// when even SlopeS/2 is too noisy. A strong gradient's centre drops by
// several °C/s within a second at the end of freezing and then relaxes
// slowly: a window longer than that drop averages it with the relaxation
// after it and puts the point late by up to half its length, so the
// shortest window that still resolves a deeper dip is taken; a gentle dip,
// which a shorter window does not deepen beyond its noise, keeps the
// steadier half window.
func (a *Analyzer) solidusWindow(i, j int, sig float64) int {
	noise := sig / a.dt // σ_T' per unit noise gain
	w := min(curve.WindowSamples(a.h.SlopeS/2, a.rate, 2, 5), a.wd)
	depth := a.dipDepth(w, i, j)
	if curve.SavGol(w, 2, 1).NoiseGain()*noise > shortShare*depth {
		return a.wd // too noisy for the short window: keep the long one
	}
	for s := a.h.SlopeS / 4; w > 5; s /= 2 {
		v := min(curve.WindowSamples(s, a.rate, 2, 5), w)
		if v == w {
			return w
		}
		dv := a.dipDepth(v, i, j)
		if vn := curve.SavGol(v, 2, 1).NoiseGain() * noise; dv-depth < dipSigmas*vn || vn > shortShare*dv {
			return w
		}
		w, depth = v, dv
	}
	return w
}

// dipDepth is −min T' on a window of w samples around the dip at sample i
// (within half a T' window of it, and no further than xAvail(j) allows),
// °C/s.
func (a *Analyzer) dipDepth(w, i, j int) float64 {
	h := w / 2
	lo, hi := max(i-a.wd/2, h), min(i+a.wd/2, a.xAvail(j)-h)
	if lo > hi {
		return math.Abs(a.d[i])
	}
	a.dl = a.appendSlopes(a.dl[:0], curve.SavGol(w, 2, 1), lo, hi+1)
	m := math.Inf(1)
	for _, v := range a.dl {
		m = min(m, v)
	}
	a.dl = a.dl[:0]
	return -m
}

// solidus settles the end of freezing at the most negative T' and derives
// the plateau and freezing times.
func (a *Analyzer) solidus() {
	e := &a.det
	r := &e.res
	r.Solidus = a.solidusPoint(e.dminI, e.j)
	r.EutecticStart.Provisional, r.EutecticMin.Provisional, r.EutecticMax.Provisional = false, false, false
	k := a.plateauEnd(e.dminI)
	r.PlateauS = a.ts[k] - r.EutecticMin.TimeS
	if r.PlateauS < 0 {
		r.PlateauS = 0
	}
	first := r.EutecticMin.TimeS
	switch {
	case r.LiquidusMin.OK:
		first = r.LiquidusMin.TimeS
	case r.Liquidus.OK:
		first = r.Liquidus.TimeS
	}
	r.FreezingTimeS = r.Solidus.TimeS - first
	r.Complete = true
	e.stage = stageDone
	a.limit = a.xAvail(e.j) + 2
}

// cutPlateau settles the eutectic of a plateau that the end of the usable
// data (the recording's end, or a fault) interrupts before T' fell, and
// returns the result with it; ok is false when there is none. The plateau
// must have been seen whole up to its maximum: a long arrest (longArrest)
// classed as the eutectic, and where it recalesced, T' must have crossed
// + → − after it was last above +h (the maximum, as in arrestStep). The
// points are those arrest gives at the last examined index; the end of
// freezing stays null. The detector's state is left unchanged, so that a
// live sample that goes on is analysed as before.
func (a *Analyzer) cutPlateau() (Result, bool) {
	e := &a.det
	if e.stage != stageArrest || len(a.d) == 0 || e.j < len(a.d) || !(e.hold.on || e.sub == phaseRise || e.sub == phasePos && e.cand >= 0) {
		return Result{}, false
	}
	j := len(a.d) - 1
	p := max(promFloor, 8*a.sigma(j)*a.gainD)
	saved := *e
	defer func() { a.det = saved }()
	switch hd := e.hold; {
	case hd.on:
		if a.ts[j]-a.ts[hd.from] < a.shortArrest() {
			return Result{}, false
		}
		e.hold = heldArrest{}
		a.arrest(j, hd.lo, hd.hi, hd.recal, true)
	case !a.longArrest(j, e.sub == phasePos, p):
		return Result{}, false
	case e.sub == phaseRise:
		pt := a.extremum(e.dmaxI)
		a.arrest(j, pt, pt, false, true)
	default:
		a.arrest(j, e.minPt, e.maxPt, true, true)
	}
	if e.stage != stageSolidus {
		return Result{}, false
	}
	return e.res, true
}

// result assembles the Result of the current state. Once the analysis is
// done, findings after the last reading it depended on (a.limit) are left
// out, so that the answer does not depend on how much more was fed.
func (a *Analyzer) result(live bool) Result {
	r := a.det.res
	if !live || a.stopped {
		if cut, ok := a.cutPlateau(); ok {
			r = cut
		}
	}
	if !live || a.stopped {
		r.confirm() // no reading will follow: every point is final
	}
	r.Samples = a.nIn - a.badTime
	r.RateHz = a.rate
	n := len(a.spikes)
	for n > 0 && a.spikes[n-1] > a.limit {
		n--
	}
	r.Despiked = n
	if a.stopped && (a.det.j >= len(a.d) || a.det.stage == stageDone) {
		r.Complete = true // the analysis has decided the curve will give no more
	}
	r.Problems = a.probs[:len(a.probs):len(a.probs)]
	if slices.ContainsFunc(a.probAt, func(at int) bool { return at > a.limit }) {
		// rare: copy the problems that count
		var keep []Problem
		for k, p := range a.probs {
			if a.probAt[k] <= a.limit {
				keep = append(keep, p)
			}
		}
		r.Problems = keep
	}
	if live || r.Complete && a.det.stage == stageDone && !a.stopped {
		if len(r.Problems) == 0 {
			r.Problems = nil
		}
		return r
	}
	var end []Problem
	switch {
	case a.stopped:
		// the fault, noise or rate problem already says why
	case a.rate == 0 || len(a.d) == 0:
		end = append(end, Problem{Code: CodeTooFew, Message: fmt.Sprintf("too few readings to analyse (%d)", r.Samples), Fatal: true})
	case !r.PourPeak.OK:
		end = append(end, Problem{Code: CodeNoPour, Message: fmt.Sprintf("no pour found: the reading never rose to %.0f °C and fell back", a.h.MinPourC), Fatal: true})
	default:
		end = append(end, Problem{Code: CodeEndedEarly, Message: "the recording ended before the end of freezing", Fatal: true})
	}
	if len(end) > 0 {
		r.Problems = append(slices.Clone(r.Problems), end...)
	}
	if len(r.Problems) == 0 {
		r.Problems = nil
	}
	return r
}

// Slope is the T′ the points are found on, as far as the analysis has
// computed it: the Savitzky–Golay slope (Hints.SlopeS) of the despiked
// readings, °C/s, NaN over the first half window, with the time of each
// value, s. It grows with each call on a growing curve; the values already
// given do not change. The slices are the Analyzer's own: read them before
// the next call and do not change them.
func (a *Analyzer) Slope() (t, d []float64) { return a.ts[:len(a.d)], a.d }
