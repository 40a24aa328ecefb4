package handlers

import (
	"encoding/binary"
	"encoding/hex"
	"net/http"
	"strconv"
	"strings"

	"github.com/cespare/xxhash/v2"
	"github.com/gin-gonic/gin"
)

// cacheMaxAge is how long a client or gateway may reuse a calculation's
// answer without asking again. The answer to a GET is a function of the
// request and of the service and materials versions, so the only reason
// to ask again is an upgrade: after one, the ETag changes and a
// revalidation fetches the new answer.
const cacheMaxAge = 300

// The Cache-Control values of a calculation's GET, as header values made
// once: the header map is only ever given a new value, never changed in
// place, so every response can share them.
var (
	cachePublic  = []string{"public, max-age=" + strconv.Itoa(cacheMaxAge)}
	cachePrivate = []string{"private, max-age=" + strconv.Itoa(cacheMaxAge)}
)

// cache sets Cache-Control and ETag on GET (and HEAD) requests of the /v1/ routes
// (calculations, materials, units) and answers If-None-Match with 304
// Not Modified without running the handler.
//
// The ETag is a hash of the method, the path, the query (without api_key)
// and the service and materials versions: the same request to the same
// build gets the same body, byte for byte.
// Headers must be set before the handler writes, so they are set here up
// front; a writer wrapper then turns them into "Cache-Control: no-store"
// (and drops the ETag) when the answer is an error: any status but 200
// (and 304), or a 200 "#ERROR:" answer of on_error=inline. Errors of
// other routes and methods are marked no-store too.
func (h *Handler) cache(c *gin.Context) {
	if (c.Request.Method != http.MethodGet && c.Request.Method != http.MethodHead) || !strings.HasPrefix(c.FullPath(), "/v1/") {
		// Not cacheable, but an error is still marked no-store, so that
		// no cache keeps a 404 heuristically.
		c.Writer = &cacheWriter{ResponseWriter: c.Writer, c: c}
		c.Next()
		return
	}
	w := &cacheWriter{ResponseWriter: c.Writer, c: c}
	tag := h.etag(c)
	w.etag[0] = tag
	cc := cachePublic
	if h.opts.APIKeys != nil {
		// A shared cache must not hand one key holder's answer to a
		// caller without a key.
		cc = cachePrivate
	}
	// The keys are in canonical form: no canonicalisation per request.
	hd := c.Writer.Header()
	hd["Etag"] = w.etag[:]
	hd["Cache-Control"] = cc
	if inm := c.Request.Header["If-None-Match"]; len(inm) > 0 && etagMatch(inm[0], tag) {
		c.Writer.WriteHeader(http.StatusNotModified)
		c.Writer.WriteHeaderNow()
		c.Abort()
		return
	}
	c.Writer = w
	c.Next()
}

// etag derives the entity tag of a GET from what decides its body: the
// method, the path and the query as sent (auth has removed api_key), and
// the service and materials versions. A cache keys its entries by URL, so
// the same parameters in another order are another entry anyway; their
// tags need not agree.
func (h *Handler) etag(c *gin.Context) string {
	r := c.Request
	// Every part is length-prefixed, so that no two requests share an
	// encoding.
	var buf [512]byte
	b := buf[:0]
	// A HEAD is the GET's headers: the same tag.
	for _, s := range [...]string{http.MethodGet, r.URL.Path, r.URL.RawQuery, h.opts.Version, h.cat.Version} {
		b = strconv.AppendInt(b, int64(len(s)), 10)
		b = append(b, ':')
		b = append(b, s...)
	}
	// A tag needs to tell apart the answers of one URL, not to resist an
	// adversary: a 64-bit hash does (xxHash64, stable across processes
	// and replicas, unlike hash/maphash).
	var sum [8]byte
	binary.BigEndian.PutUint64(sum[:], xxhash.Sum64(b))
	var out [18]byte
	out[0], out[17] = '"', '"'
	hex.Encode(out[1:17], sum[:])
	return string(out[:])
}

// etagMatch reports whether an If-None-Match header matches tag, by the
// weak comparison RFC 9110 13.1.2 prescribes for it: any listed tag equal
// to ours once a W/ prefix is removed.
//
// "*" matches when a current representation exists, which only running
// the calculation can tell (an invalid query, an unknown material have
// none): it is not taken as a match, and the answer is sent in full.
func etagMatch(header, tag string) bool {
	header = strings.TrimSpace(header)
	if header == "" || header == "*" {
		return false
	}
	for _, t := range strings.Split(header, ",") {
		t = strings.TrimSpace(t)
		t = strings.TrimPrefix(t, "W/")
		if t == tag {
			return true
		}
	}
	return false
}

// cacheWriter replaces the caching headers set up front by "no-store"
// when the answer turns out to be an error.
type cacheWriter struct {
	gin.ResponseWriter
	c    *gin.Context
	done bool
	etag [1]string // the ETag header's value, allocated with the writer
}

func (w *cacheWriter) fix(status int) {
	if w.done {
		return
	}
	w.done = true
	_, isProblem := w.c.Get(problemKey)
	if (status != http.StatusOK && status != http.StatusNotModified) || isProblem {
		hd := w.ResponseWriter.Header()
		hd.Set("Cache-Control", "no-store")
		hd.Del("ETag")
	}
}

func (w *cacheWriter) WriteHeader(status int) {
	w.fix(status)
	w.ResponseWriter.WriteHeader(status)
}

func (w *cacheWriter) WriteHeaderNow() {
	w.fix(w.ResponseWriter.Status())
	w.ResponseWriter.WriteHeaderNow()
}

func (w *cacheWriter) Write(b []byte) (int, error) {
	w.fix(w.ResponseWriter.Status())
	return w.ResponseWriter.Write(b)
}

func (w *cacheWriter) WriteString(s string) (int, error) {
	w.fix(w.ResponseWriter.Status())
	return w.ResponseWriter.WriteString(s)
}

// Unwrap lets http.ResponseController reach the connection's writer (a
// batch enables full duplex through it).
func (w *cacheWriter) Unwrap() http.ResponseWriter { return w.ResponseWriter }
