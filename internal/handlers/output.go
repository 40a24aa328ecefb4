package handlers

import (
	"bytes"
	"encoding/xml"
	"strconv"
	"strings"

	"github.com/thermalmovement/service/internal/units"
)

// outputOptions are the parameters that shape a response rather than the
// calculation: format, unit system, per-result units, the result a text
// answer carries and how errors are answered.
type outputOptions struct {
	format    string // json, text, csv, xml (svg, png where a calculation draws)
	system    string // si or us
	result    string // the result of a text answer; "" for the first
	inline    bool   // on_error=inline: errors as a 200 "#ERROR: ..." body
	overrides map[string]units.Unit
}

// control lists the parameters read by readOutput, for the unknown check.
func isControl(name string) bool {
	switch name {
	case "format", "units", "result", "on_error":
		return true
	}
	return strings.HasSuffix(name, "_unit")
}

// baseFormats are the formats of every calculation.
var baseFormats = []string{"json", "text", "csv", "xml"}

// readOutput reads the output parameters into o; fields are the
// calculation's results, formats the formats it offers beyond json, text,
// csv and xml.
// checks are the names of the checks the results can carry: result= may
// name one as check_<name>, for a text answer of pass or fail.
func readOutput(o *outputOptions, p *params, fields []resultField, checks []string, formats ...string) {
	*o = outputOptions{format: "json", system: "si"}
	if f, ok := p.text("format"); ok {
		o.format = f
		if !contains(baseFormats, f) && !contains(formats, f) {
			allowed := append(append([]string(nil), baseFormats...), formats...)
			p.invalid("format", units.Quote(f)+" is not one of "+strings.Join(allowed, ", "))
			o.format = "json"
		}
	}
	if s, ok := p.text("units"); ok {
		if s != "si" && s != "us" {
			p.invalid("units", units.Quote(s)+" is not si or us")
		} else {
			o.system = s
		}
	}
	if e, ok := p.text("on_error"); ok {
		switch e {
		case "inline":
			o.inline = true
		case "problem":
		default:
			p.invalid("on_error", units.Quote(e)+" is not inline or problem")
		}
	}
	if r, ok := p.text("result"); ok {
		if fieldByName(fields, r) == nil && !isCheckResult(checks, r) {
			msg := "no result " + units.Quote(r) + "; results: " + fieldNames(fields)
			if len(checks) > 0 {
				msg += "; checks: check_" + strings.Join(checks, ", check_")
			}
			p.invalid("result", msg)
		}
		o.result = r
	}
	for name := range p.vals {
		if !strings.HasSuffix(name, "_unit") {
			continue
		}
		rname := strings.TrimSuffix(name, "_unit")
		f := fieldByName(fields, rname)
		if f == nil {
			// Not a result: leave it for the calculation (or the unknown check).
			continue
		}
		if u, ok := p.resultUnit(*f); ok {
			if o.overrides == nil {
				o.overrides = map[string]units.Unit{}
			}
			o.overrides[rname] = u
		}
	}
}

// resultUnit reads the parameter <result>_unit, the unit asked for the
// result f, and checks that it can express f.
func (p *params) resultUnit(f resultField) (units.Unit, bool) {
	name := f.name + "_unit"
	s, ok := p.text(name)
	if !ok {
		return units.Unit{}, false
	}
	u, err := p.unitsC.ParseUnit(s) // through the cache of the quantities: requests repeat these too
	if err != nil {
		p.invalid(name, err.Error())
		return units.Unit{}, false
	}
	if !f.kind.Accepts(u) {
		want := f.kind.Dim.String()
		if f.kind.Absolute {
			want = "temperature scale (degC, degF, K, degR)"
		}
		p.invalid(name, units.Quote(s)+" is not a unit of "+want+", which "+f.name+" is")
		return units.Unit{}, false
	}
	return u, true
}

func (o *outputOptions) unitFor(f resultField) units.Unit {
	if u, ok := o.overrides[f.name]; ok {
		return u
	}
	if o.system == "us" {
		return f.kind.US
	}
	return f.kind.SI
}

func fieldByName(fields []resultField, name string) *resultField {
	for i := range fields {
		if fields[i].name == name {
			return &fields[i]
		}
	}
	return nil
}

