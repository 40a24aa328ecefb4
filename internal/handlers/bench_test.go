package handlers

import (
	"bytes"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"reflect"
	"strconv"
	"testing"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"
	"go.uber.org/zap/zapcore"

	"github.com/thermalmovement/service/internal/logging"
	"github.com/thermalmovement/service/internal/materials"
)

// Benchmarks of the full handler path through gin (issue 7): middleware,
// parameter reading, the calculation, unit conversion, encoding, the
// request log line (JSON, to io.Discard, as cmd/api writes it) and the
// metrics. Inputs are the demo scenarios of the endpoints' descriptions
// (demo data): a 48 m footbridge girder, a 2.4 m x 1.2 m aluminium facade
// panel, a 2.5 m3 steel heat-exchanger shell filled with water.

var benchQueries = map[string]string{
	"linear": "length=48%20m&alpha=12e-6/K&delta_t=50%20K",
	"area":   "length=2.4%20m&width=1.2%20m&alpha=23e-6/K&t_initial=20%20degC&t_final=70%20degC",
	"volume": "volume=2.5%20m3&material=water&t_initial=10%20degC&t_final=80%20degC&vessel_material=structural-steel",
}

var benchBodies = map[string]string{
	"linear": `{"length": "48 m", "alpha": "12e-6/K", "delta_t": {"value": 50, "unit": "K"}}`,
	"area":   `{"length": "2.4 m", "width": "1.2 m", "alpha": "23e-6/K", "t_initial": "20 degC", "t_final": "70 degC"}`,
	"volume": `{"volume": "2.5 m3", "material": "water", "t_initial": "10 degC", "t_final": "80 degC", "vessel_material": "structural-steel"}`,
}

// benchHandler returns handlers set up as cmd/api sets them up: its
// logger (logging.New at info level, sampled, here writing to io.Discard)
// and a fresh registry. At benchmark rates about one request in a hundred
// writes its line; BenchmarkStages/log-line measures one line.
func benchHandler(tb testing.TB) *Handler { return benchHandlerWith(tb, 0) }

// benchHandlerWith is benchHandler with a cache of answers of
// answerCache bytes (0: none, every request computed).
func benchHandlerWith(tb testing.TB, answerCache int64) *Handler {
	tb.Helper()
	cat, err := materials.Load()
	if err != nil {
		tb.Fatal(err)
	}
	reg := prometheus.NewRegistry()
	log, ws := logging.New(zapcore.InfoLevel, true, io.Discard, reg)
	tb.Cleanup(func() { _ = ws.Stop() })
	h, err := New(log, reg, cat, Options{Version: "bench", MaxBodyBytes: 64 << 10, AnswerCacheBytes: answerCache})
	if err != nil {
		tb.Fatal(err)
	}
	return h
}

// benchWriter is a reusable http.ResponseWriter that keeps nothing of the
// body, so that the benchmark counts the handler's allocations rather
// than a recorder's.
type benchWriter struct {
	h      http.Header
	status int
	n      int
}

func (w *benchWriter) Header() http.Header { return w.h }
func (w *benchWriter) WriteHeader(s int)   { w.status = s }
func (w *benchWriter) Write(b []byte) (int, error) {
	if w.status == 0 {
		w.status = http.StatusOK
	}
	w.n += len(b)
	return len(b), nil
}

func (w *benchWriter) reset() {
	clear(w.h)
	w.status, w.n = 0, 0
}

// benchCheck serves req once through httptest and fails unless it is a 200.
func benchCheck(b *testing.B, r *gin.Engine, req *http.Request, body string) {
	b.Helper()
	if body != "" {
		req.Body = io.NopCloser(bytes.NewReader([]byte(body)))
	}
	rec := httptest.NewRecorder()
	r.ServeHTTP(rec, req)
	if rec.Code != http.StatusOK {
		b.Fatalf("%s %s = %d, want 200: %s", req.Method, req.URL, rec.Code, rec.Body)
	}
}

// benchGET serves req once to check it, then in the benchmark loop, and
// returns the writer of the last answer, a 200.
func benchGET(b *testing.B, r *gin.Engine, req *http.Request) *benchWriter {
	b.Helper()
	benchCheck(b, r, req, "")
	w := &benchWriter{h: http.Header{}}
	b.ReportAllocs()
	for b.Loop() {
		w.reset()
		r.ServeHTTP(w, req)
	}
	if w.status != http.StatusOK {
		b.Fatalf("status %d", w.status)
	}
	b.SetBytes(int64(w.n))
	return w
}

func BenchmarkHandlerGET(b *testing.B) {
	r := benchHandler(b).Router()
	for _, name := range []string{"linear", "area", "volume"} {
		for _, format := range []string{"json", "text", "csv", "xml"} {
			b.Run(name+"/"+format, func(b *testing.B) {
				q := benchQueries[name]
				if format != "json" {
					q += "&format=" + format
				}
				benchGET(b, r, httptest.NewRequest(http.MethodGet, "/v1/expansion/"+name+"?"+q, nil))
			})
		}
	}
}

// BenchmarkHandlerGETCached is the linear GET answered from the cache of
// answers, as cmd/api keeps them by default: a repeated request. The
// benchmarks above compute every request.
func BenchmarkHandlerGETCached(b *testing.B) {
	r := benchHandlerWith(b, 16<<20).Router()
	w := benchGET(b, r, httptest.NewRequest(http.MethodGet, "/v1/expansion/linear?"+benchQueries["linear"], nil))
	if got := w.h.Get("Cache-Status"); got != "thermal-movement; hit" {
		b.Fatalf("Cache-Status %q: not a hit", got)
	}
}

