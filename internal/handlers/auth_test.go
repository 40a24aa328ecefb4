package handlers

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"
	"go.uber.org/zap"
	"go.uber.org/zap/zaptest/observer"

	"github.com/thermalmovement/service/internal/materials"
)

// opsEnv is a handler with its router, registry and captured logs, for
// the operations tests (auth, shedding, bad input, fuzzing, metrics).
type opsEnv struct {
	h      *Handler
	router *gin.Engine
	reg    *prometheus.Registry
	logs   *observer.ObservedLogs
}

func newOpsEnv(t testing.TB, opts Options) *opsEnv {
	t.Helper()
	cat, err := materials.Load()
	if err != nil {
		t.Fatal(err)
	}
	core, logs := observer.New(zap.DebugLevel)
	reg := prometheus.NewRegistry()
	if opts.Metrics == nil {
		opts.Metrics = promhttp.HandlerFor(reg, promhttp.HandlerOpts{})
	}
	opts.Version = "test"
	h, err := New(zap.New(core), reg, cat, opts)
	if err != nil {
		t.Fatal(err)
	}
	return &opsEnv{h: h, router: h.Router(), reg: reg, logs: logs}
}

// do serves one request; header holds name, value pairs.
func (e *opsEnv) do(method, target string, body io.Reader, header ...string) *httptest.ResponseRecorder {
	req := httptest.NewRequest(method, "http://test"+target, body)
	if body != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	for i := 0; i+1 < len(header); i += 2 {
		req.Header.Set(header[i], header[i+1])
	}
	w := httptest.NewRecorder()
	e.router.ServeHTTP(w, req)
	return w
}

// opsProblem decodes a problem+json answer.
func opsProblem(t testing.TB, w *httptest.ResponseRecorder) Problem {
	t.Helper()
	if ct := w.Header().Get("Content-Type"); ct != "application/problem+json" {
		t.Fatalf("Content-Type %q, want application/problem+json; body %s", ct, w.Body.String())
	}
	var p Problem
	if err := json.Unmarshal(w.Body.Bytes(), &p); err != nil {
		t.Fatalf("problem body %s: %v", w.Body.String(), err)
	}
	if p.Status != w.Code {
		t.Errorf("problem status %d, HTTP status %d", p.Status, w.Code)
	}
	return p
}

// Demo keys of a footbridge team and a facade team (demo data).
const (
	opsKeyA = "footbridge-team-demo-key-1f3a9c"
	opsKeyB = "facade-team-demo-key-77b0e2"
)

func opsHash(key string) string {
	s := sha256.Sum256([]byte(key))
	return hex.EncodeToString(s[:])
}

func opsKeys(t testing.TB) *APIKeys {
	t.Helper()
	file := "# demo keys\n\n" + opsHash(opsKeyA) + " footbridge-team\n" +
		"\t# indented comment\n" + strings.ToUpper(opsHash(opsKeyB)) + "\tfacade team (Building 4)\n"
	k, err := LoadAPIKeys(strings.NewReader(file))
	if err != nil {
		t.Fatal(err)
	}
	return k
}

