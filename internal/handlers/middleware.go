package handlers

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"net/http"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"
	"go.uber.org/zap/zapcore"
)

const (
	// requestIDHeader is X-Request-ID in the canonical form net/http keys
	// headers by, so that it can index a header map directly.
	requestIDHeader = "X-Request-Id"
	problemKey      = "problem"
)

// idPrefix and idCounter make request ids: unique per process start and
// cheap to make.
var idCounter atomic.Uint64

func newIDPrefix() string {
	var b [6]byte
	if _, err := rand.Read(b[:]); err != nil {
		return "000000000000"
	}
	return hex.EncodeToString(b[:])
}

// requestID takes the caller's X-Request-ID when it is a short token, or
// makes one, and echoes it in the response.
func (h *Handler) requestID(c *gin.Context) {
	var id string
	if v := c.Request.Header[requestIDHeader]; len(v) > 0 {
		id = v[0]
	}
	if !validRequestID(id) {
		var buf [40]byte
		b := append(append(buf[:0], h.metrics.idPrefix...), '-')
		id = string(strconv.AppendUint(b, idCounter.Add(1), 36))
	}
	c.Writer.Header()[requestIDHeader] = []string{id}
	c.Next()
}

func validRequestID(id string) bool {
	if id == "" || len(id) > 128 {
		return false
	}
	for i := 0; i < len(id); i++ {
		c := id[i]
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_' || c == '.' || c == ':') {
			return false
		}
	}
	return true
}

// observe logs one line per request and counts it in the metrics, by
// route template, never by raw path or query.
func (h *Handler) observe(c *gin.Context) {
	start := time.Now()
	c.Next()
	elapsed := time.Since(start)
	route := c.FullPath()
	if route == "" {
		route = "unmatched"
	}
	status := c.Writer.Status()
	h.metrics.observe(c.Request.Method, route, status, elapsed)
	if ce := h.log.Check(levelFor(status), "request"); ce != nil {
		fields := []zap.Field{
			zap.String("method", c.Request.Method),
			zap.String("route", route),
			zap.Int("status", status),
			zap.Duration("duration", elapsed),
			zap.Int("bytes", c.Writer.Size()),
			zap.String("request_id", c.Writer.Header().Get(requestIDHeader)),
		}
		if t, ok := c.Get(problemKey); ok {
			fields = append(fields, zap.String("problem", t.(string)))
		}
		ce.Write(fields...)
	}
}

// levelFor is the log level of a request's line: error for a failure
// of the service, warn for a 503 (draining, or shedding load: expected
// operation, not a fault), info otherwise.
func levelFor(status int) zapcore.Level {
	switch {
	case status == http.StatusServiceUnavailable:
		return zapcore.WarnLevel
	case status >= 500:
		return zapcore.ErrorLevel
	}
	return zapcore.InfoLevel
}

// recover answers a panic in a handler with a 500 problem and logs it
// with its stack; http.ErrAbortHandler keeps its meaning.
func (h *Handler) recover(c *gin.Context) {
	defer func() {
		v := recover()
		if v == nil {
			return
		}
		if err, ok := v.(error); ok && errors.Is(err, http.ErrAbortHandler) {
			panic(v)
		}
		h.log.Error("panic in handler", zap.Any("panic", v), zap.ByteString("stack", debug.Stack()),
			zap.String("route", c.FullPath()), zap.String("request_id", c.Writer.Header().Get(requestIDHeader)))
		if !c.Writer.Written() {
			h.problem(c, nil, errors.New("panic"))
		}
		c.Abort()
	}()
	c.Next()
}

// limitURL refuses request URIs over Options.MaxURLBytes with 414.
func (h *Handler) limitURL(c *gin.Context) {
	if len(c.Request.RequestURI) > h.opts.MaxURLBytes {
		c.Header("Connection", "close")
		h.problem(c, nil, newError(errURITooLong, "request URI over "+strconv.Itoa(h.opts.MaxURLBytes)+" bytes; send long inputs as a POST JSON body"))
		return
	}
	c.Next()
}

// metrics are the service's Prometheus collectors.
type metrics struct {
	requests *prometheus.CounterVec
	duration *prometheus.HistogramVec
	calcErrs *prometheus.CounterVec
	// answerHits and answerMisses count the calculation GETs written from
	// the cache of answers and the 200 answers computed instead.
	answerHits, answerMisses prometheus.Counter
	idPrefix                 string
	// bound caches the label-bound collectors per method, route and code,
	// so that a request costs no label lookup.
	bound sync.Map // boundKey -> boundMetrics
}

