package handlers

import (
	"encoding/json"
	"errors"
	"reflect"
	"strings"
	"testing"
)

// placeholder stands, in the wanted parameters of the decoding tests, for
// a value that could not be read (a rawInvalid placeholder).
const placeholder = "<invalid>"

// texts returns the parameters read, as text, with placeholder for a
// value that could not be read.
func texts(vals map[string]raw) map[string]string {
	got := map[string]string{}
	for k, v := range vals {
		switch v.kind {
		case rawInvalid:
			got[k] = placeholder
		case rawObject:
			got[k] = v.origin
		default:
			got[k] = v.str
			if v.kind != rawString {
				got[k] = v.origin
			}
		}
	}
	return got
}

// TestReadQuery checks the query reader against the form encoding of the
// WHATWG URL Standard, from memory of its application/x-www-form-urlencoded
// parser (split on "&", skip empty pairs, split on the first "=", "+" is a
// space, then percent-decode), which net/url also follows, and that every
// fault names its parameter. Unlike that parser, which keeps bad escapes
// as they are, a bad escape here is refused: a value must not be guessed.
// A value that cannot be decoded keeps its name's place, so that it is
// not also reported missing; a name given twice keeps its first value.
func TestReadQuery(t *testing.T) {
	cases := []struct {
		query string
		want  map[string]string
		errs  []FieldError
	}{
		{"length=48%20m&alpha=12e-6/K&delta_t=50+K", map[string]string{"length": "48 m", "alpha": "12e-6/K", "delta_t": "50 K"}, nil},
		{"a=1&&b=2&", map[string]string{"a": "1", "b": "2"}, nil},
		{"flag&x=", map[string]string{"flag": "", "x": ""}, nil},
		{"t=a%3Db", map[string]string{"t": "a=b"}, nil},
		{"%61pi=1", map[string]string{"api": "1"}, nil},
		{"a=1&a=2&a=3", map[string]string{"a": "1"}, []FieldError{{Parameter: "a", Detail: "given more than once"}}},
		{"length=48%2&b=2", map[string]string{"length": placeholder, "b": "2"}, []FieldError{{Parameter: "length", Detail: "value is not valid percent-encoding"}}},
		{"a=%zz&a=1", map[string]string{"a": placeholder}, []FieldError{{Parameter: "a", Detail: "value is not valid percent-encoding"}, {Parameter: "a", Detail: "given more than once"}}},
		{"len%zzgth=1&b=2", map[string]string{"b": "2"}, []FieldError{{Parameter: `"len%zzgth"`, Detail: "parameter name is not valid percent-encoding"}}},
		{"b=%ff", map[string]string{"b": placeholder}, []FieldError{{Parameter: "b", Detail: "value is not valid UTF-8"}}},
		{"%ff=1", map[string]string{}, []FieldError{{Parameter: `"\xff"`, Detail: "parameter name is not valid UTF-8"}}},
	}
	for _, tc := range cases {
		vals := map[string]raw{}
		errs := readQuery(tc.query, vals)
		got := texts(vals)
		if !reflect.DeepEqual(got, tc.want) || !reflect.DeepEqual(errs, tc.errs) {
			t.Errorf("readQuery(%q) = %q, %+v; want %q, %+v", tc.query, got, errs, tc.want, tc.errs)
		}
	}
}

// TestDecodeObject checks the JSON body reader against RFC 8259 (from
// memory: an object is members of a string name and a value, separated by
// commas): a member whose value is well formed but not a parameter's is a
// fault of that member alone, read to its end so that the members after
// it are read too; a body that is not one well formed object is one
// error, with no members.
func TestDecodeObject(t *testing.T) {
	cases := []struct {
		body string
		want map[string]string
		errs []FieldError
		// whole, when set, is the start of the error of the whole body.
		whole string
	}{
		{`{"length": "48 m", "n": 2, "f": true, "q": {"unit": "m", "value": 3}}`,
			map[string]string{"length": "48 m", "n": "2", "f": "true", "q": "3 m"}, nil, ""},
		{`{"a": null, "b": "1 m"}`, map[string]string{"a": placeholder, "b": "1 m"},
			[]FieldError{{"a", "null is not a value; leave the parameter out"}}, ""},
		{`{"a": [[1, {"x": [2]}], []], "b": "1 m"}`, map[string]string{"a": placeholder, "b": "1 m"},
			[]FieldError{{"a", `an array is not a value; give a string such as "30 m" or an object {"value": 30, "unit": "m"}`}}, ""},
		{`{"a": {"value": [1, [2]], "unit": "m"}, "b": "1 m"}`, map[string]string{"a": placeholder, "b": "1 m"},
			[]FieldError{{"a", `"value" must be one number; write {"value": 30, "unit": "m"}`}}, ""},
		{`{"a": {"value": 1, "unit": "m", "x": {"y": {}}, "z": 1}, "b": "1 m"}`, map[string]string{"a": placeholder, "b": "1 m"},
			[]FieldError{{"a", `unknown member "x"; write {"value": 30, "unit": "m"}`}}, ""},
		{`{"a": {"value": 1, "unit": ["m"]}, "b": {"value": 1e999, "unit": "m"}, "c": 1e999, "d": {}}`,
			map[string]string{"a": placeholder, "b": placeholder, "c": placeholder, "d": placeholder},
			[]FieldError{
				{"a", `"unit" must be one string; write {"value": 30, "unit": "m"}`},
				{"b", `number 1e999 out of range; write {"value": 30, "unit": "m"}`},
				{"c", "number 1e999 out of range"},
				{"d", `a quantity object needs both "value" and "unit"; write {"value": 30, "unit": "m"}`},
			}, ""},
		{`{"a": "1 m", "a": null, "a": "2 m"}`, map[string]string{"a": "1 m"},
			[]FieldError{{"a", "null is not a value; leave the parameter out"}, {"a", "given more than once"}}, ""},
		{`{"a": null, "b": [1,}`, nil, nil, `malformed JSON: invalid character '}' looking for beginning of value at byte 20, in the value of "b"`},
		{`{"a": null} x`, nil, nil, "malformed JSON: data after the object"},
		{`["a"]`, nil, nil, "the body must be a JSON object of parameters"},
		{"\xef\xbb\xbf{}", nil, nil, "malformed JSON: the body starts with a byte order mark"},
	}
	for _, tc := range cases {
		vals := map[string]raw{}
		errs, err := decodeObject([]byte(tc.body), vals)
		if tc.whole != "" {
			var eb *errBody
			if !errors.As(err, &eb) || !strings.HasPrefix(eb.msg, tc.whole) || errs != nil {
				t.Errorf("decodeObject(%q) = %+v, %v; want the whole-body error %q", tc.body, errs, err, tc.whole)
			}
			continue
		}
		if got := texts(vals); err != nil || !reflect.DeepEqual(got, tc.want) || !reflect.DeepEqual(errs, tc.errs) {
			t.Errorf("decodeObject(%q) = %q, %+v, %v; want %q, %+v", tc.body, got, errs, err, tc.want, tc.errs)
		}
	}
}

// TestDecodeValueMessage checks that a member's fault reads, as one
// message, as it did before members were read on past a fault: the batch
// reader shows it as the error of a row.
func TestDecodeValueMessage(t *testing.T) {
	dec := json.NewDecoder(strings.NewReader(`null`))
	_, err := decodeValue(dec, "length")
	if want := `parameter "length": null is not a value; leave the parameter out`; err == nil || err.Error() != want {
		t.Errorf("decodeValue(null) = %v, want %q", err, want)
	}
}
