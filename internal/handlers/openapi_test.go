package handlers

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/xml"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"sort"
	"strings"
	"sync"
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
	// A handler that keeps answers, as cmd/api does by default: every GET
	// is sent twice, and the answer from the cache (with its Cache-Status)
	// must match the document too.
	h, _ := newHandlerKeeping(t, 16<<20)
	r := h.Router()
	cases := contractCases
	for _, rt := range h.Routes() {
		if rt[0] == "GET" && strings.HasPrefix(rt[1], "/v1/") && !strings.Contains(rt[1], ":") && rt[1] != "/v1/materials" && rt[1] != "/v1/units" {
			cases = append(cases, struct{ method, target, body string }{"GET", rt[1], ""})
		}
	}
	for _, tc := range cases {
		t.Run(tc.method+" "+tc.target, func(t *testing.T) {
			repeats := 1
			if tc.method == http.MethodGet {
				repeats = 2
			}
			for range repeats {
				validateAnswer(t, r, router, tc.method, tc.target, tc.body)
			}
		})
	}
}

// validateAnswer sends one request and validates its answer, body and
// headers, against the document.
func validateAnswer(t *testing.T, r http.Handler, router routers.Router, method, target, body string) {
	t.Helper()
	newRequest := func() *http.Request {
		req := httptest.NewRequest(method, "http://example.test"+target, strings.NewReader(body))
		if body != "" {
			req.Header.Set("Content-Type", "application/json")
		}
		return req
	}
	w := httptest.NewRecorder()
	r.ServeHTTP(w, newRequest())
	if w.Code >= 500 {
		t.Fatalf("status %d: %s", w.Code, w.Body.String())
	}
	vreq := newRequest()
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
}

// documentedHeaders are the headers the middleware, the router and the
// batch writer set, which the document must declare where they are sent.
var documentedHeaders = []string{"X-Request-Id", "ETag", "Cache-Control", "Cache-Status", "Allow", "WWW-Authenticate", "Retry-After", "Trailer"}

