package handlers

import (
	"errors"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/thermalmovement/service/internal/materials"
	"github.com/thermalmovement/service/internal/units"
)

// params reads the parameters of one calculation, whichever way they came
// (query string, JSON body, CSV row), collecting every problem so that
// the response names all bad fields at once.
type params struct {
	vals   map[string]raw
	used   []string // names read
	errs   map[errKind][]FieldError
	inputs Inputs
	cat    *materials.Catalogue
	unitsC *units.Cache // reads the quantities
	// brief is set for a batch row, whose answer is its results, checks,
	// warnings and cautions: a calculation may then leave out its method
	// and references, which no batch writes, and save building them.
	brief bool
	// usedBuf and inputsBuf hold used and inputs for a typical request
	// without further allocation.
	usedBuf   [16]string
	inputsBuf [10]Input
	// warnings are concerns of the inputs themselves, added to the
	// answer's own (see temperature).
	warnings []string
	// temp0 is the first absolute temperature read (when hasTemp0), with
	// its name and quantity, to tell a change of scale among them.
	temp0       tempRead
	hasTemp0    bool
	scaleWarned bool
}

type tempRead struct {
	name string
	q    units.Quantity
	k    units.Temperature
}

func newParams(vals map[string]raw, cat *materials.Catalogue, uc *units.Cache) *params {
	p := new(params)
	p.reset(vals, cat, uc)
	return p
}

// reset makes p read vals afresh, keeping its buffers.
func (p *params) reset(vals map[string]raw, cat *materials.Catalogue, uc *units.Cache) {
	*p = params{vals: vals, cat: cat, unitsC: uc}
	p.used = p.usedBuf[:0]
	p.inputs = p.inputsBuf[:0]
}

// fail records a problem with the named parameter.
func (p *params) fail(k errKind, name, detail string) {
	if p.errs == nil {
		p.errs = map[errKind][]FieldError{}
	}
	p.errs[k] = append(p.errs[k], FieldError{Parameter: name, Detail: detail})
}

// invalid records an unreadable parameter.
func (p *params) invalid(name, detail string) { p.fail(errInvalid, name, detail) }

// unprocessable records a parameter that was read but cannot be computed.
func (p *params) unprocessable(name, detail string) { p.fail(errUnprocessable, name, detail) }

// has reports whether the parameter was sent.
func (p *params) has(name string) bool {
	_, ok := p.vals[name]
	return ok
}

// take returns a parameter and marks it read.
func (p *params) take(name string) (raw, bool) {
	r, ok := p.vals[name]
	if ok {
		p.markUsed(name)
	}
	return r, ok
}

// markUsed records that a parameter was read.
func (p *params) markUsed(name string) {
	// Only names that were sent: done counts used against vals.
	if p.has(name) && !p.isUsed(name) {
		p.used = append(p.used, name)
	}
}

// isUsed reports whether a parameter was read. A request has a handful
// of parameters: a list is cheaper than a map.
func (p *params) isUsed(name string) bool {
	for _, u := range p.used {
		if u == name {
			return true
		}
	}
	return false
}

// ok reports whether no problem has been recorded so far.
func (p *params) ok() bool {
	for _, fs := range p.errs {
		if len(fs) > 0 {
			return false
		}
	}
	return true
}

// unknownParameter is the detail of a parameter no calculation step read.
const unknownParameter = "unknown parameter"

// done checks for parameters nobody read, then returns every problem
// found as one error, or nil.
func (p *params) done() error {
	if len(p.used) == len(p.vals) {
		// used holds distinct names of vals only (see take): all were read.
		return fieldsError(p.errs)
	}
	var unknown []string
	for k := range p.vals {
		if !p.isUsed(k) {
			unknown = append(unknown, k)
		}
	}
	sort.Strings(unknown)
	for _, k := range unknown {
		p.markUsed(k)
		p.invalid(k, unknownParameter)
	}
	return fieldsError(p.errs)
}

// quantity parses a parameter as a quantity with a unit.
func (p *params) quantity(name string) (units.Quantity, bool) {
	r, ok := p.take(name)
	if !ok {
		return units.Quantity{}, false
	}
	var q units.Quantity
	var err error
	switch r.kind {
	case rawString:
		q, err = p.unitsC.Parse(r.str)
	case rawObject:
		q, err = units.New(r.num, r.unit)
	case rawNumber:
		q = units.Quantity{Value: r.num, Unit: units.Unit{Dim: units.Dimensionless, Factor: 1}}
	default:
		err = errors.New("expected a quantity such as \"30 m\", not " + r.origin)
	}
	if err != nil {
		p.invalid(name, err.Error())
		return units.Quantity{}, false
	}
	return q, true
}

// dim reads an optional quantity of dimension d and returns it in SI.
func (p *params) dim(name string, d units.Dim) (float64, bool) {
	q, ok := p.quantity(name)
	if !ok {
		return 0, false
	}
	v, err := q.In(d)
	if err != nil {
		p.invalid(name, dimMessage(err, q, d))
		return 0, false
	}
	if limit, ok := plausible[d]; ok && math.Abs(v) > limit {
		p.unprocessable(name, q.String()+" is beyond any structure, vessel or material this service computes")
		return 0, false
	}
	p.inputs.addQuantity(name, q)
	return v, true
}

