package calc

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/thermalmovement/service/internal/units"
)

// ErrOutOfRange reports a temperature outside the range a curve or
// correlation was fitted to.
var ErrOutOfRange = errors.New("temperature outside the data's range")

// StrainCurve is temperature-dependent expansion data for one material:
// the total linear thermal strain (L(T) - L(Tref)) / L(Tref) from the
// curve's reference temperature, over the range the data holds for.
type StrainCurve interface {
	// Strain returns the total strain from the reference temperature at t.
	// It evaluates the data's formula outside its range too; callers
	// check Range first.
	Strain(t units.Temperature) float64
	// Range returns the lowest and highest temperature of the data.
	Range() (lo, hi units.Temperature)
}

// IntervalStrain returns the linear strain of a length measured at t1
// and taken to t2, from total strains referenced to a common temperature
// T0: (1 + e(t2)) / (1 + e(t1)) - 1.
//
// With tabulated mean coefficients a(T) from T0, e(T) = a(T) (T - T0) and
// this is the relation of ASME BPVC Section II Part D (tables TE):
// strain(T1 -> T2) = [a2 (T2 - T0) - a1 (T1 - T0)] / [1 + a1 (T1 - T0)].
func IntervalStrain(c StrainCurve, t1, t2 units.Temperature) float64 {
	e1, e2 := c.Strain(t1), c.Strain(t2)
	return (e2 - e1) / (1 + e1)
}

// InRange reports whether t lies within the curve's range.
func InRange(c StrainCurve, t units.Temperature) bool {
	lo, hi := c.Range()
	return t >= lo && t <= hi
}

// PolynomialStrain is a strain given as a polynomial in temperature:
// e = Scale * sum Coef[i] x^i, with x the temperature in kelvin or, when
// Celsius is set, in degrees Celsius. The NIST cryogenic material fits
// ((L - L293)/L293 = (a + bT + cT^2 + dT^3 + eT^4) x 1e-5, T in K) have
// this form.
type PolynomialStrain struct {
	Coef    []float64
	Scale   float64
	Celsius bool
	// Ref is the temperature at which the strain is zero by definition;
	// a fit's value there is subtracted so that Strain(Ref) = 0.
	Ref    units.Temperature
	Lo, Hi units.Temperature
	offset float64
}

// NewPolynomialStrain returns the curve, normalised so that its strain is
// zero at ref.
func NewPolynomialStrain(coef []float64, scale float64, celsius bool, ref, lo, hi units.Temperature) *PolynomialStrain {
	p := &PolynomialStrain{Coef: coef, Scale: scale, Celsius: celsius, Ref: ref, Lo: lo, Hi: hi}
	p.offset = p.raw(ref)
	return p
}

func (p *PolynomialStrain) raw(t units.Temperature) float64 {
	x := float64(t)
	if p.Celsius {
		x = t.Celsius()
	}
	return p.Scale * horner(p.Coef, x)
}

// Strain returns the strain from the reference temperature.
func (p *PolynomialStrain) Strain(t units.Temperature) float64 {
	// (L - Lref)/Lref from a fit whose own zero sits near, not at, Ref.
	return (p.raw(t) - p.offset) / (1 + p.offset)
}

// Range returns the fit's validity range.
func (p *PolynomialStrain) Range() (units.Temperature, units.Temperature) { return p.Lo, p.Hi }

func horner(c []float64, x float64) float64 {
	s := 0.0
	for i := len(c) - 1; i >= 0; i-- {
		s = s*x + c[i]
	}
	return s
}

// PiecewiseStrain is a strain given by polynomials over consecutive
// temperature segments, as EN 1993-1-2 3.4.1.1 gives the thermal
// elongation of steel from 20 degC (three segments up to 1200 degC).
type PiecewiseStrain struct {
	Segments []Segment
	Scale    float64
	Celsius  bool
	Ref      units.Temperature
	offset   float64
}

// Segment is one polynomial piece of a PiecewiseStrain, from From to To.
type Segment struct {
	From, To units.Temperature
	Coef     []float64
}

// NewPiecewiseStrain checks that the segments are contiguous and returns
// the curve normalised to zero strain at ref.
func NewPiecewiseStrain(segs []Segment, scale float64, celsius bool, ref units.Temperature) (*PiecewiseStrain, error) {
	if len(segs) == 0 {
		return nil, errors.New("calc: piecewise strain without segments")
	}
	for i, s := range segs {
		if !(s.To > s.From) {
			return nil, fmt.Errorf("calc: segment %d does not rise in temperature", i)
		}
		if i > 0 && math.Abs(float64(s.From-segs[i-1].To)) > 1e-9 {
			return nil, fmt.Errorf("calc: segment %d does not start where segment %d ends", i, i-1)
		}
	}
	p := &PiecewiseStrain{Segments: segs, Scale: scale, Celsius: celsius, Ref: ref}
	p.offset = p.raw(ref)
	return p, nil
}

func (p *PiecewiseStrain) raw(t units.Temperature) float64 {
	seg := p.Segments[len(p.Segments)-1]
	for _, s := range p.Segments {
		if t <= s.To {
			seg = s
			break
		}
	}
	x := float64(t)
	if p.Celsius {
		x = t.Celsius()
	}
	return p.Scale * horner(seg.Coef, x)
}

// Strain returns the strain from the reference temperature.
func (p *PiecewiseStrain) Strain(t units.Temperature) float64 {
	return (p.raw(t) - p.offset) / (1 + p.offset)
}

// Range returns the span of the segments.
func (p *PiecewiseStrain) Range() (units.Temperature, units.Temperature) {
	return p.Segments[0].From, p.Segments[len(p.Segments)-1].To
}

