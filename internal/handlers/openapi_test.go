package handlers

import (
	"bytes"
	"context"
	"encoding/xml"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"
	"github.com/getkin/kin-openapi/routers/gorillamux"
	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"

	"github.com/thermalmovement/service/api"
	"github.com/thermalmovement/service/internal/materials"
)

func init() {
	// kin-openapi has no XML decoder: check that the body is well-formed
	// XML and let the schema (a string) see it as text.
	openapi3filter.RegisterBodyDecoder("application/xml", func(r io.Reader, _ http.Header, _ *openapi3.SchemaRef, _ openapi3filter.EncodingFn) (any, error) {
		b, err := io.ReadAll(r)
		if err != nil {
			return nil, err
		}
		d := xml.NewDecoder(bytes.NewReader(b))
		for {
			if _, err := d.Token(); err == io.EOF {
				return string(b), nil
			} else if err != nil {
				return nil, err
			}
		}
	})
}

func loadSpec(t *testing.T) (*openapi3.T, routers.Router) {
	t.Helper()
	doc, err := openapi3.NewLoader().LoadFromData(api.Spec)
	if err != nil {
		t.Fatal(err)
	}
	if err := doc.Validate(context.Background()); err != nil {
		t.Fatal(err)
	}
	doc.Servers = openapi3.Servers{{URL: "http://example.test"}}
	router, err := gorillamux.NewRouter(doc)
	if err != nil {
		t.Fatal(err)
	}
	return doc, router
}

// TestEveryRouteDocumented checks that each registered route, /metrics
// included, is in api/openapi.yaml with its method.
func TestEveryRouteDocumented(t *testing.T) {
	doc, _ := loadSpec(t)
	cat, _ := materials.Load()
	h, err := New(zap.NewNop(), prometheus.NewRegistry(), cat, Options{Version: "test", Metrics: http.NotFoundHandler()})
	if err != nil {
		t.Fatal(err)
	}
	for _, rt := range h.Routes() {
		path := openAPIPath(rt[1])
		item := doc.Paths.Find(path)
		if item == nil || item.GetOperation(rt[0]) == nil {
			t.Errorf("%s %s (%s) is not in api/openapi.yaml", rt[0], rt[1], path)
		}
	}
}

// openAPIPath turns a gin template (:id, *any) into an OpenAPI one.
func openAPIPath(p string) string {
	parts := strings.Split(p, "/")
	for i, s := range parts {
		if strings.HasPrefix(s, ":") || strings.HasPrefix(s, "*") {
			parts[i] = "{" + s[1:] + "}"
		}
	}
	return strings.Join(parts, "/")
}

// contractCases are real requests whose responses must match the
// document. Features add theirs to the list.
var contractCases = []struct{ method, target, body string }{
	{"GET", "/v1/expansion/linear?length=48%20m&material=structural-steel&t_initial=-15%20degC&t_final=35%20degC", ""},
	{"GET", "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=text", ""},
	{"GET", "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=csv", ""},
	{"GET", "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=xml", ""},
	{"POST", "/v1/expansion/linear", `{"length": {"value": 48, "unit": "m"}, "alpha": "12e-6/K", "delta_t": "50 K"}`},
	{"GET", "/v1/expansion/linear?length=48", ""},
	{"GET", "/v1/expansion/linear?length=48%20m&material=nope&delta_t=50%20K", ""},
	{"GET", "/v1/expansion/area?diameter=80%20mm&hole=true&material=structural-steel&delta_t=60%20K", ""},
	{"GET", "/v1/expansion/area?length=2.4%20m&width=1.2%20m&material=aluminium-6061&t_initial=20%20degC&t_final=70%20degC", ""},
	{"GET", "/v1/expansion/volume?volume=2.5%20m3&material=water&t_initial=10%20degC&t_final=80%20degC&vessel_material=structural-steel", ""},
	{"POST", "/v1/expansion/volume", `{"volume": "400 L", "beta": "2.1e-4/K", "delta_t": "30 K"}`},
	{"GET", "/v1/expansion/volume?volume=1%20m3&material=water&delta_t=10%20K", ""},
	{"GET", "/v1/materials", ""},
	{"GET", "/v1/materials/concrete", ""},
	{"GET", "/v1/materials/nope", ""},
	{"GET", "/v1/units", ""},
	{"GET", "/healthz", ""},
	{"GET", "/readyz", ""},
	{"GET", "/problems/invalid-input", ""},
}

