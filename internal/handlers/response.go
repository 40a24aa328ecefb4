package handlers

import (
	"reflect"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/thermalmovement/service/internal/units"
)

// Number is a result number. It is written, in every format, by
// units.AppendNumber: 12 significant digits, shortest form, "." as the
// decimal separator.
type Number float64

// MarshalJSON writes the number as AppendNumber does.
func (n Number) MarshalJSON() ([]byte, error) {
	return units.AppendNumber(make([]byte, 0, 24), float64(n)), nil
}

// Value is a number with its unit.
type Value struct {
	Value Number `json:"value" swaggertype:"number" example:"27" validate:"required"`
	Unit  string `json:"unit" example:"mm" validate:"required"`
	si    float64
}

// si wraps an SI value (kelvin for temperatures) as a result, to be
// converted to its output unit by the wrapper.
func si(v float64) *Value { return &Value{si: v} }

// Versions names the versions of the service and of the material
// catalogue behind a response.
type Versions struct {
	Service   string `json:"service" example:"1.0.0"`
	Materials string `json:"materials" example:"2026.12.2"`
}

// Response is the body of every calculation.
type Response struct {
	Calculation string   `json:"calculation" example:"expansion/linear" validate:"required"`
	Results     any      `json:"results" validate:"required"`
	Inputs      Inputs   `json:"inputs" validate:"required"`
	Method      string   `json:"method" validate:"required"`
	References  []string `json:"references" validate:"required"`
	Warnings    []string `json:"warnings" validate:"required"`
	Cautions    []string `json:"cautions" validate:"required"`
	Versions    Versions `json:"versions" validate:"required"`
}

// Input is one echoed request parameter: a quantity as the caller wrote
// it, a number, or a text, and for coefficients and moduli where the
// value came from.
type Input struct {
	Name  string `json:"-"`
	Value Number `json:"value,omitempty" swaggertype:"number"`
	Unit  string `json:"unit,omitempty"`
	Text  string `json:"text,omitempty"`
	From  string `json:"from,omitempty"`
	// hasValue tells a zero value from none.
	hasValue bool
}

// Inputs are the echoed request parameters, in the order read. They are
// written as one JSON object keyed by parameter name.
type Inputs []Input

func (in *Inputs) addQuantity(name string, q units.Quantity) {
	v := Number(q.Value)
	*in = append(*in, Input{Name: name, Value: v, Unit: q.Unit.Symbol, hasValue: true})
}

func (in *Inputs) addNumber(name string, x float64) {
	v := Number(x)
	*in = append(*in, Input{Name: name, Value: v, Unit: "1", hasValue: true})
}

func (in *Inputs) addText(name, s string) {
	*in = append(*in, Input{Name: name, Text: s})
}

// addUsed records a value the calculation used that the caller did not
// send, such as a coefficient taken from the catalogue.
func (in *Inputs) addUsed(name string, v float64, unit, from string) {
	n := Number(v)
	*in = append(*in, Input{Name: name, Value: n, Unit: unit, From: from, hasValue: true})
}

// MarshalJSON writes the inputs as an object in the order read.
func (in Inputs) MarshalJSON() ([]byte, error) {
	return in.appendJSON(make([]byte, 0, 64*len(in)+2)), nil
}

func (in Inputs) appendJSON(b []byte) []byte {
	b = append(b, '{')
	for i, x := range in {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendJSONString(b, x.Name)
		b = append(b, ':', '{')
		sep := false
		field := func(k string) {
			if sep {
				b = append(b, ',')
			}
			b = append(b, '"')
			b = append(b, k...)
			b = append(b, '"', ':')
			sep = true
		}
		if x.hasValue {
			field("value")
			b = units.AppendNumber(b, float64(x.Value))
		}
		if x.Unit != "" {
			field("unit")
			b = appendJSONString(b, x.Unit)
		}
		if x.Text != "" {
			field("text")
			b = appendJSONString(b, x.Text)
		}
		if x.From != "" {
			field("from")
			b = appendJSONString(b, x.From)
		}
		b = append(b, '}')
	}
	return append(b, '}')
}

// resultField is one field of a results struct: its JSON name, its kind
// (which decides its unit) and its index.
type resultField struct {
	name  string
	kind  units.Kind
	index int
}

var kindsByTag = map[string]units.Kind{
	"movement":      units.Movement,
	"length":        units.LengthKind,
	"area":          units.AreaKind,
	"area-change":   units.AreaChange,
	"volume":        units.VolumeKind,
	"volume-change": units.VolumeChange,
	"stress":        units.StressKind,
	"force":         units.ForceKind,
	"moment":        units.MomentKind,
	"stiffness":     units.StiffnessKind,
	"temperature":   units.TemperatureKind,
	"difference":    units.DifferenceKind,
	"coefficient":   units.CoefficientKind,
	"strain":        units.StrainKind,
	"ratio":         units.RatioKind,
	"curvature":     units.CurvatureKind,
	"flexivity":     units.FlexivityKind,
	"second-moment": units.SecondMomentKind,
	"density":       units.DensityKind,
}

// resultType is what the wrapper knows of a results struct type.
type resultType struct {
	fields     []resultField
	valuesOnly bool // every exported field is a *Value: appendResponse can write it
}

var resultTypeCache sync.Map // reflect.Type -> *resultType

// fieldsOf lists the result fields of a results struct type: every field
// of type *Value, with its json name and its kind tag.
func fieldsOf(t reflect.Type) []resultField { return typeOf(t).fields }

