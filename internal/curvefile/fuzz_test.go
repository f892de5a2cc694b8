package curvefile

import (
	"bytes"
	"math"
	"reflect"
	"testing"
)

// FuzzRead checks that Read never panics, that what it accepts is a
// consistent curve of finite numbers, and that writing the curve with
// WriteCurve and reading it again gives the same curve, bit for bit; the
// same with columns named by Options. The seed corpus is in
// testdata/fuzz/FuzzRead (constructed dialect examples).
func FuzzRead(f *testing.F) {
	f.Add([]byte("# alloy: grey-iron\ntime_s,temp_c\n0,1300\n0.1,1299.5\n"))
	f.Add([]byte("Time [s];Temp (°C);note\r\n0,0;660,3;\"a;b\"\r\n"))
	f.Add([]byte("# thermocouple: K\n# cold_junction_c: 25\ntime_s,emf_mv\n0,40.276\n"))
	f.Add([]byte("Date\tTime\tAI:2  Analog Input\tMT2   Time\n02-Jan-26\t07:10:00\t712,5\t10.25\n"))
	f.Add([]byte("\xef\xbb\xbftime,Sn100,Sn90\r\n0,231.5,220\r\n1,,219\r\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		for _, opt := range []Options{{}, {TimeColumn: "2", TempColumn: "1"}, {TempColumn: "3", TempUnit: "F"}} {
			readRoundTrip(t, data, opt)
		}
	})
}

// readRoundTrip is FuzzRead's check of one reading.
func readRoundTrip(t *testing.T, data []byte, opt Options) {
	{
		c, err := opt.Read(bytes.NewReader(data), "fuzz.csv")
		if err != nil {
			if c != nil {
				t.Fatal("curve returned with an error")
			}
			return
		}
		if len(c.Time) != len(c.Temp) || len(c.Time) == 0 {
			t.Fatalf("%d times, %d temperatures", len(c.Time), len(c.Temp))
		}
		for i := range c.Time {
			if math.IsNaN(c.Time[i]) || math.IsInf(c.Time[i], 0) || math.IsNaN(c.Temp[i]) || math.IsInf(c.Temp[i], 0) {
				t.Fatalf("reading %d not finite: %v %v", i, c.Time[i], c.Temp[i])
			}
		}
		for _, col := range c.Extra {
			if len(col.Values) != len(c.Time) {
				t.Fatalf("column %q has %d values for %d readings", col.Name, len(col.Values), len(c.Time))
			}
		}
		var buf bytes.Buffer
		if err := WriteCurve(&buf, c); err != nil {
			t.Fatalf("WriteCurve: %v", err)
		}
		back, err := Read(&buf, "again.csv")
		if err != nil {
			t.Fatalf("reading back: %v\n%s", err, buf.Bytes())
		}
		if !sameFloats(back.Time, c.Time) || !sameFloats(back.Temp, c.Temp) {
			t.Fatalf("readings differ after a round trip\n%s", buf.Bytes())
		}
		if !reflect.DeepEqual(back.Meta, c.Meta) || !reflect.DeepEqual(back.Extra, c.Extra) {
			t.Fatalf("meta/extra differ after a round trip: %q %q vs %q %q", c.Meta, c.Extra, back.Meta, back.Extra)
		}
		for _, m := range c.Meta {
			if CleanValue(m.Value) != m.Value {
				t.Fatalf("metadata %q read as %q, not as CleanValue makes it", m.Key, m.Value)
			}
		}
	}
}
