package limits

import (
	"strings"
	"testing"
)

func BenchmarkParseShipped(b *testing.B) {
	data := Example()
	for b.Loop() {
		if _, err := Parse(data, "shipped"); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkGuardRefusesDeep: the guard's cost on an 80 KB file of nested
// inline tables (refused before decoding).
func BenchmarkGuardRefusesDeep(b *testing.B) {
	data := []byte("version = \"t\"\nx = " + strings.Repeat("{a = ", 13000) + "1" + strings.Repeat("}", 13000) + "\n")
	for b.Loop() {
		if _, err := Parse(data, "deep"); err == nil {
			b.Fatal("accepted")
		}
	}
}

// BenchmarkParseLargest: a valid limits file at the size bound (1 MiB of
// alloys, every one like the shipped grey iron).
func BenchmarkParseLargest(b *testing.B) {
	ex := string(Example())
	i := strings.Index(ex, "[alloy.grey-iron]")
	j := strings.Index(ex, "# ------------------------------------------------------------- ductile iron")
	grey := ex[i:j]
	var sb strings.Builder
	sb.WriteString("version = \"t\"\n")
	for n := 0; sb.Len()+len(grey)+200 < MaxFileBytes; n++ {
		sb.WriteString(strings.ReplaceAll(grey, "grey-iron", "grey-iron-"+strings.Repeat("x", n%7)+string(rune('a'+n%26))+strings.Repeat("y", n/26)))
	}
	data := []byte(sb.String())
	b.ReportMetric(float64(len(data)), "bytes")
	for b.Loop() {
		if _, err := Parse(data, "largest"); err != nil {
			b.Fatal(err)
		}
	}
}
