package handlers

import (
	"reflect"
	"testing"
)

// TestReadQuery checks the query reader against the form encoding of the
// WHATWG URL Standard, from memory of its application/x-www-form-urlencoded
// parser (split on "&", skip empty pairs, split on the first "=", "+" is a
// space, then percent-decode), which net/url also follows, and that every
// fault names its parameter. Unlike that parser, which keeps bad escapes
// as they are, a bad escape here is refused: a value must not be guessed.
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
		{"length=48%2", map[string]string{}, []FieldError{{Parameter: "length", Detail: "value is not valid percent-encoding"}}},
		{"len%zzgth=1&b=2", map[string]string{"b": "2"}, []FieldError{{Parameter: `"len%zzgth"`, Detail: "parameter name is not valid percent-encoding"}}},
		{"b=%ff", map[string]string{}, []FieldError{{Parameter: "b", Detail: "value is not valid UTF-8"}}},
		{"%ff=1", map[string]string{}, []FieldError{{Parameter: `"\xff"`, Detail: "parameter name is not valid UTF-8"}}},
	}
	for _, tc := range cases {
		vals := map[string]raw{}
		errs := readQuery(tc.query, vals)
		got := map[string]string{}
		for k, v := range vals {
			got[k] = v.str
		}
		if !reflect.DeepEqual(got, tc.want) || !reflect.DeepEqual(errs, tc.errs) {
			t.Errorf("readQuery(%q) = %q, %+v; want %q, %+v", tc.query, got, errs, tc.want, tc.errs)
		}
	}
}
