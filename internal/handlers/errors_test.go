package handlers

import (
	"fmt"
	"net/http"
	"net/http/httptest"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/gin-gonic/gin"
)

// The tests of this file check the shape of refusals, not physics: the
// quantities sent are demo inputs (a 48 m steel member warmed by 50 K)
// and no computed value is checked.

// want is one entry a problem's errors must hold: the parameter, and a
// part of its detail.
type want struct{ param, detail string }

// checkErrors checks that the problem p lists exactly the entries ws, in
// order, and that its detail names each of them.
func checkErrors(t *testing.T, p Problem, ws ...want) {
	t.Helper()
	ok := len(p.Errors) == len(ws)
	for i := 0; ok && i < len(ws); i++ {
		ok = p.Errors[i].Parameter == ws[i].param && strings.Contains(p.Errors[i].Detail, ws[i].detail)
	}
	if !ok {
		t.Errorf("errors = %+v, want %+v", p.Errors, ws)
	}
	for _, w := range ws {
		if !strings.Contains(p.Detail, `"`+w.param+`"`) {
			t.Errorf("detail %q does not name %q", p.Detail, w.param)
		}
	}
}

// TestErrorsBodyMembers posts bodies whose members are well formed JSON
// but not parameter values: each bad member is one entry of errors, the
// other members are still read (so the calculation names its own faults
// too), and a member that could not be read is neither "required" nor
// "unknown".
func TestErrorsBodyMembers(t *testing.T) {
	r := newTestHandler(t).Router()
	const rest = `"alpha": "12e-6/K", "delta_t": "50 K"`
	tests := []struct {
		name, body string
		want       []want
	}{
		{"object without unit", `{"length": {"value": 48}, ` + rest + `}`, []want{{"length", `needs both "value" and "unit"`}}},
		{"value a string", `{"length": {"value": "48", "unit": "m"}, ` + rest + `}`, []want{{"length", `"value" must be one number`}}},
		{"unit a number", `{"length": {"value": 1, "unit": 5}, ` + rest + `}`, []want{{"length", `"unit" must be one string`}}},
		{"null", `{"length": null, ` + rest + `}`, []want{{"length", "null is not a value"}}},
		{"array", `{"length": ["48 m"], ` + rest + `}`, []want{{"length", "an array is not a value"}}},
		{"extra member", `{"length": {"value": 48, "unit": "m", "extra": {"a": [1]}}, ` + rest + `}`, []want{{"length", `unknown member "extra"`}}},
		{"member twice in a quantity", `{"length": {"value": 48, "unit": "m", "value": 49}, ` + rest + `}`, []want{{"length", `"value" must be one number`}}},
		{"duplicate key", `{"length": "48 m", "length": "49 m", ` + rest + `}`, []want{{"length", "given more than once"}}},
		{"number out of range", `{"length": 1e400, ` + rest + `}`, []want{{"length", "out of range"}}},
		{"every bad member at once",
			`{"length": null, "alpha": [1, {"a": [2]}], "delta_t": {"value": 50, "unit": "K", "unit": "K"}, "colour": "red"}`,
			[]want{{"length", "null"}, {"alpha", "an array"}, {"delta_t", `"unit" must be one string`}, {"colour", "unknown parameter"}}},
		{"bad member, then the calculation's own faults",
			`{"length": {"unit": "m"}, "alpha": "12e-6/m", "delta_t": "x", "format": "xlsx"}`,
			// The output options are read first, then the calculation's inputs in its order.
			[]want{{"length", "needs both"}, {"format", `"xlsx"`}, {"delta_t", `"x"`}, {"alpha", "expected a coefficient of expansion"}}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			w := do(t, r, http.MethodPost, "/v1/expansion/linear", "application/json", tt.body)
			p := decodeProblem(t, w)
			if w.Code != http.StatusBadRequest || p.Status != http.StatusBadRequest {
				t.Errorf("status %d, want 400: %s", w.Code, w.Body)
			}
			checkErrors(t, p, tt.want...)
		})
	}
}

