package units_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
	"gonum.org/v1/gonum/unit"
	"gonum.org/v1/gonum/unit/constant"

	"github.com/thermalmovement/service/internal/units"
)

// Reference values. Each names its published source; none is copied from
// the package under test.
const (
	refInch = 0.0254                            // NIST SP 811 (2008) Appendix B.8: 1 in = 0.0254 m exactly
	refFoot = 0.3048                            // NIST SP 811 (2008) Appendix B.8: 1 ft = 0.3048 m exactly
	refLbf  = 4.4482216152605                   // NIST SP 811 (2008) Appendix B: 1 lbf = 4.4482216152605 N
	refPsi  = 6894.757293168                    // NIST SP 811 (2008) Appendix B: 1 psi = 6894.757293168 Pa
	refKsi  = 1000 * refPsi                     // NIST SP 811 (2008) Appendix B: 1 ksi = 1000 psi
	refDegF = 5.0 / 9.0                         // 1 degF = 1 degR = 5/9 K exactly: from memory of NIST SP 811, not re-read
	refDegC = 1.0                               // 1 degC interval = 1 K: from memory of NIST SP 811, not re-read
	refZero = 273.15                            // T(K) = t(degC) + 273.15: from memory of NIST SP 811, not re-read
	refRank = 459.67                            // T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read
	refYard = 3 * refFoot                       // 1 yd = 3 ft: from memory of NIST SP 811 Appendix B.8, not re-read
	refGal  = 231 * refInch * refInch * refInch // US gallon = 231 in^3: from memory of NIST SP 811 Appendix B.8, not re-read
	refKip  = 1000 * refLbf                     // 1 kip = 1000 lbf: from memory of NIST SP 811 Appendix B.8, not re-read
	refMsi  = 1e6 * refPsi                      // 1 Msi = 10^6 psi: common practice, no published source
	refLb   = 0.45359237                        // 1 lb (avoirdupois) = 0.45359237 kg exactly: from memory of NIST SP 811 Appendix B.8, not re-read
	refPpm  = 1e-6                              // 1 ppm = 10^-6: from memory of NIST SP 811 (2008) 7.10.3, not re-read
	refPct  = 1e-2                              // 1 % = 0.01: from memory of NIST SP 811 (2008) 7.10.2, not re-read
	refBar  = 1e5                               // 1 bar = 10^5 Pa exactly: from memory of NIST SP 811 Appendix B.8, not re-read
)

// SI prefixes and the litre come from gonum (independent cross-check:
// gonum.org/v1/gonum/unit), so that a wrong prefix table in the package
// cannot be confirmed by a number typed into this file.
const (
	refMicro = unit.Micro          // independent cross-check: gonum.org/v1/gonum/unit (SI prefix micro)
	refMilli = unit.Milli          // independent cross-check: gonum.org/v1/gonum/unit (SI prefix milli)
	refCenti = unit.Centi          // independent cross-check: gonum.org/v1/gonum/unit (SI prefix centi)
	refKilo  = unit.Kilo           // independent cross-check: gonum.org/v1/gonum/unit (SI prefix kilo)
	refMega  = unit.Mega           // independent cross-check: gonum.org/v1/gonum/unit (SI prefix mega)
	refGiga  = unit.Giga           // independent cross-check: gonum.org/v1/gonum/unit (SI prefix giga)
	refLitre = float64(unit.Litre) // independent cross-check: gonum.org/v1/gonum/unit (Litre = 1e-3 m3)
	refHour  = float64(unit.Hour)  // independent cross-check: gonum.org/v1/gonum/unit (Hour = 3600 s)
)

// near reports whether got is within rel (relative) of want.
func near(got, want, rel float64) bool {
	if got == want {
		return true
	}
	return math.Abs(got-want) <= rel*math.Max(math.Abs(got), math.Abs(want))
}

const tol = 1e-12 // relative; far below the 12 significant digits of any output

type parseCase struct {
	in     string
	si     float64
	dim    units.Dim
	value  float64
	symbol string
}

