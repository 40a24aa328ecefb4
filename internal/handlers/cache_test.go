package handlers

import (
	"crypto/sha256"
	"encoding/hex"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
)

func getWith(h http.Handler, target string, header ...string) *httptest.ResponseRecorder {
	req := httptest.NewRequest(http.MethodGet, target, nil)
	for i := 0; i+1 < len(header); i += 2 {
		req.Header.Set(header[i], header[i+1])
	}
	w := httptest.NewRecorder()
	h.ServeHTTP(w, req)
	return w
}

func TestCacheETag(t *testing.T) {
	r := batchTestHandler(t, Options{Version: "1.0.0"}).Router()
	const target = "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=text"
	first := getWith(r, target)
	tag := first.Header().Get("ETag")
	if first.Code != http.StatusOK || len(tag) < 10 || tag[0] != '"' {
		t.Fatalf("status %d, ETag %q", first.Code, tag)
	}
	if cc := first.Header().Get("Cache-Control"); cc != "public, max-age=300" {
		t.Errorf("Cache-Control %q", cc)
	}
	same := []string{
		target,
		// An api_key does not change the answer.
		target + "&api_key=k1",
	}
	for _, s := range same {
		if got := getWith(r, s).Header().Get("ETag"); got != tag {
			t.Errorf("ETag of %s = %s, want %s", s, got, tag)
		}
	}
	different := []string{
		"/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=csv",
		"/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=51%20K&format=text",
		"/v1/expansion/area?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=text",
	}
	for _, d := range different {
		if got := getWith(r, d).Header().Get("ETag"); got == tag {
			t.Errorf("ETag of %s equals that of %s", d, target)
		}
	}
	// Another service version: another ETag.
	r2 := batchTestHandler(t, Options{Version: "1.0.1"}).Router()
	if got := getWith(r2, target).Header().Get("ETag"); got == tag {
		t.Errorf("ETag unchanged by the service version")
	}
	// The body is what the tag promises: the same bytes again.
	if again := getWith(r, target); again.Body.String() != first.Body.String() {
		t.Errorf("answers differ: %q, %q", first.Body, again.Body)
	}
}

func TestCacheIfNoneMatch(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	const target = "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K"
	tag := getWith(r, target).Header().Get("ETag")
	for _, inm := range []string{tag, "W/" + tag, `"other", ` + tag} {
		w := getWith(r, target, "If-None-Match", inm)
		if w.Code != http.StatusNotModified || w.Body.Len() != 0 || w.Header().Get("ETag") != tag {
			t.Errorf("If-None-Match %s: status %d, body %q, ETag %q; want 304, no body, %s", inm, w.Code, w.Body, w.Header().Get("ETag"), tag)
		}
	}
	if w := getWith(r, target, "If-None-Match", `"other"`); w.Code != http.StatusOK {
		t.Errorf("non-matching If-None-Match: status %d", w.Code)
	}
	// "*" matches only where a representation exists (RFC 9110 13.1.2):
	// the service cannot tell without computing, so it answers in full,
	// and an error stays an error.
	for _, tc := range []struct {
		target string
		status int
	}{{target, 200}, {"/v1/expansion/linear?length=x", 400}, {"/v1/materials/unobtainium", 404}} {
		w := getWith(r, tc.target, "If-None-Match", "*")
		if w.Code != tc.status {
			t.Errorf("If-None-Match * on %s: status %d, want %d", tc.target, w.Code, tc.status)
		}
		if tc.status != 200 && w.Header().Get("Cache-Control") != "no-store" {
			t.Errorf("If-None-Match * on %s: Cache-Control %q, want no-store", tc.target, w.Header().Get("Cache-Control"))
		}
	}
}

func TestCacheErrorsNotStored(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	tests := []struct {
		target string
		status int
	}{
		{"/v1/expansion/linear?length=-48%20m&alpha=12e-6/K&delta_t=50%20K", 422},
		{"/v1/expansion/linear?length=48%20mtr&alpha=12e-6/K&delta_t=50%20K", 400},
		{"/v1/materials/unobtainium", 404},
		// on_error=inline answers 200, but it is an error all the same.
		{"/v1/expansion/linear?length=-48%20m&alpha=12e-6/K&delta_t=50%20K&format=text&on_error=inline", 200},
	}
	for _, tt := range tests {
		w := getWith(r, tt.target)
		if w.Code != tt.status || w.Header().Get("Cache-Control") != "no-store" || w.Header().Get("ETag") != "" {
			t.Errorf("%s: status %d, Cache-Control %q, ETag %q; want %d, no-store and no ETag", tt.target, w.Code, w.Header().Get("Cache-Control"), w.Header().Get("ETag"), tt.status)
		}
	}
	// An unknown route is marked no-store too.
	if w := getWith(r, "/v1/expansion/lengthwise"); w.Code != 404 || w.Header().Get("Cache-Control") != "no-store" {
		t.Errorf("unknown route: status %d, Cache-Control %q", w.Code, w.Header().Get("Cache-Control"))
	}
	// Probes are never cached.
	if w := getWith(r, "/readyz"); w.Header().Get("ETag") != "" {
		t.Errorf("/readyz has an ETag")
	}
	// A batch (POST) is not marked cacheable.
	w := post(t, r, "/v1/batch/expansion/linear", "text/csv", "", "length,alpha,delta_t\n1 m,1e-6/K,1 K\n")
	if w.Header().Get("ETag") != "" || w.Header().Get("Cache-Control") != "no-store" {
		t.Errorf("batch: ETag %q, Cache-Control %q", w.Header().Get("ETag"), w.Header().Get("Cache-Control"))
	}
}