// TestErrorsBodyWhole posts bodies that are not a JSON object of
// parameters at all: each is one problem with the status of its kind, a
// detail saying what is wrong, and no errors of its own; faults of the
// query are still listed.
func TestErrorsBodyWhole(t *testing.T) {
	h := newTestHandler(t)
	h.opts.MaxBodyBytes = 1 << 10
	r := h.Router()
	tests := []struct {
		name, query, ctype, body string
		status                   int
		detail                   string
		want                     []want
	}{
		{"truncated", "", "application/json", `{"length": "3 m",`, 400, "malformed JSON: unexpected end of input", nil},
		{"malformed value", "", "application/json", `{"length": 048}`, 400, `malformed JSON: invalid character '4' after object key:value pair at byte 12`, nil},
		{"malformed in a quantity", "", "application/json", `{"length": {"value": 4,}}`, 400, `, in the value of "length"`, nil},
		{"trailing data", "", "application/json", `{} {}`, 400, "data after the object", nil},
		{"an array", "", "application/json", `[{"length": "48 m"}]`, 400, "must be a JSON object of parameters, such as {\"length\": \"30 m\"}, not an array", nil},
		{"a string", "", "application/json", `"length=48 m"`, 400, "not a string", nil},
		{"null", "", "application/json", `null`, 400, "not null", nil},
		{"byte order mark", "", "application/json", "\xef\xbb\xbf{}", 400, "byte order mark", nil},
		{"too large", "", "application/json", `{"length": "` + strings.Repeat("4", 2<<10) + ` m"}`, 413, "over 1024 bytes", nil},
		{"content type", "", "text/plain", `{}`, 415, "Content-Type must be application/json", nil},
		{"with a query fault", "?length=1%20m&length=2%20m", "application/json", `{"alpha": `, 400, `malformed JSON: unexpected end of input, in the value of "alpha"; invalid parameter "length": given more than once`,
			[]want{{"length", "given more than once"}}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			w := do(t, r, http.MethodPost, "/v1/expansion/linear"+tt.query, tt.ctype, tt.body)
			p := decodeProblem(t, w)
			if w.Code != tt.status || !strings.Contains(p.Detail, tt.detail) {
				t.Errorf("%d %q, want %d with %q", w.Code, p.Detail, tt.status, tt.detail)
			}
			if len(tt.want) > 0 || len(p.Errors) > 0 {
				checkErrors(t, p, tt.want...)
			}
		})
	}
}

// TestErrorsQuery sends queries with a parameter given twice or not
// decodable: the fault is one entry, and the calculation's own reading
// (of the first value) still names the other bad parameters, in the same
// 400; a value that could not be decoded is not also "required".
func TestErrorsQuery(t *testing.T) {
	r := newTestHandler(t).Router()
	tests := []struct {
		name, method, target, body string
		status                     int
		want                       []want
	}{
		{"duplicate hides nothing", "GET", "/v1/expansion/linear?length=30%20m&alpha=1e-5/K&delta_t=x&length=40%20m&colour=1", "", 400,
			[]want{{"length", "given more than once"}, {"delta_t", `"x"`}, {"colour", "unknown parameter"}}},
		{"duplicate alone", "GET", "/v1/expansion/linear?length=30%20m&alpha=1e-5/K&delta_t=50%20K&length=30%20m", "", 400,
			[]want{{"length", "given more than once"}}},
		{"first value read", "GET", "/v1/expansion/linear?length=30%20mtr&alpha=1e-5/K&delta_t=50%20K&length=30%20m", "", 400,
			[]want{{"length", "given more than once"}, {"length", `"30 mtr"`}}},
		{"duplicate before a 404", "GET", "/v1/expansion/linear?length=30%20m&material=unobtainium&delta_t=50%20K&delta_t=50%20K", "", 400,
			[]want{{"delta_t", "given more than once"}, {"material", "unknown material"}}},
		{"bad percent-encoding", "GET", "/v1/expansion/linear?length=30%2&alpha=1e-5/K&delta_t=x", "", 400,
			[]want{{"length", "not valid percent-encoding"}, {"delta_t", `"x"`}}},
		{"bad name encoding", "GET", "/v1/expansion/linear?length=30%20m&alpha=1e-5/K&delta_t=50%20K&x%zz=1", "", 400,
			[]want{{`"x%zz"`, "not valid percent-encoding"}}},
		{"query and body", "POST", "/v1/expansion/linear?length=1%20m", `{"length": "2 m", "alpha": null, "delta_t": "50 K"}`, 400,
			[]want{{"alpha", "null"}, {"length", "given in both the query and the body"}}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			ct := ""
			if tt.body != "" {
				ct = "application/json"
			}
			w := do(t, r, tt.method, tt.target, ct, tt.body)
			p := decodeProblem(t, w)
			if w.Code != tt.status {
				t.Errorf("status %d, want %d: %s", w.Code, tt.status, w.Body)
			}
			checkErrors(t, p, tt.want...)
		})
	}
}