// parseCases are accepted spellings. The source of each expected SI value
// is given beside it; the spelling itself follows the grammar in the doc
// comment of Parse (package contract).
var parseCases = []parseCase{
	// Spacing: package contract, Parse doc ("with or without a space").
	{"30 m", 30, units.Length, 30, "m"},
	{"30m", 30, units.Length, 30, "m"},
	{"  30 m ", 30, units.Length, 30, "m"},
	{"+30 m", 30, units.Length, 30, "m"},
	{"-2.5e3 mm", -2.5e3 * refMilli, units.Length, -2500, "mm"},
	{".5 m", 0.5, units.Length, 0.5, "m"},
	// Coefficients of expansion.
	{"12e-6/K", 12e-6, units.Coefficient, 12e-6, "/K"},                              // package contract: leading "/" means one over the rest
	{"6.5e-6 1/degF", 6.5e-6 / refDegF, units.Coefficient, 6.5e-6, "1/degF"},        // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read (6.5e-6 * 9/5 = 1.17e-5 /K)
	{"11.7 ppm/K", 11.7 * refPpm, units.Coefficient, 11.7, "ppm/K"},                 // ppm = 1e-6: from memory of NIST SP 811 7.10.3, not re-read
	{"11.7 ppm/degC", 11.7 * refPpm / refDegC, units.Coefficient, 11.7, "ppm/degC"}, // 1 degC interval = 1 K: from memory of NIST SP 811, not re-read
	{"12 um/(m*K)", 12 * refMicro, units.Coefficient, 12, "um/(m*K)"},               // independent cross-check: gonum.org/v1/gonum/unit Micro
	{"12 um/m/K", 12 * refMicro, units.Coefficient, 12, "um/m/K"},                   // package contract: left associative; gonum Micro
	{"6.5 in/(in*degF)", 6.5 / refDegF, units.Coefficient, 6.5, "in/(in*degF)"},     // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
	{"6.5e-6 /[degF]", 6.5e-6 / refDegF, units.Coefficient, 6.5e-6, "/[degF]"},      // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
	{"12e-6 1/Cel", 12e-6 / refDegC, units.Coefficient, 12e-6, "1/Cel"},             // 1 degC interval = 1 K: from memory of NIST SP 811, not re-read
	// Stress and force.
	{"205 GPa", 205 * refGiga, units.Stress, 205, "GPa"},                                 // gonum Giga
	{"29000 ksi", 29000 * refKsi, units.Stress, 29000, "ksi"},                            // NIST SP 811 (2008) Appendix B: ksi = 1000 psi, psi = 6894.757293168 Pa
	{"235 N/mm2", 235 / (refMilli * refMilli), units.Stress, 235, "N/mm2"},               // gonum Milli
	{"1 psi", refPsi, units.Stress, 1, "psi"},                                            // NIST SP 811 (2008) Appendix B: 1 psi = 6894.757293168 Pa
	{"1 [psi]", refPsi, units.Stress, 1, "[psi]"},                                        // NIST SP 811 (2008) Appendix B: 1 psi = 6894.757293168 Pa
	{"10 Msi", 10 * refMsi, units.Stress, 10, "Msi"},                                     // Msi = 1e6 psi: common practice, no published source
	{"250 kPa", 250 * refKilo, units.Stress, 250, "kPa"},                                 // gonum Kilo
	{"2 bar", 2 * refBar, units.Stress, 2, "bar"},                                        // 1 bar = 1e5 Pa: from memory of NIST SP 811, not re-read
	{"150 kN", 150 * refKilo, units.Force, 150, "kN"},                                    // gonum Kilo
	{"2 MN", 2 * refMega, units.Force, 2, "MN"},                                          // gonum Mega
	{"3 lbf", 3 * refLbf, units.Force, 3, "lbf"},                                         // NIST SP 811 (2008) Appendix B: 1 lbf = 4.4482216152605 N
	{"3 kip", 3 * refKip, units.Force, 3, "kip"},                                         // kip = 1000 lbf: from memory of NIST SP 811, not re-read
	{"40 kN*m", 40 * refKilo, units.Moment, 40, "kN*m"},                                  // gonum Kilo
	{"40 kN.m", 40 * refKilo, units.Moment, 40, "kN.m"},                                  // gonum Kilo
	{"40 kN·m", 40 * refKilo, units.Moment, 40, "kN·m"},                                  // gonum Kilo
	{"12e-6 K⁻¹", 12e-6, units.Coefficient, 12e-6, "K⁻¹"},                                // superscript powers, negative ones too: ISO 80000-1 (from memory, not re-read)
	{"205 kN·mm⁻²", 205 * refKilo / (refMilli * refMilli), units.Stress, 205, "kN·mm⁻²"}, // 1 kN/mm2 = 1 GPa
	{"40 kN m", 40 * refKilo, units.Moment, 40, "kN m"},                                  // a space multiplies: SI Brochure 5.4.3, "N m or N·m" (from memory, not re-read)
	{"0.012 mm/(m K)", 0.012 * refMilli, units.Coefficient, 0.012, "mm/(m K)"},           // the same, inside the divisor's parentheses
	{"2 kip*ft", 2 * refKip * refFoot, units.Moment, 2, "kip*ft"},                        // kip: from memory of NIST SP 811, not re-read; ft: NIST SP 811 B.8
	{"50 kN/mm", 50 * refKilo / refMilli, units.Stiffness, 50, "kN/mm"},                  // gonum Kilo, Milli
	// Lengths.
	{"3 mm", 3 * refMilli, units.Length, 3, "mm"},         // gonum Milli
	{"3 cm", 3 * refCenti, units.Length, 3, "cm"},         // gonum Centi
	{"3 um", 3 * refMicro, units.Length, 3, "um"},         // gonum Micro
	{"3 µm", 3 * refMicro, units.Length, 3, "µm"},         // gonum Micro (U+00B5 micro sign)
	{"3 μm", 3 * refMicro, units.Length, 3, "μm"},         // gonum Micro (U+03BC Greek mu)
	{"3 in", 3 * refInch, units.Length, 3, "in"},          // NIST SP 811 (2008) Appendix B.8: 1 in = 0.0254 m exactly
	{"3 [in_i]", 3 * refInch, units.Length, 3, "[in_i]"},  // NIST SP 811 (2008) Appendix B.8: 1 in = 0.0254 m exactly
	{"3 ft", 3 * refFoot, units.Length, 3, "ft"},          // NIST SP 811 (2008) Appendix B.8: 1 ft = 0.3048 m exactly
	{"3 [ft_i]", 3 * refFoot, units.Length, 3, "[ft_i]"},  // NIST SP 811 (2008) Appendix B.8: 1 ft = 0.3048 m exactly
	{"3 yd", 3 * refYard, units.Length, 3, "yd"},          // 1 yd = 3 ft: from memory of NIST SP 811, not re-read
	{"3 mil", 3 * refInch / 1000, units.Length, 3, "mil"}, // mil = 0.001 in: from memory of NIST SP 811 Appendix B.8, not re-read
	{"0.002 1/m", 0.002, units.Curvature, 0.002, "1/m"},   // package contract: unit "1"
	{"0.002 m^-1", 0.002, units.Curvature, 0.002, "m^-1"}, // package contract: exponent "^" ["+"|"-"] digits
	// Areas, volumes, second moments.
	{"2 m^2", 2, units.Area, 2, "m^2"},                                          // package contract: exponent
	{"2 m2", 2, units.Area, 2, "m2"},                                            // package contract: digits after a symbol are its exponent
	{"2 m²", 2, units.Area, 2, "m²"},                                            // package contract: superscript exponent
	{"2 m^+2", 2, units.Area, 2, "m^+2"},                                        // package contract: exponent sign
	{"2 mm2", 2 * refMilli * refMilli, units.Area, 2, "mm2"},                    // gonum Milli
	{"2 cm2", 2 * refCenti * refCenti, units.Area, 2, "cm2"},                    // gonum Centi
	{"2 in2", 2 * refInch * refInch, units.Area, 2, "in2"},                      // NIST SP 811 (2008) Appendix B.8: 1 in = 0.0254 m exactly
	{"2 ft2", 2 * refFoot * refFoot, units.Area, 2, "ft2"},                      // NIST SP 811 (2008) Appendix B.8: 1 ft = 0.3048 m exactly
	{"2 m3", 2, units.Volume, 2, "m3"},                                          // package contract: exponent
	{"2 m³", 2, units.Volume, 2, "m³"},                                          // package contract: superscript exponent
	{"2 ft3", 2 * refFoot * refFoot * refFoot, units.Volume, 2, "ft3"},          // NIST SP 811 (2008) Appendix B.8: 1 ft = 0.3048 m exactly
	{"2 in3", 2 * refInch * refInch * refInch, units.Volume, 2, "in3"},          // NIST SP 811 (2008) Appendix B.8: 1 in = 0.0254 m exactly
	{"2 L", 2 * refLitre, units.Volume, 2, "L"},                                 // gonum Litre
	{"2 l", 2 * refLitre, units.Volume, 2, "l"},                                 // gonum Litre
	{"2 mL", 2 * refMilli * refLitre, units.Volume, 2, "mL"},                    // gonum Milli, Litre
	{"2 gal", 2 * refGal, units.Volume, 2, "gal"},                               // US gallon = 231 in^3: from memory of NIST SP 811, not re-read
	{"2 [gal_us]", 2 * refGal, units.Volume, 2, "[gal_us]"},                     // US gallon = 231 in^3: from memory of NIST SP 811, not re-read
	{"8000 cm4", 8000 * math.Pow(refCenti, 4), units.SecondMoment, 8000, "cm4"}, // gonum Centi
	{"2 mm4", 2 * math.Pow(refMilli, 4), units.SecondMoment, 2, "mm4"},          // gonum Milli
	{"2 in⁴", 2 * math.Pow(refInch, 4), units.SecondMoment, 2, "in⁴"},           // NIST SP 811 (2008) Appendix B.8: 1 in = 0.0254 m exactly
	// Mass, density, time.
	{"1000 kg/m3", 1000, units.Density, 1000, "kg/m3"}, // gonum Kilogram = Kilo*Gram
	{"2 lb", 2 * refLb, units.Mass, 2, "lb"},           // 1 lb = 0.45359237 kg: from memory of NIST SP 811, not re-read
	{"2 h", 2 * refHour, units.Time, 2, "h"},           // gonum Hour
	// Temperatures: SI() of a temperature is an interval (package contract).
	{"20 K", 20, units.Temp, 20, "K"},                     // kelvin is the SI unit
	{"20 degC", 20 * refDegC, units.Temp, 20, "degC"},     // 1 degC interval = 1 K: from memory of NIST SP 811, not re-read
	{"20 °C", 20 * refDegC, units.Temp, 20, "°C"},         // 1 degC interval = 1 K: from memory of NIST SP 811, not re-read
	{"20 Cel", 20 * refDegC, units.Temp, 20, "Cel"},       // 1 degC interval = 1 K: from memory of NIST SP 811, not re-read
	{"20 degF", 20 * refDegF, units.Temp, 20, "degF"},     // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
	{"20 °F", 20 * refDegF, units.Temp, 20, "°F"},         // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
	{"20 [degF]", 20 * refDegF, units.Temp, 20, "[degF]"}, // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
	{"20 degR", 20 * refDegF, units.Temp, 20, "degR"},     // 1 degR = 5/9 K: from memory of NIST SP 811, not re-read
	{"20 °R", 20 * refDegF, units.Temp, 20, "°R"},         // 1 degR = 5/9 K: from memory of NIST SP 811, not re-read
	// Dimensionless.
	{"50 %", 50 * refPct, units.Dimensionless, 50, "%"},      // % = 0.01: from memory of NIST SP 811 7.10.2, not re-read
	{"0.5", 0.5, units.Dimensionless, 0.5, ""},               // package contract: a bare number is dimensionless
	{"0.5 1", 0.5, units.Dimensionless, 0.5, "1"},            // package contract: unit "1"
	{"3 [ppm]", 3 * refPpm, units.Dimensionless, 3, "[ppm]"}, // ppm = 1e-6: from memory of NIST SP 811 7.10.3, not re-read
}

func TestParse(t *testing.T) {
	for _, c := range parseCases {
		t.Run(c.in, func(t *testing.T) {
			q, err := units.Parse(c.in)
			if err != nil {
				t.Fatalf("Parse(%q) error %v, want %v %v", c.in, err, c.si, c.dim)
			}
			if !near(q.SI(), c.si, tol) {
				t.Errorf("Parse(%q).SI() = %v, want %v", c.in, q.SI(), c.si)
			}
			if q.Unit.Dim != c.dim {
				t.Errorf("Parse(%q).Unit.Dim = %v, want %v", c.in, q.Unit.Dim, c.dim)
			}
			if q.Value != c.value {
				t.Errorf("Parse(%q).Value = %v, want %v", c.in, q.Value, c.value)
			}
			if q.Unit.Symbol != c.symbol {
				t.Errorf("Parse(%q).Unit.Symbol = %q, want %q", c.in, q.Unit.Symbol, c.symbol)
			}
			// In with the right dimension gives the same SI value
			// (package contract, Quantity.In doc).
			if c.dim != units.Dimensionless || c.symbol != "" {
				if v, err := q.In(c.dim); err != nil || v != q.SI() {
					t.Errorf("Parse(%q).In(%v) = %v, %v, want %v, nil", c.in, c.dim, v, err, q.SI())
				}
			}
		})
	}
}