// checkHeadersDocumented checks that the headers the middleware sets, as
// far as w sent them in the head of its answer, are declared on its
// response in the document.
func checkHeadersDocumented(t *testing.T, op *openapi3.Operation, w *httptest.ResponseRecorder) {
	t.Helper()
	resp := op.Responses.Status(w.Code)
	if resp == nil || resp.Value == nil {
		t.Errorf("status %d is not documented", w.Code)
		return
	}
	sent := w.Result().Header
	for _, name := range documentedHeaders {
		if sent.Get(name) != "" && resp.Value.Headers[name] == nil {
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

// docTestHandler returns handlers over the embedded catalogue with opts.
func docTestHandler(t *testing.T, opts Options) *Handler {
	t.Helper()
	cat, err := materials.Load()
	if err != nil {
		t.Fatal(err)
	}
	opts.Version = "test"
	h, err := New(zap.NewNop(), prometheus.NewRegistry(), cat, opts)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// testKeys accepts the one key "test".
func testKeys(t *testing.T) *APIKeys {
	t.Helper()
	sum := sha256.Sum256([]byte("test"))
	k, err := LoadAPIKeys(strings.NewReader(hex.EncodeToString(sum[:]) + " document test\n"))
	if err != nil {
		t.Fatal(err)
	}
	return k
}

// checkAgainstDocument validates the answer w to a request of method and
// target against the document: against the operation of that method, or,
// for a method the path does not take (a 405), against one the path does
// take, since every operation declares the 405. The request itself is
// checked too when the service answered 200: the document must not
// refuse what the service takes.
func checkAgainstDocument(t *testing.T, doc *openapi3.T, router routers.Router, method, target string, header http.Header, body string, w *httptest.ResponseRecorder) {
	t.Helper()
	u, err := url.Parse("http://example.test" + target)
	if err != nil {
		t.Fatal(err)
	}
	// gorillamux matches no "/" in a path parameter; a batch's
	// calculation holds one, so route a placeholder and name it here.
	routed, batchCalc := u.String(), ""
	if rest, ok := strings.CutPrefix(u.Path, "/v1/batch/"); ok {
		batchCalc = rest
		routed = "http://example.test/v1/batch/calculation?" + u.RawQuery
	}
	var item *openapi3.PathItem
	for _, m := range []string{http.MethodGet, http.MethodPost} {
		if route, _, err := router.FindRoute(httptest.NewRequest(m, routed, nil)); err == nil {
			item = route.PathItem
		}
	}
	if item == nil {
		t.Fatalf("%s is not in the document", u.Path)
	}
	vmethod := method
	if item.GetOperation(method) == nil {
		vmethod = http.MethodGet
		if item.Get == nil {
			vmethod = http.MethodPost
		}
	}
	vreq := httptest.NewRequest(vmethod, routed, strings.NewReader(body))
	for k, v := range header {
		vreq.Header[k] = v
	}
	route, params, err := router.FindRoute(vreq)
	if err != nil {
		t.Fatalf("no route in the document for %s %s: %v", vmethod, u.Path, err)
	}
	if batchCalc != "" {
		params["calculation"] = batchCalc
	}
	in := &openapi3filter.RequestValidationInput{Request: vreq, PathParams: params, Route: route,
		Options: &openapi3filter.Options{AuthenticationFunc: openapi3filter.NoopAuthenticationFunc}}
	// An on_error=inline error is a 200 too, of a request that may well
	// be incomplete.
	if w.Code == http.StatusOK && vmethod == method && !strings.HasPrefix(w.Body.String(), "#ERROR:") {
		if err := openapi3filter.ValidateRequest(context.Background(), in); err != nil {
			t.Errorf("the service answered 200, but the document refuses the request: %v", err)
		}
		vreq.Body = io.NopCloser(strings.NewReader(body))
	}
	out := &openapi3filter.ResponseValidationInput{
		RequestValidationInput: in,
		Status:                 w.Code,
		Header:                 w.Result().Header,
		Body:                   io.NopCloser(bytes.NewReader(w.Body.Bytes())),
		Options:                &openapi3filter.Options{IncludeResponseStatus: true},
	}
	if err := openapi3filter.ValidateResponse(context.Background(), out); err != nil {
		t.Errorf("response %d does not match the document: %v\n%s", w.Code, err, truncate(w.Body.String()))
	}
	checkHeadersDocumented(t, route.Operation, w)
}

// TestRefusalsMatchDocument sends requests the middleware and the router
// refuse, whatever the route (another method, a body too large or of the
// wrong type, a URI too long, no key where keys are set), and requests
// whose answers carry headers of their own (a batch, an inline error),
// and validates each real answer, status and headers, against the
// document.
func TestRefusalsMatchDocument(t *testing.T) {
	doc, router := loadSpec(t)
	long := strings.Repeat("a", 9000)
	const linear = `{"length": "48 m", "alpha": "12e-6/K", "delta_t": "50 K"}`
	const csvBody = "length,alpha,delta_t\n48 m,12e-6/K,50 K\n30 m,12e-6/K,40 K\n"
	jsonType := http.Header{"Content-Type": {"application/json"}}
	csvType := http.Header{"Content-Type": {"text/csv"}}
	textType := http.Header{"Content-Type": {"text/plain"}}
	keyed := Options{APIKeys: testKeys(t)}
	cases := []struct {
		name           string
		opts           Options
		method, target string
		header         http.Header
		body           string
		want           int
	}{
		{"405 PUT calculation", Options{}, "PUT", "/v1/expansion/linear", jsonType, linear, 405},
		{"405 DELETE liveness", Options{}, "DELETE", "/healthz", nil, "", 405},
		{"405 DELETE units", Options{}, "DELETE", "/v1/units", nil, "", 405},
		{"405 POST material", Options{}, "POST", "/v1/materials/concrete", jsonType, "{}", 405},
		{"405 GET batch", Options{}, "GET", "/v1/batch/expansion/linear", nil, "", 405},
		{"415 text calculation", Options{}, "POST", "/v1/expansion/linear", textType, linear, 415},
		{"415 no type", Options{}, "POST", "/v1/joints/gap", nil, "{}", 415},
		{"415 text batch", Options{}, "POST", "/v1/batch/expansion/linear", textType, csvBody, 415},
		{"413 calculation", Options{MaxBodyBytes: 1024}, "POST", "/v1/expansion/linear", jsonType,
			`{"length": "` + strings.Repeat("4", 2000) + ` m"}`, 413},
		{"413 batch", Options{BatchMaxBytes: 16}, "POST", "/v1/batch/expansion/linear", csvType, csvBody, 413},
		{"414 calculation", Options{}, "GET", "/v1/expansion/linear?length=" + long, nil, "", 414},
		{"414 liveness", Options{}, "GET", "/healthz?x=" + long, nil, "", 414},
		{"414 batch", Options{}, "POST", "/v1/batch/expansion/linear?units=" + long, csvType, csvBody, 414},
		{"401 units", keyed, "GET", "/v1/units", nil, "", 401},
		{"401 wrong key", keyed, "GET", "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&api_key=nope", nil, "", 401},
		{"401 calculation", keyed, "POST", "/v1/expansion/linear", jsonType, linear, 401},
		{"401 batch", keyed, "POST", "/v1/batch/expansion/linear", csvType, csvBody, 401},
		{"200 with api_key", keyed, "GET", "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&api_key=test", nil, "", 200},
		{"200 with bearer", keyed, "POST", "/v1/expansion/linear", http.Header{"Content-Type": {"application/json"}, "Authorization": {"Bearer test"}}, linear, 200},
		{"200 open route", keyed, "GET", "/problems/unauthorized", nil, "", 200},
		{"200 batch csv", Options{}, "POST", "/v1/batch/expansion/linear", csvType, csvBody, 200},
		{"200 batch json", Options{}, "POST", "/v1/batch/expansion/linear?format=json", jsonType,
			"[" + linear + `, {"length": {"value": -1, "unit": "m"}, "alpha": "12e-6/K", "delta_t": 50, "extrapolate": true}]`, 200},
		{"200 output options in the body", Options{}, "POST", "/v1/expansion/linear", jsonType,
			`{"length": "48 m", "alpha": "12e-6/K", "delta_t": "50 K", "units": "us", "format": "text", "result": "final_length", "on_error": "inline", "final_length_unit": "ft"}`, 200},
		{"200 result_unit in the query", Options{}, "POST", "/v1/expansion/area?format=text&delta_area_unit=in2", jsonType,
			`{"area": "2 m2", "alpha": "12e-6/K", "delta_t": "50 K"}`, 200},
		{"200 inline error of a POST", Options{}, "POST", "/v1/expansion/volume?format=csv&on_error=inline", jsonType, `{"volume": "-1 L"}`, 200},
		{"200 inline error of a GET", Options{}, "GET", "/v1/joints/gap/schedule?format=text&on_error=inline", nil, "", 200},
		{"301 docs", Options{}, "GET", "/docs", nil, "", 301},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			r := docTestHandler(t, tc.opts).Router()
			req := httptest.NewRequest(tc.method, "http://example.test"+tc.target, strings.NewReader(tc.body))
			for k, v := range tc.header {
				req.Header[k] = v
			}
			w := httptest.NewRecorder()
			r.ServeHTTP(w, req)
			if w.Code != tc.want {
				t.Fatalf("status %d, want %d: %s", w.Code, tc.want, truncate(w.Body.String()))
			}
			header := tc.header.Clone()
			if header != nil {
				header.Del("Authorization")
			}
			checkAgainstDocument(t, doc, router, tc.method, tc.target, header, tc.body, w)
			if w.Code == http.StatusMethodNotAllowed {
				checkAllow(t, doc, router, tc.target, w.Header().Get("Allow"))
			}
		})
	}
}

// checkAllow checks that the Allow header of a 405 names exactly the
// methods the document gives the path.
func checkAllow(t *testing.T, doc *openapi3.T, router routers.Router, target, allow string) {
	t.Helper()
	u, err := url.Parse("http://example.test" + target)
	if err != nil {
		t.Fatal(err)
	}
	if strings.HasPrefix(u.Path, "/v1/batch/") {
		u.Path = "/v1/batch/calculation"
	}
	var item *openapi3.PathItem
	for _, m := range []string{http.MethodGet, http.MethodPost} {
		if route, _, err := router.FindRoute(httptest.NewRequest(m, u.String(), nil)); err == nil {
			item = route.PathItem
		}
	}
	if item == nil {
		t.Fatalf("%s is not in the document", target)
	}
	var methods []string
	for m := range item.Operations() {
		methods = append(methods, m)
	}
	// Every GET route but the interactive page answers HEAD too; the
	// document says so once, in its description, not per path.
	if item.Get != nil && hasHead(u.Path) {
		methods = append(methods, http.MethodHead)
	}
	sort.Strings(methods)
	if want := strings.Join(methods, ", "); allow != want {
		t.Errorf("Allow: %q, but the document gives the path %q", allow, want)
	}
}

// TestOverloadMatchesDocument holds one request in flight with
// MaxInFlight 1 and checks the 503 of the next against the document, on
// a calculation and on a route outside /v1/; the probes are not shed.
func TestOverloadMatchesDocument(t *testing.T) {
	doc, router := loadSpec(t)
	r := docTestHandler(t, Options{MaxInFlight: 1}).Router()
	pr, pw := io.Pipe()
	reading := make(chan struct{})
	held := httptest.NewRequest(http.MethodPost, "http://example.test/v1/batch/expansion/linear", &signalReader{r: pr, first: reading})
	held.Header.Set("Content-Type", "text/csv")
	done := make(chan struct{})
	go func() {
		defer close(done)
		r.ServeHTTP(httptest.NewRecorder(), held)
	}()
	<-reading // the batch is reading its body: it is in flight
	for _, target := range []string{"/v1/units", "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K", "/openapi.yaml", "/healthz"} {
		w := getWith(r, "http://example.test"+target)
		want := http.StatusServiceUnavailable
		if target == "/healthz" {
			want = http.StatusOK
		}
		if w.Code != want {
			t.Errorf("GET %s with one request in flight: status %d, want %d", target, w.Code, want)
			continue
		}
		checkAgainstDocument(t, doc, router, http.MethodGet, target, nil, "", w)
	}
	pw.CloseWithError(io.ErrUnexpectedEOF)
	<-done
}

// signalReader closes first on its first Read.
type signalReader struct {
	r     io.Reader
	first chan struct{}
	once  sync.Once
}

func (s *signalReader) Read(p []byte) (int, error) {
	s.once.Do(func() { close(s.first) })
	return s.r.Read(p)
}

// TestDocumentDeclaresRefusals checks, operation by operation, what the
// generator adds for the middleware, against the handlers' own lists:
// 405 and 414 everywhere, 413 and 415 on every POST, 503 wherever shed
// applies, 401 and the optional key wherever auth applies, the output
// options on every calculation that takes format (in its query and its
// JSON body), and the batch's no-store and trailer.
func TestDocumentDeclaresRefusals(t *testing.T) {
	doc, _ := loadSpec(t)
	h := docTestHandler(t, Options{Metrics: http.NotFoundHandler()})
	if s := doc.Components.SecuritySchemes["bearer"]; s == nil || s.Value.Type != "http" || s.Value.Scheme != "bearer" {
		t.Errorf("security scheme bearer: %+v, want http bearer", s)
	}
	if s := doc.Components.SecuritySchemes["api_key"]; s == nil || s.Value.Type != "apiKey" || s.Value.In != "query" || s.Value.Name != apiKeyParam {
		t.Errorf("security scheme api_key: %+v, want apiKey in the query", s)
	}
	for _, rt := range h.Routes() {
		method, tmpl := rt[0], rt[1]
		path := openAPIPath(tmpl)
		item := doc.Paths.Find(path)
		if item == nil || item.GetOperation(method) == nil {
			t.Errorf("%s %s is not in the document", method, path)
			continue
		}
		op := item.GetOperation(method)
		name := method + " " + path
		problem := func(code string, headers ...string) {
			t.Helper()
			r := op.Responses.Value(code)
			if r == nil || r.Value == nil {
				t.Errorf("%s: no %s", name, code)
				return
			}
			if mt := r.Value.Content.Get("application/problem+json"); mt == nil || mt.Schema == nil || !strings.HasSuffix(mt.Schema.Ref, "handlers.Problem") {
				t.Errorf("%s: %s is not a problem+json Problem", name, code)
			}
			for _, hd := range append([]string{"X-Request-Id", "Cache-Control"}, headers...) {
				if r.Value.Headers[hd] == nil {
					t.Errorf("%s: %s does not declare %s", name, code, hd)
				}
			}
		}
		problem("405", "Allow")
		problem("414")
		if method == http.MethodPost {
			problem("413")
			problem("415")
		}
		if !unshedRoutes[tmpl] {
			problem("503", "Retry-After")
		}
		if openRoutes[tmpl] {
			if op.Security != nil && len(*op.Security) > 0 || op.Responses.Value("401") != nil {
				t.Errorf("%s: served without a key, but the document asks for one", name)
			}
		} else {
			problem("401", "WWW-Authenticate")
			if !optionalKey(op.Security) {
				t.Errorf("%s: security %v, want bearer, api_key or none", name, op.Security)
			}
		}
		if u := op.Parameters.GetByInAndName("query", "units"); u != nil && !strings.Contains(u.Description, "<result>_unit") {
			t.Errorf("%s: units does not say <result>_unit", name)
		}
		if strings.HasPrefix(path, "/v1/batch/") {
			ok := op.Responses.Value("200")
			if ok == nil || ok.Value.Headers["Cache-Control"] == nil || ok.Value.Headers["Trailer"] == nil {
				t.Errorf("%s: the 200 does not declare Cache-Control and Trailer", name)
			}
			continue
		}
		if op.Parameters.GetByInAndName("query", "format") == nil {
			continue
		}
		for _, p := range []string{"result", "on_error"} {
			if op.Parameters.GetByInAndName("query", p) == nil {
				t.Errorf("%s takes format but does not declare %s", name, p)
			}
		}
		if method != http.MethodPost {
			continue
		}
		body := op.RequestBody.Value.Content.Get("application/json").Schema.Value
		for _, p := range []string{"units", "format", "result", "on_error"} {
			if body.Properties[p] == nil {
				t.Errorf("%s: the JSON body does not declare %s", name, p)
			}
		}
		if body.Properties[apiKeyParam] != nil {
			t.Errorf("%s: the JSON body declares %s, which only the query carries", name, apiKeyParam)
		}
		if ap := body.AdditionalProperties.Schema; ap == nil || ap.Value == nil || !ap.Value.Type.Is("string") {
			t.Errorf("%s: the JSON body does not take <result>_unit members", name)
		}
	}
}

// optionalKey reports whether s is exactly: bearer, or api_key, or none.
func optionalKey(s *openapi3.SecurityRequirements) bool {
	if s == nil || len(*s) != 3 {
		return false
	}
	seen := map[string]bool{}
	for _, req := range *s {
		switch len(req) {
		case 0:
			seen[""] = true
		case 1:
			for k := range req {
				seen[k] = true
			}
		}
	}
	return seen["bearer"] && seen["api_key"] && seen[""]
}

// TestOutputOptionsEverywhere checks the service side of what
// TestDocumentDeclaresRefusals checks in the document: every calculation
// reads result and on_error, in the query and in a JSON body.
func TestOutputOptionsEverywhere(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, rt := range newTestHandler(t).Routes() {
		if rt[0] != http.MethodGet || !strings.HasPrefix(rt[1], "/v1/") || strings.Contains(rt[1], ":") || rt[1] == "/v1/materials" || rt[1] == "/v1/units" {
			continue
		}
		// No inputs: the calculation fails, and on_error=inline makes
		// that a 200 #ERROR line.
		w := getWith(r, "http://example.test"+rt[1]+"?format=text&on_error=inline")
		if w.Code != http.StatusOK || !strings.HasPrefix(w.Body.String(), "#ERROR:") || strings.Contains(w.Body.String(), "on_error") {
			t.Errorf("GET %s?format=text&on_error=inline: %d %s", rt[1], w.Code, truncate(w.Body.String()))
		}
		w = do(t, r, http.MethodPost, rt[1], "application/json", `{"format": "text", "on_error": "inline", "units": "us"}`)
		if w.Code != http.StatusOK || !strings.HasPrefix(w.Body.String(), "#ERROR:") || strings.Contains(w.Body.String(), "on_error") {
			t.Errorf("POST %s with the output options in the body: %d %s", rt[1], w.Code, truncate(w.Body.String()))
		}
		w = getWith(r, "http://example.test"+rt[1]+"?result=no_such_result")
		if p := decodeProblem(t, w); len(p.Errors) == 0 || p.Errors[0].Parameter != "result" || strings.Contains(p.Detail, "unknown parameter \"result\"") {
			t.Errorf("GET %s?result=no_such_result: %+v", rt[1], p)
		}
	}
}