func TestCachePrivateWithKeys(t *testing.T) {
	sum := sha256.Sum256([]byte("demo-key-1"))
	keys, err := LoadAPIKeys(strings.NewReader(hex.EncodeToString(sum[:]) + " demo-client\n"))
	if err != nil {
		t.Fatal(err)
	}
	r := batchTestHandler(t, Options{APIKeys: keys}).Router()
	w := getWith(r, "/v1/units?api_key=demo-key-1")
	if w.Code != http.StatusOK {
		t.Fatalf("status %d: %s", w.Code, w.Body)
	}
	if got := w.Header().Get("Cache-Control"); got != "private, max-age=300" {
		t.Errorf("Cache-Control with API keys = %q, want private, max-age=300", got)
	}
	if w2 := getWith(r, "/v1/units", "Authorization", "Bearer demo-key-1"); w2.Header().Get("ETag") != w.Header().Get("ETag") {
		t.Errorf("the key's place changes the ETag: %q, %q", w.Header().Get("ETag"), w2.Header().Get("ETag"))
	}
	// Without a key: 401 from the auth middleware, which runs before this
	// one; it must carry no ETag.
	if w3 := getWith(r, "/v1/units"); w3.Code != http.StatusUnauthorized || w3.Header().Get("ETag") != "" {
		t.Errorf("without a key: status %d, ETag %q", w3.Code, w3.Header().Get("ETag"))
	}
}

// HEAD is GET without the content (RFC 9110 9.3.2, 9.1: every
// general-purpose server supports GET and HEAD): same status, same
// validators, no body. Over a real connection, so that net/http drops the
// body as it does in production.
func TestHead(t *testing.T) {
	srv := httptest.NewServer(batchTestHandler(t, Options{Version: "1.0.0"}).Router())
	defer srv.Close()
	const linear = "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K"
	for _, tc := range []struct {
		target string
		status int
	}{{linear, 200}, {"/healthz", 200}, {"/v1/materials/concrete", 200}, {"/v1/expansion/linear?length=x", 400}, {"/docs/index.html", 405}} {
		get, err := http.Get(srv.URL + tc.target)
		if err != nil {
			t.Fatal(err)
		}
		get.Body.Close()
		head, err := http.Head(srv.URL + tc.target)
		if err != nil {
			t.Fatal(err)
		}
		body, _ := io.ReadAll(head.Body)
		head.Body.Close()
		want := get.StatusCode
		if tc.status == 405 {
			want = 405 // the interactive page's file server answers GET only
		}
		if head.StatusCode != want || head.StatusCode != tc.status || len(body) != 0 {
			t.Errorf("HEAD %s: status %d (GET %d), %d body bytes; want %d and no body", tc.target, head.StatusCode, get.StatusCode, len(body), tc.status)
		}
		if tc.status == 200 && head.Header.Get("ETag") != get.Header.Get("ETag") {
			t.Errorf("HEAD %s: ETag %q, GET %q", tc.target, head.Header.Get("ETag"), get.Header.Get("ETag"))
		}
	}
	req, _ := http.NewRequest(http.MethodPut, srv.URL+linear, nil)
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if got := resp.Header.Get("Allow"); got != "GET, HEAD, POST" {
		t.Errorf("Allow %q, want GET, HEAD, POST", got)
	}
}

// Every whole answer declares its length, small or large, for GET and
// HEAD alike, and none is chunked: send sets Content-Length above 1 KiB
// and leaves smaller answers to net/http, which adds it to an answer its
// buffer holds when the handler returns (net/http ResponseWriter.Write
// documentation; RFC 9110 8.6 for HEAD). Over a real connection, as in
// production.
func TestContentLength(t *testing.T) {
	srv := httptest.NewServer(batchTestHandler(t, Options{Version: "1.0.0"}).Router())
	defer srv.Close()
	for _, target := range []string{
		"/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K",             // about 900 bytes
		"/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=text", // a few bytes
		"/v1/expansion/linear?length=x",                                               // a problem
		"/v1/materials",                                                               // tens of kB
		"/openapi.yaml",                                                               // over 100 kB
	} {
		get, err := http.Get(srv.URL + target)
		if err != nil {
			t.Fatal(err)
		}
		body, _ := io.ReadAll(get.Body)
		get.Body.Close()
		head, err := http.Head(srv.URL + target)
		if err != nil {
			t.Fatal(err)
		}
		head.Body.Close()
		if get.ContentLength != int64(len(body)) || len(get.TransferEncoding) > 0 {
			t.Errorf("GET %s: Content-Length %d, transfer encoding %q, for %d bytes", target, get.ContentLength, get.TransferEncoding, len(body))
		}
		if head.ContentLength != int64(len(body)) {
			t.Errorf("HEAD %s: Content-Length %d, GET sends %d bytes", target, head.ContentLength, len(body))
		}
		if ct := get.Header.Get("Content-Type"); ct == "" || head.Header.Get("Content-Type") != ct {
			t.Errorf("%s: Content-Type GET %q, HEAD %q", target, ct, head.Header.Get("Content-Type"))
		}
	}
}