// TestParseSpellingsAgree checks that spellings of one quantity parse to
// the same SI value, dimension and scale flag (package contract: Parse
// grammar; the UCUM codes are equivalent to the plain symbols).
func TestParseSpellingsAgree(t *testing.T) {
	groups := [][]string{
		{"30 m", "30m", "  30 m ", "30 m ", "30 (m)", "3000 cm", "30000 mm"},
		{"2 m^2", "2 m2", "2 m²", "2 m^+2", "2 m*m", "2 (m)2", "2 m.m", "2 m·m"},
		{"1 um/(m*K)", "1 um/m/K", "1 µm/(m*K)", "1 μm/m/K", "1e-6/K", "1 ppm/K", "1 ppm/degC", "1 [ppm]/Cel", "1e-6 1/K", "1e-6 K^-1", "1 um/m/Cel", "1e-6 K-1", "1 um.m-1.K-1"},
		{"1 degF", "1 °F", "1 [degF]", "1 ℉"},
		{"1 degC", "1 °C", "1 Cel", "1 ℃"},
		{"1 degR", "1 °R", "1 [degR]"},
		{"1 in", "1 [in_i]"},
		{"1 N/mm2", "1 MPa", "1 N/mm^2", "1 N/mm²", "1 N*mm^-2", "1 N/(mm*mm)", "1 N.mm-2"},
	}
	type view struct {
		SI    float64
		Dim   units.Dim
		Scale bool
	}
	of := func(q units.Quantity) view { return view{q.SI(), q.Unit.Dim, q.Unit.IsScale()} }
	for _, g := range groups {
		first, err := units.Parse(g[0])
		if err != nil {
			t.Fatalf("Parse(%q): %v", g[0], err)
		}
		for _, s := range g[1:] {
			t.Run(s, func(t *testing.T) {
				q, err := units.Parse(s)
				if err != nil {
					t.Fatalf("Parse(%q): %v", s, err)
				}
				if d := cmp.Diff(of(first), of(q), cmpopts.EquateApprox(tol, 0)); d != "" {
					t.Errorf("Parse(%q) differs from Parse(%q) (-first +got):\n%s", s, g[0], d)
				}
			})
		}
	}
}

// gonumOf builds the gonum value of a parsed quantity in SI, with its
// dimensions, for the independent cross-check.
func gonumOf(q units.Quantity) *unit.Unit {
	d := q.Unit.Dim
	return unit.New(q.SI(), unit.Dimensions{
		unit.LengthDim:      int(d.L),
		unit.MassDim:        int(d.M),
		unit.TimeDim:        int(d.T),
		unit.TemperatureDim: int(d.Theta),
	})
}

// TestGonumCrossCheck compares value and dimensions with expressions built
// from gonum's SI units (independent cross-check: gonum.org/v1/gonum/unit).
func TestGonumCrossCheck(t *testing.T) {
	m := func() *unit.Unit { return unit.Metre.Unit() }
	mm := func() *unit.Unit { return (unit.Milli * unit.Metre).Unit() }
	lb := func() *unit.Unit { return (refLb * unit.Kilogram).Unit() }
	cases := []struct {
		in   string
		want *unit.Unit
	}{
		{"30 m", (30 * unit.Metre).Unit()},                                               // independent cross-check: gonum.org/v1/gonum/unit
		{"3 mm", (3 * unit.Milli * unit.Metre).Unit()},                                   // independent cross-check: gonum.org/v1/gonum/unit
		{"3 µm", (3 * unit.Micro * unit.Metre).Unit()},                                   // independent cross-check: gonum.org/v1/gonum/unit
		{"3 cm", (3 * unit.Centi * unit.Metre).Unit()},                                   // independent cross-check: gonum.org/v1/gonum/unit
		{"150 kN", (150 * unit.Kilo * unit.Newton).Unit()},                               // independent cross-check: gonum.org/v1/gonum/unit
		{"2 MN", (2 * unit.Mega * unit.Newton).Unit()},                                   // independent cross-check: gonum.org/v1/gonum/unit
		{"205 GPa", (205 * unit.Giga * unit.Pascal).Unit()},                              // independent cross-check: gonum.org/v1/gonum/unit
		{"250 kPa", (250 * unit.Kilo * unit.Pascal).Unit()},                              // independent cross-check: gonum.org/v1/gonum/unit
		{"2 L", (2 * unit.Litre).Unit()},                                                 // independent cross-check: gonum.org/v1/gonum/unit
		{"2 mL", (2 * unit.Milli * unit.Litre).Unit()},                                   // independent cross-check: gonum.org/v1/gonum/unit
		{"2 h", (2 * unit.Hour).Unit()},                                                  // independent cross-check: gonum.org/v1/gonum/unit
		{"20 K", (20 * unit.Kelvin).Unit()},                                              // independent cross-check: gonum.org/v1/gonum/unit
		{"40 kN*m", (40 * unit.Kilo * unit.Newtonmetre).Unit()},                          // independent cross-check: gonum.org/v1/gonum/unit
		{"235 N/mm2", (235 * unit.Newton).Unit().Div(mm().Mul(mm()))},                    // independent cross-check: gonum.org/v1/gonum/unit
		{"1000 kg/m3", (1000 * unit.Kilogram).Unit().Div(m().Mul(m()).Mul(m()))},         // independent cross-check: gonum.org/v1/gonum/unit
		{"12 um/(m*K)", (12 * unit.Micro * unit.Metre).Unit().Div(m().Mul(unit.Kelvin))}, // independent cross-check: gonum.org/v1/gonum/unit
		{"12e-6/K", unit.New(12e-6, unit.Dimensions{}).Div(unit.Kelvin)},                 // independent cross-check: gonum.org/v1/gonum/unit
		{"50 kN/mm", (50 * unit.Kilo * unit.Newton).Unit().Div(mm())},                    // independent cross-check: gonum.org/v1/gonum/unit
		{"8000 cm4", unit.New(8000, unit.Dimensions{}).Mul(unit.Centi * unit.Metre).Mul(unit.Centi * unit.Metre).Mul(unit.Centi * unit.Metre).Mul(unit.Centi * unit.Metre)}, // independent cross-check: gonum.org/v1/gonum/unit
		// lbf = lb * g_n: the [read] SP 811 factor for lbf must agree with
		// gonum's exact standard gravity times the pound (from memory of
		// NIST SP 811, not re-read).
		{"3 lbf", lb().Mul(constant.StandardGravity).Mul(unit.New(3, unit.Dimensions{}))},                          // independent cross-check: gonum.org/v1/gonum/unit/constant StandardGravity
		{"1 psi", lb().Mul(constant.StandardGravity).Div((refInch * unit.Metre).Unit().Mul(refInch * unit.Metre))}, // independent cross-check: gonum.org/v1/gonum/unit/constant; in: NIST SP 811 B.8
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			q, err := units.Parse(c.in)
			if err != nil {
				t.Fatalf("Parse(%q): %v", c.in, err)
			}
			got := gonumOf(q)
			if !unit.DimensionsMatch(got, c.want) {
				t.Errorf("Parse(%q) dimensions = %v, want %v (gonum)", c.in, got.Dimensions(), c.want.Dimensions())
			}
			if !near(got.Value(), c.want.Value(), tol) {
				t.Errorf("Parse(%q).SI() = %v, want %v (gonum)", c.in, got.Value(), c.want.Value())
			}
		})
	}
}

type errCase struct {
	in   string
	want error
	msg  []string // substrings of the message
}

// rejectCases must be refused. The expected sentinels are those documented
// on the Err* variables and in the Parse doc (package contract).
var rejectCases = []errCase{
	{"", units.ErrSyntax, []string{"empty"}},
	{"   ", units.ErrSyntax, []string{"empty"}},
	{"m", units.ErrNumber, []string{`"m"`, `"30 m"`}},
	{"NaN m", units.ErrNumber, nil},
	{"nan", units.ErrNumber, nil},
	{"Inf m", units.ErrNumber, nil},
	{"inf", units.ErrNumber, nil},
	{"-Inf", units.ErrNumber, nil},
	{"+ m", units.ErrNumber, nil},
	{". m", units.ErrNumber, nil},
	{"--5 m", units.ErrNumber, nil},
	{"0x1p3 m", units.ErrNumber, nil},
	{"0X10 m", units.ErrNumber, nil},
	{"1_000 m", units.ErrNumber, nil},
	{"1e400 m", units.ErrNumber, []string{"out of range"}},
	{"1e300 Gm3", units.ErrNumber, []string{"out of range"}},
	{"30,5 m", units.ErrNumber, []string{"decimal separator", `"."`}},
	{"30 ,5 m", units.ErrNumber, []string{"decimal separator"}},
	{"30 C", units.ErrUnknownUnit, []string{`unknown unit "C"`, "degC"}},
	{"30 F", units.ErrUnknownUnit, []string{`unknown unit "F"`, "degF"}},
	{"30 mtr", units.ErrUnknownUnit, []string{`unknown unit "mtr" in "30 mtr"`}},
	{"30 inch", units.ErrUnknownUnit, []string{`write "in"`}},
	{"30 kgf", units.ErrUnknownUnit, []string{"kN"}},
	{"30 mK", units.ErrUnknownUnit, nil},    // K takes no prefix (table)
	{"30 kdegC", units.ErrUnknownUnit, nil}, // degC takes no prefix (table)
	{"30 kin", units.ErrUnknownUnit, nil},   // in takes no prefix (table)
	{"30 m^", units.ErrSyntax, []string{"exponent"}},
	{"30 m^-", units.ErrSyntax, []string{"exponent"}},
	{"30 m^0", units.ErrSyntax, []string{"exponent"}},
	{"30 m0", units.ErrSyntax, []string{"exponent"}},
	{"30 m^10", units.ErrSyntax, []string{"too large"}},
	{"30 (m", units.ErrSyntax, []string{`")"`}},
	{"30 m)", units.ErrSyntax, []string{`")"`}},
	{"30 ()", units.ErrSyntax, nil},
	{"30 m//K", units.ErrSyntax, nil},
	{"30 m/", units.ErrSyntax, []string{"ends early"}},
	{"30 m*", units.ErrSyntax, []string{"ends early"}},
	{"30 mm/m K", units.ErrSyntax, []string{"ambiguous"}}, // a space after "/": mm/(m K) or (mm/m) K?
	{"2 1 m", units.ErrSyntax, nil},                       // a stray digit: the unit one takes no space product
	{"30 (((((m)))))", units.ErrSyntax, []string{"nested"}},
	{"30 " + strings.Repeat("(", 100) + "m" + strings.Repeat(")", 100), units.ErrSyntax, []string{"nested"}},
}

