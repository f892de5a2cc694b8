package curvefile

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// The files in testdata/files are simulated cups (internal/sim) written in
// several dialects; see testdata/files/README.md.
const filesDir = "../../testdata/files/"

func readExample(t *testing.T, name string) *Curve {
	t.Helper()
	c, err := ReadFile(filesDir + name)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// TestExampleFilesAgree reads one simulated cup in three dialects and checks
// they give the same curve: the semicolon export is printed to 0.1 s and
// 0.01 °C (so within half of that); the raw EMF log to 1e-6 mV, and the
// type K sensitivity is at least 0.0338 mV/°C from 0 to 1372 °C (the
// smallest slope of the ITS-90 reference function, at 1372 °C; the NIST
// SRD 60 table gives (54.886 − 48.838) mV / 172 °C = 0.035 mV/°C over
// 1200–1372 °C), so 5e-7 mV of rounding is under 1.5e-5 °C: within 2e-5 °C.
func TestExampleFilesAgree(t *testing.T) {
	own := readExample(t, "grey-iron-own-format.csv")
	semi := readExample(t, "grey-iron-semicolon-decimal-comma.csv")
	emf := readExample(t, "grey-iron-emf-type-k.csv")
	if len(own.Time) < 1000 || len(semi.Time) != len(own.Time) || len(emf.Time) != len(own.Time) {
		t.Fatalf("readings: %d %d %d", len(own.Time), len(semi.Time), len(emf.Time))
	}
	worstSemi, worstEMF := 0.0, 0.0
	for i := range own.Time {
		if math.Abs(semi.Time[i]-own.Time[i]) > 0.05+1e-9 || math.Abs(emf.Time[i]-own.Time[i]) > 0.05+1e-9 {
			t.Fatalf("reading %d: times %v %v %v", i, own.Time[i], semi.Time[i], emf.Time[i])
		}
		worstSemi = math.Max(worstSemi, math.Abs(semi.Temp[i]-own.Temp[i]))
		worstEMF = math.Max(worstEMF, math.Abs(emf.Temp[i]-own.Temp[i]))
	}
	if worstSemi > 0.005+1e-9 || worstEMF > 2e-5 {
		t.Errorf("worst differences: semicolon %.3g °C, EMF %.3g °C", worstSemi, worstEMF)
	}
	if semi.Extra[0].Name != "Channel" || semi.Get("alloy") != "grey-iron" {
		t.Errorf("semicolon file: extra %q, alloy %q", semi.Extra[0].Name, semi.Get("alloy"))
	}
	if emf.Extra[0].Name != "emf_mv" || emf.Get("thermocouple") != "K" {
		t.Errorf("EMF file: extra %q", emf.Extra[0].Name)
	}
	if own.Get("simulated") != "true" {
		t.Error("the example cup does not say it is simulated")
	}
}

func TestExampleFilesAlSi(t *testing.T) {
	tab := readExample(t, "al-si7mg-tab-no-metadata.txt")
	bare := readExample(t, "al-si7mg-headerless.csv")
	if len(tab.Time) < 1000 || len(tab.Time) != len(bare.Time) || len(tab.Meta) != 0 {
		t.Fatalf("readings %d %d, meta %v", len(tab.Time), len(bare.Time), tab.Meta)
	}
	for i := range tab.Time {
		if tab.Time[i] != bare.Time[i] || tab.Temp[i] != bare.Temp[i] {
			t.Fatalf("reading %d differs: %v %v / %v %v", i, tab.Time[i], tab.Temp[i], bare.Time[i], bare.Temp[i])
		}
	}
	_, err := ReadFile(filesDir + "ambiguous-decimal-comma.csv")
	var pe *ParseError
	if !errors.As(err, &pe) || pe.Line != 4 || !strings.Contains(err.Error(), "decimal comma") {
		t.Errorf("ambiguous file: %v", err)
	}
}
