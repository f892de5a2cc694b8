package curvefile

import (
	"bytes"
	"fmt"
	"math"
	"testing"
)

// constructedFile builds a simulated cup log of n readings at rate Hz in
// the given dialect: a smooth constructed cooling shape, 0.01 °C
// resolution as a logger prints it.
func constructedFile(n int, rate float64, sep string, decimalComma bool) []byte {
	var b bytes.Buffer
	b.WriteString("# alloy: grey-iron\n# sample: L-2417 cup 1 (constructed)\n")
	fmt.Fprintf(&b, "time_s%stemp_c\n", sep)
	for i := range n {
		ts := float64(i) / rate
		tc := 1150 + 150*math.Exp(-ts/40) + 2*math.Sin(ts/7)
		line := fmt.Sprintf("%.3f%s%.2f\n", ts, sep, tc)
		if decimalComma {
			line = string(bytes.ReplaceAll([]byte(line), []byte("."), []byte(",")))
		}
		b.WriteString(line)
	}
	return b.Bytes()
}

// BenchmarkRead reports parsing throughput in MB/s (b.SetBytes), and in
// MB per CPU-second (all threads, garbage collection included), which a
// busy shared machine does not distort.
func BenchmarkRead(b *testing.B) {
	cases := []struct {
		name string
		data []byte
	}{
		{"300s-10Hz", constructedFile(3000, 10, ",", false)},
		{"60000-lines", constructedFile(60000, 100, ",", false)},
		{"60000-lines-semicolon-decimal-comma", constructedFile(60000, 100, ";", true)},
	}
	for _, c := range cases {
		b.Run(c.name, func(b *testing.B) {
			b.SetBytes(int64(len(c.data)))
			b.ReportAllocs()
			cpu0 := cpuTime()
			for b.Loop() {
				cv, err := Read(bytes.NewReader(c.data), "bench.csv")
				if err != nil || len(cv.Time) == 0 {
					b.Fatal(err)
				}
			}
			if cpu := cpuTime() - cpu0; cpu0 >= 0 && cpu > 0 {
				b.ReportMetric(float64(b.N)*float64(len(c.data))/1e6/cpu.Seconds(), "MB/cpu-s")
			}
		})
	}
}
