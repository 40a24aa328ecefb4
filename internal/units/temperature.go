package units

import (
	"math"
	"strconv"
	"strings"
)

// Temperature is an absolute (thermodynamic) temperature in kelvin.
type Temperature float64

// TemperatureDifference is a difference of two temperatures, in kelvin.
// One kelvin of difference equals one degree Celsius of difference and
// 9/5 degree Fahrenheit of difference (NIST SP 811, 4.2.1.1 and B.9).
type TemperatureDifference float64

// ZeroCelsius is 0 degC in kelvin, exactly.
const ZeroCelsius Temperature = 273.15

// Sub returns the temperature difference t - u.
func (t Temperature) Sub(u Temperature) TemperatureDifference {
	return TemperatureDifference(float64(t) - float64(u))
}

// Add returns t raised by d.
func (t Temperature) Add(d TemperatureDifference) Temperature {
	return Temperature(float64(t) + float64(d))
}

// Celsius returns t in degrees Celsius.
func (t Temperature) Celsius() float64 { return float64(t) - float64(ZeroCelsius) }

// CelsiusText writes t in degrees Celsius to 0.01 K, as messages quote
// temperatures: "-223.15 degC".
func CelsiusText(t Temperature) string {
	return FormatNumber(math.Round(t.Celsius()*100)/100) + " degC"
}

// Celsius returns the absolute temperature of c degrees Celsius.
func Celsius(c float64) Temperature { return Temperature(c + float64(ZeroCelsius)) }

// Temperature returns q as an absolute temperature. The unit must be a
// single temperature symbol (K, degC, degF, degR and their spellings);
// 10 degF is 260.928 K here. A result below 0 K is an error wrapping
// ErrBelowZero.
//
// The kelvin value is rounded to a ninth of a nanokelvin, far below any
// reading, so that one temperature written on two scales is one number:
// -40 degF and -40 degC, or 138.2 degF and 59 degC, would otherwise differ
// in the last bit of the binary arithmetic and make a false movement of
// 1e-14 or fail an equality that holds. The ninth is the grid every
// reading with up to nine decimals lands on exactly, in degC and K and in
// degF and degR (5/9 K a degree) alike, so the rounding moves no reading
// and differences of readings come out exact: 0 to 120 degF is 60 x 5/9 K
// to the last written digit, where a nanokelvin grid left 66.666666667 K.
func (q Quantity) Temperature() (Temperature, error) {
	if q.Unit.Dim != Temp || !q.Unit.scale {
		return 0, dimError(q, Temp, "an absolute temperature")
	}
	k := (q.Value + q.Unit.Offset) * q.Unit.Factor
	if k < 0 { // before the rounding, which would make -4e-10 K a -0
		// The value in full: rounded to 12 digits, -273.1500000004 degC
		// would read as absolute zero itself.
		exact := strconv.FormatFloat(q.Value, 'g', -1, 64) + " " + q.Unit.Symbol
		return 0, errorf(exact, ErrBelowZero, Quote(exact)+" is below absolute zero")
	}
	if k < 1e6 { // k * 9e9 within the integers a float64 holds exactly
		k = math.Round(k*9e9) / 9e9 // at or above 0, as the test above leaves it
	}
	return Temperature(k), nil
}

// TemperatureDifference returns q as a temperature difference: 10 degF
// here is 50/9 K, whatever the scale's zero.
func (q Quantity) TemperatureDifference() (TemperatureDifference, error) {
	if q.Unit.Dim != Temp {
		return 0, dimError(q, Temp, "a temperature difference")
	}
	return TemperatureDifference(q.Value * q.Unit.Factor), nil
}

// In returns q in SI after checking that its dimension is want. A bare
// number for a dimensional quantity is an error wrapping ErrNoUnit.
func (q Quantity) In(want Dim) (float64, error) {
	if q.Unit.Dim != want {
		return 0, dimError(q, want, "")
	}
	return q.SI(), nil
}

