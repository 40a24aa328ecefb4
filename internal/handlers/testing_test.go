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

// newTestHandler returns handlers over the embedded catalogue.
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
	if w.Code != http.StatusOK {
		t.Fatalf("status %d: %s", w.Code, w.Body.String())
	}
	var d decoded
	if err := json.Unmarshal(w.Body.Bytes(), &d); err != nil {
		t.Fatalf("decode: %v: %s", err, w.Body.String())
	}
	return d
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
