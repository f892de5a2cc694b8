package assess

import (
	"encoding/json"
	"testing"

	"github.com/undercool-foundry/undercool/internal/limits"
)

// Every metric of the registry has its number in the record (the same
// JSON key), and its value there is the one the limits were checked
// against; Value agrees with the record's JSON form for every number it
// knows. Constructed results (greyResult and an Al-Si one) judged by the
// shipped examples.
func TestRegistryValues(t *testing.T) {
	for _, m := range Metrics() {
		if _, ok := numberPaths[m.Name]; !ok {
			t.Errorf("registry metric %q is no number of assess.Record", m.Name)
		}
	}
	book := limits.Builtin()
	for _, c := range []struct {
		alloy string
		in    Input
	}{{"grey-iron", Input{Alloy: "grey-iron", Limits: book}}, {"al-si7mg", Input{Alloy: "al-si7mg", Limits: book}}} {
		rec := FromResult(c.in, greyResult())
		for _, ch := range rec.Checks {
			v, ok := Value(&rec, ch.Metric)
			if (ch.Value == nil) != !ok || ok && *ch.Value != v {
				t.Errorf("%s %s: checked %v, the registry's value %v %v", c.alloy, ch.Metric, ch.Value, v, ok)
			}
		}
		b, _ := json.Marshal(rec)
		var raw map[string]any
		json.Unmarshal(b, &raw)
		if p, ok := raw["potency"].(map[string]any); ok {
			for k, v := range p {
				raw[k] = v
			}
		}
		for key := range numberPaths {
			v, ok := Value(&rec, key)
			j, isNum := raw[key].(float64)
			if ok != isNum || ok && v != j {
				t.Errorf("%s %s: Value %v %v, JSON %v", c.alloy, key, v, ok, raw[key])
			}
		}
	}
}