type boundKey struct {
	method, route string
	code          int
}

type boundMetrics struct {
	requests prometheus.Counter
	duration prometheus.Observer
}

func newMetrics(reg prometheus.Registerer, opts Options, materialsVersion string, answers *answers) (*metrics, error) {
	m := &metrics{
		requests: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "thermal_http_requests_total",
			Help: "HTTP requests served, by method, route template and status code.",
		}, []string{"method", "route", "code"}),
		duration: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name:    "thermal_http_request_duration_seconds",
			Help:    "Time to serve an HTTP request, by method, route template and status code.",
			Buckets: []float64{0.0001, 0.00025, 0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 1},
		}, []string{"method", "route", "code"}),
		calcErrs: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "thermal_calculation_errors_total",
			Help: "Calculation requests refused, by calculation and problem type.",
		}, []string{"calculation", "kind"}),
		answerHits: prometheus.NewCounter(prometheus.CounterOpts{
			Name: "thermal_answer_cache_hits_total",
			Help: "Calculation GETs (and HEADs) answered from the cache of answers (--answer-cache-bytes).",
		}),
		answerMisses: prometheus.NewCounter(prometheus.CounterOpts{
			Name: "thermal_answer_cache_misses_total",
			Help: "Calculation GETs (and HEADs) answered 200 by computing, because the cache of answers held no answer to them (kept or, too large, not); refusals are not counted. Not counted with no cache.",
		}),
		idPrefix: newIDPrefix(),
	}
	evicted := prometheus.NewCounterFunc(prometheus.CounterOpts{
		Name: "thermal_answer_cache_evictions_total",
		Help: "Answers dropped from the cache of answers to make room for newer ones.",
	}, answers.evictions)
	held := prometheus.NewGaugeFunc(prometheus.GaugeOpts{
		Name: "thermal_answer_cache_bytes",
		Help: "Bytes held by the cache of answers, as counted against --answer-cache-bytes: keys, bodies and 256 bytes of bookkeeping per answer.",
	}, answers.bytes)
	build := prometheus.NewGaugeVec(prometheus.GaugeOpts{
		Name: "thermal_build_info",
		Help: "Build of the running service; the value is always 1.",
	}, []string{"version", "commit", "materials"})
	for _, c := range []prometheus.Collector{m.requests, m.duration, m.calcErrs, m.answerHits, m.answerMisses, evicted, held, build} {
		if err := reg.Register(c); err != nil {
			return nil, err
		}
	}
	build.WithLabelValues(opts.Version, opts.Commit, materialsVersion).Set(1)
	return m, nil
}

func (m *metrics) observe(method, route string, status int, d time.Duration) {
	switch method {
	case "GET", "POST", "HEAD", "PUT", "DELETE", "PATCH", "OPTIONS":
	default:
		method = "other" // a client's invented method must not make a series
	}
	k := boundKey{method, route, status}
	b, ok := m.bound.Load(k)
	if !ok {
		code := strconv.Itoa(status)
		b, _ = m.bound.LoadOrStore(k, boundMetrics{
			requests: m.requests.WithLabelValues(method, route, code),
			duration: m.duration.WithLabelValues(method, route, code),
		})
	}
	bm := b.(boundMetrics)
	bm.requests.Inc()
	bm.duration.Observe(d.Seconds())
}

func (m *metrics) calcError(calculation string, err error) {
	var ae *apiError
	kind := "internal"
	if errors.As(err, &ae) {
		kind = kindInfo[ae.kind].slug
	}
	m.calcErrs.WithLabelValues(calculation, kind).Inc()
}

// safePath returns a request path fit to quote in a message: printable
// ASCII, at most 200 bytes.
func safePath(p string) string {
	var b strings.Builder
	for i := 0; i < len(p) && b.Len() < 200; i++ {
		c := p[i]
		if c < 0x20 || c >= 0x7f {
			b.WriteString("%" + strings.ToUpper(hex.EncodeToString([]byte{c})))
			continue
		}
		b.WriteByte(c)
	}
	return b.String()
}

// allowed returns the Allow header for a path.
func allowed(path string) string {
	switch {
	case strings.HasPrefix(path, "/v1/batch/"):
		return "POST"
	case strings.HasPrefix(path, "/v1/") && !strings.HasPrefix(path, "/v1/materials") && path != "/v1/units":
		return "GET, HEAD, POST"
	case !hasHead(path):
		return "GET"
	}
	return "GET, HEAD"
}