// TestErrorsNothingComputed serves calculations that would compute from
// the parameters they read, behind a query or body fault: one that asks
// the parameters for their faults first computes nothing, and even one
// that does not ask is never answered 200.
func TestErrorsNothingComputed(t *testing.T) {
	h := newTestHandler(t)
	computed := false
	// The results are placeholders of the right types; their values are
	// not checked.
	result := func() *Response {
		computed = true
		return &Response{Results: &LinearResults{DeltaLength: si(1), FinalLength: si(1), Strain: si(0), AlphaMean: si(0)}}
	}
	careful := calcSpec{name: "careful", results: (*LinearResults)(nil), fn: func(p *params) (*Response, error) {
		p.quantity("length")
		if err := p.done(); err != nil {
			return nil, err
		}
		return result(), nil
	}}
	careless := calcSpec{name: "careless", results: (*LinearResults)(nil), fn: func(p *params) (*Response, error) {
		p.quantity("length")
		return result(), nil
	}}
	gin.SetMode(gin.ReleaseMode)
	r := gin.New()
	r.Any("/careful", h.calculation(careful))
	r.Any("/careless", h.calculation(careless))
	for _, tt := range []struct{ name, method, target, body string }{
		{"duplicate", "GET", "?length=1%20m&length=1%20m", ""},
		{"bad encoding of another parameter", "GET", "?length=1%20m&note=%zz", ""},
		{"bad member", "POST", "", `{"length": "1 m", "note": null}`},
		{"duplicate member", "POST", "", `{"length": "1 m", "length": "1 m"}`},
	} {
		for _, path := range []string{"/careful", "/careless"} {
			t.Run(tt.name+path, func(t *testing.T) {
				computed = false
				ct := ""
				if tt.method == "POST" {
					ct = "application/json"
				}
				w := do(t, r, tt.method, path+tt.target, ct, tt.body)
				if w.Code != http.StatusBadRequest {
					t.Errorf("status %d, want 400: %s", w.Code, w.Body)
				}
				if path == "/careful" && computed {
					t.Error("computed despite a fault")
				}
			})
		}
	}
	// The same calculation without a fault computes: the check above can fail.
	computed = false
	if w := do(t, r, "GET", "/careful?length=1%20m", "", ""); w.Code != http.StatusOK || !computed {
		t.Errorf("valid request: %d computed=%v %s", w.Code, computed, w.Body)
	}
}