func typeOf(t reflect.Type) *resultType {
	if t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	if rt, ok := resultTypeCache.Load(t); ok {
		return rt.(*resultType)
	}
	var out []resultField
	valuesOnly := true
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if f.Type != reflect.TypeOf((*Value)(nil)) {
			if f.IsExported() {
				valuesOnly = false
			}
			continue
		}
		name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		k, ok := kindsByTag[f.Tag.Get("kind")]
		if !ok {
			panic("handlers: result field " + t.Name() + "." + f.Name + " has no known kind tag")
		}
		out = append(out, resultField{name: name, kind: k, index: i})
	}
	rt := &resultType{fields: out, valuesOnly: valuesOnly}
	resultTypeCache.Store(t, rt)
	return rt
}

// resultItem is one result ready to write: its name, value in its output
// unit, and unit.
type resultItem struct {
	name  string
	value float64
	unit  string
}

// convert sets every present result of res to its output unit and
// appends them in order to items. It reports false when a result is not
// finite.
func (o *outputOptions) convert(res any, items []resultItem) ([]resultItem, bool) {
	v := reflect.ValueOf(res).Elem()
	fields := fieldsOf(v.Type())
	for _, f := range fields {
		p := v.Field(f.index).Interface().(*Value)
		if p == nil {
			continue
		}
		u := o.unitFor(f)
		x := f.kind.Value(p.si, u)
		if !finite(x) {
			return nil, false
		}
		p.Value, p.Unit = Number(x), u.Symbol
		items = append(items, resultItem{name: f.name, value: x, unit: u.Symbol})
	}
	return items, true
}

// appendResponse writes resp as json.Marshal does, without reflection, for
// results that are all Values; items are those results in order.
func appendResponse(b []byte, resp *Response, items []resultItem) []byte {
	b = append(b, `{"calculation":`...)
	b = appendJSONString(b, resp.Calculation)
	b = append(b, `,"results":{`...)
	for i, it := range items {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendJSONString(b, it.name)
		b = append(b, `:{"value":`...)
		b = units.AppendNumber(b, it.value)
		b = append(b, `,"unit":`...)
		b = appendJSONString(b, it.unit)
		b = append(b, '}')
	}
	b = append(b, `},"inputs":`...)
	b = resp.Inputs.appendJSON(b)
	b = append(b, `,"method":`...)
	b = appendJSONString(b, resp.Method)
	b = appendJSONStrings(append(b, `,"references":[`...), resp.References, false)
	b = appendJSONStrings(append(b, `],"warnings":[`...), resp.Warnings, false)
	b = append(b, `],"cautions":[`...)
	cautions, sep := resp.Cautions, false
	if startsWithStanding(cautions) {
		b = append(b, standingCautionsJSON...)
		cautions, sep = cautions[len(standingCautions):], true
	}
	b = appendJSONStrings(b, cautions, sep)
	b = append(b, ']')
	b = append(b, `,"versions":{"service":`...)
	b = appendJSONString(b, resp.Versions.Service)
	b = append(b, `,"materials":`...)
	b = appendJSONString(b, resp.Versions.Materials)
	return append(b, '}', '}')
}

// appendJSONStrings appends the elements of a JSON array of strings,
// with a leading comma when sep is true.
func appendJSONStrings(b []byte, ss []string, sep bool) []byte {
	for _, s := range ss {
		if sep {
			b = append(b, ',')
		}
		b = appendJSONString(b, s)
		sep = true
	}
	return b
}

// standingCautionsJSON are the standing cautions, which every response
// begins its cautions with, encoded once.
var standingCautionsJSON = appendJSONStrings(nil, standingCautions, false)

func startsWithStanding(cautions []string) bool {
	if len(cautions) < len(standingCautions) {
		return false
	}
	for i, s := range standingCautions {
		if cautions[i] != s {
			return false
		}
	}
	return true
}

// appendJSONString appends s as a JSON string the way encoding/json does
// by default: <, > and & escaped for HTML, U+2028 and U+2029 escaped,
// invalid UTF-8 replaced by U+FFFD. Runs of bytes that need no escaping,
// most of any string here, are copied at once.
func appendJSONString(b []byte, s string) []byte {
	const hexDigits = "0123456789abcdef"
	b = append(b, '"')
	start := 0
	for i := 0; i < len(s); {
		c := s[i]
		if jsonSafe[c] {
			i++
			continue
		}
		b = append(b, s[start:i]...)
		if c < utf8.RuneSelf {
			switch c {
			case '"', '\\':
				b = append(b, '\\', c)
			case '\n':
				b = append(b, '\\', 'n')
			case '\r':
				b = append(b, '\\', 'r')
			case '\t':
				b = append(b, '\\', 't')
			default:
				b = append(b, '\\', 'u', '0', '0', hexDigits[c>>4], hexDigits[c&0xf])
			}
			i++
			start = i
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && size == 1:
			b = append(b, `\ufffd`...)
		case r == '\u2028' || r == '\u2029':
			b = append(b, '\\', 'u', '2', '0', '2', hexDigits[r&0xf])
		default:
			b = append(b, s[i:i+size]...)
		}
		i += size
		start = i
	}
	b = append(b, s[start:]...)
	return append(b, '"')
}

// jsonSafe marks the bytes appendJSONString copies as they are: printable
// ASCII but for the quote, the backslash and the HTML characters <, >, &.
var jsonSafe = func() (t [256]bool) {
	for c := 0x20; c < utf8.RuneSelf; c++ {
		t[c] = c != '"' && c != '\\' && c != '<' && c != '>' && c != '&'
	}
	return t
}()