func TestParseRejects(t *testing.T) {
	for _, c := range rejectCases {
		t.Run(c.in, func(t *testing.T) {
			q, err := units.Parse(c.in)
			if err == nil {
				t.Fatalf("Parse(%q) = %v, want error %v", c.in, q, c.want)
			}
			if !errors.Is(err, c.want) {
				t.Errorf("Parse(%q) error %q, want errors.Is %v", c.in, err, c.want)
			}
			var pe *units.Error
			if !errors.As(err, &pe) {
				t.Fatalf("Parse(%q) error %T, want *units.Error", c.in, err)
			}
			if pe.Input != c.in {
				t.Errorf("Parse(%q) error Input = %q, want %q", c.in, pe.Input, c.in)
			}
			msg := err.Error()
			// The input is quoted, its first 80 bytes where it is longer.
			quoted := strconv.Quote(c.in)
			if len(c.in) > 80 {
				quoted = strings.TrimSuffix(strconv.Quote(c.in[:80]), `"`)
			}
			if strings.TrimSpace(c.in) != "" && !strings.Contains(msg, quoted) {
				t.Errorf("Parse(%q) error %q does not quote the input", c.in, msg)
			}
			for _, s := range c.msg {
				if !strings.Contains(msg, s) {
					t.Errorf("Parse(%q) error %q, want it to contain %q", c.in, msg, s)
				}
			}
		})
	}
}

// TestParseDigitsAfterOne: the grammar in the Parse doc reads
// `term = symbol [exponent] | "1" | "(" unit ")" [exponent]`, and the
// comment in term() says digits after the unit "1" are not an exponent.
// So "12" is not a unit expression. BUG: the parser reads it as 1^2 and
// silently drops the digit, e.g. Parse("5 12/K") = 5 /K.
func TestParseDigitsAfterOne(t *testing.T) {
	for _, in := range []string{"5 12", "5 12/K", "30 15*m", "5 19/degF"} {
		t.Run(in, func(t *testing.T) {
			q, err := units.Parse(in)
			if !errors.Is(err, units.ErrSyntax) {
				t.Errorf("Parse(%q) = %v (SI %v, %v), %v; want error wrapping ErrSyntax (package contract: Parse grammar)", in, q, q.SI(), q.Unit.Dim, err)
			}
		})
	}
	if u, err := units.ParseUnit("12/K"); !errors.Is(err, units.ErrSyntax) {
		t.Errorf("ParseUnit(%q) = %+v, %v; want error wrapping ErrSyntax (package contract: Parse grammar)", "12/K", u, err)
	}
}

// overflowCases are unit expressions whose exponents or factors leave the
// ranges of their types: Dim holds int8 exponents, and the factor is a
// float64. The package doc promises that every quantity is converted to
// SI and checked for its dimension (package contract); a silently wrapped
// dimension or a NaN, infinite or zero factor breaks that. BUG: all are
// accepted today. They are kept out of the fuzz seed corpus so that the
// fuzzer can still run; FuzzParse checks the same property.
var overflowCases = []struct {
	in, why string
}{
	{"1 (Gm9)4/(Gm9)4", "factor Inf/Inf: SI value NaN, dimensionless"},
	{"0 (Gm9)4", "0 * Inf factor: SI value NaN"},
	{"1 (nm9)4", "factor underflows to 0: SI value 0 for a value of 1"},
	{"1 ((m9)9)2", "L exponent 162 wraps to -94 in int8"},
	{"1 ((m9)9)3*m9*m5", "L exponent 257 wraps to 1: accepted as a length"},
}

func TestParseRejectsOverflowingUnit(t *testing.T) {
	for _, c := range overflowCases {
		t.Run(c.in, func(t *testing.T) {
			q, err := units.Parse(c.in)
			if err == nil {
				t.Errorf("Parse(%q) = %v with SI %v and dimension %v, want an error (%s)", c.in, q, q.SI(), q.Unit.Dim, c.why)
			} else if !errors.Is(err, units.ErrSyntax) && !errors.Is(err, units.ErrNumber) {
				t.Errorf("Parse(%q) error %v, want ErrSyntax or ErrNumber", c.in, err)
			}
		})
	}
}

func TestParseUnit(t *testing.T) {
	cases := []struct {
		in     string
		factor float64
		dim    units.Dim
		scale  bool
		offset float64
	}{
		{"mm", refMilli, units.Length, false, 0},                     // gonum Milli
		{" mm ", refMilli, units.Length, false, 0},                   // gonum Milli
		{"1/degF", 1 / refDegF, units.Coefficient, false, 0},         // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
		{"N/mm2", 1 / (refMilli * refMilli), units.Stress, false, 0}, // gonum Milli
		{"degC", refDegC, units.Temp, true, refZero},                 // T(K) = t + 273.15: from memory of NIST SP 811, not re-read
		{"Cel", refDegC, units.Temp, true, refZero},                  // T(K) = t + 273.15: from memory of NIST SP 811, not re-read
		{"degF", refDegF, units.Temp, true, refRank},                 // T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read
		{"[degF]", refDegF, units.Temp, true, refRank},               // T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read
		{"degR", refDegF, units.Temp, true, 0},                       // 1 degR = 5/9 K, zero at 0 K: from memory of NIST SP 811, not re-read
		{"K", 1, units.Temp, true, 0},                                // kelvin: SI unit of thermodynamic temperature
		{"(K)", 1, units.Temp, false, 0},                             // package contract: a group is never a bare scale
		{"degC*1", refDegC, units.Temp, false, 0},                    // package contract: only a single symbol is a scale
		{"K2/K", 1, units.Temp, false, 0},                            // package contract: a power is an interval unit
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			u, err := units.ParseUnit(c.in)
			if err != nil {
				t.Fatalf("ParseUnit(%q): %v", c.in, err)
			}
			if !near(u.Factor, c.factor, tol) || u.Dim != c.dim || u.IsScale() != c.scale || !near(u.Offset, c.offset, tol) {
				t.Errorf("ParseUnit(%q) = {Factor %v, Dim %v, scale %v, Offset %v}, want {%v, %v, %v, %v}",
					c.in, u.Factor, u.Dim, u.IsScale(), u.Offset, c.factor, c.dim, c.scale, c.offset)
			}
			if u.Symbol != strings.TrimSpace(c.in) {
				t.Errorf("ParseUnit(%q).Symbol = %q, want %q", c.in, u.Symbol, strings.TrimSpace(c.in))
			}
		})
	}
	for _, in := range []string{"", "  "} {
		if _, err := units.ParseUnit(in); !errors.Is(err, units.ErrNoUnit) {
			t.Errorf("ParseUnit(%q) error %v, want ErrNoUnit", in, err)
		}
	}
}

func TestNew(t *testing.T) {
	q, err := units.New(30, "m")
	if err != nil || q.SI() != 30 || q.Unit.Dim != units.Length || q.String() != "30 m" {
		t.Errorf("New(30, %q) = %v (SI %v, %v), %v; want 30 m", "m", q, q.SI(), q.Unit.Dim, err)
	}
	bad := []struct {
		v    float64
		unit string
		want error
	}{
		{math.NaN(), "m", units.ErrNumber},
		{math.Inf(1), "m", units.ErrNumber},
		{math.Inf(-1), "m", units.ErrNumber},
		{1e300, "Gm3", units.ErrNumber},
		{1, "", units.ErrNoUnit},
		{1, "mtr", units.ErrUnknownUnit},
		{1, "m^", units.ErrSyntax},
	}
	for _, c := range bad {
		t.Run(c.unit, func(t *testing.T) {
			if q, err := units.New(c.v, c.unit); !errors.Is(err, c.want) {
				t.Errorf("New(%v, %q) = %v, %v; want error %v", c.v, c.unit, q, err, c.want)
			}
		})
	}
}

