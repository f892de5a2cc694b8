package thermocouple_test

import (
	"fmt"

	"github.com/undercool-foundry/undercool/internal/thermocouple"
)

// A type K thermocouple reads 40.276 mV with its cold junction at 25 °C:
// NIST SRD 60 gives E(1000 °C) − E(25 °C) = 41.276 − 1.000 mV, so the
// measuring junction is at 1000 °C (within the table's 0.001 mV rounding).
func ExampleType_Temp() {
	k, err := thermocouple.Lookup("K")
	if err != nil {
		panic(err)
	}
	t, err := k.Temp(40.276, 25)
	if err != nil {
		panic(err)
	}
	fmt.Printf("%.2f °C\n", t)
	// Output: 1000.02 °C
}

// The EMF a type S thermocouple gives at the gold point, 1064.18 °C
// (ITS-90), with its cold junction in ice.
func ExampleType_EMF() {
	s, _ := thermocouple.Lookup("S")
	e, _ := s.EMF(1064.18, 0)
	fmt.Printf("%.6f mV\n", e)
	_, err := s.EMF(1800, 0)
	fmt.Println(err)
	// Output:
	// 10.334204 mV
	// thermocouple: type S: temperature 1800 °C is outside the reference range -50 °C to 1768.1 °C
}