// plausible bounds the magnitude of inputs, in SI, far beyond any real
// structure or material, so that a mistyped exponent is refused rather
// than computed: lengths to 1000 km, coefficients to 1e-2 per K, stresses
// to 10 TPa. Common practice, no published source.
var plausible = map[units.Dim]float64{
	units.Length:       1e6,
	units.Area:         1e10,
	units.Volume:       1e12,
	units.SecondMoment: 1e6,
	units.Coefficient:  1e-2,
	units.Stress:       1e13,
	units.Force:        1e13,
	units.Moment:       1e13,
	units.Stiffness:    1e15,
	units.Density:      1e6,
	units.Curvature:    1e6,
}

// maxKelvin bounds absolute temperatures and temperature differences.
const maxKelvin = 1e5

// Below maxKelvin, temperatures no structure, pipe or vessel meets are
// computed with a warning: above 2000 degC, and changes over 2000 K (a
// building fire stays below about 1200 degC). Common practice, no
// published source.
const (
	hottest = 2273.15 // K
	widest  = 2000.0  // K
)

// softest is the smallest Young's modulus or yield strength read without
// a warning, 1 MPa: below it lie sealants, foams and soft elastomers, and
// a value there is more often a unit mistyped (210 kPa for 210 GPa, 355
// mPa for 355 MPa) than one of them. Common practice, no published source.
const softest = 1e6 // Pa

// checkSoft warns of a stress-like value under softest; why says what it
// would mean and which unit to check.
func (p *params) checkSoft(name string, pa float64, why string) {
	if pa < softest {
		p.warnings = append(p.warnings, name+" is "+formatRounded(pa/1e3)+" kPa, under 1 MPa: "+why)
	}
}

func dimMessage(err error, q units.Quantity, d units.Dim) string {
	if errors.Is(err, units.ErrNoUnit) {
		return "a bare number is not " + d.Article() + " " + d.String() + ": give its unit, such as " + strconv.Quote(d.Example())
	}
	return err.Error()
}

// positive reads an optional quantity that must be above zero.
func (p *params) positive(name string, d units.Dim) (float64, bool) {
	v, ok := p.dim(name, d)
	if ok && !(v > 0) {
		p.unprocessable(name, "must be greater than zero")
		return 0, false
	}
	return v, ok
}

// nonNegative reads an optional quantity that must not be below zero.
func (p *params) nonNegative(name string, d units.Dim) (float64, bool) {
	v, ok := p.dim(name, d)
	if ok && v < 0 {
		p.unprocessable(name, "must not be negative")
		return 0, false
	}
	return v, ok
}

// temperature reads an optional absolute temperature (fields t_*).
func (p *params) temperature(name string) (units.Temperature, bool) {
	q, ok := p.quantity(name)
	if !ok {
		return 0, false
	}
	t, err := q.Temperature()
	if err == nil && float64(t) > maxKelvin {
		p.unprocessable(name, q.String()+" is beyond any temperature this service computes")
		return 0, false
	}
	if err != nil {
		switch {
		case errors.Is(err, units.ErrBelowZero):
			p.unprocessable(name, err.Error())
		case errors.Is(err, units.ErrNoUnit) || q.Unit.Symbol == "":
			p.invalid(name, "a bare number is not a temperature: give its unit, such as \"20 degC\"")
		default:
			p.invalid(name, err.Error())
		}
		return 0, false
	}
	p.inputs.addQuantity(name, q)
	p.checkScale(name, q, t)
	if float64(t) > hottest {
		v := q.String()
		if q.Unit.Symbol != "degC" {
			v += " (" + units.CelsiusText(t) + ")"
		}
		p.warnings = append(p.warnings, name+" is "+v+", above 2000 degC: hotter than structures, pipes and vessels get, fire included; check the value and its unit")
	}
	return t, true
}

// checkScale warns when absolute temperatures come on two scales and one
// of them starts at absolute zero (K, degR): "20 degC" then "50 K" is most
// often a rise of 50 K meant, not -223.15 degC. It is computed as written.
func (p *params) checkScale(name string, q units.Quantity, t units.Temperature) {
	if !p.hasTemp0 {
		p.temp0, p.hasTemp0 = tempRead{name: name, q: q, k: t}, true
		return
	}
	f := &p.temp0
	a, b := f.q.Unit, q.Unit
	if (a.Offset == 0) == (b.Offset == 0) || p.scaleWarned {
		// Both scales start at absolute zero (K, degR) or neither does
		// (degC, degF); or this request was told once already.
		return
	}
	p.scaleWarned = true
	// abs is the one on a scale from absolute zero, other the one not.
	abs, other := tempRead{name: name, q: q, k: t}, *f
	if a.Offset == 0 {
		abs, other = other, abs
	}
	sym := other.q.Unit.Symbol
	p.warnings = append(p.warnings, abs.name+" is "+abs.q.String()+" and "+other.name+" is on another scale ("+sym+
		"): fields named t_* are absolute temperatures, so "+abs.q.String()+" is "+
		units.FormatNumber(math.Round(units.FromKelvin(abs.k, other.q.Unit)*100)/100)+" "+sym+"; a change of temperature goes in a delta_t field")
}

