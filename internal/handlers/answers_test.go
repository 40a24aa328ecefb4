package handlers

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"net/http"
	"net/http/httptest"
	"regexp"
	"strings"
	"sync"
	"testing"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/testutil"
	"go.uber.org/zap"

	"github.com/thermalmovement/service/internal/materials"
)

// These tests check the cache's own behaviour (what is kept, for how
// long, in how much memory) and that it is invisible in the bytes: a kept
// answer is compared with the one computed. The two numbers they name are
// dL = alpha L0 dT, the definition of the mean coefficient of linear
// expansion (ASTM E228 / E831, as the answer's method cites it):
// 48 m x 12e-6/K x 50 K = 28.8 mm and 12 m x 12e-6/K x 50 K = 7.2 mm.

// heldSum adds up the bytes of what a holds, entry by entry.
func heldSum(a *answers) int64 {
	var n int64
	for _, k := range a.lru.Keys() {
		v, _ := a.lru.Peek(k)
		n += k.size(v)
	}
	return n
}

func TestAnswersBounded(t *testing.T) {
	const max = 64 << 10 // entries of up to 1 KiB
	a := newAnswers(max)
	body := bytes.Repeat([]byte("x"), 700)
	key := func(i int) answerKey { return answerKey{"expansion/linear", fmt.Sprintf("length=%d%%20m", i)} }
	for i := 0; i < 1000; i++ {
		if !a.put(key(i), "text/plain", body) {
			t.Fatalf("put %d: not kept", i)
		}
		// Keep the first entry in use: the least recently used go first.
		if _, ok := a.get(key(0)); !ok {
			t.Fatalf("after put %d: the entry in use was evicted", i)
		}
		if a.held > max {
			t.Fatalf("after put %d: %d bytes held, over %d", i, a.held, max)
		}
	}
	if got := heldSum(a); got != a.held {
		t.Errorf("held %d, but the entries add up to %d", a.held, got)
	}
	if n := a.lru.Len(); n < 60 || n > 70 {
		t.Errorf("%d entries held, want about %d", n, max/(700+entryOverhead+40))
	}
	if got := a.evictions(); got != float64(1000-a.lru.Len()) {
		t.Errorf("%v evictions counted, %d answers dropped", got, 1000-a.lru.Len())
	}
	if _, ok := a.get(key(1)); ok {
		t.Error("an early entry not used since is still held")
	}
	v, ok := a.get(key(999))
	if !ok || !bytes.Equal(v.body, body) || v.contentType != "text/plain" {
		t.Errorf("the last entry: %v %q", ok, v.contentType)
	}
	if got := a.bytes(); got != float64(a.held) {
		t.Errorf("bytes() = %v, want %d", got, a.held)
	}
}

func TestAnswersKeepCopies(t *testing.T) {
	a := newAnswers(1 << 20)
	query := []byte("length=1%20m")
	body := []byte("1.5")
	k := answerKey{"expansion/linear", string(query)}
	a.put(k, "text/plain", body)
	body[0] = '9' // the caller's buffer is reused for the next answer
	if v, _ := a.get(k); string(v.body) != "1.5" {
		t.Errorf("the kept answer changed with the caller's buffer: %q", v.body)
	}
}

// TestAnswersKeyedByCalculation: the same query to another calculation is
// another answer.
func TestAnswersKeyedByCalculation(t *testing.T) {
	a := newAnswers(1 << 20)
	a.put(answerKey{"expansion/linear", "length=1%20m"}, "text/plain", []byte("1"))
	if _, ok := a.get(answerKey{"expansion/area", "length=1%20m"}); ok {
		t.Error("expansion/area found expansion/linear's answer")
	}
	if _, ok := a.get(answerKey{"expansion/linear", "length=2%20m"}); ok {
		t.Error("another query found the answer")
	}
}

func TestAnswersTooLarge(t *testing.T) {
	a := newAnswers(64 << 10)
	k := answerKey{"joints/gap/schedule", "format=png"}
	if a.put(k, "image/png", make([]byte, 1<<10)) {
		t.Error("an answer over a 64th of the cache was kept")
	}
	if _, ok := a.get(k); ok || a.held != 0 {
		t.Errorf("held %d bytes after refusing the answer", a.held)
	}
}

