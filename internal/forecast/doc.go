// Package forecast turns the cup model round: it fits the model's free
// parameters to a finished sample's curve and predicts what an addition to
// the ladle (an inoculant, a grain refiner, a modifier) and a wait before
// pouring would do to the sample's points and verdict. Everything it gives
// is a model estimate, worded as advice; the shop's written practice and
// its metallurgist decide. The method, its assumptions, its accuracy and
// its limits are in docs/advice.md.
//
// The package is pure: slices and records in, results out.
package forecast

import "github.com/undercool-foundry/undercool/internal/limits"

// builtin is the shipped example book, parsed once; only read.
var builtin = limits.Builtin()