func dimError(q Quantity, want Dim, what string) *Error {
	if what == "" {
		what = want.Article() + " " + want.String()
	}
	ex := want.Example()
	if want == Temp {
		ex = "20 degC"
	}
	if q.Unit.Symbol == "" && want != Dimensionless {
		return errorf(q.String(), ErrNoUnit, "missing unit in "+Quote(q.String())+": expected "+what+" with its unit, such as "+Quote(ex))
	}
	msg := Quote(q.String()) + " is " + q.Unit.Dim.Article() + " " + q.Unit.Dim.String() + ", expected " + what
	if ex != "" {
		msg += " such as " + Quote(ex)
	}
	if sym := q.Unit.Symbol; want.T == -2 && strings.Contains(sym, "lb") && !strings.Contains(sym, "lbf") { // a force, stress or stiffness wanted
		msg += `; "lb" is a pound of mass: write "lbf" for pound-force`
	}
	return errorf(q.String(), ErrDimension, msg)
}

// FromKelvin returns the absolute temperature t read on the scale of u
// (degC, degF, K, degR).
func FromKelvin(t Temperature, u Unit) float64 {
	return float64(t)/u.Factor - u.Offset
}

// FromSI returns v, an SI value of u's dimension, in u. Temperatures are
// taken as differences.
func FromSI(v float64, u Unit) float64 { return v / u.Factor }

// IsScale reports whether u is a single temperature symbol, usable for
// absolute temperatures.
func (u Unit) IsScale() bool { return u.scale }

// FormatNumber formats v for every output of the service: rounded to 12
// significant digits (which removes the last-digit noise of binary
// arithmetic while keeping far more precision than any input has), then
// written in the shortest form that reads back to the same float64, with
// "." as the decimal separator, no thousands separators, and an exponent
// only for very large or very small magnitudes.
func FormatNumber(v float64) string {
	return string(AppendNumber(nil, v))
}

// AppendNumber appends FormatNumber(v) to dst. It does not allocate when
// dst has room.
func AppendNumber(dst []byte, v float64) []byte {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return append(dst, '0')
	}
	if v == math.Trunc(v) && math.Abs(v) < 1e12 {
		// An integer of at most 12 digits is its own rounding.
		return strconv.AppendInt(dst, int64(v), 10)
	}
	var buf [32]byte
	// With 11 digits after the point the form is fixed: d.ddddddddddd
	// (13 bytes), then e, the exponent's sign and its digits.
	e := strconv.AppendFloat(buf[:0], v, 'e', significant-1, 64)
	if e[0] == '-' {
		dst = append(dst, '-')
		e = e[1:]
	}
	const mark = significant + 1
	exp := 0
	for _, c := range e[mark+2:] {
		exp = exp*10 + int(c-'0')
	}
	if e[mark+1] == '-' {
		exp = -exp
	}
	// The significant digits without the point, trailing zeros removed.
	var digits [significant]byte
	digits[0] = e[0]
	copy(digits[1:], e[2:mark])
	nd := significant
	for nd > 1 && digits[nd-1] == '0' {
		nd--
	}
	ds := digits[:nd]
	switch {
	case exp < -6 || exp >= 21:
		dst = append(dst, ds[0])
		if nd > 1 {
			dst = append(dst, '.')
			dst = append(dst, ds[1:]...)
		}
		dst = append(dst, 'e')
		if exp < 0 {
			dst = append(dst, '-')
			exp = -exp
		} else {
			dst = append(dst, '+')
		}
		if exp < 10 {
			dst = append(dst, '0')
		}
		return strconv.AppendInt(dst, int64(exp), 10)
	case exp < 0:
		dst = append(dst, '0', '.')
		for i := 0; i < -exp-1; i++ {
			dst = append(dst, '0')
		}
		return append(dst, ds...)
	default:
		if nd <= exp+1 {
			dst = append(dst, ds...)
			for i := nd; i <= exp; i++ {
				dst = append(dst, '0')
			}
			return dst
		}
		dst = append(dst, ds[:exp+1]...)
		dst = append(dst, '.')
		return append(dst, ds[exp+1:]...)
	}
}

// significant is the number of significant digits of every output.
const significant = 12

// Round rounds v to the significant digits of FormatNumber.
func Round(v float64) float64 {
	var buf [32]byte
	r, err := strconv.ParseFloat(string(AppendNumber(buf[:0], v)), 64)
	if err != nil {
		return v
	}
	return r
}
