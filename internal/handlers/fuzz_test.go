package handlers

import (
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"sort"
	"strings"
	"testing"
)

// FuzzCalculationJSON posts arbitrary bodies to every calculation route
// through the router: whatever the body, the answer is never a 5xx (the
// recovery middleware turns a panic into a 500, so a panic fails too), a
// refusal is a problem+json, and a 200 is a JSON calculation response.
// Seeded with the valid demo request of each route and malformed ones;
// crashers found are kept in testdata/fuzz/FuzzCalculationJSON.
func FuzzCalculationJSON(f *testing.F) {
	e := newOpsEnv(f, Options{MaxBodyBytes: 64 << 10})
	routes := opsCalcRoutes(e.h)
	if len(routes) == 0 {
		f.Fatal("no calculation routes")
	}
	paths := make([]string, 0, len(opsBases))
	for p := range opsBases {
		paths = append(paths, p)
	}
	sort.Strings(paths)
	for _, p := range paths {
		base := opsBases[p]
		for i, r := range routes {
			if r == p {
				f.Add(uint8(i), []byte(opsBody(base.params, "", "")))
				f.Add(uint8(i), []byte(opsBody(base.params, base.field, `{"value": 1e308, "unit": "km"}`)))
				f.Add(uint8(i), []byte(opsBody(base.params, base.field, `"0x1p-2 m"`)))
			}
		}
	}
	for _, bb := range opsBadBodies {
		if len(bb.body) < 4096 {
			f.Add(uint8(0), []byte(bb.body))
		}
	}
	f.Add(uint8(0), []byte(`{"length": "48 m", "material": "structural-steel", "delta_t": "50 K", "format": "xml", "units": "us", "delta_length_unit": "in"}`))
	f.Add(uint8(1), []byte(`{"format": "text", "result": "final_area", "on_error": "inline"}`))
	f.Fuzz(func(t *testing.T, route uint8, body []byte) {
		path := routes[int(route)%len(routes)]
		req := httptest.NewRequest(http.MethodPost, "http://test"+path, strings.NewReader(string(body)))
		req.Header.Set("Content-Type", "application/json")
		w := httptest.NewRecorder()
		e.router.ServeHTTP(w, req)
		switch {
		case w.Code >= 500:
			t.Fatalf("POST %s %q = %d %s", path, body, w.Code, w.Body.String())
		case w.Code >= 400:
			if ct := w.Header().Get("Content-Type"); ct != "application/problem+json" {
				t.Fatalf("POST %s %q = %d with Content-Type %q", path, body, w.Code, ct)
			}
		case w.Code == http.StatusOK && strings.HasPrefix(w.Header().Get("Content-Type"), "application/json"):
			var resp struct {
				Calculation string          `json:"calculation"`
				Results     json.RawMessage `json:"results"`
			}
			if err := json.Unmarshal(w.Body.Bytes(), &resp); err != nil || resp.Calculation == "" || len(resp.Results) == 0 {
				t.Fatalf("POST %s %q = 200 but not a calculation response: %v %.300s", path, body, err, w.Body.String())
			}
		}
	})
}
