package handlers

import (
	"encoding/json"
	"reflect"
	"testing"
)

// The fast JSON writer must write what encoding/json writes.
func TestAppendJSONStringMatchesEncodingJSON(t *testing.T) {
	for _, s := range []string{"", "plain", `quote " and \ backslash`, "<tag> & amp", "line\nbreak\ttab\rcr", "\x00\x01\x1f",
		"µm and °C", "\u2028\u2029", "bad \xff utf-8", "mixed \xc3 end", "日本"} {
		want, _ := json.Marshal(s)
		if got := appendJSONString(nil, s); string(got) != string(want) {
			t.Errorf("appendJSONString(%q) = %s, want %s", s, got, want)
		}
	}
}

func TestAppendResponseMatchesEncodingJSON(t *testing.T) {
	h := newTestHandler(t)
	specs := map[string]calcSpec{}
	for _, s := range h.calculations() {
		specs[s.name] = s
	}
	cases := []struct{ calc, query string }{
		{"expansion/linear", "length=48%20m&material=structural-steel&t_initial=-15%20degC&t_final=35%20degC"},
		{"expansion/linear", "length=100%20ft&alpha=6.5e-6%201/degF&delta_t=120%20degF&units=us"},
		{"expansion/area", "diameter=80%20mm&hole=true&material=structural-steel&delta_t=60%20K"},
		{"expansion/volume", "volume=2.5%20m3&material=water&t_initial=10%20degC&t_final=80%20degC&vessel_material=structural-steel"},
	}
	for _, tc := range cases {
		t.Run(tc.calc+"?"+tc.query, func(t *testing.T) {
			spec := specs[tc.calc]
			vals := map[string]raw{}
			if errs := readQuery(tc.query, vals); len(errs) > 0 {
				t.Fatal(errs)
			}
			p := newParams(vals, h.cat, &h.unitCache)
			out := new(outputOptions)
			readOutput(out, p, fieldsOf(reflect.TypeOf(spec.results)), nil)
			resp, err := spec.fn(p)
			if err != nil {
				t.Fatal(err)
			}
			items, _ := out.convert(resp.Results, nil)
			h.complete(resp, spec.name, p)
			if !typeOf(reflect.TypeOf(resp.Results)).valuesOnly {
				t.Fatal("results are not all Values")
			}
			want, err := json.Marshal(resp)
			if err != nil {
				t.Fatal(err)
			}
			if got := appendResponse(nil, resp, items); string(got) != string(want) {
				t.Errorf("appendResponse =\n%s\nwant\n%s", got, want)
			}
		})
	}
}
