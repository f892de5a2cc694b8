package feed

import (
	"math"
	"strconv"
	"testing"
)

// FileTime gives device milliseconds exactly: a reading at n ms after the
// file's first reading is at the float64 nearest n/1000 s, the number the
// curve file writes and reads back (strconv's shortest form), however far
// into the acquisition the sample starts.
func TestFileTimeExact(t *testing.T) {
	for _, startMS := range []uint64{0, 1234, 3_600_000, 86_400_000} {
		start := float64(startMS) / 1000
		for n := uint64(0); n < 700_000; n += 37 {
			got := FileTime(float64(startMS+n)/1000, start)
			want, _ := strconv.ParseFloat(strconv.FormatUint(n/1000, 10)+"."+pad3(n%1000), 64)
			if got != want {
				t.Fatalf("start %d ms, +%d ms: %v, want %v", startMS, n, got, want)
			}
			if back, _ := strconv.ParseFloat(strconv.FormatFloat(got, 'f', -1, 64), 64); back != got {
				t.Fatalf("%v does not read back", got)
			}
		}
	}
}

func pad3(x uint64) string {
	s := strconv.FormatUint(x, 10)
	for len(s) < 3 {
		s = "0" + s
	}
	return s
}

func TestFlagsAndValid(t *testing.T) {
	if s := (FlagOpen | FlagGapAfter | FlagEMF).String(); s != "open|gap_after|emf" {
		t.Errorf("flags %q", s)
	}
	for _, c := range []struct {
		r  Reading
		ok bool
	}{{Reading{TempC: 1200}, true}, {Reading{TempC: math.NaN()}, false}, {Reading{TempC: 1200, Flags: FlagOpen}, false},
		{Reading{TempC: 1200, Flags: FlagFault | FlagEMF}, false}, {Reading{TempC: 1200, Flags: FlagGapBefore}, true}} {
		if c.r.Valid() != c.ok {
			t.Errorf("%+v: Valid %v", c.r, !c.ok)
		}
	}
}
