package curvefile_test

import (
	"fmt"
	"strings"

	"github.com/undercool-foundry/undercool/internal/curvefile"
)

// A spreadsheet export (constructed example): semicolons, decimal commas,
// units in the header.
func ExampleRead() {
	in := "# alloy: al-si7mg\n# ladle: L-2417\nTime [s];Temperature (°C)\n0,0;715,5\n0,5;714,25\n"
	c, err := curvefile.Read(strings.NewReader(in), "holder-H3.csv")
	if err != nil {
		panic(err)
	}
	fmt.Println(c.Get("alloy"), c.Time, c.Temp)

	_, err = curvefile.Read(strings.NewReader("time_s,temp_c\n0,715.5\n0.5,71x\n"), "holder-H3.csv")
	fmt.Println(err)
	// Output:
	// al-si7mg [0 0.5] [715.5 714.25]
	// holder-H3.csv:3: column "temp_c": "71x" is not a finite number
}