// TestErrorsNotFinite sends inputs whose result overflows: a pinned strut
// so short (5e-324 m, the least float64) that its Euler stress is not a
// finite number. The 422 says which result, and names every input read
// (not the output options).
func TestErrorsNotFinite(t *testing.T) {
	r := newTestHandler(t).Router()
	const target = "/v1/restraint?material=structural-steel&delta_t=40%20K&length=5e-324%20m&radius_of_gyration=57%20mm&end_condition=pinned&units=si"
	w := do(t, r, "GET", target, "", "")
	p := decodeProblem(t, w)
	if w.Code != http.StatusUnprocessableEntity {
		t.Fatalf("status %d, want 422: %s", w.Code, w.Body)
	}
	var names []string
	for _, f := range fieldsOf(reflect.TypeOf((*RestraintResults)(nil))) {
		names = append(names, f.name)
	}
	name, ok := between(p.Detail, "the inputs lead to a result, ", ", that is not a finite number")
	if !ok || !slices.Contains(names, name) {
		t.Errorf("detail %q does not name a result of %v", p.Detail, names)
	}
	var got []string
	for _, e := range p.Errors {
		got = append(got, e.Parameter)
		if !strings.Contains(e.Detail, "with the other inputs leads to a result ("+name+") that is not a finite number") {
			t.Errorf("%s: detail %q", e.Parameter, e.Detail)
		}
	}
	slices.Sort(got)
	if wantNames := []string{"delta_t", "end_condition", "length", "material", "radius_of_gyration"}; !slices.Equal(got, wantNames) {
		t.Errorf("errors name %v, want %v", got, wantNames)
	}
}

// between returns the text of s between before and after.
func between(s, before, after string) (string, bool) {
	_, rest, ok := strings.Cut(s, before)
	if !ok {
		return "", false
	}
	mid, _, ok := strings.Cut(rest, after)
	return mid, ok
}

// TestErrorsInlineEarly checks that on_error=inline, with a format other
// than json, answers the faults met before the parameters are read as a
// 200 "#ERROR:" line, as it does the others; and that where the query has
// faults, only a literal on_error=inline pair, given once, asks for it.
func TestErrorsInlineEarly(t *testing.T) {
	r := newTestHandler(t).Router()
	const ok = "length=30%20m&alpha=1e-5/K&delta_t=50%20K"
	tests := []struct {
		name, method, query, ctype, body string
		inline                           string // the answer's start, or "" for a problem
	}{
		{"duplicate", "GET", ok + "&length=40%20m&format=text&on_error=inline", "", "", `#ERROR: invalid parameter "length": given more than once`},
		{"bad percent-encoding", "GET", "length=30%2&alpha=1e-5/K&delta_t=50%20K&format=text&on_error=inline", "", "", `#ERROR: invalid parameter "length": value is not valid percent-encoding`},
		{"bad name", "GET", ok + "&x%zz=1&format=csv&on_error=inline", "", "", `#ERROR: invalid parameter ""x%zz""`},
		{"malformed body", "POST", "format=text&on_error=inline", "application/json", `{"length": "3 m",`, "#ERROR: malformed JSON: unexpected end of input"},
		{"bad member", "POST", "format=xml&on_error=inline", "application/json", `{"length": null, "alpha": "1e-5/K", "delta_t": "50 K"}`, `#ERROR: invalid parameter "length": null`},
		{"content type", "POST", "format=text&on_error=inline", "text/csv", "length\n3 m", "#ERROR: Content-Type must be application/json"},
		{"query fault and malformed body", "POST", "format=text&on_error=inline&a=1&a=2", "application/json", `[`, "#ERROR: the body must be a JSON object of parameters"},
		// Not inline:
		{"json", "GET", ok + "&length=40%20m&on_error=inline", "", "", ""},
		{"on_error twice", "GET", ok + "&format=text&on_error=inline&on_error=inline", "", "", ""},
		{"on_error encoded, with a fault", "GET", ok + "&length=40%20m&format=text&on_error=inl%69ne", "", "", ""},
		{"on_error undecodable", "GET", ok + "&format=text&on_error=inline%zz", "", "", ""},
		{"on_error problem too", "POST", "format=text&on_error=inline&on%5Ferror=problem", "application/json", `[`, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			w := do(t, r, tt.method, "/v1/expansion/linear?"+tt.query, tt.ctype, tt.body)
			if tt.inline == "" {
				if w.Code < 400 {
					t.Errorf("status %d, want a problem: %s", w.Code, w.Body)
				}
				decodeProblem(t, w)
				return
			}
			if w.Code != http.StatusOK || w.Header().Get("Content-Type") != contentTypes["text"] || !strings.HasPrefix(w.Body.String(), tt.inline) {
				t.Errorf("%d %q %q, want 200 text starting %q", w.Code, w.Header().Get("Content-Type"), w.Body, tt.inline)
			}
			if cc := w.Header().Get("Cache-Control"); cc != "no-store" {
				t.Errorf("Cache-Control %q, want no-store: an error must not be kept", cc)
			}
		})
	}
}

