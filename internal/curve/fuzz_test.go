package curve

import (
	"encoding/binary"
	"math"
	"slices"
	"testing"
)

// FuzzDespikeRun: for any readings (every bit pattern: NaN, infinities,
// subnormals, signed zeros), any run and any noise, DespikeRun gives what
// SpikeAt gives reading by reading, and a finite step bound holds. The
// first 8 bytes are the noise, the next two bytes the run, the rest the
// readings (8 bytes each, or one byte each as small steps when the flag bit
// is set, so that quiet stretches are common too).
func FuzzDespikeRun(f *testing.F) {
	seed := func(noise float64, from, to byte, small bool, vals ...float64) []byte {
		b := binary.LittleEndian.AppendUint64(nil, math.Float64bits(noise))
		flag := byte(0)
		if small {
			flag = 0x80
		}
		b = append(b, from, to|flag)
		for _, v := range vals {
			if small {
				b = append(b, byte(int8(v)))
			} else {
				b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
			}
		}
		return b
	}
	f.Add(seed(0.2, 0, 40, true, 1, 0, -1, 2, 0, 1, 30, 0, -2, 1, 0, 0, 1, -1, 0, 1, 2, 0, -1, 1))
	f.Add(seed(0, 2, 9, false, 1300, 1300.25, 1300, 1340, 1300.5, 1300, 1299.75, math.NaN(), 1299.5, 1299.25, 1299))
	f.Add(seed(math.NaN(), 0, 12, false, 0, math.Inf(1), 0, math.Copysign(0, -1), 5e-324, -5e-324, 1e308, -1e308, 3, 3, 3, 3))
	f.Fuzz(func(t *testing.T, b []byte) {
		if len(b) < 10 {
			return
		}
		noise := math.Float64frombits(binary.LittleEndian.Uint64(b))
		fromB, toB := int(b[8]), int(b[9]&0x7f)
		small := b[9]&0x80 != 0
		var x []float64
		if small {
			v := 1250.0
			for _, c := range b[10:] {
				v += float64(int8(c)) / 8
				x = append(x, v)
			}
		} else {
			for r := b[10:]; len(r) >= 8; r = r[8:] {
				x = append(x, math.Float64frombits(binary.LittleEndian.Uint64(r)))
			}
		}
		n := len(x)
		if n < 5 {
			return
		}
		from := fromB % n
		to := from + toB%(n-from+1)
		var want []float64
		var wantSpikes []int
		for i := from; i < to; i++ {
			v, spike := SpikeAt(x, i, 3, noise)
			want = append(want, v)
			if spike {
				wantSpikes = append(wantSpikes, i)
			}
		}
		got, gotSpikes, maxStep := DespikeRun(nil, nil, x, from, to, 3, noise)
		same := func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) || a != a && b != b }
		if !slices.EqualFunc(got, want, same) || !slices.Equal(gotSpikes, wantSpikes) {
			t.Fatalf("DespikeRun(%v, %d…%d, noise %g) = %v %v, SpikeAt gives %v %v", x, from, to, noise, got, gotSpikes, want, wantSpikes)
		}
		if !math.IsInf(maxStep, 1) {
			for k := 1; k < len(got); k++ {
				if !(math.Abs(got[k]-got[k-1]) <= maxStep) {
					t.Fatalf("step %g within the run exceeds the bound %g (x %v, %d…%d)", got[k]-got[k-1], maxStep, x, from, to)
				}
			}
		}
	})
}