func TestAnswersNone(t *testing.T) {
	for _, max := range []int64{0, -1} {
		a := newAnswers(max)
		if a != nil {
			t.Fatalf("newAnswers(%d) made a cache", max)
		}
		k := answerKey{"expansion/linear", ""}
		if a.put(k, "text/plain", []byte("1")) {
			t.Errorf("max %d: put kept an answer", max)
		}
		if _, ok := a.get(k); ok {
			t.Errorf("max %d: get found an answer", max)
		}
		if a.bytes() != 0 {
			t.Errorf("max %d: bytes() = %v", max, a.bytes())
		}
	}
}

// newHandlerKeeping is newTestHandler with a cache of answers of max
// bytes (0: none) and its registry, for the metrics.
func newHandlerKeeping(t *testing.T, max int64) (*Handler, *prometheus.Registry) {
	t.Helper()
	cat, err := materials.Load()
	if err != nil {
		t.Fatal(err)
	}
	reg := prometheus.NewRegistry()
	h, err := New(zap.NewNop(), reg, cat, Options{Version: "test", AnswerCacheBytes: max})
	if err != nil {
		t.Fatal(err)
	}
	return h, reg
}

// cachedTargets are GETs of every calculation, in several formats, and
// some refusals. The scenarios are the README's demo data.
var cachedTargets = []string{
	"/v1/expansion/linear?length=48%20m&material=structural-steel&t_initial=-15%20degC&t_final=35%20degC",
	"/v1/expansion/linear?length=48%20m&material=structural-steel&t_initial=-15%20degC&t_final=35%20degC&units=us",
	"/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=text",
	"/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=csv",
	"/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=xml",
	"/v1/expansion/area?length=2.4%20m&width=1.2%20m&material=aluminium-6061&t_initial=20%20degC&t_final=70%20degC",
	"/v1/expansion/volume?volume=2.5%20m3&material=water&t_initial=10%20degC&t_final=80%20degC&vessel_material=structural-steel",
	"/v1/differential?length=6%20m&material_a=aluminium-6061&material_b=concrete&delta_t_a=45%20K&delta_t_b=15%20K",
	"/v1/restraint?material=concrete&delta_t_top=18%20K&delta_t_bottom=2%20K&depth=250%20mm&second_moment=1.3e-3%20m4&restraint=0.6",
	"/v1/temperatures/bridge?method=en1991-1-5&shade_t_min=-20%20degC&shade_t_max=35%20degC&deck_type=2",
	"/v1/joints/gap?length=60%20m&alpha=12e-6/K&t_min=-36%20degC&t_max=59%20degC&t_install=12%20degC&min_gap=20%20mm&max_gap=100%20mm",
	"/v1/joints/gap/schedule?length=60%20m&alpha=12e-6/K&t_min=-36%20degC&t_max=59%20degC&t_install_from=-10%20degC&t_install_to=30%20degC&t_install_step=5%20K&min_gap=20%20mm&max_gap=100%20mm&format=csv",
	"/v1/joints/gap/schedule?length=60%20m&alpha=12e-6/K&t_min=-25%20degC&t_max=50%20degC&min_gap=20%20mm&max_gap=50%20mm&format=svg",
	"/v1/joints/gap/schedule?length=60%20m&alpha=12e-6/K&t_min=-25%20degC&t_max=50%20degC&min_gap=20%20mm&max_gap=50%20mm&format=png",
	"/v1/joints/spacing?thickness=200%20mm",
	// Refusals: a bad unit (400), out of range (422), and the same as an
	// on_error=inline 200 "#ERROR:" line.
	"/v1/expansion/linear?length=48%20kg&alpha=12e-6/K&delta_t=50%20K",
	"/v1/expansion/volume?volume=1%20m3&material=water&t_initial=20%20degC&t_final=500%20degC&extrapolate=true",
	"/v1/expansion/volume?volume=1%20m3&material=water&t_initial=20%20degC&t_final=500%20degC&extrapolate=true&format=text&on_error=inline",
}

// requestIDMember is the member of a problem that is the request's own.
var requestIDMember = regexp.MustCompile(`"request_id":"[^"]*"`)

// withoutID is an answer's body without a problem's request id.
func withoutID(w *httptest.ResponseRecorder) []byte {
	return requestIDMember.ReplaceAll(w.Body.Bytes(), nil)
}

