package units_test

import (
	"fmt"

	"github.com/ramify-dev/ramify/graphpde/units"
)

func ExampleConvert() {
	d, _ := units.Convert("0.5 mm", units.DimLength)
	k, _ := units.Convert("1.73 Btu/(h*ft*degF)", units.DimConductivity)
	t, _ := units.Convert("20 degC", units.DimTemperature)
	dt, _ := units.ConvertDelta("20 degC", units.DimTemperature)
	_, err := units.Convert("3 ohm", units.DimResistancePerL)
	fmt.Printf("%.4g m\n%.4g W/(m*K)\n%.5g K\n%.4g K\n%v\n", d, k, t, dt, err)
	// Output:
	// 0.0005 m
	// 2.994 W/(m*K)
	// 293.15 K
	// 20 K
	// "3 ohm": has dimension m^2*kg*s^-3*A^-2, want m*kg*s^-3*A^-2 (ohm/m)
}
