package materials

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/units"
)

// Model chooses between a material's constant coefficient and its
// temperature-dependent curves.
type Model string

// The models a request may ask for.
const (
	Auto     Model = "auto"     // constant within its range, else a curve (or two joined) that covers the interval
	Constant Model = "constant" // the constant design coefficient, whatever the temperatures
	CurveFit Model = "curve"    // a temperature-dependent curve
)

// Expansion is a linear strain over a temperature interval with the data
// it came from.
type Expansion struct {
	Strain    float64 // linear strain of a length measured at the initial temperature
	AlphaMean float64 // Strain / (t2 - t1); the constant coefficient when dT = 0
	Kind      string  // "constant" or the curve kind ("<kind> and <kind>" for two joined)
	Joined    bool    // two curves joined at Join (see chain)
	Join      units.Temperature
	Source    Source
	Warnings  []string
}

// OutOfRangeError reports temperatures beyond a material's data.
type OutOfRangeError struct {
	Material string
	Detail   string
}

func (e *OutOfRangeError) Error() string { return e.Detail }

// Unwrap lets callers test errors.Is(err, calc.ErrOutOfRange).
func (e *OutOfRangeError) Unwrap() error { return calc.ErrOutOfRange }

// Linear returns the linear strain of the solid m from t1 to t2 by the
// model asked for.
//
// Auto takes the constant coefficient where both temperatures lie within
// its range; else the first curve whose range holds both; else two curves
// whose ranges meet, chained (see chain); else, while the
// interval stays within the span of all the material's data, the constant
// with a warning. Beyond all the data, and for Curve when no curve holds
// the interval, it returns an *OutOfRangeError unless extrapolate is set:
// then the curve that covers most of the interval is evaluated beyond its
// range (or the constant used), with a warning. Constant uses the constant
// coefficient whatever the temperatures, warning outside its range.
func (m *Material) Linear(t1, t2 units.Temperature, model Model, extrapolate bool) (Expansion, error) {
	if m.Alpha == nil {
		return Expansion{}, fmt.Errorf("%s is a liquid: it has a volumetric coefficient, not a linear one", m.ID)
	}
	lo, hi := min(t1, t2), max(t1, t2)
	constantInRange := m.ConstantHolds(t1, t2)
	outside := func() Expansion {
		e := m.constant(t2.Sub(t1))
		e.Warnings = append(e.Warnings, fmt.Sprintf("the interval %s to %s lies outside %s, the range the constant coefficient of %s holds for; the movement is extrapolated",
			units.CelsiusText(t1), units.CelsiusText(t2), span(m.Alpha.TMin, m.Alpha.TMax), m.ID))
		return e
	}
	if model == CurveFit && len(m.Curves) == 0 {
		return Expansion{}, &OutOfRangeError{Material: m.ID, Detail: m.ID + " has no temperature-dependent curve; use alpha_model=auto or constant"}
	}
	if model == Constant || (model == Auto && len(m.Curves) == 0) {
		if constantInRange {
			return m.constant(t2.Sub(t1)), nil
		}
		if model == Auto && !extrapolate {
			// The constant's range is all the data there is.
			return Expansion{}, &OutOfRangeError{Material: m.ID, Detail: fmt.Sprintf(
				"the interval %s to %s is beyond the data of %s: its constant coefficient holds for %s, and it has no temperature-dependent curve; set extrapolate=true to extrapolate, alpha_model=constant to use the constant coefficient with a warning, or give the coefficient",
				units.CelsiusText(t1), units.CelsiusText(t2), m.ID, span(m.Alpha.TMin, m.Alpha.TMax))}
		}
		return outside(), nil
	}
	if model == Auto && constantInRange {
		return m.constant(t2.Sub(t1)), nil
	}
	for _, c := range m.Curves {
		if calc.InRange(c, t1) && calc.InRange(c, t2) {
			return m.curve(c, t1, t2), nil
		}
	}
	if e, ok := m.chain(t1, t2); ok {
		return e, nil
	}
	dataLo, dataHi := m.Alpha.TMin, m.Alpha.TMax
	if !m.Alpha.HasRange {
		dataLo, dataHi = lo, hi
	}
	ranges := ""
	for i, c := range m.Curves {
		clo, chi := c.Range()
		dataLo, dataHi = min(dataLo, clo), max(dataHi, chi)
		if i > 0 {
			ranges += ", "
		}
		ranges += span(clo, chi) + " (" + c.Kind + ")"
	}
	if model == Auto && within(lo, dataLo, dataHi) && within(hi, dataLo, dataHi) {
		return outside(), nil
	}
	if !extrapolate {
		return Expansion{}, &OutOfRangeError{Material: m.ID, Detail: fmt.Sprintf(
			"the interval %s to %s is beyond the temperature-dependent data of %s (%s); set extrapolate=true to extrapolate, alpha_model=constant to use the constant coefficient with a warning, or give the coefficient",
			units.CelsiusText(t1), units.CelsiusText(t2), m.ID, ranges)}
	}
	best, cover := m.Curves[0], math.Inf(-1)
	for _, c := range m.Curves {
		clo, chi := c.Range()
		if ov := float64(min(hi, chi) - max(lo, clo)); ov > cover {
			best, cover = c, ov
		}
	}
	e := m.curve(best, t1, t2)
	blo, bhi := best.Range()
	e.Warnings = append(e.Warnings, fmt.Sprintf("extrapolated: the interval %s to %s reaches beyond %s, the range of the %s data of %s",
		units.CelsiusText(t1), units.CelsiusText(t2), span(blo, bhi), best.Kind, m.ID))
	return e, nil
}