func TestTemperature(t *testing.T) {
	cases := []struct {
		in   string
		want float64
		src  string
	}{
		// 10 degF: (10 + 459.67)/1.8 = 260.92777... K; the package doc says 260.928 K.
		{"10 degF", (10 + refRank) * refDegF, "T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read"},
		{"10 °F", (10 + refRank) * refDegF, "T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read"},
		{"10 [degF]", (10 + refRank) * refDegF, "T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read"},
		{"20 degC", 293.15, "T(K) = t(degC) + 273.15: from memory of NIST SP 811, not re-read"},
		{"20 °C", 293.15, "T(K) = t(degC) + 273.15: from memory of NIST SP 811, not re-read"},
		{"20 Cel", 293.15, "T(K) = t(degC) + 273.15: from memory of NIST SP 811, not re-read"},
		{"-40 degC", 233.15, "T(K) = t(degC) + 273.15: from memory of NIST SP 811, not re-read"},
		{"-40 degF", 233.15, "T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read"},
		{"-273.15 degC", 0, "T(K) = t(degC) + 273.15: from memory of NIST SP 811, not re-read"},
		{"-459.67 degF", 0, "T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read"},
		{"0 K", 0, "0 K is absolute zero (definition of the kelvin scale)"},
		{"300 K", 300, "kelvin is the SI unit"},
		{"540 degR", 300, "1 degR = 5/9 K, zero at 0 K: from memory of NIST SP 811, not re-read"},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			q, err := units.Parse(c.in)
			if err != nil {
				t.Fatalf("Parse(%q): %v", c.in, err)
			}
			got, err := q.Temperature()
			if err != nil || !near(float64(got), c.want, tol) {
				t.Errorf("Parse(%q).Temperature() = %v, %v; want %v K (%s)", c.in, got, err, c.want, c.src)
			}
		})
	}
	// 260.928 K, as the Temperature doc comment writes it (package contract).
	q, _ := units.Parse("10 degF")
	if k, _ := q.Temperature(); math.Abs(float64(k)-260.928) > 0.0005 {
		t.Errorf("Parse(%q).Temperature() = %v, want 260.928 K to 3 decimals (package contract)", "10 degF", k)
	}
	// -40 degC and -40 degF are the same temperature, to the 12 digits of
	// every output (derived from both conversion formulas above; from
	// memory of NIST SP 811, not re-read).
	c, _ := units.Parse("-40 degC")
	f, _ := units.Parse("-40 degF")
	tc, _ := c.Temperature()
	tf, _ := f.Temperature()
	if units.FormatNumber(float64(tc)) != units.FormatNumber(float64(tf)) || !near(float64(tc), float64(tf), tol) {
		t.Errorf("Temperature(-40 degC) = %v, Temperature(-40 degF) = %v, want equal", tc, tf)
	}
}

// TestTemperatureSameOnEveryScale: one temperature written on two scales
// is one number, exactly, so that their difference is 0 and comparisons
// hold. The pairs follow from T(K) = t(degC) + 273.15 = (t(degF) +
// 459.67)/1.8 = T(degR)/1.8 (from memory of NIST SP 811, not re-read).
func TestTemperatureSameOnEveryScale(t *testing.T) {
	for _, pair := range [][]string{
		{"-40 degC", "-40 degF"},
		{"0 degC", "32 degF", "273.15 K", "491.67 degR"},
		{"59 degC", "138.2 degF", "332.15 K"},
		{"100 degC", "212 degF", "373.15 K", "671.67 degR"},
		{"-17.5 degC", "0.5 degF"},
		{"37 degC", "98.6 degF"},
		{"-196 degC", "-320.8 degF", "77.15 K"},
		{"1200 degC", "2192 degF"},
		{"50 degC", "122 degF", "323.15 K", "581.67 degR"},
	} {
		var first units.Temperature
		for i, s := range pair {
			q, err := units.Parse(s)
			if err != nil {
				t.Fatalf("Parse(%q): %v", s, err)
			}
			k, err := q.Temperature()
			if err != nil {
				t.Fatalf("Parse(%q).Temperature(): %v", s, err)
			}
			if i == 0 {
				first = k
			} else if k != first || k.Sub(first) != 0 {
				t.Errorf("Temperature(%q) = %v K, Temperature(%q) = %v K: want the same number", s, float64(k), pair[0], float64(first))
			}
		}
	}
}

// TestTemperatureDifferencesOfReadings: absolute temperatures are kept
// on a grid every reading with up to nine decimals lands on, so their
// differences are those of the readings to the last bits (1 degF = 5/9 K,
// 1 degR = 5/9 K, NIST SP 811, from memory): 0 to 120 degF is 66.67 K,
// 59 to 60.8 degF is 1 K, whichever is read first. A nanokelvin grid
// missed the first by 3e-10 K.
func TestTemperatureDifferencesOfReadings(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		want float64 // b - a, K
	}{
		{"0 degF", "120 degF", 120.0 * 5 / 9},
		{"59 degF", "60.8 degF", 1},
		{"-40.123456789 degF", "212.987654321 degF", (212.987654321 + 40.123456789) * 5 / 9},
		{"10.5 degR", "600.25 degR", (600.25 - 10.5) * 5 / 9},
		{"-12.345678912 degC", "30.000000001 degC", 42.345678913},
		{"20 degC", "68 degF", 0},
	} {
		qa, err1 := units.Parse(tc.a)
		qb, err2 := units.Parse(tc.b)
		if err1 != nil || err2 != nil {
			t.Fatalf("Parse: %v %v", err1, err2)
		}
		ka, _ := qa.Temperature()
		kb, _ := qb.Temperature()
		if d := float64(kb.Sub(ka)); math.Abs(d-tc.want) > 1e-12*math.Max(1, math.Abs(tc.want)) {
			t.Errorf("%s to %s = %.15g K, want %.15g", tc.a, tc.b, d, tc.want)
		}
	}
}

func TestTemperatureErrors(t *testing.T) {
	cases := []struct {
		in   string
		want error
		msg  string
	}{
		{"-1 K", units.ErrBelowZero, `"-1 K"`},           // kelvin scale starts at 0 K
		{"-300 degC", units.ErrBelowZero, `"-300 degC"`}, // -300 + 273.15 < 0: from memory of NIST SP 811, not re-read
		{"-460 degF", units.ErrBelowZero, `"-460 degF"`}, // -460 + 459.67 < 0: from memory of NIST SP 811, not re-read
		{"-0.01 degR", units.ErrBelowZero, `"-0.01 degR"`},
		// Below zero by less than the nanokelvin the kelvin value is kept to:
		// still below zero.
		{"-4e-10 K", units.ErrBelowZero, `"-4e-10 K"`},
		{"-273.1500000004 degC", units.ErrBelowZero, `"-273.1500000004 degC"`},
		{"12e-6 1/K", units.ErrDimension, "20 degC"}, // package contract: a coefficient is not a temperature
		{"2 1/degF", units.ErrDimension, "20 degC"},  // package contract: compound temperature units are intervals
		{"5 m", units.ErrDimension, `"5 m"`},         // package contract: wrong dimension
		{"5 (K)", units.ErrDimension, "20 degC"},     // package contract: a group is not a scale
		{"5 K2/K", units.ErrDimension, "20 degC"},    // package contract: a power is an interval unit
		{"20", units.ErrNoUnit, "20 degC"},           // package contract: a bare number has no unit
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			q, err := units.Parse(c.in)
			if err != nil {
				t.Fatalf("Parse(%q): %v", c.in, err)
			}
			k, err := q.Temperature()
			if !errors.Is(err, c.want) {
				t.Fatalf("Parse(%q).Temperature() = %v, %v; want error %v", c.in, k, err, c.want)
			}
			if !strings.Contains(err.Error(), c.msg) {
				t.Errorf("Parse(%q).Temperature() error %q, want it to contain %q", c.in, err, c.msg)
			}
		})
	}
}