func fieldNames(fields []resultField) string {
	names := make([]string, len(fields))
	for i, f := range fields {
		names[i] = f.name
	}
	return strings.Join(names, ", ")
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// Content types of the formats.
var contentTypes = map[string]string{
	"json": "application/json; charset=utf-8",
	"text": "text/plain; charset=utf-8",
	"csv":  "text/csv; charset=utf-8",
	"xml":  "application/xml; charset=utf-8",
	"svg":  "image/svg+xml",
	"png":  "image/png",
}

// isCheckResult reports whether result names one of checks, as
// check_<name>.
func isCheckResult(checks []string, result string) bool {
	name, ok := strings.CutPrefix(result, "check_")
	return ok && contains(checks, name)
}

// textBody is the format=text answer: the one number asked for, bare, or
// for result=check_<name> that check's pass or fail, so that a cell can
// show a failing check beside the number.
func textBody(items []resultItem, checks []Check, result string) []byte {
	if name, ok := strings.CutPrefix(result, "check_"); ok {
		for _, c := range checks {
			if c.Name == name {
				return []byte(passFail(c.Pass))
			}
		}
	}
	for _, it := range items {
		if result == "" || it.name == result {
			return units.AppendNumber(nil, it.value)
		}
	}
	// The result asked for is not among those computed for these inputs.
	return nil
}

// csvBody is the format=csv answer: a header row naming each result with
// its unit, and one data row.
// Checks, where a calculation has them, follow as columns check_<name>
// holding pass or fail; then the warnings (joined by "; ") and the
// cautions, so that a table opened on its own still carries them.
func csvBody(items []resultItem, checks []Check, warnings, cautions []string) []byte {
	var b bytes.Buffer
	for i, it := range items {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(csvHeader(it.name, it.unit))
	}
	for _, c := range checks {
		b.WriteString(",check_" + c.Name)
	}
	b.WriteString(",warnings,cautions\r\n")
	for i, it := range items {
		if i > 0 {
			b.WriteByte(',')
		}
		b.Write(units.AppendNumber(nil, it.value))
	}
	for _, c := range checks {
		b.WriteString("," + passFail(c.Pass))
	}
	b.WriteByte(',')
	b.Write(appendCSVField(nil, strings.Join(warnings, "; ")))
	b.WriteByte(',')
	b.Write(appendCSVField(nil, strings.Join(cautions, " ")))
	b.WriteString("\r\n")
	return b.Bytes()
}

// csvHeader is "name [unit]", quoted when the unit holds a comma or quote.
func csvHeader(name, unit string) string {
	h := name
	if unit != "" {
		h += " [" + unit + "]"
	}
	if strings.ContainsAny(h, ",\"\r\n") {
		h = `"` + strings.ReplaceAll(h, `"`, `""`) + `"`
	}
	return h
}

// xmlBody is the format=xml answer: flat, no namespaces, one element per
// result holding the number, with its unit as an attribute, then the
// warnings, so that FILTERXML(x, "//delta_length") reads a number.
//
// Checks, where a calculation has them, are elements
// <check name="gap_stays_open" pass="true">detail</check>.
func xmlBody(calculation string, items []resultItem, checks []Check, warnings, cautions []string) []byte {
	var b bytes.Buffer
	b.WriteString(`<?xml version="1.0" encoding="UTF-8"?>` + "\n")
	b.WriteString(`<result calculation="`)
	xml.EscapeText(&b, []byte(calculation))
	b.WriteString(`">`)
	for _, it := range items {
		b.WriteString("<" + it.name + ` unit="`)
		xml.EscapeText(&b, []byte(it.unit))
		b.WriteString(`">`)
		b.Write(units.AppendNumber(nil, it.value))
		b.WriteString("</" + it.name + ">")
	}
	for _, c := range checks {
		b.WriteString(`<check name="`)
		xml.EscapeText(&b, []byte(c.Name))
		b.WriteString(`" pass="` + strconv.FormatBool(c.Pass) + `">`)
		xml.EscapeText(&b, []byte(c.Detail))
		b.WriteString("</check>")
	}
	appendNotes(&b, warnings, cautions)
	b.WriteString("</result>\n")
	return b.Bytes()
}

// appendNotes writes the warnings and cautions of an XML answer, one
// <warning> or <caution> element each.
func appendNotes(b *bytes.Buffer, warnings, cautions []string) {
	for _, w := range warnings {
		b.WriteString("<warning>")
		xml.EscapeText(b, []byte(w))
		b.WriteString("</warning>")
	}
	for _, c := range cautions {
		b.WriteString("<caution>")
		xml.EscapeText(b, []byte(c))
		b.WriteString("</caution>")
	}
}

func passFail(pass bool) string {
	if pass {
		return "pass"
	}
	return "fail"
}