// A body of thousands of bad members gets the first 50 of them and a
// count, not a problem of a megabyte (common practice, no published
// source).
func TestErrorsListBounded(t *testing.T) {
	r := newTestHandler(t).Router()
	var b strings.Builder
	b.WriteString(`{"length": "48 m"`)
	for i := range 2000 {
		fmt.Fprintf(&b, `, "x%d": null`, i)
	}
	b.WriteString("}")
	w := do(t, r, http.MethodPost, "/v1/expansion/linear", "application/json", b.String())
	pr := decodeProblem(t, w)
	if w.Code != http.StatusBadRequest || len(pr.Errors) != maxListed || !strings.Contains(pr.Detail, "more not listed") {
		t.Errorf("status %d, %d errors, detail ends %q", w.Code, len(pr.Errors), pr.Detail[max(0, len(pr.Detail)-80):])
	}
	if w.Body.Len() > 20000 {
		t.Errorf("problem of %d bytes", w.Body.Len())
	}
}

// TestConflictsAreNotUnknown: a documented parameter that conflicts with
// another, or waits on a missing one, is never called an unknown
// parameter; the real fault is named instead. No physical value is
// checked.
func TestConflictsAreNotUnknown(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range []struct {
		path, query, fault string
	}{
		{"/v1/expansion/volume", q("volume", "1 m3", "alpha", "12e-6/K", "beta", "36e-6/K", "delta_t", "10 K"), "beta"},
		{"/v1/expansion/area", q("area", "1 m2", "material", "concrete", "alpha_x", "12e-6/K", "alpha_y", "12e-6/K", "delta_t", "10 K"), "alpha_x"},
		{"/v1/temperatures/bridge", q("shade_t_min", "-20 degC", "shade_t_max", "35 degC", "deck_type", "2"), "method"},
	} {
		t.Run(tc.path, func(t *testing.T) {
			w := do(t, r, "GET", tc.path+"?"+tc.query, "", "")
			p := decodeProblem(t, w)
			named := false
			for _, e := range p.Errors {
				if e.Detail == "unknown parameter" {
					t.Errorf("%s called unknown: %+v", e.Parameter, p.Errors)
				}
				named = named || e.Parameter == tc.fault
			}
			if !named {
				t.Errorf("errors %+v do not name %s", p.Errors, tc.fault)
			}
		})
	}
	// An invented parameter still is unknown, beside a conflict too: the
	// names marked as in conflict must be ones that were sent (material is
	// not), or the count of those read would cover an unread one.
	w := do(t, r, "GET", "/v1/temperatures/bridge?"+q("method", "en1991-1-5", "shade_t_min", "-20 degC", "shade_t_max", "35 degC", "deck_type", "2", "bogus", "1"), "", "")
	if p := decodeProblem(t, w); len(p.Errors) != 1 || p.Errors[0].Parameter != "bogus" || p.Errors[0].Detail != "unknown parameter" {
		t.Errorf("bogus parameter: %+v", p.Errors)
	}
	w = do(t, r, "GET", "/v1/expansion/area?"+q("area", "1 m2", "alpha", "12e-6/K", "alpha_x", "12e-6/K", "alpha_y", "12e-6/K", "delta_t", "10 K", "bogus", "1"), "", "")
	bogus := false
	for _, e := range decodeProblem(t, w).Errors {
		bogus = bogus || e.Parameter == "bogus" && e.Detail == "unknown parameter"
	}
	if !bogus {
		t.Errorf("bogus beside a conflict is not reported: %s", w.Body)
	}
}