// ConstantHolds reports whether t1 and t2 lie within the range of the
// solid m's constant coefficient (one with no range holds everywhere).
func (m *Material) ConstantHolds(t1, t2 units.Temperature) bool {
	a := m.Alpha
	return a != nil && (!a.HasRange || (within(t1, a.TMin, a.TMax) && within(t2, a.TMin, a.TMax)))
}

// CurveStrain returns the strain of the solid m from lo up to hi on its
// temperature-dependent data and, for a caller that needs it at many
// temperatures between, the strain from lo to any t in lo..hi on the same
// data; ok is false when no data reach into lo..hi. The data are the
// widest part of lo..hi that one curve holds, or two joined as chain joins
// them; where lo..hi reaches beyond it (steel from -25 degC, its
// EN 1993-1-2 curve starting at 20 degC), the constant coefficient is
// taken there, lengths multiplied at each end as chain does.
func (m *Material) CurveStrain(lo, hi units.Temperature) (e Expansion, at func(units.Temperature) float64, ok bool) {
	if m.Alpha == nil || !(lo < hi) || len(m.Curves) == 0 {
		return Expansion{}, nil, false
	}
	var a, b units.Temperature // the data's part of lo..hi
	var on func(t units.Temperature) float64
	var data Expansion
	dataLo, dataHi := m.Curves[0].Range()
	for i := range m.Curves {
		c := &m.Curves[i]
		clo, chi := c.Range()
		dataLo, dataHi = min(dataLo, clo), max(dataHi, chi)
		if x, y := max(lo, clo), min(hi, chi); y > x && (on == nil || y.Sub(x) > b.Sub(a)) {
			a, b, data = x, y, m.curve(*c, x, y)
			on = func(t units.Temperature) float64 { return calc.IntervalStrain(c, x, t) }
		}
	}
	if x, y := max(lo, dataLo), min(hi, dataHi); y > x && (on == nil || y.Sub(x) > b.Sub(a)) {
		if ca, cb, tj, ok := m.chainCurves(x, y); ok {
			a, b = x, y
			data, _ = m.chain(x, y)
			on = func(t units.Temperature) float64 { return joinedStrain(ca, cb, tj, x, t) }
		}
	}
	if on == nil {
		return Expansion{}, nil, false
	}
	if a == lo && b == hi {
		return data, on, true
	}
	alpha := m.Alpha.Value
	sa := 1 + alpha*float64(a.Sub(lo))
	sb := sa * (1 + on(b))
	at = func(t units.Temperature) float64 {
		switch {
		case t <= a:
			return alpha * float64(t.Sub(lo))
		case t <= b:
			return sa*(1+on(t)) - 1
		}
		return sb*(1+alpha*float64(t.Sub(b))) - 1
	}
	e = Expansion{Strain: at(hi), Kind: data.Kind + " over " + span(a, b) + ", the constant coefficient beyond", Joined: true, Join: a, Source: joinSources(m.Alpha.Source, data.Source)}
	e.AlphaMean = e.Strain / float64(hi.Sub(lo))
	return e, at, true
}

// LinearDelta returns the strain of the solid m over the temperature
// difference dT by its constant coefficient; absolute temperatures are
// unknown, so no range can be checked.
func (m *Material) LinearDelta(dT units.TemperatureDifference) (Expansion, error) {
	if m.Alpha == nil {
		return Expansion{}, fmt.Errorf("%s is a liquid: it has a volumetric coefficient, not a linear one", m.ID)
	}
	e := m.constant(dT)
	e.Warnings = wider(m.Alpha, dT, "constant coefficient", m.ID)
	return e, nil
}

// wider warns when no interval of dT fits in the range of c, wherever it
// lies: the coefficient is extrapolated. what names the coefficient.
func wider(c *Coefficient, dT units.TemperatureDifference, what, id string) []string {
	if !c.HasRange || math.Abs(float64(dT)) <= float64(c.TMax.Sub(c.TMin))+1e-9 { // within, as within() allows
		return nil
	}
	return []string{fmt.Sprintf("a change of %s K is wider than %s, the range the %s of %s holds for, so it cannot lie within it; the expansion is extrapolated (give t_initial and t_final to have the interval checked)",
		units.FormatNumber(math.Abs(float64(dT))), span(c.TMin, c.TMax), what, id)}
}

