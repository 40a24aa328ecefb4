// Package units reads, checks and converts the physical quantities of
// thermal-movement work: lengths, areas, volumes, temperatures,
// coefficients of expansion, stresses, forces and second moments of area.
//
// Every quantity carries its unit. Values are converted to SI (metre,
// kilogram, second, kelvin) with the exact factors of NIST SP 811,
// Appendix B. Whether a temperature is an absolute temperature or a
// temperature difference is never guessed from the unit: the caller says
// which it expects, and the two have different types.
package units

import "strings"

// Dim is a physical dimension as integer exponents of the base
// quantities length, mass, time and thermodynamic temperature.
type Dim struct {
	L, M, T, Theta int8
}

// Mul returns the dimension of a product.
func (d Dim) Mul(e Dim) Dim {
	return Dim{d.L + e.L, d.M + e.M, d.T + e.T, d.Theta + e.Theta}
}

// Pow returns the dimension raised to the integer power n.
func (d Dim) Pow(n int8) Dim {
	return Dim{d.L * n, d.M * n, d.T * n, d.Theta * n}
}

// The dimensions this service works with.
var (
	Dimensionless = Dim{}
	Length        = Dim{L: 1}
	Area          = Dim{L: 2}
	Volume        = Dim{L: 3}
	SecondMoment  = Dim{L: 4}
	Curvature     = Dim{L: -1}
	Mass          = Dim{M: 1}
	Time          = Dim{T: 1}
	Temp          = Dim{Theta: 1}
	Coefficient   = Dim{Theta: -1}
	Force         = Dim{L: 1, M: 1, T: -2}
	Stress        = Dim{L: -1, M: 1, T: -2}
	Stiffness     = Dim{M: 1, T: -2}
	Moment        = Dim{L: 2, M: 1, T: -2}
	Density       = Dim{L: -3, M: 1}
	// CurvaturePerTemp is the dimension of a curvature per kelvin.
	CurvaturePerTemp = Dim{L: -1, Theta: -1}
)

var dimNames = map[Dim]string{
	Dimensionless:    "dimensionless",
	Length:           "length",
	Area:             "area",
	Volume:           "volume",
	SecondMoment:     "second moment of area",
	Curvature:        "curvature",
	Mass:             "mass",
	Time:             "time",
	Temp:             "temperature",
	Coefficient:      "coefficient of expansion",
	Force:            "force",
	Stress:           "stress",
	Stiffness:        "stiffness",
	Moment:           "moment",
	Density:          "density",
	CurvaturePerTemp: "curvature per temperature",
}

var dimExamples = map[Dim]string{
	Dimensionless:    "0.5",
	Length:           "30 m",
	Area:             "0.25 m2",
	Volume:           "2 m3",
	SecondMoment:     "8000 cm4",
	Curvature:        "0.002 1/m",
	Mass:             "12 kg",
	Temp:             "20 degC",
	Coefficient:      "12e-6/K",
	Force:            "150 kN",
	Stress:           "205 GPa",
	Stiffness:        "50 kN/mm",
	Moment:           "40 kN*m",
	Density:          "1000 kg/m3",
	Time:             "30 s",
	CurvaturePerTemp: "2e-5 1/(m*K)",
}

// String names the dimension in words, or as exponents when it has no name.
func (d Dim) String() string {
	if n, ok := dimNames[d]; ok {
		return n
	}
	var b strings.Builder
	for _, p := range []struct {
		sym string
		e   int8
	}{{"L", d.L}, {"M", d.M}, {"T", d.T}, {"Θ", d.Theta}} {
		if p.e == 0 {
			continue
		}
		if b.Len() > 0 {
			b.WriteByte(' ')
		}
		b.WriteString(p.sym)
		if p.e != 1 {
			b.WriteByte('^')
			b.WriteString(itoa(int(p.e)))
		}
	}
	return b.String()
}

// Example returns a sample input of the dimension, such as "30 m", for
// error messages.
func (d Dim) Example() string {
	if e, ok := dimExamples[d]; ok {
		return e
	}
	return ""
}

// Article returns "a" or "an" for the dimension's name.
func (d Dim) Article() string {
	if n := d.String(); n != "" && strings.ContainsRune("aeiou", rune(n[0])) {
		return "an"
	}
	return "a"
}

func itoa(n int) string {
	if n < 0 {
		return "-" + itoa(-n)
	}
	if n < 10 {
		return string(rune('0' + n))
	}
	return itoa(n/10) + string(rune('0'+n%10))
}