// TestCompressedBodyRefused: the service reads bodies as sent, so a body
// with a content coding it does not apply is a 415 (RFC 9110 15.5.16,
// read), for a calculation and for a batch; identity is no coding.
func TestCompressedBodyRefused(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range []struct {
		target, ct, coding, body string
		status                   int
	}{
		{"/v1/expansion/linear", "application/json", "gzip", `{"length": "1 m", "alpha": "1e-5/K", "delta_t": "10 K"}`, 415},
		{"/v1/batch/expansion/linear", "text/csv", "br", "length,alpha,delta_t\n1 m,1e-5/K,10 K\n", 415},
		{"/v1/expansion/linear", "application/json", "identity", `{"length": "1 m", "alpha": "1e-5/K", "delta_t": "10 K"}`, 200},
	} {
		req := httptest.NewRequest(http.MethodPost, tc.target, strings.NewReader(tc.body))
		req.Header.Set("Content-Type", tc.ct)
		req.Header.Set("Content-Encoding", tc.coding)
		w := httptest.NewRecorder()
		r.ServeHTTP(w, req)
		if w.Code != tc.status || tc.status == 415 && (!strings.Contains(w.Body.String(), "send the body uncompressed") || w.Header().Get("Accept-Encoding") != "identity") {
			t.Errorf("%s with Content-Encoding %s: %d %s %v; want %d, with Accept-Encoding: identity on a 415 (RFC 9110 12.5.3, read)", tc.target, tc.coding, w.Code, w.Body, w.Header(), tc.status)
		}
	}
}

// TestVolumeBadBetaNamesOnlyBeta: a volume with an unreadable beta
// beside a material is refused for beta alone; material, which beta
// overrides, is not an unknown parameter. No physical value is checked.
func TestVolumeBadBetaNamesOnlyBeta(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, query := range []string{
		"/v1/expansion/volume?volume=1%20m3&beta=abc&material=structural-steel&delta_t=10%20K",
		"/v1/expansion/volume?volume=1%20m3&beta=2e-4/K&material=structural-steel&delta_t=1O%20K",
	} {
		w := do(t, r, http.MethodGet, query, "", "")
		if p := decodeProblem(t, w); w.Code != http.StatusBadRequest || len(p.Errors) != 1 || p.Errors[0].Parameter == "material" {
			t.Errorf("%s: status %d, errors %+v; want 400 naming only the bad value", query, w.Code, p.Errors)
		}
	}
}

// TestFaultsBesideAConflict: a conflict does not hide a bad value beside
// it, and a missing container coefficient is named once. No physical
// value is checked.
func TestFaultsBesideAConflict(t *testing.T) {
	r := newTestHandler(t).Router()
	w := do(t, r, http.MethodGet, "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&t_initial=20%20mm4", "", "")
	p := decodeProblem(t, w)
	named := map[string]bool{}
	for _, e := range p.Errors {
		named[e.Parameter] = true
	}
	if w.Code != http.StatusBadRequest || !named["t_initial"] || !named["delta_t"] {
		t.Errorf("delta_t beside t_initial=20 mm4: status %d, errors %+v; want 400 naming t_initial (its unit) and delta_t (the conflict)", w.Code, p.Errors)
	}
	w = do(t, r, http.MethodGet, "/v1/expansion/volume?volume=2.5%20m3&material=water&t_initial=10%20degC&t_final=80%20degC&vessel_volume=3%20m3", "", "")
	if p := decodeProblem(t, w); w.Code != http.StatusBadRequest || len(p.Errors) != 1 || p.Errors[0].Parameter != "vessel_alpha" {
		t.Errorf("vessel_volume without its coefficient: status %d, errors %+v; want one error on vessel_alpha", w.Code, p.Errors)
	}
}