// TestAnswerCacheInvisible: with the cache, every answer, the first and
// the repeated one, is byte for byte the answer of a service without it,
// with the same status and Content-Type; only complete 200 answers are
// kept, and a repeated one is marked a hit (RFC 9211 Cache-Status).
func TestAnswerCacheInvisible(t *testing.T) {
	plain, _ := newHandlerKeeping(t, 0)
	keeping, reg := newHandlerKeeping(t, 16<<20)
	pr, kr := plain.Router(), keeping.Router()
	hits := 0
	for _, target := range cachedTargets {
		want := getWith(pr, target)
		if got := want.Header().Get("Cache-Status"); got != "" {
			t.Errorf("%s: Cache-Status %q without a cache", target, got)
		}
		ok := want.Code == http.StatusOK && !strings.HasPrefix(want.Body.String(), "#ERROR:")
		for i, status := range []string{"thermal-movement; fwd=uri-miss; stored", "thermal-movement; hit"} {
			got := getWith(kr, target)
			if got.Code != want.Code || got.Header().Get("Content-Type") != want.Header().Get("Content-Type") || !bytes.Equal(withoutID(got), withoutID(want)) {
				t.Errorf("%s, request %d: %d %q %q, want %d %q %q", target, i+1, got.Code, got.Header().Get("Content-Type"),
					truncate(got.Body.String()), want.Code, want.Header().Get("Content-Type"), truncate(want.Body.String()))
			}
			if !ok {
				status = ""
			}
			if got.Header().Get("Cache-Status") != status {
				t.Errorf("%s, request %d: Cache-Status %q, want %q", target, i+1, got.Header().Get("Cache-Status"), status)
			}
			// What the middleware sets is the same on a hit (Content-Length
			// is set by the handler for answers over 1 KiB only; net/http
			// adds it to the smaller ones, which the recorder does not).
			for _, name := range []string{"ETag", "Cache-Control", "Content-Length"} {
				if got.Header().Get(name) != want.Header().Get(name) {
					t.Errorf("%s, request %d: %s %q, want %q", target, i+1, name, got.Header().Get(name), want.Header().Get(name))
				}
			}
		}
		if ok {
			hits++
		}
	}
	if got := testutil.ToFloat64(keeping.metrics.answerHits); got != float64(hits) {
		t.Errorf("thermal_answer_cache_hits_total = %v, want %d", got, hits)
	}
	// A miss is a 200 computed (the first of each pair); refusals are
	// not counted.
	if got := testutil.ToFloat64(keeping.metrics.answerMisses); got != float64(hits) {
		t.Errorf("thermal_answer_cache_misses_total = %v, want %d", got, hits)
	}
	if n, err := testutil.GatherAndCount(reg, "thermal_answer_cache_bytes"); err != nil || n != 1 {
		t.Errorf("thermal_answer_cache_bytes: %d series, %v", n, err)
	}
	if keeping.answers.held <= 0 || keeping.answers.lru.Len() != hits {
		t.Errorf("%d answers in %d bytes held, want %d", keeping.answers.lru.Len(), keeping.answers.held, hits)
	}
}

// TestAnswerCacheKeys: the query decides the answer, as sent; a hit has a
// request id of its own; HEAD shares the GET's answer; a POST is always
// computed.
func TestAnswerCacheKeys(t *testing.T) {
	h, _ := newHandlerKeeping(t, 16<<20)
	r := h.Router()
	const target = "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=text"
	first, second := getWith(r, target), getWith(r, target)
	if first.Header().Get("X-Request-Id") == second.Header().Get("X-Request-Id") {
		t.Error("a hit repeated the request id of the answer it was kept from")
	}
	other := getWith(r, "/v1/expansion/linear?length=24%20m&alpha=12e-6/K&delta_t=50%20K&format=text")
	if other.Header().Get("Cache-Status") == "thermal-movement; hit" || other.Body.String() == first.Body.String() {
		t.Errorf("another length was answered from the cache: %q", other.Body)
	}
	head := func(target string) *httptest.ResponseRecorder {
		w := httptest.NewRecorder()
		r.ServeHTTP(w, httptest.NewRequest(http.MethodHead, target, nil))
		return w
	}
	if w := head(target); w.Code != http.StatusOK || w.Header().Get("Cache-Status") != "thermal-movement; hit" {
		t.Errorf("HEAD after GET: %d, Cache-Status %q", w.Code, w.Header().Get("Cache-Status"))
	}
	// A HEAD first keeps the answer for the GET after it.
	const fresh = "/v1/expansion/linear?length=12%20m&alpha=12e-6/K&delta_t=50%20K&format=text"
	if w := head(fresh); w.Code != http.StatusOK || w.Header().Get("Cache-Status") != "thermal-movement; fwd=uri-miss; stored" {
		t.Errorf("HEAD first: %d, Cache-Status %q", w.Code, w.Header().Get("Cache-Status"))
	}
	if w := getWith(r, fresh); w.Header().Get("Cache-Status") != "thermal-movement; hit" || w.Body.String() != "7.2" {
		t.Errorf("GET after HEAD: Cache-Status %q, %q (12 m x 12e-6/K x 50 K = 7.2 mm)", w.Header().Get("Cache-Status"), w.Body)
	}
	// If-None-Match is answered before the cache is consulted: a 304.
	if w := getWith(r, target, "If-None-Match", first.Header().Get("ETag")); w.Code != http.StatusNotModified || w.Body.Len() != 0 {
		t.Errorf("If-None-Match with the answer kept: %d %q", w.Code, w.Body)
	}
	post := do(t, r, http.MethodPost, "/v1/expansion/linear?format=text", "application/json", `{"length": "48 m", "alpha": "12e-6/K", "delta_t": "50 K"}`)
	if post.Code != http.StatusOK || post.Header().Get("Cache-Status") != "" || post.Body.String() != first.Body.String() {
		t.Errorf("POST: %d, Cache-Status %q, %q", post.Code, post.Header().Get("Cache-Status"), post.Body)
	}
}

