package assess

import (
	"testing"

	"github.com/undercool-foundry/undercool/internal/limits"
)

// BenchmarkFromResult measures the metallurgy and verdict of one sample (the
// arrest detection itself is benchmarked in package arrest).
func BenchmarkFromResult(b *testing.B) {
	res := greyResult()
	in := Input{Alloy: "grey-iron"}
	for b.Loop() {
		_ = FromResult(in, res)
	}
}

func BenchmarkParseLimits(b *testing.B) {
	text := limits.Example()
	for b.Loop() {
		if _, err := limits.Parse(text, "bench"); err != nil {
			b.Fatal(err)
		}
	}
}
