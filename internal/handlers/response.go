package handlers

import (
	"reflect"
	"strconv"
	"strings"
	"sync"

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
	Materials string `json:"materials" example:"2026.12.1"`
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
	Name  string  `json:"-"`
	Value *Number `json:"value,omitempty" swaggertype:"number"`
	Unit  string  `json:"unit,omitempty"`
	Text  string  `json:"text,omitempty"`
	From  string  `json:"from,omitempty"`
}

// Inputs are the echoed request parameters, in the order read. They are
// written as one JSON object keyed by parameter name.
type Inputs []Input

func (in *Inputs) addQuantity(name string, q units.Quantity) {
	v := Number(q.Value)
	*in = append(*in, Input{Name: name, Value: &v, Unit: q.Unit.Symbol})
}

func (in *Inputs) addNumber(name string, x float64) {
	v := Number(x)
	*in = append(*in, Input{Name: name, Value: &v, Unit: "1"})
}

func (in *Inputs) addText(name, s string) {
	*in = append(*in, Input{Name: name, Text: s})
}

// addUsed records a value the calculation used that the caller did not
// send, such as a coefficient taken from the catalogue.
func (in *Inputs) addUsed(name string, v float64, unit, from string) {
	n := Number(v)
	*in = append(*in, Input{Name: name, Value: &n, Unit: unit, From: from})
}

// MarshalJSON writes the inputs as an object in the order read.
func (in Inputs) MarshalJSON() ([]byte, error) {
	b := []byte{'{'}
	for i, x := range in {
		if i > 0 {
			b = append(b, ',')
		}
		b = strconv.AppendQuote(b, x.Name)
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
		if x.Value != nil {
			field("value")
			b = units.AppendNumber(b, float64(*x.Value))
		}
		if x.Unit != "" {
			field("unit")
			b = strconv.AppendQuote(b, x.Unit)
		}
		if x.Text != "" {
			field("text")
			b = strconv.AppendQuote(b, x.Text)
		}
		if x.From != "" {
			field("from")
			b = strconv.AppendQuote(b, x.From)
		}
		b = append(b, '}')
	}
	return append(b, '}'), nil
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

var resultFieldCache sync.Map // reflect.Type -> []resultField

// fieldsOf lists the result fields of a results struct type: every field
// of type *Value, with its json name and its kind tag.
func fieldsOf(t reflect.Type) []resultField {
	if t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	if f, ok := resultFieldCache.Load(t); ok {
		return f.([]resultField)
	}
	var out []resultField
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if f.Type != reflect.TypeOf((*Value)(nil)) {
			continue
		}
		name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		k, ok := kindsByTag[f.Tag.Get("kind")]
		if !ok {
			panic("handlers: result field " + t.Name() + "." + f.Name + " has no known kind tag")
		}
		out = append(out, resultField{name: name, kind: k, index: i})
	}
	resultFieldCache.Store(t, out)
	return out
}

// resultItem is one result ready to write: its name, value in its output
// unit, and unit.
type resultItem struct {
	name  string
	value float64
	unit  string
}

// convert sets every present result of res to its output unit and
// returns them in order. It reports false when a result is not finite.
func (o *outputOptions) convert(res any) ([]resultItem, bool) {
	v := reflect.ValueOf(res).Elem()
	fields := fieldsOf(v.Type())
	items := make([]resultItem, 0, len(fields))
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