func TestLoadAPIKeys(t *testing.T) {
	k := opsKeys(t)
	if k.Len() != 2 {
		t.Fatalf("Len() = %d, want 2", k.Len())
	}
	for key, want := range map[string]string{opsKeyA: "footbridge-team", opsKeyB: "facade team (Building 4)"} {
		if label, ok := k.match(key); !ok || label != want {
			t.Errorf("match(%q) = %q, %v; want %q, true", key, label, ok, want)
		}
	}
	for _, key := range []string{"", opsKeyA + " ", strings.ToUpper(opsKeyA), opsHash(opsKeyA), "footbridge-team"} {
		if label, ok := k.match(key); ok {
			t.Errorf("match(%q) = %q, true; want no match", key, label)
		}
	}
	if (*APIKeys)(nil).Len() != 0 {
		t.Error("nil keys have a length")
	}

	bad := []struct{ name, file, want string }{
		{"empty", "", "no key"},
		{"comments only", "# nobody yet\n\n", "no key"},
		{"short hash", "abc123 team\n", "line 1"},
		{"not hex", strings.Repeat("zz", 32) + " team\n", "line 1: the hash is not hexadecimal"},
		{"no label", opsHash(opsKeyA) + "\n", "label"},
		{"duplicate", "# x\n" + opsHash(opsKeyA) + " a\n" + opsHash(opsKeyA) + " b\n", "line 3: the same hash as line 2"},
		{"empty key", opsHash("") + " nobody\n", "empty key"},
		{"plain key instead of hash", opsKeyA + " footbridge-team\n", "line 1"},
		{"too big", strings.Repeat("#"+strings.Repeat("x", 1000)+"\n", 1100), "over"},
	}
	for _, tc := range bad {
		t.Run(tc.name, func(t *testing.T) {
			k, err := LoadAPIKeys(strings.NewReader(tc.file))
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("LoadAPIKeys = %v, %v; want an error mentioning %q", k, err, tc.want)
			}
			if strings.Contains(err.Error(), opsKeyA) {
				t.Errorf("the error %q quotes the file's content", err)
			}
		})
	}
}

const opsLinear = "/v1/expansion/linear?length=48%20m&material=structural-steel&delta_t=50%20K"

func TestAuth(t *testing.T) {
	e := newOpsEnv(t, Options{APIKeys: opsKeys(t)})
	refused := func(t *testing.T, w *httptest.ResponseRecorder) string {
		t.Helper()
		if w.Code != http.StatusUnauthorized {
			t.Fatalf("status %d, want 401; body %s", w.Code, w.Body.String())
		}
		if got := w.Header().Get("WWW-Authenticate"); !strings.HasPrefix(got, "Bearer") {
			t.Errorf("WWW-Authenticate %q, want Bearer", got)
		}
		p := opsProblem(t, w)
		if p.Type != "/problems/unauthorized" || len(p.Errors) != 0 {
			t.Errorf("problem %+v, want type /problems/unauthorized without field errors", p)
		}
		return p.Detail
	}
	details := map[string]bool{}
	for _, tc := range []struct {
		name, target string
		header       []string
	}{
		{"no key", opsLinear, nil},
		{"wrong key in header", opsLinear, []string{"Authorization", "Bearer not-a-key"}},
		{"wrong key in query", opsLinear + "&api_key=not-a-key", nil},
		{"empty bearer", opsLinear, []string{"Authorization", "Bearer "}},
		{"key without scheme", opsLinear, []string{"Authorization", opsKeyA}},
		{"basic scheme", opsLinear, []string{"Authorization", "Basic " + opsKeyA}},
		{"key twice in query", opsLinear + "&api_key=" + opsKeyA + "&api_key=" + opsKeyA, nil},
		{"header and query", opsLinear + "&api_key=" + opsKeyA, []string{"Authorization", "Bearer " + opsKeyA}},
		{"hash instead of key", opsLinear, []string{"Authorization", "Bearer " + opsHash(opsKeyA)}},
		{"materials need a key", "/v1/materials", nil},
		{"unknown path", "/v2/anything", nil},
		{"dot segments", "/v1/../healthz", nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			details[refused(t, e.do(http.MethodGet, tc.target, nil, tc.header...))] = true
		})
	}
	if len(details) != 1 {
		t.Errorf("401 details differ between cases, which helps guessing: %v", details)
	}
	t.Run("post without key", func(t *testing.T) {
		refused(t, e.do(http.MethodPost, "/v1/expansion/linear", strings.NewReader(`{"length":"48 m","material":"structural-steel","delta_t":"50 K"}`)))
	})

	for _, tc := range []struct {
		name, target string
		header       []string
	}{
		{"bearer header", opsLinear, []string{"Authorization", "Bearer " + opsKeyA}},
		{"lowercase scheme", opsLinear, []string{"Authorization", "bearer " + opsKeyB}},
		{"query parameter", opsLinear + "&api_key=" + opsKeyA, nil},
		{"query parameter first", "/v1/expansion/linear?api_key=" + opsKeyB + "&length=48%20m&material=structural-steel&delta_t=50%20K", nil},
		{"escaped query parameter", opsLinear + "&api%5Fkey=" + strings.ReplaceAll(opsKeyA, "-", "%2D"), nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w := e.do(http.MethodGet, tc.target, nil, tc.header...)
			if w.Code != http.StatusOK {
				t.Fatalf("status %d, want 200; body %s", w.Code, w.Body.String())
			}
			if strings.Contains(w.Body.String(), "api_key") || strings.Contains(w.Body.String(), opsKeyA) || strings.Contains(w.Body.String(), opsKeyB) {
				t.Errorf("the key reached the response: %s", w.Body.String())
			}
		})
	}
	if w := e.do(http.MethodPost, "/v1/expansion/linear?api_key="+opsKeyA, strings.NewReader(`{"length":"48 m","material":"structural-steel","delta_t":"50 K"}`)); w.Code != http.StatusOK {
		t.Errorf("POST with the key in the query: %d %s, want 200", w.Code, w.Body.String())
	}

	for _, path := range []string{"/healthz", "/readyz", "/metrics", "/openapi.yaml", "/docs", "/docs/index.html", "/problems/unauthorized"} {
		if w := e.do(http.MethodGet, path, nil); w.Code == http.StatusUnauthorized || w.Code >= 500 {
			t.Errorf("GET %s without a key = %d, want it open", path, w.Code)
		}
	}

	// The keys never reach logs or metrics.
	var metrics bytes.Buffer
	mfs, err := e.reg.Gather()
	if err != nil {
		t.Fatal(err)
	}
	for _, mf := range mfs {
		metrics.WriteString(mf.String())
	}
	for _, entry := range e.logs.All() {
		line, _ := json.Marshal(entry.ContextMap())
		metrics.WriteString(entry.Message + string(line))
	}
	for _, secret := range []string{opsKeyA, opsKeyB, "not-a-key", "api_key"} {
		if strings.Contains(metrics.String(), secret) {
			t.Errorf("%q reached the logs or the metrics", secret)
		}
	}
}

