package report

import (
	"bytes"
	"encoding/xml"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/undercool-foundry/undercool/internal/assess"
	"github.com/undercool-foundry/undercool/internal/curvefile"
	"github.com/undercool-foundry/undercool/internal/sim"
	"github.com/undercool-foundry/undercool/internal/solidpath"
)

// simulatedCup is a simulated (not measured) grey-iron cup from
// internal/sim, assessed with the shipped example limits.
func simulatedCup(t *testing.T) (*curvefile.Curve, assess.Record) {
	t.Helper()
	p, err := sim.Preset("grey-iron", 0.9, 2417)
	if err != nil {
		t.Fatal(err)
	}
	out := sim.Simulate(p)
	c := &curvefile.Curve{Name: "simulated L-2417", Meta: out.Meta, Time: out.Time, Temp: out.Temp}
	rec := assess.Assess(assess.Input{File: "L-2417.csv", Alloy: "grey-iron", Time: c.Time, Temp: c.Temp, Meta: c.Meta})
	if rec.EutecticMinC == nil {
		t.Fatalf("the simulated cup gave no eutectic minimum: %+v", rec)
	}
	return c, rec
}

var demoInfo = Info{
	Sample: "L-2417 cup 1", Ladle: "L-2417", Furnace: "IF-2", Operator: "Pell Brasswick",
	Time: time.Date(2026, 12, 1, 6, 15, 0, 0, time.UTC), StoreID: 42, CurvePath: "/deck/curves/L-2417.csv",
	CurveSHA256: "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad",
	Notes:       []string{"simulated cup for the report test"},
}

func TestWritePNG(t *testing.T) {
	c, rec := simulatedCup(t)
	path := filepath.Join(t.TempDir(), "L-2417.png")
	if err := Write(path, c, rec, demoInfo); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f) // the standard library's PNG decoder
	if err != nil {
		t.Fatalf("not a PNG: %v", err)
	}
	// A4 at 150 dpi: 210/25.4·150 = 1240.2 and 297/25.4·150 = 1753.9 pixels
	if b := img.Bounds(); b.Dx() != 1240 || b.Dy() != 1754 {
		t.Fatalf("PNG is %d × %d, want 1240 × 1754", b.Dx(), b.Dy())
	}
	// the page is not blank: some dark pixels (text, curve) on white
	dark := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 3 {
		for x := b.Min.X; x < b.Max.X; x += 3 {
			if r, g, bl, _ := img.At(x, y).RGBA(); r+g+bl < 3*0x8000 {
				dark++
			}
		}
	}
	if dark < 2000 {
		t.Errorf("only %d dark sample pixels: the page looks empty", dark)
	}
	if os.Getenv("UNDERCOOL_KEEP_REPORT") != "" { // to look at the page: UNDERCOOL_KEEP_REPORT=/tmp/page.png
		data, _ := os.ReadFile(path)
		os.WriteFile(os.Getenv("UNDERCOOL_KEEP_REPORT"), data, 0o644)
	}
}

func TestWriteSVG(t *testing.T) {
	c, rec := simulatedCup(t)
	path := filepath.Join(t.TempDir(), "L-2417.SVG")
	if err := Write(path, c, rec, demoInfo); err != nil {
		t.Fatal(err)
	}
	all := svgText(t, path)
	for _, want := range []string{
		"Thermal analysis record — sample L-2417 cup 1", "ladle L-2417", "furnace IF-2", "operator Pell Brasswick",
		"2026-12-01 06:15 UTC", "Cooling curve", "dT/dt", "eutectic min", "end of freezing",
		"Verdict: " + strings.ToUpper(rec.Verdict), Caution, "simulated cup for the report test", "record #42",
		"Fraction solid fs(T) — newtonian", "Solidification path", "fs at the eutectic minimum", "latent heat, Newtonian (apparent)",
	} {
		if !strings.Contains(all, want) {
			t.Errorf("SVG text lacks %q", want)
		}
	}
}

// A two-thermocouple cup (SIMULATED radial Al-Si cup with its wall
// thermocouple) shows the Fourier path and the coherency point.
func TestWriteTwoThermocouples(t *testing.T) {
	p, err := sim.Preset("al-si7mg", 0.6, 5)
	if err != nil {
		t.Fatal(err)
	}
	p.Cup = sim.CupRadial
	out := sim.Simulate(p)
	radii := solidpath.Geometry{WallMm: out.Truth.WallTCRadiusMm}
	c := &curvefile.Curve{Name: "simulated radial cup", Meta: out.Meta, Time: out.Time, Temp: out.Temp}
	rec := assess.Assess(assess.Input{Alloy: "al-si7mg", Time: c.Time, Temp: c.Temp, Meta: c.Meta, Wall: out.Wall, Radii: radii})
	info := demoInfo
	info.Wall, info.Radii = out.Wall, radii
	path := filepath.Join(t.TempDir(), "radial.svg")
	if err := Write(path, c, rec, info); err != nil {
		t.Fatal(err)
	}
	all := svgText(t, path)
	for _, want := range []string{"Fraction solid fs(T) — fourier", "latent heat, Fourier", "dendrite coherency", "fs at coherency"} {
		if !strings.Contains(all, want) {
			t.Errorf("SVG text lacks %q", want)
		}
	}
}

// svgText checks that the file is well-formed SVG and returns its text.
func svgText(t *testing.T, path string) string {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	dec := xml.NewDecoder(bytes.NewReader(data))
	var texts strings.Builder
	root := ""
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		switch tk := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = tk.Name.Local
			}
		case xml.CharData:
			texts.Write(tk)
			texts.WriteByte('\n')
		}
	}
	if root != "svg" {
		t.Fatalf("root element %q, want svg", root)
	}
	return texts.String()
}

func TestWriteErrors(t *testing.T) {
	c, rec := simulatedCup(t)
	dir := t.TempDir()
	for _, tc := range []struct {
		path string
		c    *curvefile.Curve
		want string
	}{
		{filepath.Join(dir, "page.pdf"), c, ".png or .svg"},
		{filepath.Join(dir, "empty.png"), &curvefile.Curve{}, "no readings"},
		{filepath.Join(dir, "no-such-dir", "page.png"), c, "no-such-dir"},
	} {
		err := Write(tc.path, tc.c, rec, Info{})
		if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), tc.path) {
			t.Errorf("Write(%s): %v; want an error naming the file and saying %q", tc.path, err, tc.want)
		}
	}
	left, _ := filepath.Glob(filepath.Join(dir, ".*"))
	if len(left) > 0 {
		t.Errorf("temporary files left: %v", left)
	}
}