// chain returns the strain from t1 to t2 over two curves whose ranges
// overlap, when no one curve holds both temperatures: the first curve that
// holds the lower temperature, up to the top of its range, then the first
// that holds the higher one and that top. A low-temperature fit (NIST,
// 4..300 K) and a table or formula from 20 degC meet this way, as for an
// aluminium facade between -20 and 80 degC. Lengths multiply across the
// join: 1 + e(t1 -> t2) = (1 + e_a(lo -> tj)) (1 + e_b(tj -> hi)) when
// heating, and its inverse when cooling.
func (m *Material) chain(t1, t2 units.Temperature) (Expansion, bool) {
	lo, hi := min(t1, t2), max(t1, t2)
	a, b, tj, ok := m.chainCurves(lo, hi)
	if !ok {
		return Expansion{}, false
	}
	ratio := 1 + joinedStrain(a, b, tj, lo, hi)
	e := Expansion{Strain: ratio - 1, Kind: a.Kind + " and " + b.Kind, Joined: true, Join: tj, Source: joinSources(a.Source, b.Source)}
	if t1 > t2 {
		e.Strain = 1/ratio - 1
	}
	e.AlphaMean = e.Strain / float64(t2.Sub(t1))
	return e, true
}

// joinedStrain is the strain from lo to t (lo <= t) on curve a up to tj
// and on b above it, lengths multiplied at tj.
func joinedStrain(a, b *Curve, tj, lo, t units.Temperature) float64 {
	if t <= tj {
		return calc.IntervalStrain(a, lo, t)
	}
	return (1+calc.IntervalStrain(a, lo, tj))*(1+calc.IntervalStrain(b, tj, t)) - 1
}

// chainCurves picks the two curves chain joins from lo to hi, and the
// temperature tj where they are joined.
func (m *Material) chainCurves(lo, hi units.Temperature) (a, b *Curve, tj units.Temperature, ok bool) {
	for i := range m.Curves {
		if calc.InRange(m.Curves[i], lo) {
			a = &m.Curves[i]
			break
		}
	}
	if a == nil {
		return nil, nil, 0, false
	}
	_, tj = a.Range()
	for i := range m.Curves {
		if c := &m.Curves[i]; c != a && calc.InRange(c, hi) && calc.InRange(c, tj) {
			return a, c, tj, true
		}
	}
	return nil, nil, 0, false
}

// joinSources is the source of data taken from both a and b: every
// reference of each, and "memory" when either is not re-read.
func joinSources(a, b Source) Source {
	s := Source{Confidence: a.Confidence}
	if b.Confidence != "read" {
		s.Confidence = b.Confidence
	}
	for _, x := range []Source{a, b} {
		for i, r := range x.Refs {
			if !slices.Contains(s.Refs, r) {
				s.Refs = append(s.Refs, r)
				s.Citations = append(s.Citations, x.Citations[i])
			}
		}
	}
	s.Note = strings.TrimSpace(a.Note + " " + b.Note)
	return s
}

func (m *Material) constant(dT units.TemperatureDifference) Expansion {
	return Expansion{Strain: m.Alpha.Value * float64(dT), AlphaMean: m.Alpha.Value, Kind: "constant", Source: m.Alpha.Source}
}

func (m *Material) curve(c Curve, t1, t2 units.Temperature) Expansion {
	e := Expansion{Strain: calc.IntervalStrain(c, t1, t2), Kind: c.Kind, Source: c.Source}
	if d := float64(t2.Sub(t1)); d != 0 {
		e.AlphaMean = e.Strain / d
	} else {
		// The instantaneous coefficient, by a central difference.
		h := 0.01
		e.AlphaMean = calc.IntervalStrain(c, t1.Add(-units.TemperatureDifference(h)), t1.Add(units.TemperatureDifference(h))) / (2 * h)
	}
	return e
}

// BetaDeltaWarnings returns the warnings for a liquid's constant
// volumetric coefficient used over the difference dT.
func (m *Material) BetaDeltaWarnings(dT units.TemperatureDifference) []string {
	if m.Beta == nil {
		return nil
	}
	return wider(m.Beta, dT, "volumetric coefficient", m.ID)
}

// BetaWarnings returns the warnings for a liquid's constant volumetric
// coefficient used from t1 to t2.
func (m *Material) BetaWarnings(t1, t2 units.Temperature) []string {
	b := m.Beta
	if b == nil || !b.HasRange || (within(t1, b.TMin, b.TMax) && within(t2, b.TMin, b.TMax)) {
		return nil
	}
	return []string{fmt.Sprintf("the interval %s to %s lies outside %s, the range the volumetric coefficient of %s holds for",
		units.CelsiusText(t1), units.CelsiusText(t2), span(b.TMin, b.TMax), m.ID)}
}

func within(t, lo, hi units.Temperature) bool { return t >= lo-1e-9 && t <= hi+1e-9 }

func span(lo, hi units.Temperature) string {
	return units.CelsiusText(lo) + " to " + units.CelsiusText(hi)
}
