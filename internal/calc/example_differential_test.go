package calc_test

import (
	"fmt"

	"github.com/thermalmovement/service/internal/calc"
)

// A demo thermostat strip: two 0.5 mm layers of equal modulus whose
// coefficients differ by 17e-6/K, warmed by 50 K.
func ExampleBilayer_Curvature() {
	b := calc.Bilayer{ThicknessAM: 0.5e-3, ThicknessBM: 0.5e-3, ModulusAPa: 170e9, ModulusBPa: 170e9}
	k := b.Curvature(17e-6 * 50)
	fmt.Printf("curvature %.4f 1/m, radius %.3f m\n", k, 1/k)
	fmt.Printf("tip of a 60 mm cantilever %.3f mm\n", calc.CantileverTip(k, 0.060)*1e3)
	fmt.Printf("flexivity %.3g 1/K\n", calc.Flexivity(b.Thickness(), k, 50))
	// Output:
	// curvature 1.2750 1/m, radius 0.784 m
	// tip of a 60 mm cantilever 2.294 mm
	// flexivity 2.55e-05 1/K
}

// A demo steel pipe in a plant trench, fully restrained and warmed by 40 K.
func ExampleRestraint() {
	r := calc.Restraint(12e-6*40, 210e9, 1, 0)
	fmt.Printf("stress %.1f MPa\n", r.StressPa/1e6)
	// Output:
	// stress -100.8 MPa
}