// BenchmarkHandlerGETDistinct sends linear GETs that all differ (the
// length steps by 1 mm), with the cache of answers and without: the cost
// a request the service has not answered before pays for being kept.
func BenchmarkHandlerGETDistinct(b *testing.B) {
	for _, tc := range []struct {
		name  string
		bytes int64
	}{{"none", 0}, {"cache", 16 << 20}} {
		b.Run(tc.name, func(b *testing.B) {
			r := benchHandlerWith(b, tc.bytes).Router()
			req := httptest.NewRequest(http.MethodGet, "/v1/expansion/linear?"+benchQueries["linear"], nil)
			w := &benchWriter{h: http.Header{}}
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				i++
				req.URL.RawQuery = "length=" + strconv.Itoa(48000+i) + "%20mm&alpha=12e-6/K&delta_t=50%20K"
				w.reset()
				r.ServeHTTP(w, req)
			}
			if w.status != http.StatusOK {
				b.Fatalf("status %d", w.status)
			}
		})
	}
}

func BenchmarkHandlerPOST(b *testing.B) {
	r := benchHandler(b).Router()
	for _, name := range []string{"linear", "area", "volume"} {
		b.Run(name, func(b *testing.B) {
			body := []byte(benchBodies[name])
			req := httptest.NewRequest(http.MethodPost, "/v1/expansion/"+name, nil)
			req.Header.Set("Content-Type", "application/json")
			benchCheck(b, r, req, benchBodies[name])
			w := &benchWriter{h: http.Header{}}
			rd := bytes.NewReader(body)
			rc := io.NopCloser(rd)
			b.ReportAllocs()
			for b.Loop() {
				w.reset()
				rd.Reset(body)
				req.Body = rc
				r.ServeHTTP(w, req)
			}
			if w.status != http.StatusOK {
				b.Fatalf("status %d", w.status)
			}
		})
	}
}

// benchResponse computes the linear demo response once, converted to its
// output units, as the wrapper has it just before writing.
func benchResponse(b *testing.B) (*Response, []resultItem) {
	b.Helper()
	h := benchHandler(b)
	vals := map[string]raw{}
	if errs := readQuery(benchQueries["linear"], vals); len(errs) > 0 {
		b.Fatal(errs)
	}
	p := newParams(vals, h.cat, &h.unitCache)
	out := new(outputOptions)
	readOutput(out, p, fieldsOf(reflect.TypeOf((*LinearResults)(nil))), nil)
	resp, err := h.linear(p)
	if err != nil {
		b.Fatal(err)
	}
	items, ok := out.convert(resp.Results, nil)
	if !ok {
		b.Fatal("results not finite")
	}
	h.complete(resp, "expansion/linear", p)
	return resp, items
}

// BenchmarkEncode measures the response encoder alone, per format.
func BenchmarkEncode(b *testing.B) {
	resp, items := benchResponse(b)
	b.Run("json", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := json.Marshal(resp); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("json-append", func(b *testing.B) {
		// The path the wrapper takes for results that are all Values.
		buf := make([]byte, 0, 2048)
		b.ReportAllocs()
		for b.Loop() {
			buf = appendResponse(buf[:0], resp, items)
		}
	})
	b.Run("inputs-json", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := resp.Inputs.MarshalJSON(); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("text", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			_ = textBody(items, nil, "")
		}
	})
	b.Run("csv", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			_ = csvBody(items, nil, resp.Warnings, resp.Cautions)
		}
	})
	b.Run("xml", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			_ = xmlBody(resp.Calculation, items, nil, resp.Warnings, resp.Cautions)
		}
	})
}

// BenchmarkStages splits the linear GET into its stages, to show where a
// request's time and allocations go.
func BenchmarkStages(b *testing.B) {
	h := benchHandler(b)
	rawQuery := benchQueries["linear"]
	b.Run("url.ParseQuery", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := url.ParseQuery(rawQuery); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("readQuery", func(b *testing.B) {
		vals := make(map[string]raw, 8)
		b.ReportAllocs()
		for b.Loop() {
			clear(vals)
			_ = readQuery(rawQuery, vals)
		}
	})
	fields := fieldsOf(reflect.TypeOf((*LinearResults)(nil)))
	b.Run("params+linear+convert", func(b *testing.B) {
		vals := make(map[string]raw, 8)
		var p params
		var out outputOptions
		b.ReportAllocs()
		for b.Loop() {
			clear(vals)
			_ = readQuery(rawQuery, vals)
			p.reset(vals, h.cat, &h.unitCache)
			readOutput(&out, &p, fields, nil)
			resp, err := h.linear(&p)
			if err != nil {
				b.Fatal(err)
			}
			if _, ok := out.convert(resp.Results, nil); !ok {
				b.Fatal("not finite")
			}
		}
	})
	b.Run("metrics.observe", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			h.metrics.observe(http.MethodGet, "/v1/expansion/linear", http.StatusOK, 1000)
		}
	})
	b.Run("log-line", func(b *testing.B) {
		// One line written, as with --log-sampling=false.
		log := zap.New(zapcore.NewCore(zapcore.NewJSONEncoder(zap.NewProductionEncoderConfig()),
			zapcore.Lock(zapcore.AddSync(io.Discard)), zapcore.InfoLevel))
		b.ReportAllocs()
		for b.Loop() {
			if ce := log.Check(zapcore.InfoLevel, "request"); ce != nil {
				ce.Write(zap.String("method", "GET"), zap.String("route", "/v1/expansion/linear"), zap.Int("status", 200),
					zap.Duration("duration", 1000), zap.Int("bytes", 1200), zap.String("request_id", "0123456789ab-1"))
			}
		}
	})
}
