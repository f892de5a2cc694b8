package thermocouple

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// TestFaultNonFinite: NaN and ±Inf as temperature, EMF or cold junction,
// for every type, are refused with a *RangeError naming the type and the
// quantity; no conversion returns a non-finite number.
func TestFaultNonFinite(t *testing.T) {
	bad := []float64{math.NaN(), math.Inf(1), math.Inf(-1)}
	for _, name := range []string{"B", "E", "J", "K", "N", "R", "S", "T"} {
		ty, err := Lookup(name)
		if err != nil {
			t.Fatal(err)
		}
		for _, v := range bad {
			for _, c := range []struct {
				quantity string
				call     func() (float64, error)
			}{
				{"temperature", func() (float64, error) { return ty.EMF(v, 25) }},
				{"cold junction", func() (float64, error) { return ty.EMF(300, v) }},
				{"EMF", func() (float64, error) { return ty.Temp(v, 25) }},
				{"cold junction", func() (float64, error) { return ty.Temp(5, v) }},
			} {
				got, err := c.call()
				var re *RangeError
				if err == nil || !errors.As(err, &re) || re.Type != name || re.Quantity != c.quantity ||
					!strings.Contains(err.Error(), "type "+name) {
					t.Errorf("type %s, %s %v: %v, %v (%T); want a *RangeError for the %s", name, c.quantity, v, got, err, err, c.quantity)
				}
			}
		}
	}
}
