package store

import (
	"encoding/binary"
	"errors"
	"math"
	"math/bits"

	"github.com/undercool-foundry/undercool/internal/assess"
)

// The packed column holds a result's numbers in one small blob, so that a
// month of history is read with one column per row rather than twenty
// (each column costs about a quarter of a microsecond a row in the driver).
// Layout, little-endian: byte 0 the format (1); bytes 1–8 a bitmap of the
// points present (bit i for pointColumns[i]); then samples, skipped lines
// and despiked as int64, rate_hz as float64, and each present point as
// float64 in pointColumns order. The columns and the record JSON stay the
// truth; a row without a packed value is read from its record JSON.
const packedFormat = 1

func packNumbers(rec *assess.Record) []byte {
	b := make([]byte, 9, 9+8*(4+len(pointColumns)))
	b[0] = packedFormat
	var mask uint64
	b = binary.LittleEndian.AppendUint64(b, uint64(int64(rec.Samples)))
	b = binary.LittleEndian.AppendUint64(b, uint64(int64(rec.SkippedLines)))
	b = binary.LittleEndian.AppendUint64(b, uint64(int64(rec.Despiked)))
	b = binary.LittleEndian.AppendUint64(b, math.Float64bits(rec.RateHz))
	for i, p := range pointDests(rec) {
		if p != nil && *p != nil {
			mask |= 1 << i
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(**p))
		}
	}
	binary.LittleEndian.PutUint64(b[1:9], mask)
	return b
}

var errPacked = errors.New("packed numbers are damaged")

// unpackNumbers fills rec's numbers from b, their cells from c.
func unpackNumbers(b []byte, rec *assess.Record, c *cells) error {
	if len(b) < 9+32 || b[0] != packedFormat {
		return errPacked
	}
	mask := binary.LittleEndian.Uint64(b[1:9])
	b = b[9:]
	u := func() uint64 { v := binary.LittleEndian.Uint64(b); b = b[8:]; return v }
	rec.Samples, rec.SkippedLines, rec.Despiked = int(int64(u())), int(int64(u())), int(int64(u()))
	rec.RateHz = math.Float64frombits(u())
	n := bits.OnesCount64(mask)
	if len(b) != 8*n || n > len(points) || mask>>len(points) != 0 {
		return errPacked
	}
	vals := take(&c.nums, n)
	k := 0
	for i, p := range points {
		if mask&(1<<i) == 0 {
			continue
		}
		vals[k] = math.Float64frombits(u())
		*p.field(rec) = &vals[k]
		k++
	}
	return nil
}
