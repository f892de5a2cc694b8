package curvefile

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/undercool-foundry/undercool/internal/cpuclock"
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
			cpu0 := cpuclock.Used()
			for b.Loop() {
				cv, err := Read(bytes.NewReader(c.data), "bench.csv")
				if err != nil || len(cv.Time) == 0 {
					b.Fatal(err)
				}
			}
			if cpu := cpuclock.Used() - cpu0; cpu > 0 {
				b.ReportMetric(float64(b.N)*float64(len(c.data))/1e6/cpu.Seconds(), "MB/cpu-s")
			}
		})
	}
}

// BenchmarkReadFile reads the committed curve files from disk, each in
// turn, as analyze does: the simulated cups of testdata/sim (the project's
// own format, 10 Hz) and the dialect examples of testdata/files. It
// reports MB/s and µs per file.
func BenchmarkReadFile(b *testing.B) {
	for _, dir := range []string{"../../testdata/sim", "../../testdata/files"} {
		files, _ := filepath.Glob(filepath.Join(dir, "*.csv"))
		txt, _ := filepath.Glob(filepath.Join(dir, "*.txt"))
		files = append(files, txt...)
		var size int64
		var ok []string
		for _, f := range files {
			if _, err := ReadFile(f); err != nil {
				continue // the deliberately bad example
			}
			fi, _ := os.Stat(f)
			size += fi.Size()
			ok = append(ok, f)
		}
		b.Run(filepath.Base(dir), func(b *testing.B) {
			b.SetBytes(size)
			b.ReportAllocs()
			for b.Loop() {
				for _, f := range ok {
					if _, err := ReadFile(f); err != nil {
						b.Fatal(err)
					}
				}
			}
			b.ReportMetric(b.Elapsed().Seconds()/float64(b.N)/float64(len(ok))*1e6, "µs/file")
		})
	}
}

// BenchmarkReadWide reads a wide file: 500,000 empty columns in 200 rows
// (100 MB; the reader before kept every column, and analyze peaked at
// 2.9 GB on it). B/op is what reading it allocates.
func BenchmarkReadWide(b *testing.B) {
	var buf bytes.Buffer
	buf.WriteString("time_s,temp_c")
	for range 499_990 {
		buf.WriteString(",c")
	}
	buf.WriteByte('\n')
	for r := range 200 {
		fmt.Fprintf(&buf, "%d,%d", r, 1300-r)
		buf.Write(bytes.Repeat([]byte{','}, 499_990))
		buf.WriteByte('\n')
	}
	data := buf.Bytes()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		c, err := Read(bytes.NewReader(data), "wide.csv")
		if err != nil || len(c.Time) != 200 {
			b.Fatal(err)
		}
	}
}
