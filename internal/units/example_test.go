package units_test

import (
	"fmt"

	"github.com/thermalmovement/service/internal/units"
)

func ExampleParse() {
	for _, s := range []string{"30 m", "6.5e-6 1/degF", "205 GPa", "8000 cm4", "30 C"} {
		q, err := units.Parse(s)
		if err != nil {
			fmt.Println(err)
			continue
		}
		fmt.Printf("%s = %s (SI), %v\n", q, units.FormatNumber(q.SI()), q.Unit.Dim)
	}
	// Output:
	// 30 m = 30 (SI), length
	// 0.0000065 1/degF = 0.0000117 (SI), coefficient of expansion
	// 205 GPa = 205000000000 (SI), stress
	// 8000 cm4 = 0.00008 (SI), second moment of area
	// unknown unit "C" (write "degC" for degrees Celsius) in "30 C"
}

func ExampleQuantity_Temperature() {
	q, _ := units.Parse("10 degF")
	t, _ := q.Temperature()
	d, _ := q.TemperatureDifference()
	fmt.Println(units.FormatNumber(float64(t)), "K absolute")
	fmt.Println(units.FormatNumber(float64(d)), "K difference")

	q, _ = units.Parse("-300 degC")
	_, err := q.Temperature()
	fmt.Println(err)
	// Output:
	// 260.927777778 K absolute
	// 5.55555555556 K difference
	// "-300 degC" is below absolute zero
}

func ExampleFormatNumber() {
	fmt.Println(units.FormatNumber(27.000000000000004))
	fmt.Println(units.FormatNumber(0.1 + 0.2))
	fmt.Println(units.FormatNumber(1.2e-5))
	fmt.Println(units.FormatNumber(1e-7))
	fmt.Println(units.FormatNumber(1e21))
	// Output:
	// 27
	// 0.3
	// 0.000012
	// 1e-07
	// 1e+21
}
