package assess

import "github.com/undercool-foundry/undercool/internal/arrest"

// Detect is the detector options Assess uses for the input: the book's
// resolution of the alloy with the sample's chemistry, or the family the
// curve suggests. A caller that needs the arrest.Result itself (the model's
// advice, internal/forecast) analyses the curve with them exactly as Assess
// does, then builds the record with FromResult.
func Detect(in Input) arrest.Options { return resolve(in).detect }