// TestAuthOff checks that without keys nothing is asked, and that an
// api_key parameter a client sends anyway is dropped, not reported as an
// unknown parameter.
func TestAuthOff(t *testing.T) {
	e := newOpsEnv(t, Options{})
	for _, target := range []string{opsLinear, opsLinear + "&api_key=anything"} {
		if w := e.do(http.MethodGet, target, nil); w.Code != http.StatusOK {
			t.Errorf("GET %s without keys = %d %s, want 200", target, w.Code, w.Body.String())
		}
	}
}

func TestTakeAPIKey(t *testing.T) {
	for _, tc := range []struct {
		query, key, rest string
		found, many      bool
	}{
		{"length=1%20m", "", "length=1%20m", false, false},
		{"api_key=abc", "abc", "", true, false},
		{"a=1&api_key=abc&b=%zz", "abc", "a=1&b=%zz", true, false},
		{"api_key=a&api_key=b", "b", "", true, true},
		{"api_keys=x&my_api_key=y", "", "api_keys=x&my_api_key=y", false, false},
		{"api_key", "", "", true, false},
		{"api_key=%zz", "", "", true, false},
	} {
		r := httptest.NewRequest(http.MethodGet, "/v1/x?"+tc.query, nil)
		key, found, many := takeAPIKey(r)
		if key != tc.key || found != tc.found || many != tc.many || r.URL.RawQuery != tc.rest {
			t.Errorf("takeAPIKey(%q) = %q, %v, %v, rest %q; want %q, %v, %v, rest %q", tc.query, key, found, many, r.URL.RawQuery, tc.key, tc.found, tc.many, tc.rest)
		}
		if found && strings.Contains(r.RequestURI, "api_key") {
			t.Errorf("takeAPIKey(%q) left RequestURI %q", tc.query, r.RequestURI)
		}
	}
}

// blockedRequest is a POST whose body is held open until release, so
// that it stays in flight.
type blockedRequest struct {
	pw   *io.PipeWriter
	done chan *httptest.ResponseRecorder
}