// TestResponsesMatchDocument validates real responses, JSON and
// problem+json alike, against api/openapi.yaml with kin-openapi, and
// sends every calculation route an empty GET, whose 400 must match too.
func TestResponsesMatchDocument(t *testing.T) {
	_, router := loadSpec(t)
	h := newTestHandler(t)
	r := h.Router()
	cases := contractCases
	for _, rt := range h.Routes() {
		if rt[0] == "GET" && strings.HasPrefix(rt[1], "/v1/") && !strings.Contains(rt[1], ":") && rt[1] != "/v1/materials" && rt[1] != "/v1/units" {
			cases = append(cases, struct{ method, target, body string }{"GET", rt[1], ""})
		}
	}
	for _, tc := range cases {
		t.Run(tc.method+" "+tc.target, func(t *testing.T) {
			req := httptest.NewRequest(tc.method, "http://example.test"+tc.target, strings.NewReader(tc.body))
			if tc.body != "" {
				req.Header.Set("Content-Type", "application/json")
			}
			w := httptest.NewRecorder()
			r.ServeHTTP(w, req)
			if w.Code >= 500 {
				t.Fatalf("status %d: %s", w.Code, w.Body.String())
			}
			vreq := httptest.NewRequest(tc.method, "http://example.test"+tc.target, strings.NewReader(tc.body))
			if tc.body != "" {
				vreq.Header.Set("Content-Type", "application/json")
			}
			route, params, err := router.FindRoute(vreq)
			if err != nil {
				t.Fatalf("no route in the document: %v", err)
			}
			in := &openapi3filter.RequestValidationInput{Request: vreq, PathParams: params, Route: route,
				Options: &openapi3filter.Options{AuthenticationFunc: openapi3filter.NoopAuthenticationFunc}}
			out := &openapi3filter.ResponseValidationInput{
				RequestValidationInput: in,
				Status:                 w.Code,
				Header:                 w.Header(),
				Body:                   io.NopCloser(bytes.NewReader(w.Body.Bytes())),
				Options:                &openapi3filter.Options{IncludeResponseStatus: true},
			}
			if err := openapi3filter.ValidateResponse(context.Background(), out); err != nil {
				t.Errorf("response %d does not match the document: %v\n%s", w.Code, err, truncate(w.Body.String()))
			}
			checkHeadersDocumented(t, route.Operation, w)
		})
	}
}

// checkHeadersDocumented checks that the headers the middleware sets, as
// far as w carries them, are declared on its response in the document.
func checkHeadersDocumented(t *testing.T, op *openapi3.Operation, w *httptest.ResponseRecorder) {
	t.Helper()
	resp := op.Responses.Status(w.Code)
	if resp == nil || resp.Value == nil {
		t.Errorf("status %d is not documented", w.Code)
		return
	}
	for _, name := range []string{"X-Request-Id", "ETag", "Cache-Control"} {
		if w.Header().Get(name) != "" && resp.Value.Headers[name] == nil {
			t.Errorf("response %d carries %s, which the document does not declare", w.Code, name)
		}
	}
}

// TestNotModifiedMatchesDocument: the 304 of a matching If-None-Match is
// documented with its headers, as the 200 before it.
func TestNotModifiedMatchesDocument(t *testing.T) {
	_, router := loadSpec(t)
	r := newTestHandler(t).Router()
	const target = "http://example.test/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K"
	first := getWith(r, target)
	tag := first.Header().Get("ETag")
	if first.Code != http.StatusOK || tag == "" || first.Header().Get("Cache-Control") == "" || first.Header().Get("X-Request-Id") == "" {
		t.Fatalf("first GET: status %d, headers %v", first.Code, first.Header())
	}
	second := getWith(r, target, "If-None-Match", tag)
	if second.Code != http.StatusNotModified {
		t.Fatalf("If-None-Match %s: status %d", tag, second.Code)
	}
	for _, w := range []*httptest.ResponseRecorder{first, second} {
		req := httptest.NewRequest(http.MethodGet, target, nil)
		req.Header.Set("If-None-Match", tag)
		route, params, err := router.FindRoute(req)
		if err != nil {
			t.Fatal(err)
		}
		in := &openapi3filter.RequestValidationInput{Request: req, PathParams: params, Route: route,
			Options: &openapi3filter.Options{AuthenticationFunc: openapi3filter.NoopAuthenticationFunc}}
		if err := openapi3filter.ValidateRequest(context.Background(), in); err != nil {
			t.Errorf("request with If-None-Match does not match the document: %v", err)
		}
		out := &openapi3filter.ResponseValidationInput{RequestValidationInput: in, Status: w.Code, Header: w.Header(),
			Body: io.NopCloser(bytes.NewReader(w.Body.Bytes())), Options: &openapi3filter.Options{IncludeResponseStatus: true}}
		if err := openapi3filter.ValidateResponse(context.Background(), out); err != nil {
			t.Errorf("response %d does not match the document: %v", w.Code, err)
		}
		checkHeadersDocumented(t, route.Operation, w)
	}
}

func truncate(s string) string {
	if len(s) > 600 {
		return s[:600] + "..."
	}
	return s
}