func TestTemperatureDifference(t *testing.T) {
	cases := []struct {
		in   string
		want float64
	}{
		{"10 degF", 50.0 / 9},   // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
		{"10 °F", 50.0 / 9},     // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
		{"10 degR", 50.0 / 9},   // 1 degR = 5/9 K: from memory of NIST SP 811, not re-read
		{"10 degC", 10},         // 1 degC interval = 1 K: from memory of NIST SP 811, not re-read
		{"10 Cel", 10},          // 1 degC interval = 1 K: from memory of NIST SP 811, not re-read
		{"10 K", 10},            // kelvin
		{"-10 degF", -50.0 / 9}, // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
		{"-300 degC", -300},     // a difference may be any size: package contract
		{"9 (degF)", 5},         // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			q, err := units.Parse(c.in)
			if err != nil {
				t.Fatalf("Parse(%q): %v", c.in, err)
			}
			got, err := q.TemperatureDifference()
			if err != nil || !near(float64(got), c.want, tol) {
				t.Errorf("Parse(%q).TemperatureDifference() = %v, %v; want %v K", c.in, got, err, c.want)
			}
		})
	}
	for _, in := range []string{"5 m", "12e-6/K", "3"} {
		q, _ := units.Parse(in)
		want := units.ErrDimension
		if in == "3" {
			want = units.ErrNoUnit
		}
		if d, err := q.TemperatureDifference(); !errors.Is(err, want) {
			t.Errorf("Parse(%q).TemperatureDifference() = %v, %v; want error %v", in, d, err, want)
		}
	}
}

func TestTemperatureArithmetic(t *testing.T) {
	// T(K) = t(degC) + 273.15: from memory of NIST SP 811, not re-read.
	if got := units.Celsius(20); !near(float64(got), 293.15, tol) {
		t.Errorf("Celsius(20) = %v, want 293.15", got)
	}
	if got := units.Temperature(293.15).Celsius(); !near(got, 20, tol) {
		t.Errorf("Temperature(293.15).Celsius() = %v, want 20", got)
	}
	if got := units.Celsius(30).Sub(units.Celsius(-10)); !near(float64(got), 40, tol) {
		t.Errorf("Celsius(30).Sub(Celsius(-10)) = %v, want 40", got)
	}
	if got := units.Celsius(0).Add(25); !near(float64(got), 298.15, tol) {
		t.Errorf("Celsius(0).Add(25) = %v, want 298.15", got)
	}
}

func TestInErrors(t *testing.T) {
	cases := []struct {
		in   string
		dim  units.Dim
		want error
		msg  []string
	}{
		{"30", units.Length, units.ErrNoUnit, []string{`"30"`, `"30 m"`}}, // package contract: In doc
		{"205", units.Stress, units.ErrNoUnit, []string{`"205 GPa"`}},     // package contract: In doc
		{"12e-6", units.Coefficient, units.ErrNoUnit, []string{`"12e-6/K"`}},
		{"30 m", units.Area, units.ErrDimension, []string{`"30 m"`, "length", "area", `"0.25 m2"`}},
		{"20 degC", units.Length, units.ErrDimension, []string{`"20 degC"`}},
		{"5 %", units.Length, units.ErrDimension, []string{`"5 %"`}},
		// US practice writes lb for pound-force; the message says which is which.
		{"285000 lb/in", units.Stiffness, units.ErrDimension, []string{`write "lbf" for pound-force`}},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			q, err := units.Parse(c.in)
			if err != nil {
				t.Fatalf("Parse(%q): %v", c.in, err)
			}
			v, err := q.In(c.dim)
			if !errors.Is(err, c.want) {
				t.Fatalf("Parse(%q).In(%v) = %v, %v; want error %v", c.in, c.dim, v, err, c.want)
			}
			for _, s := range c.msg {
				if !strings.Contains(err.Error(), s) {
					t.Errorf("Parse(%q).In(%v) error %q, want it to contain %s", c.in, c.dim, err, s)
				}
			}
		})
	}
	// A bare number is fine where a pure number is expected.
	q, _ := units.Parse("0.5")
	if v, err := q.In(units.Dimensionless); err != nil || v != 0.5 {
		t.Errorf("Parse(%q).In(Dimensionless) = %v, %v; want 0.5, nil", "0.5", v, err)
	}
}

// TestMissingUnitNamesExample: the ErrNoUnit message of In names a sample
// input "such as ..." (package contract: In doc, Dim.Example doc). BUG:
// for the exported dimensions Time and CurvaturePerTemp there is no entry
// in dimExamples, so the message ends in `such as ""`.
func TestMissingUnitNamesExample(t *testing.T) {
	dims := []units.Dim{units.Length, units.Area, units.Volume, units.SecondMoment, units.Curvature,
		units.Mass, units.Time, units.Temp, units.Coefficient, units.Force, units.Stress,
		units.Stiffness, units.Moment, units.Density, units.CurvaturePerTemp}
	q, _ := units.Parse("5")
	for _, d := range dims {
		t.Run(d.String(), func(t *testing.T) {
			_, err := q.In(d)
			if !errors.Is(err, units.ErrNoUnit) {
				t.Fatalf("Parse(%q).In(%v) error %v, want ErrNoUnit", "5", d, err)
			}
			if strings.Contains(err.Error(), `such as ""`) {
				t.Errorf("Parse(%q).In(%v) error %q names an empty example", "5", d, err)
			}
			// The example, where given, has the dimension it illustrates.
			if ex := d.Example(); ex != "" {
				eq, err := units.Parse(ex)
				if err != nil || eq.Unit.Dim != d {
					t.Errorf("Dim(%v).Example() = %q parses to %v, %v; want dimension %v", d, ex, eq.Unit.Dim, err, d)
				}
			}
		})
	}
}

func TestDimString(t *testing.T) {
	cases := []struct {
		d    units.Dim
		want string
	}{
		{units.Length, "length"},
		{units.Coefficient, "coefficient of expansion"},
		{units.Stress, "stress"},
		{units.Dim{L: 2, Theta: -1}, "L^2 Θ^-1"},
		{units.Dim{M: 1, T: -12}, "M T^-12"},
	}
	for _, c := range cases {
		// Package contract: Dim.String doc (words, or exponents without a name).
		if got := c.d.String(); got != c.want {
			t.Errorf("%#v.String() = %q, want %q", c.d, got, c.want)
		}
	}
	// Dimension algebra (package contract: Mul, Pow).
	if got := units.Force.Mul(units.Area.Pow(-1)); got != units.Stress {
		t.Errorf("Force.Mul(Area.Pow(-1)) = %v, want stress", got)
	}
	if got := units.Length.Pow(4); got != units.SecondMoment {
		t.Errorf("Length.Pow(4) = %v, want second moment", got)
	}
}

func TestFormatNumber(t *testing.T) {
	// Package contract: FormatNumber doc (12 significant digits, then the
	// shortest form that reads back; exponent only for very large or very
	// small magnitudes, as in the 1e-7 and 1e21 thresholds below).
	cases := []struct {
		v    float64
		want string
	}{
		{27.000000000000004, "27"},
		{0.1 + 0.2, "0.3"},
		{1.2e-5, "0.000012"},
		{1e-6, "0.000001"},
		{1e-7, "1e-07"},
		{1.5e-7, "1.5e-07"},
		{1e20, "100000000000000000000"},
		{1e21, "1e+21"},
		{1.25e22, "1.25e+22"},
		{1e100, "1e+100"},
		{1e-300, "1e-300"},
		{-2.5, "-2.5"},
		{-0.3000000000000001, "-0.3"},
		{-1e-7, "-1e-07"},
		{123000, "123000"},
		{100, "100"},
		{10, "10"},
		{1, "1"},
		{0, "0"},
		{math.Copysign(0, -1), "0"},
		{293.15, "293.15"},
		{260.92777777777781, "260.927777778"},
		{1.17e-5, "0.0000117"},
		{6894.757293168361, "6894.75729317"},
		{123456789012345, "123456789012000"},
		{0.999999999999999, "1"},
		{9.9999999999999e20, "1e+21"},
		{math.MaxFloat64, "1.79769313486e+308"},
	}
	for _, c := range cases {
		t.Run(c.want, func(t *testing.T) {
			if got := units.FormatNumber(c.v); got != c.want {
				t.Errorf("FormatNumber(%v) = %q, want %q", c.v, got, c.want)
			}
			if got := string(units.AppendNumber([]byte("x="), c.v)); got != "x="+c.want {
				t.Errorf("AppendNumber(%q, %v) = %q, want %q", "x=", c.v, got, "x="+c.want)
			}
		})
	}
}