func (e *opsEnv) blockedPOST() *blockedRequest {
	pr, pw := io.Pipe()
	b := &blockedRequest{pw: pw, done: make(chan *httptest.ResponseRecorder, 1)}
	go func() { b.done <- e.do(http.MethodPost, "/v1/expansion/linear", pr) }()
	return b
}

func (b *blockedRequest) release() *httptest.ResponseRecorder {
	go func() {
		_, _ = io.WriteString(b.pw, `{"length":"48 m","material":"structural-steel","delta_t":"50 K"}`)
		b.pw.Close()
	}()
	select {
	case w := <-b.done:
		return w
	case <-time.After(10 * time.Second):
		return nil
	}
}

func TestShed(t *testing.T) {
	const bound = 3
	e := newOpsEnv(t, Options{MaxInFlight: bound})
	var blocked []*blockedRequest
	for range bound {
		blocked = append(blocked, e.blockedPOST())
	}
	// Wait until the blocked requests hold the bound (polling with
	// requests would race them for the slots).
	for deadline := time.Now().Add(5 * time.Second); e.h.inFlight.Load() < bound && time.Now().Before(deadline); {
		time.Sleep(time.Millisecond)
	}
	w := e.do(http.MethodGet, opsLinear, nil)
	if w.Code != http.StatusServiceUnavailable {
		t.Fatalf("with %d requests in flight: status %d, want 503", bound, w.Code)
	}
	if w.Header().Get("Retry-After") == "" {
		t.Error("503 without Retry-After")
	}
	if p := opsProblem(t, w); p.Type != "/problems/overloaded" {
		t.Errorf("problem type %q, want /problems/overloaded", p.Type)
	}
	for _, path := range []string{"/healthz", "/readyz", "/metrics"} {
		if w := e.do(http.MethodGet, path, nil); w.Code != http.StatusOK {
			t.Errorf("GET %s while saturated = %d, want 200", path, w.Code)
		}
	}
	for i, b := range blocked {
		if w := b.release(); w == nil || w.Code != http.StatusOK {
			t.Errorf("in-flight request %d = %v, want 200", i, w)
		}
	}
	// The slots are free again; concurrent requests within the bound pass.
	var wg sync.WaitGroup
	codes := make([]int, bound)
	for i := range bound {
		wg.Go(func() { codes[i] = e.do(http.MethodGet, opsLinear, nil).Code })
	}
	wg.Wait()
	for i, c := range codes {
		if c != http.StatusOK {
			t.Errorf("request %d after release = %d, want 200", i, c)
		}
	}
}

func TestShedOff(t *testing.T) {
	e := newOpsEnv(t, Options{})
	var blocked []*blockedRequest
	for range 20 {
		blocked = append(blocked, e.blockedPOST())
	}
	time.Sleep(20 * time.Millisecond)
	if w := e.do(http.MethodGet, opsLinear, nil); w.Code != http.StatusOK {
		t.Errorf("without a bound, with 20 in flight: %d, want 200", w.Code)
	}
	for _, b := range blocked {
		b.release()
	}
}

// TestMayHoldAPIKey: the quick test before the api_key search finds every
// query that names it, spelled out or escaped, and lets pass the ones
// whose names cannot (values may hold anything). No physical value.
func TestMayHoldAPIKey(t *testing.T) {
	for q, want := range map[string]bool{
		"":                           false,
		"api_key":                    true,
		"api_key=k":                  true,
		"length=1%20m&api_key=k":     true,
		"api_key&length=1":           true,
		"length=1&api_key":           true,
		"api%5Fkey=k":                true,
		"api+key=k":                  true,
		"length=48%20m&alpha=1e-5":   false,
		"length=api_key":             false,
		"x=1&api_keys=2":             false,
		"api_ke=1&y=api_key":         false,
		"length=1&&=api_key":         false,
		"note=a+b%20c&delta_t=5%20K": false,
	} {
		if got := mayHoldAPIKey(q); got != want {
			t.Errorf("mayHoldAPIKey(%q) = %v, want %v", q, got, want)
		}
	}
}
