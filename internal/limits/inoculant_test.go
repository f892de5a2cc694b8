package limits

import (
	"errors"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

func TestShippedInoculants(t *testing.T) {
	b := Builtin()
	for _, c := range []struct {
		alloy string
		want  []string
	}{
		{"grey-iron", []string{"fesi75-ca-ba"}},
		{"Ductile-Iron ", []string{"fesi75-ca-ba"}},
		{"al-si7mg", []string{"alsr-master", "altib-rod"}},
		{"white-iron", nil},
		{"no-such-alloy", nil},
	} {
		var got []string
		for _, in := range b.Inoculants(c.alloy) {
			got = append(got, in.Name)
		}
		if !slices.Equal(got, c.want) {
			t.Errorf("Inoculants(%q) = %v, want %v", c.alloy, got, c.want)
		}
	}
	in := b.InoculantTables["fesi75-ca-ba"]
	if in.Effect != EffectEutecticNuclei || in.Gain <= 1 || in.HalfLifeMin <= 0 || in.MaxPct <= 0 || !strings.Contains(in.Description, "EXAMPLE") {
		t.Errorf("shipped iron inoculant %+v", in)
	}
}

// A limits file's inoculant tables survive Save and Load unchanged.
func TestInoculantsRoundTrip(t *testing.T) {
	b := Builtin()
	b.InoculantTables["fesi75-ca-ba"].GainU = 0.05
	b.InoculantTables["fesi75-ca-ba"].Calibrated = "pairs.csv, 2026-12-01T00:00:00Z"
	path := filepath.Join(t.TempDir(), "limits.toml")
	if err := Save(path, b); err != nil {
		t.Fatal(err)
	}
	got, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	for n, want := range b.InoculantTables {
		g := got.InoculantTables[n]
		if g == nil || g.Name != n || g.Gain != want.Gain || g.GainU != want.GainU || g.HalfLifeMin != want.HalfLifeMin ||
			g.MaxPct != want.MaxPct || g.DelayMin != want.DelayMin || g.Effect != want.Effect || !slices.Equal(g.Alloys, want.Alloys) ||
			g.Calibrated != want.Calibrated || g.Description != want.Description {
			t.Errorf("%s: read back %+v, saved %+v", n, g, want)
		}
	}
}

// Bad inoculant tables are refused with the file, line and key named.
func TestInoculantErrors(t *testing.T) {
	base := `version = "t"
[alloy.grey-iron]
family = "iron"
[alloy.grey-iron.metric.eutectic_min_c]
pass_min = 1142.0
[alloy.al-x]
family = "aluminum"
[alloy.al-x.metric.eutectic_min_c]
pass_min = 560.0
`
	for _, c := range []struct {
		name, table string
		line        int
		key, want   string
	}{
		{"no effect", "[inoculant.a]\nalloys = [\"grey-iron\"]\ngain_per_0_01_pct = 1.5\nfade_half_life_min = 8.0\nmax_addition_pct = 0.3\n",
			10, "inoculant.a.effect", "is required"},
		{"unknown effect", "[inoculant.a]\neffect = \"magic\"\nalloys = [\"grey-iron\"]\ngain_per_0_01_pct = 1.5\nfade_half_life_min = 8.0\nmax_addition_pct = 0.3\n",
			11, "inoculant.a.effect", "unknown effect"},
		{"gain below 1", "[inoculant.a]\neffect = \"eutectic-nuclei\"\nalloys = [\"grey-iron\"]\ngain_per_0_01_pct = 0.5\nfade_half_life_min = 8.0\nmax_addition_pct = 0.3\n",
			13, "inoculant.a.gain_per_0_01_pct", "from 1 to 100"},
		{"no half-life", "[inoculant.a]\neffect = \"eutectic-nuclei\"\nalloys = [\"grey-iron\"]\ngain_per_0_01_pct = 1.5\nmax_addition_pct = 0.3\n",
			10, "inoculant.a.fade_half_life_min", "positive number of minutes"},
		{"too much", "[inoculant.a]\neffect = \"eutectic-nuclei\"\nalloys = [\"grey-iron\"]\ngain_per_0_01_pct = 1.5\nfade_half_life_min = 8.0\nmax_addition_pct = 7.0\n",
			15, "inoculant.a.max_addition_pct", "at most 5 %"},
		{"unknown alloy", "[inoculant.a]\neffect = \"eutectic-nuclei\"\nalloys = [\"grey-iorn\"]\ngain_per_0_01_pct = 1.5\nfade_half_life_min = 8.0\nmax_addition_pct = 0.3\n",
			12, "inoculant.a.alloys", "unknown alloy \"grey-iorn\""},
		{"wrong family", "[inoculant.a]\neffect = \"primary-nuclei\"\nalloys = [\"grey-iron\"]\ngain_per_0_01_pct = 2.0\nfade_half_life_min = 30.0\nmax_addition_pct = 0.2\n",
			12, "inoculant.a.alloys", "is for the aluminum family"},
		{"negative delay", "[inoculant.a]\neffect = \"eutectic-depression\"\nalloys = [\"al-x\"]\ngain_per_0_01_pct = 0.2\nfade_half_life_min = 60.0\nmax_addition_pct = 0.2\ndelay_min = -1.0\n",
			16, "inoculant.a.delay_min", "0 or more"},
		{"unknown key", "[inoculant.a]\neffect = \"eutectic-nuclei\"\nalloys = [\"grey-iron\"]\ngain_per_0_01_pct = 1.5\nfade_half_life_min = 8.0\nmax_addition_pct = 0.3\nhalf_life = 3.0\n",
			16, "inoculant.a.half_life", "unknown key"},
	} {
		_, err := Parse([]byte(base+c.table), "shop.toml")
		var le *Error
		if !errors.As(err, &le) {
			t.Errorf("%s: error %v, want a *limits.Error", c.name, err)
			continue
		}
		if le.File != "shop.toml" || le.Line != c.line || le.Key != c.key || !strings.Contains(le.Msg, c.want) {
			t.Errorf("%s: %v (line %d, key %q), want line %d, key %q, a message with %q", c.name, err, le.Line, le.Key, c.line, c.key, c.want)
		}
	}
}