// TestFormatNumberProperty checks FormatNumber against Go's strconv, an
// independent implementation of correctly rounded decimal conversion
// (independent cross-check: Go standard library strconv).
func TestFormatNumberProperty(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 30000; i++ {
		v := (1 + 9*r.Float64()) * math.Pow(10, float64(r.IntN(61)-30))
		switch i % 3 {
		case 1: // a value typed with at most 12 digits, as inputs are
			v, _ = strconv.ParseFloat(strconv.FormatFloat(v, 'e', r.IntN(12), 64), 64)
		case 2: // an integer, up to well past 12 digits
			v = math.Round(v * math.Pow(10, float64(r.IntN(14))))
		}
		if r.IntN(2) == 0 {
			v = -v
		}
		if v == 0 {
			continue
		}
		s := units.FormatNumber(v)
		got, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("FormatNumber(%v) = %q, not a number: %v", v, s, err)
		}
		// Round to 12 significant digits independently.
		want, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'e', 11, 64), 64)
		if got != want {
			t.Fatalf("ParseFloat(FormatNumber(%v)) = %v, want %v", v, got, want)
		}
		if r := units.Round(v); r != want {
			t.Fatalf("Round(%v) = %v, want %v", v, r, want)
		}
		if !near(got, v, 1e-11) {
			t.Fatalf("FormatNumber(%v) = %q, more than 1e-11 relative from v", v, s)
		}
		// Shortest: the same significant digits as strconv's shortest
		// round-trip form of the rounded value.
		short := strconv.FormatFloat(want, 'e', -1, 64)
		mant := strings.TrimLeft(short[:strings.IndexByte(short, 'e')], "-")
		mant = strings.Replace(mant, ".", "", 1)
		digits := strings.TrimLeft(strings.Map(func(c rune) rune {
			if c >= '0' && c <= '9' {
				return c
			}
			return -1
		}, strings.SplitN(s, "e", 2)[0]), "0")
		digits = strings.TrimRight(digits, "0")
		mant = strings.TrimRight(mant, "0")
		if digits != mant {
			t.Fatalf("FormatNumber(%v) = %q, digits %q, want shortest digits %q", v, s, digits, mant)
		}
		if strings.ContainsAny(s, ", ") {
			t.Fatalf("FormatNumber(%v) = %q has a separator", v, s)
		}
	}
}

// TestRoundTrip: a quantity whose value has at most 12 significant digits
// reads back from its String exactly (package contract: String, Parse,
// FormatNumber docs).
func TestRoundTrip(t *testing.T) {
	unitsList := []string{"m", "mm", "um", "µm", "in", "ft", "m2", "mm4", "cm4", "in2", "ft3", "L", "mL", "gal",
		"K", "degC", "degF", "°C", "°F", "Cel", "[degF]", "1/K", "/K", "1/degF", "um/(m*K)", "um/m/K", "ppm/degC",
		"Pa", "GPa", "N/mm2", "psi", "ksi", "Msi", "kN", "kip", "lbf", "kN*m", "kg/m3", "m²", "%", "1"}
	r := rand.New(rand.NewPCG(3, 4))
	for _, u := range unitsList {
		t.Run(u, func(t *testing.T) {
			for i := 0; i < 200; i++ {
				v := (1 + 9*r.Float64()) * math.Pow(10, float64(r.IntN(41)-20))
				if i%3 == 0 {
					v = -v
				}
				v, _ = strconv.ParseFloat(strconv.FormatFloat(v, 'e', 11, 64), 64) // 12 digits
				q, err := units.New(v, u)
				if err != nil {
					t.Fatalf("New(%v, %q): %v", v, u, err)
				}
				back, err := units.Parse(q.String())
				if err != nil {
					t.Fatalf("Parse(%q): %v", q.String(), err)
				}
				want := q
				if u == "1" { // String writes a bare number
					want.Unit.Symbol = ""
				}
				if d := cmp.Diff(want, back, cmp.AllowUnexported(units.Unit{})); d != "" {
					t.Fatalf("Parse(%q) differs from New(%v, %q) (-want +got):\n%s", q.String(), v, u, d)
				}
			}
		})
	}
}

func TestAppendNumberAllocs(t *testing.T) {
	buf := make([]byte, 0, 64)
	for _, v := range []float64{0, 1, -2.5, 27.000000000000004, 1.2e-5, 1e-7, 1e21, 123456789.123, math.MaxFloat64} {
		allocs := testing.AllocsPerRun(100, func() {
			buf = units.AppendNumber(buf[:0], v)
		})
		// Package contract: AppendNumber doc ("does not allocate when dst has room").
		if allocs != 0 {
			t.Errorf("AppendNumber(buf, %v) allocates %v times, want 0", v, allocs)
		}
	}
}

func TestKinds(t *testing.T) {
	type row struct {
		Name, SI, US     string
		Dim              units.Dim
		Absolute         bool
		SIFactor, USFact float64
	}
	got := func(k units.Kind) row {
		return row{k.Name, k.SI.Symbol, k.US.Symbol, k.Dim, k.Absolute, k.SI.Factor, k.US.Factor}
	}
	cases := []struct {
		k    units.Kind
		want row
	}{
		{units.Movement, row{"movement", "mm", "in", units.Length, false, refMilli, refInch}},                                                        // gonum Milli; NIST SP 811 B.8 inch
		{units.LengthKind, row{"length", "m", "ft", units.Length, false, 1, refFoot}},                                                                // NIST SP 811 B.8 foot
		{units.AreaChange, row{"area change", "mm2", "in2", units.Area, false, refMilli * refMilli, refInch * refInch}},                              // NIST SP 811 B.8 inch
		{units.VolumeChange, row{"volume change", "L", "gal", units.Volume, false, refLitre, refGal}},                                                // gonum Litre; gallon from memory of NIST SP 811, not re-read
		{units.StressKind, row{"stress", "MPa", "psi", units.Stress, false, refMega, refPsi}},                                                        // NIST SP 811 (2008) Appendix B: psi
		{units.ForceKind, row{"force", "kN", "kip", units.Force, false, refKilo, refKip}},                                                            // kip from memory of NIST SP 811, not re-read
		{units.TemperatureKind, row{"temperature", "degC", "degF", units.Temp, true, refDegC, refDegF}},                                              // from memory of NIST SP 811, not re-read
		{units.DifferenceKind, row{"temperature difference", "K", "degF", units.Temp, false, 1, refDegF}},                                            // from memory of NIST SP 811, not re-read
		{units.CoefficientKind, row{"coefficient of expansion", "1/K", "1/degF", units.Coefficient, false, 1, 1 / refDegF}},                          // from memory of NIST SP 811, not re-read
		{units.SecondMomentKind, row{"second moment of area", "mm4", "in4", units.SecondMoment, false, math.Pow(refMilli, 4), math.Pow(refInch, 4)}}, // NIST SP 811 B.8 inch
		{units.DensityKind, row{"density", "kg/m3", "lb/ft3", units.Density, false, 1, refLb / (refFoot * refFoot * refFoot)}},                       // lb from memory of NIST SP 811, not re-read
	}
	for _, c := range cases {
		t.Run(c.want.Name, func(t *testing.T) {
			if d := cmp.Diff(c.want, got(c.k), cmpopts.EquateApprox(tol, 0)); d != "" {
				t.Errorf("Kind %q (-want +got):\n%s", c.want.Name, d)
			}
		})
	}
	if !units.TemperatureKind.SI.IsScale() || !units.TemperatureKind.US.IsScale() {
		t.Errorf("TemperatureKind units are not scales; want degC and degF absolute (package contract)")
	}
}

func TestKindValue(t *testing.T) {
	cases := []struct {
		name string
		k    units.Kind
		si   float64
		u    units.Unit
		want float64
	}{
		{"293.15 K in degC", units.TemperatureKind, 293.15, units.TemperatureKind.SI, 20},         // T(K) = t + 273.15: from memory of NIST SP 811, not re-read
		{"293.15 K in degF", units.TemperatureKind, 293.15, units.TemperatureKind.US, 68},         // T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read
		{"233.15 K in degF", units.TemperatureKind, 233.15, units.TemperatureKind.US, -40},        // T(K) = (T(degF) + 459.67)/1.8: from memory of NIST SP 811, not re-read
		{"5 K difference in degF", units.DifferenceKind, 5, units.DifferenceKind.US, 9},           // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
		{"5 K difference in K", units.DifferenceKind, 5, units.DifferenceKind.SI, 5},              // kelvin
		{"0.0254 m in in", units.Movement, 0.0254, units.Movement.US, 1},                          // NIST SP 811 (2008) Appendix B.8: 1 in = 0.0254 m exactly
		{"0.0254 m in mm", units.Movement, 0.0254, units.Movement.SI, 25.4},                       // NIST SP 811 B.8 inch; gonum Milli
		{"psi", units.StressKind, refPsi, units.StressKind.US, 1},                                 // NIST SP 811 (2008) Appendix B: 1 psi = 6894.757293168 Pa
		{"1.17e-5/K in 1/degF", units.CoefficientKind, 1.17e-5, units.CoefficientKind.US, 6.5e-6}, // 1 degF = 5/9 K: from memory of NIST SP 811, not re-read
		{"kip", units.ForceKind, refKip, units.ForceKind.US, 1},                                   // kip = 1000 lbf: from memory of NIST SP 811, not re-read
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := c.k.Value(c.si, c.u); !near(got, c.want, 1e-11) {
				t.Errorf("%s.Value(%v, %q) = %v, want %v", c.k.Name, c.si, c.u.Symbol, got, c.want)
			}
		})
	}
}