// TestAnswerCacheConcurrent serves the same and different GETs from many
// goroutines through a cache small enough to evict all the time; run it
// with -race. Every answer must be the one computed for its query.
func TestAnswerCacheConcurrent(t *testing.T) {
	plain, _ := newHandlerKeeping(t, 0)
	keeping, _ := newHandlerKeeping(t, 96<<10) // room for about 80 of the 97 answers
	pr, kr := plain.Router(), keeping.Router()
	target := func(i int) string {
		return fmt.Sprintf("/v1/expansion/linear?length=%d%%20m&alpha=12e-6/K&delta_t=50%%20K", 1+i%97)
	}
	want := map[string]string{}
	for i := 0; i < 97; i++ {
		want[target(i)] = getWith(pr, target(i)).Body.String()
	}
	var wg sync.WaitGroup
	errs := make(chan string, 8)
	for g := 0; g < 8; g++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := 0; i < 400; i++ {
				tg := target(i * (g + 1))
				if got := getWith(kr, tg).Body.String(); got != want[tg] {
					errs <- fmt.Sprintf("%s: %q, want %q", tg, truncate(got), truncate(want[tg]))
					return
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Error(e)
	}
	if keeping.answers.held > keeping.answers.max {
		t.Errorf("%d bytes held, over %d", keeping.answers.held, keeping.answers.max)
	}
	// The test means nothing unless answers were both served and evicted.
	if hits := testutil.ToFloat64(keeping.metrics.answerHits); hits == 0 || keeping.answers.evicted == 0 || keeping.answers.lru.Len() >= 97 {
		t.Errorf("%v hits, %d evictions, %d answers held: the cache did not work under the test", hits, keeping.answers.evicted, keeping.answers.lru.Len())
	}
}

// TestAnswerCacheWithKeys: with API keys, a kept answer is still refused
// to a caller without a valid key, and the key's place (header or query)
// does not make another entry.
func TestAnswerCacheWithKeys(t *testing.T) {
	sum := sha256.Sum256([]byte("demo-key-1"))
	keys, err := LoadAPIKeys(strings.NewReader(hex.EncodeToString(sum[:]) + " demo-client\n"))
	if err != nil {
		t.Fatal(err)
	}
	e := newOpsEnv(t, Options{APIKeys: keys, AnswerCacheBytes: 1 << 20})
	const target = "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=text"
	if w := e.do(http.MethodGet, target, nil, "Authorization", "Bearer demo-key-1"); w.Code != http.StatusOK || w.Header().Get("Cache-Status") != "thermal-movement; fwd=uri-miss; stored" {
		t.Fatalf("with the key: %d, Cache-Status %q", w.Code, w.Header().Get("Cache-Status"))
	}
	if w := e.do(http.MethodGet, target+"&api_key=demo-key-1", nil); w.Code != http.StatusOK || w.Header().Get("Cache-Status") != "thermal-movement; hit" || w.Body.String() != "28.8" {
		t.Errorf("the key in the query: %d, Cache-Status %q, %q", w.Code, w.Header().Get("Cache-Status"), w.Body)
	}
	for _, header := range [][]string{nil, {"Authorization", "Bearer wrong-key"}} {
		if w := e.do(http.MethodGet, target, nil, header...); w.Code != http.StatusUnauthorized || strings.Contains(w.Body.String(), "28.8") {
			t.Errorf("key %v: %d %q", header, w.Code, w.Body)
		}
	}
}
