package handlers

import (
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"

	"github.com/thermalmovement/service/internal/materials"
)

// newTestHandler returns handlers over the embedded catalogue. They keep
// no answers, so that a repeated request is computed again and state left
// behind by one request would show in the next; answers_test.go compares
// the answers of a handler that keeps them with these.
func newTestHandler(t testing.TB) *Handler {
	t.Helper()
	cat, err := materials.Load()
	if err != nil {
		t.Fatal(err)
	}
	h, err := New(zap.NewNop(), prometheus.NewRegistry(), cat, Options{Version: "test"})
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// do sends one request through the router.
func do(t testing.TB, h http.Handler, method, target, contentType, body string) *httptest.ResponseRecorder {
	t.Helper()
	var r io.Reader
	if body != "" {
		r = strings.NewReader(body)
	}
	req := httptest.NewRequest(method, target, r)
	if contentType != "" {
		req.Header.Set("Content-Type", contentType)
	}
	w := httptest.NewRecorder()
	h.ServeHTTP(w, req)
	return w
}

// decoded is a calculation response read back generically.
type decoded struct {
	Results map[string]struct {
		Value float64
		Unit  string
	} `json:"results"`
	Inputs     map[string]map[string]any `json:"inputs"`
	Method     string                    `json:"method"`
	References []string                  `json:"references"`
	Warnings   []string                  `json:"warnings"`
	Cautions   []string                  `json:"cautions"`
}

func decode(t testing.TB, w *httptest.ResponseRecorder) decoded {
	t.Helper()
	var d decoded
	decodeOK(t, w, &d)
	return d
}

// decodeOK checks for a 200 and decodes its JSON body into v.
func decodeOK(t testing.TB, w *httptest.ResponseRecorder, v any) {
	t.Helper()
	if w.Code != http.StatusOK {
		t.Fatalf("status %d: %s", w.Code, w.Body.String())
	}
	if err := json.Unmarshal(w.Body.Bytes(), v); err != nil {
		t.Fatalf("decode: %v: %s", err, w.Body.String())
	}
}

// checkResult checks one result of a calculation's answer, and that the
// answer carries its method, references and at least minCautions cautions.
func checkResult(t testing.TB, d decoded, name string, want float64, unit string, rel float64, minCautions int) {
	t.Helper()
	got := d.Results[name]
	if !closeTo(got.Value, want, rel) || got.Unit != unit {
		t.Errorf("%s = %v %s, want %v %s", name, got.Value, got.Unit, want, unit)
	}
	if len(d.Cautions) < minCautions || d.Method == "" || len(d.References) == 0 {
		t.Errorf("response lacks method, references or cautions: %+v", d)
	}
}

func decodeProblem(t testing.TB, w *httptest.ResponseRecorder) Problem {
	t.Helper()
	if ct := w.Header().Get("Content-Type"); ct != "application/problem+json" {
		t.Fatalf("content type %q, want application/problem+json: %s", ct, w.Body.String())
	}
	var p Problem
	if err := json.Unmarshal(w.Body.Bytes(), &p); err != nil {
		t.Fatalf("decode problem: %v", err)
	}
	return p
}

// checkNames checks that the problem names every one of the parameters.
func checkNames(t testing.TB, p Problem, names ...string) {
	t.Helper()
	named := map[string]bool{}
	for _, e := range p.Errors {
		named[e.Parameter] = true
	}
	for _, name := range names {
		if !named[name] {
			t.Errorf("problem does not name %q: %+v", name, p.Errors)
		}
	}
}