func TestKindAccepts(t *testing.T) {
	mustUnit := func(s string) units.Unit {
		u, err := units.ParseUnit(s)
		if err != nil {
			t.Fatalf("ParseUnit(%q): %v", s, err)
		}
		return u
	}
	// Package contract: Kind.Accepts doc (same dimension; a scale for
	// absolute temperatures).
	cases := []struct {
		k    units.Kind
		u    string
		want bool
	}{
		{units.Movement, "mm", true},
		{units.Movement, "ft", true},
		{units.Movement, "m2", false},
		{units.Movement, "K", false},
		{units.TemperatureKind, "degC", true},
		{units.TemperatureKind, "°F", true},
		{units.TemperatureKind, "Cel", true},
		{units.TemperatureKind, "K", true},
		{units.TemperatureKind, "degR", true},
		{units.TemperatureKind, "(K)", false},
		{units.TemperatureKind, "1/K", false},
		{units.DifferenceKind, "degF", true},
		{units.DifferenceKind, "(K)", true},
		{units.DifferenceKind, "m", false},
		{units.CoefficientKind, "um/(m*K)", true},
		{units.CoefficientKind, "ppm/degF", true},
		{units.CoefficientKind, "K", false},
		{units.StressKind, "N/mm2", true},
		{units.StressKind, "kN", false},
		{units.StrainKind, "%", true},
		{units.StrainKind, "1", true},
	}
	for _, c := range cases {
		t.Run(c.k.Name+"/"+c.u, func(t *testing.T) {
			if got := c.k.Accepts(mustUnit(c.u)); got != c.want {
				t.Errorf("%s.Accepts(%q) = %v, want %v", c.k.Name, c.u, got, c.want)
			}
		})
	}
}

func TestSymbols(t *testing.T) {
	list := units.Symbols()
	bySym := map[string]units.SymbolInfo{}
	for i, s := range list {
		if _, dup := bySym[s.Symbol]; dup {
			t.Errorf("Symbols() lists %q twice", s.Symbol)
		}
		bySym[s.Symbol] = s
		if i > 0 {
			p := list[i-1]
			if p.Dimension > s.Dimension || (p.Dimension == s.Dimension && p.Symbol >= s.Symbol) {
				t.Errorf("Symbols() not sorted at %q, %q (package contract: Symbols doc)", p.Symbol, s.Symbol)
			}
		}
	}
	// The symbols the service promises (the contract's list, compound
	// forms included).
	promised := []string{"m", "cm", "mm", "um", "µm", "in", "ft", "yd", "L", "mL", "gal",
		"K", "degC", "degF", "degR", "°C", "°F", "°R", "Cel", "[degF]",
		"Pa", "kPa", "MPa", "GPa", "psi", "ksi", "Msi", "N", "kN", "MN", "lbf", "kip",
		"m2", "mm2", "cm2", "in2", "ft2", "m^2", "m3", "in3", "ft3",
		"1/K", "1/degC", "1/degF", "ppm/K", "ppm/degC", "ppm/degF", "um/(m*K)", "in/(in*degF)",
		"N/mm2", "mm4", "cm4", "m4", "in4"}
	for _, s := range promised {
		t.Run(s, func(t *testing.T) {
			info, ok := bySym[s]
			if !ok {
				t.Fatalf("Symbols() does not list %q", s)
			}
			u, err := units.ParseUnit(s)
			if err != nil {
				t.Fatalf("ParseUnit(%q) error %v, but Symbols() lists it", s, err)
			}
			if !near(info.Factor, u.Factor, tol) || info.Dimension != u.Dim.String() {
				t.Errorf("Symbols()[%q] = %+v, ParseUnit gives factor %v dimension %v", s, info, u.Factor, u.Dim)
			}
		})
	}
	// A listed factor reads as its exact value: 1/degF is 1.8 per K
	// (NIST SP 811: 1 degF interval = 5/9 K exactly).
	if f := bySym["1/degF"].Factor; f != 1.8 {
		t.Errorf("Symbols()[1/degF] factor %v, want 1.8", f)
	}
	// Spot values, from independent sources.
	spot := []struct {
		sym    string
		factor float64
		offset float64
	}{
		{"kN", refKilo, 0},         // gonum Kilo
		{"um", refMicro, 0},        // gonum Micro
		{"in", refInch, 0},         // NIST SP 811 (2008) Appendix B.8: 1 in = 0.0254 m exactly
		{"psi", refPsi, 0},         // NIST SP 811 (2008) Appendix B: 1 psi = 6894.757293168 Pa
		{"ksi", refKsi, 0},         // NIST SP 811 (2008) Appendix B: ksi = 1000 psi
		{"lbf", refLbf, 0},         // NIST SP 811 (2008) Appendix B: 1 lbf = 4.4482216152605 N
		{"degC", 1, refZero},       // from memory of NIST SP 811, not re-read
		{"degF", refDegF, refRank}, // from memory of NIST SP 811, not re-read
	}
	for _, s := range spot {
		info := bySym[s.sym]
		if !near(info.Factor, s.factor, tol) || !near(info.Offset, s.offset, tol) {
			t.Errorf("Symbols()[%q] = factor %v offset %v, want %v, %v", s.sym, info.Factor, info.Offset, s.factor, s.offset)
		}
	}
	// Package contract: micro is listed as µ (micro sign) and u, not as
	// the Greek letter mu, which is still accepted.
	if _, ok := bySym["μm"]; ok {
		t.Errorf("Symbols() lists %q (Greek mu); want it listed once, as µm and um", "μm")
	}
}

// allSeeds gathers every input of the tables above, for the fuzz corpus.
func allSeeds() []string {
	var s []string
	for _, c := range parseCases {
		s = append(s, c.in)
	}
	for _, c := range rejectCases {
		s = append(s, c.in)
	}
	return append(s, "5 12", "5 12/K", "30 15*m", "20 degC", "-40 degF", "-1 K", "10 degF", "9 (degF)", "5 K2/K")
}

func BenchmarkParse(b *testing.B) {
	for _, in := range []string{"30 m", "12e-6/K", "12 um/(m*K)"} {
		b.Run(in, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := units.Parse(in); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
	// Through a Cache, as the service reads requests: the unit expression
	// is looked up, not parsed again.
	var c units.Cache
	for _, in := range []string{"30 m", "12e-6/K", "12 um/(m*K)"} {
		b.Run("Cache/"+in, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := c.Parse(in); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
	b.Run("ParseUnit/um/(m*K)", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := units.ParseUnit("um/(m*K)"); err != nil {
				b.Fatal(err)
			}
		}
	})
}

func BenchmarkFormatNumber(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		_ = units.FormatNumber(260.92777777777781)
	}
}

func BenchmarkAppendNumber(b *testing.B) {
	b.ReportAllocs()
	buf := make([]byte, 0, 64)
	for b.Loop() {
		buf = units.AppendNumber(buf[:0], 260.92777777777781)
	}
}

// TestSymbolFactorsAsWritten: the list of units gives every factor as
// every output writes numbers (12 significant digits), so that a microbar
// reads 0.1 (Pa), a decibar 1e4 and a nanolitre 1e-12, not their float64
// noise; the SI factors themselves are NIST SP 811's (1 bar = 1e5 Pa,
// 1 L = 1e-3 m3; from memory, not re-read): 1 psi = 6894.757 Pa to its
// 7 digits.
func TestSymbolFactorsAsWritten(t *testing.T) {
	want := map[string]float64{"dbar": 1e4, "ubar": 0.1, "nL": 1e-12, "1/degF": 1.8}
	for _, s := range units.Symbols() {
		if back, err := strconv.ParseFloat(units.FormatNumber(s.Factor), 64); err != nil || back != s.Factor {
			t.Errorf("%s: si_factor %v is not its own 12-digit form %s", s.Symbol, s.Factor, units.FormatNumber(s.Factor))
		}
		if w, ok := want[s.Symbol]; ok {
			if s.Factor != w {
				t.Errorf("%s: si_factor %v, want %v", s.Symbol, s.Factor, w)
			}
			delete(want, s.Symbol)
		}
		if s.Symbol == "psi" && math.Abs(s.Factor-6894.757) > 0.0005 {
			t.Errorf("psi: si_factor %v, want 6894.757 Pa", s.Factor)
		}
	}
	if len(want) > 0 {
		t.Errorf("symbols not listed: %v", want)
	}
}

// TestOrdinalIndicatorHint: "º" (U+00BA, the ordinal indicator) looks
// like the degree sign "°" (U+00B0) and is a common slip; the message
// says so (Unicode character names, from memory of the Unicode charts).
func TestOrdinalIndicatorHint(t *testing.T) {
	for _, in := range []string{"20 ºC", "68 ºF"} {
		_, err := units.Parse(in)
		if !errors.Is(err, units.ErrUnknownUnit) || !strings.Contains(err.Error(), "ordinal indicator") {
			t.Errorf("Parse(%q) = %v; want an unknown unit naming the ordinal indicator", in, err)
		}
	}
}
