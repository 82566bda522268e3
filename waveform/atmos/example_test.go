package atmos_test

import (
	"fmt"

	"github.com/hvshot/hvshot/waveform/atmos"
)

// A withstand test on an invented lab day: 98.2 kPa, 24 C, 45 % relative humidity, a
// minimum discharge path of 1.2 m and a specified test voltage of 150 kV at the
// standard atmosphere.
func ExampleCorrectWithstand() {
	day := atmos.Conditions{Pressure_pa: 98.2e3, Temperature_c: 24, RelHumidity_pct: 45}
	corr, err := atmos.CorrectWithstand(day, 150e3, 1.2)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("delta %.4f  h %.2f g/m3  k %.4f  g %.3f  m %.4f  w %.4f  Kt %.4f\n",
		corr.Delta, corr.H_g_per_m3, corr.K, corr.G, corr.M, corr.W, corr.Kt)
	fmt.Printf("apply %.1f kV\n", atmos.ToApply(150e3, corr)/1e3)
	fmt.Println("warnings:", len(corr.Warnings))

	// A disruptive discharge the same day at 180 kV, expressed at the standard atmosphere.
	flash, _ := atmos.Correct(day, 180e3, 1.2)
	fmt.Printf("discharge 180.0 kV is %.1f kV at the standard atmosphere\n", atmos.ToStandard(180e3, flash)/1e3)
	// Output:
	// delta 0.9563  h 9.76 g/m3  k 0.9920  g 0.290  m 0.0326  w 0.0326  Kt 0.9983
	// apply 149.7 kV
	// warnings: 0
	// discharge 180.0 kV is 180.4 kV at the standard atmosphere
}