// LogPolynomialAlpha is an instantaneous coefficient given as
// log10(alpha / Unit) = sum Coef[i] (log10 T)^i, T in kelvin: the form of
// the NIST cryogenic fit for OFHC copper. The strain from Ref follows from
// the definition of the instantaneous coefficient, alpha = (1/L) dL/dT
// (ASTM E228), as L(T)/L(Ref) = exp(integral of alpha dT from Ref to T).
type LogPolynomialAlpha struct {
	Coef   []float64
	Unit   float64 // 1e-6 for a fit in 1e-6 per K
	Ref    units.Temperature
	Lo, Hi units.Temperature
	// table of the integral of alpha at the nodes of a fixed grid over
	// [Lo, Hi], filled once by NewLogPolynomialAlpha.
	grid     []float64
	integ    []float64
	refInteg float64 // the integral from Lo to Ref
}

// Alpha returns the instantaneous coefficient at t, per kelvin.
func (a *LogPolynomialAlpha) Alpha(t units.Temperature) float64 {
	if t <= 0 {
		return 0
	}
	return a.Unit * math.Pow(10, horner(a.Coef, math.Log10(float64(t))))
}

// NewLogPolynomialAlpha returns the curve with its integral tabulated on
// a fine grid, so that Strain needs no allocation and only one short
// quadrature.
func NewLogPolynomialAlpha(coef []float64, unit float64, ref, lo, hi units.Temperature) *LogPolynomialAlpha {
	a := &LogPolynomialAlpha{Coef: coef, Unit: unit, Ref: ref, Lo: lo, Hi: hi}
	const n = 512
	a.grid = make([]float64, n+1)
	a.integ = make([]float64, n+1)
	h := float64(hi-lo) / n
	for i := 0; i <= n; i++ {
		a.grid[i] = float64(lo) + float64(i)*h
		if i > 0 {
			a.integ[i] = a.integ[i-1] + a.gauss(a.grid[i-1], a.grid[i])
		}
	}
	a.refInteg = a.integral(ref)
	return a
}

// gauss integrates alpha from x0 to x1 by 5-point Gauss-Legendre quadrature.
func (a *LogPolynomialAlpha) gauss(x0, x1 float64) float64 {
	nodes := [5]float64{0, -0.5384693101056831, 0.5384693101056831, -0.9061798459386640, 0.9061798459386640}
	weights := [5]float64{0.5688888888888889, 0.4786286704993665, 0.4786286704993665, 0.2369268850561891, 0.2369268850561891}
	m, r := (x0+x1)/2, (x1-x0)/2
	s := 0.0
	for i := range nodes {
		s += weights[i] * a.Alpha(units.Temperature(m+r*nodes[i]))
	}
	return s * r
}

// integral returns the integral of alpha from Lo to t.
func (a *LogPolynomialAlpha) integral(t units.Temperature) float64 {
	x := float64(t)
	i := sort.SearchFloat64s(a.grid, x)
	switch {
	case i <= 0:
		return -a.gauss(x, a.grid[0])
	case i >= len(a.grid):
		last := len(a.grid) - 1
		return a.integ[last] + a.gauss(a.grid[last], x)
	}
	return a.integ[i-1] + a.gauss(a.grid[i-1], x)
}

// Strain returns the strain from the reference temperature.
func (a *LogPolynomialAlpha) Strain(t units.Temperature) float64 {
	return math.Expm1(a.integral(t) - a.refInteg)
}

// Range returns the fit's validity range.
func (a *LogPolynomialAlpha) Range() (units.Temperature, units.Temperature) { return a.Lo, a.Hi }

// MeanTable is tabulated mean coefficients of linear expansion from a
// reference temperature T0 (ASME BPVC II-D tables TE, column B; producers'
// datasheets): a(T) = (L(T) - L(T0)) / (L(T0) (T - T0)). Between points
// the mean coefficient is interpolated linearly in temperature. Between
// the reference and the first point (a table from 20 degC whose first
// point is 100 degC) the line of the first two points is extended, so the
// range includes the reference.
type MeanTable struct {
	Ref    units.Temperature
	Temps  []units.Temperature // rising
	Alphas []float64           // per kelvin
}

// NewMeanTable checks the table and returns it.
func NewMeanTable(ref units.Temperature, temps []units.Temperature, alphas []float64) (*MeanTable, error) {
	if len(temps) < 2 || len(temps) != len(alphas) {
		return nil, errors.New("calc: a mean table needs two or more points")
	}
	for i := 1; i < len(temps); i++ {
		if !(temps[i] > temps[i-1]) {
			return nil, errors.New("calc: mean table temperatures must rise")
		}
	}
	return &MeanTable{Ref: ref, Temps: temps, Alphas: alphas}, nil
}

// Mean returns the interpolated mean coefficient from Ref to t.
func (m *MeanTable) Mean(t units.Temperature) float64 {
	n := len(m.Temps)
	i := 1
	for i < n-1 && t > m.Temps[i] {
		i++
	}
	t0, t1 := m.Temps[i-1], m.Temps[i]
	f := float64(t-t0) / float64(t1-t0)
	return m.Alphas[i-1] + f*(m.Alphas[i]-m.Alphas[i-1])
}

// Strain returns a(T) (T - T0).
func (m *MeanTable) Strain(t units.Temperature) float64 {
	return m.Mean(t) * float64(t.Sub(m.Ref))
}

// Range returns the table's span, widened to include the reference.
func (m *MeanTable) Range() (units.Temperature, units.Temperature) {
	lo, hi := m.Temps[0], m.Temps[len(m.Temps)-1]
	return min(lo, m.Ref), max(hi, m.Ref)
}