// difference reads an optional temperature difference (fields delta_t*).
func (p *params) difference(name string) (units.TemperatureDifference, bool) {
	q, ok := p.quantity(name)
	if !ok {
		return 0, false
	}
	d, err := q.TemperatureDifference()
	if err == nil && math.Abs(float64(d)) > maxKelvin {
		p.unprocessable(name, q.String()+" is beyond any temperature difference this service computes")
		return 0, false
	}
	if err != nil {
		if q.Unit.Symbol == "" {
			p.invalid(name, "a bare number is not a temperature difference: give its unit, such as \"35 K\"")
		} else {
			p.invalid(name, err.Error())
		}
		return 0, false
	}
	p.inputs.addQuantity(name, q)
	p.checkWidth(name+" is "+q.String(), d)
	return d, true
}

// checkWidth warns of a temperature change over widest; what names it.
func (p *params) checkWidth(what string, d units.TemperatureDifference) {
	if math.Abs(float64(d)) <= widest {
		return
	}
	if !strings.HasSuffix(what, " K") {
		what += " (" + formatRounded(float64(d)) + " K)"
	}
	p.warnings = append(p.warnings, what+", a change over 2000 K: wider than structures, pipes and vessels meet, fire included; check the value and its unit")
}

// number reads an optional dimensionless number: a JSON number, or a
// string such as "0.5" or "25 %".
func (p *params) number(name string) (float64, bool) {
	q, ok := p.quantity(name)
	if !ok {
		return 0, false
	}
	v, err := q.In(units.Dimensionless)
	if err != nil {
		p.invalid(name, err.Error())
		return 0, false
	}
	p.inputs.addNumber(name, v)
	return v, true
}

// text reads an optional string parameter.
func (p *params) text(name string) (string, bool) {
	r, ok := p.take(name)
	if !ok {
		return "", false
	}
	if r.kind != rawString {
		p.invalid(name, "expected a string, not "+r.origin)
		return "", false
	}
	return r.str, true
}

// choice reads an optional string that must be one of allowed.
func (p *params) choice(name string, allowed ...string) (string, bool) {
	s, ok := p.text(name)
	if !ok {
		return "", false
	}
	for _, a := range allowed {
		if s == a {
			p.inputs.addText(name, s)
			return s, true
		}
	}
	p.invalid(name, units.Quote(s)+" is not one of "+strings.Join(allowed, ", "))
	return "", false
}

// flag reads an optional boolean: JSON true/false, or "true"/"false".
func (p *params) flag(name string) bool {
	r, ok := p.take(name)
	if !ok {
		return false
	}
	switch {
	case r.kind == rawBool:
		p.inputs.addText(name, strconv.FormatBool(r.b))
		return r.b
	case r.kind == rawString && (r.str == "true" || r.str == "false"):
		p.inputs.addText(name, r.str)
		return r.str == "true"
	}
	p.invalid(name, "expected true or false, not "+units.Quote(r.origin))
	return false
}

// material reads an optional catalogue id.
func (p *params) material(name string) (*materials.Material, bool) {
	id, ok := p.text(name)
	if !ok {
		return nil, false
	}
	m, err := p.cat.Get(id)
	if err != nil {
		p.fail(errNotFound, name, "unknown material "+units.Quote(id)+didYouMean(p.cat.Suggest(id))+"; GET /v1/materials lists the ids")
		return nil, false
	}
	p.inputs.addText(name, id)
	return m, true
}

// didYouMean words the suggestions for a mistyped id, or "".
func didYouMean(ids []string) string {
	if len(ids) == 0 {
		return ""
	}
	return " (did you mean " + strings.Join(ids, ", ") + "?)"
}

// require records a missing parameter when none of names was sent.
func (p *params) require(names ...string) bool {
	for _, n := range names {
		if p.has(n) {
			return true
		}
	}
	if len(names) == 1 {
		p.invalid(names[0], "required")
	} else {
		p.invalid(names[0], "required: give "+strings.Join(names, " or "))
	}
	return false
}

// exclusive records a contradiction when more than one of names was sent.
func (p *params) exclusive(names ...string) bool {
	var given []string
	for _, n := range names {
		if p.has(n) {
			given = append(given, n)
		}
	}
	if len(given) > 1 {
		for _, n := range given[1:] {
			p.unprocessable(n, "contradicts "+given[0]+": give only one of "+strings.Join(names, ", "))
		}
		for _, n := range given {
			p.markUsed(n) // read, and in conflict: not unknown
		}
		return false
	}
	return true
}

func finite(vs ...float64) bool {
	for _, v := range vs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}
