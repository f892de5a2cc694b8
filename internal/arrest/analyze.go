package arrest

// Options steer the detector. The zero value analyses a cast-iron curve.
type Options struct {
	Family Family
}

// Analyze finds the characteristic points of the curve temp(t), t in s and
// temp in °C, both of the same length. Fed the first k readings of a live
// sample it reports only the points already settled by then; fed the whole
// curve it gives the offline answer.
func Analyze(t, temp []float64, opt Options) Result {
	var a Analyzer
	return a.Analyze(t, temp, opt)
}

// Analyzer holds reusable work space so that repeated live calls do not
// allocate. The zero value is ready to use; it is not safe for concurrent use.
type Analyzer struct{}

// Analyze is the package-level Analyze reusing the Analyzer's work space.
func (a *Analyzer) Analyze(t, temp []float64, opt Options) Result {
	// Placeholder until the detector lands (issue 2): it counts the samples
	// and reports that nothing was analysed, so the verdict is invalid.
	return Result{Samples: len(t), Problems: []Problem{{Code: "not-analysed", Message: "the detector is not built yet", Fatal: true}}}
}
