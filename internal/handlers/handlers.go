// Package handlers is the HTTP adapter of the service: it turns requests
// into calls of package calc and the results back into responses, on gin.
// Every response and every error is written by the one wrapper in this
// file; handlers decode, validate, call one calculation and return.
package handlers

import (
	"encoding/json"
	"errors"
	"net/http"
	"reflect"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"

	"github.com/thermalmovement/service/internal/materials"
	"github.com/thermalmovement/service/internal/units"
)

// Options configure the handlers.
type Options struct {
	Version      string       // service version reported in every response
	Commit       string       // source revision, for the build-info metric
	MaxBodyBytes int64        // cap of a calculation's JSON body
	Metrics      http.Handler // serves /metrics when set (nil when metrics listen elsewhere)
	// APIKeys, when not nil, are the accepted keys (see auth.go).
	APIKeys *APIKeys
	// MaxInFlight bounds the requests served at once; beyond it the
	// service answers 503 with Retry-After. 0: no bound.
	MaxInFlight int
	// MaxURLBytes bounds the request URI; longer ones get 414. 0: 8 KiB.
	MaxURLBytes int
	// BatchMaxRows and BatchMaxBytes bound one batch request.
	BatchMaxRows  int
	BatchMaxBytes int64
	// AnswerCacheBytes bounds the memory of the cache of calculation
	// answers (answers.go). 0: no cache.
	AnswerCacheBytes int64
}

// Handler holds what every request needs. Build it with New.
type Handler struct {
	log     *zap.Logger
	cat     *materials.Catalogue
	opts    Options
	metrics *metrics
	ready   atomic.Bool
	// inFlight counts the requests being served, for shed.
	inFlight atomic.Int64
	// unitCache reads the quantities of every request and batch row.
	unitCache units.Cache
	// answers keeps whole answers of calculation GETs; nil: none.
	answers *answers
}

// New returns the handlers, registering their metrics on reg.
func New(log *zap.Logger, reg prometheus.Registerer, cat *materials.Catalogue, opts Options) (*Handler, error) {
	if opts.MaxBodyBytes <= 0 {
		opts.MaxBodyBytes = 64 << 10
	}
	if opts.MaxURLBytes <= 0 {
		opts.MaxURLBytes = 8 << 10
	}
	answers := newAnswers(opts.AnswerCacheBytes)
	m, err := newMetrics(reg, opts, cat.Version, answers)
	if err != nil {
		return nil, err
	}
	h := &Handler{log: log, cat: cat, opts: opts, metrics: m, answers: answers}
	h.ready.Store(true)
	return h, nil
}

// Drain marks the service as draining: /readyz answers 503 from now on,
// while requests are still served.
func (h *Handler) Drain() { h.ready.Store(false) }

// route is one registered path.
type route struct {
	method, path string
	handler      gin.HandlerFunc
}

// Router returns the gin engine with every route and the middleware.
func (h *Handler) Router() *gin.Engine {
	gin.SetMode(gin.ReleaseMode)
	r := gin.New()
	r.HandleMethodNotAllowed = true
	r.RedirectTrailingSlash = false
	r.RedirectFixedPath = false
	r.Use(h.requestID, h.observe, h.recover, h.limitURL, h.shed, h.auth, h.cache)
	for _, rt := range h.routes() {
		r.Handle(rt.method, rt.path, rt.handler)
		if rt.method == http.MethodGet && hasHead(rt.path) {
			// HEAD is GET without the content (RFC 9110 9.3.2): net/http
			// drops the body the handler writes.
			r.Handle(http.MethodHead, rt.path, rt.handler)
		}
	}
	r.NoRoute(func(c *gin.Context) {
		h.problem(c, nil, newError(errNotFound, "no route "+c.Request.Method+" "+safePath(c.Request.URL.Path)+"; GET /openapi.yaml lists the routes"))
	})
	r.NoMethod(func(c *gin.Context) {
		c.Header("Allow", allowed(c.Request.URL.Path))
		h.problem(c, nil, newError(errMethod, "method "+c.Request.Method+" is not allowed here"))
	})
	return r
}

// hasHead reports whether the GET route at path answers HEAD too: all do
// but the interactive page, whose file server answers GET only.
func hasHead(path string) bool { return !strings.HasPrefix(path, "/docs") }

// Routes lists every registered method and path template, for tests that
// compare them with the OpenAPI file. The HEAD twins of the GET routes
// are not listed.
func (h *Handler) Routes() [][2]string {
	var out [][2]string
	for _, rt := range h.routes() {
		out = append(out, [2]string{rt.method, rt.path})
	}
	return out
}

func (h *Handler) routes() []route {
	rs := []route{
		{http.MethodGet, "/healthz", h.healthz},
		{http.MethodGet, "/readyz", h.readyz},
		{http.MethodGet, "/openapi.yaml", h.openapi},
		{http.MethodGet, "/docs", h.docsRedirect},
		{http.MethodGet, "/docs/*any", h.docs},
		{http.MethodGet, "/problems/:type", h.problemType},
		{http.MethodGet, "/v1/materials", h.listMaterials},
		{http.MethodGet, "/v1/materials/:id", h.getMaterial},
		{http.MethodGet, "/v1/units", h.listUnits},
	}
	if h.opts.Metrics != nil {
		rs = append(rs, route{http.MethodGet, "/metrics", gin.WrapH(h.opts.Metrics)})
	}
	for _, c := range h.calculations() {
		hf := h.calculation(c)
		rs = append(rs, route{http.MethodGet, "/v1/" + c.name, hf}, route{http.MethodPost, "/v1/" + c.name, hf})
	}
	rs = append(rs, h.batchRoutes()...)
	return rs
}

// calcSpec describes one calculation endpoint.
type calcSpec struct {
	name    string // path below /v1/, and the "calculation" of the response
	results any    // a nil pointer to the results struct
	fn      func(p *params) (*Response, error)
	formats []string // formats beyond json, text, csv, xml
}

// calculations lists every calculation endpoint; each feature adds its own.
func (h *Handler) calculations() []calcSpec {
	var cs []calcSpec
	cs = append(cs, h.expansionCalcs()...)
	cs = append(cs, h.differentialCalcs()...)
	cs = append(cs, h.jointCalcs()...)
	return cs
}

// exchange is the scratch space of one calculation request: the
// parameters, the output options and the response buffer. Exchanges are
// reused through a pool, so that a request allocates little; nothing of
// one outlives its request.
type exchange struct {
	vals, body map[string]raw
	p          params
	out        outputOptions
	items      []resultItem
	buf        []byte
}

var exchanges = sync.Pool{New: func() any {
	return &exchange{vals: make(map[string]raw, 8), body: make(map[string]raw, 8), buf: make([]byte, 0, 2048)}
}}

// release returns x to the pool, forgetting the request's data.
func (x *exchange) release() {
	clear(x.vals)
	clear(x.body)
	clear(x.items)
	x.p, x.out, x.items = params{}, outputOptions{}, x.items[:0]
	if cap(x.buf) <= 64<<10 { // a rare huge answer is not kept
		exchanges.Put(x)
	}
}

// calculation is the wrapper around every calculation: it reads the
// parameters, calls the calculation, converts results to their output
// units and writes the response in the format asked for.
//
// Faults met before the calculation reads its parameters (in the query
// string, in the members of a JSON body) do not end the request there:
// they are recorded in the parameters first, so that the calculation's
// own reading names the other bad fields too and, with a fault recorded,
// computes nothing; the one problem then names them all. Only a body that
// is not a JSON object at all is refused at once.
func (h *Handler) calculation(spec calcSpec) gin.HandlerFunc {
	fields := fieldsOf(reflect.TypeOf(spec.results))
	var checks []string
	if cn, ok := spec.results.(checkNamer); ok {
		checks = cn.checkNames()
	}
	return func(c *gin.Context) {
		query := c.Request.URL.RawQuery
		get := h.answers != nil && c.Request.Method != http.MethodPost
		key := answerKey{spec.name, query}
		if get {
			if a, ok := h.answers.get(key); ok {
				h.metrics.answerHits.Inc()
				c.Writer.Header()["Cache-Status"] = cacheStatusHit
				send(c, http.StatusOK, a.contentType, a.body)
				return
			}
		}
		x := exchanges.Get().(*exchange)
		defer x.release()
		vals, p, out := x.vals, &x.p, &x.out
		faults := readQuery(query, vals)
		queryFaults := len(faults)
		if c.Request.Method == http.MethodPost {
			bodyFaults, err := readJSON(c.Request, h.opts.MaxBodyBytes, x.body)
			if err != nil {
				// Nothing of the body is read; the query still says how
				// the error is answered.
				p.reset(vals, h.cat, &h.unitCache)
				readOutput(out, p, fields, checks, spec.formats...)
				honourInline(out, query, faults)
				err = bodyError(err.(*errBody), faults)
				h.metrics.calcError(spec.name, err)
				h.problem(c, out, err)
				return
			}
			faults = mergeBody(vals, x.body, append(faults, bodyFaults...))
		}
		p.reset(vals, h.cat, &h.unitCache)
		for _, f := range faults {
			p.invalid(f.Parameter, f.Detail)
		}
		readOutput(out, p, fields, checks, spec.formats...)
		honourInline(out, query, faults[:queryFaults])
		resp, err := spec.fn(p)
		if len(faults) > 0 {
			err = withFaults(err, faults, vals)
		}
		if err != nil {
			h.metrics.calcError(spec.name, err)
			h.problem(c, out, err)
			return
		}
		items, ok := out.convert(resp.Results, x.items[:0])
		x.items = items
		if !ok {
			err := notFinite(resp, out, p)
			h.metrics.calcError(spec.name, err)
			h.problem(c, out, err)
			return
		}
		h.complete(resp, spec.name, p)
		body, ct, buf, err := h.encode(out, resp, items, x.buf[:0])
		x.buf = buf
		if err != nil {
			h.problem(c, out, err)
			return
		}
		if get {
			h.metrics.answerMisses.Inc()
			status := cacheStatusMiss
			if h.answers.put(key, ct, body) {
				status = cacheStatusStored
			}
			c.Writer.Header()["Cache-Status"] = status
		}
		send(c, http.StatusOK, ct, body)
	}
}

// mergeBody adds the members of a JSON body to the query's parameters
// in vals, and returns faults with one more for each parameter given in
// both (the query's value is kept).
func mergeBody(vals, body map[string]raw, faults []FieldError) []FieldError {
	var both []string
	for k, v := range body {
		if _, dup := vals[k]; dup {
			both = append(both, k)
			continue
		}
		vals[k] = v
	}
	sort.Strings(both)
	for _, k := range both {
		faults = append(faults, FieldError{Parameter: k, Detail: "given in both the query and the body"})
	}
	return faults
}

// bodyError is the problem of a body that is not a JSON object of
// parameters, naming the faults of the query too.
func bodyError(eb *errBody, queryFaults []FieldError) error {
	if len(queryFaults) == 0 {
		return newError(eb.kind, eb.msg)
	}
	return newError(eb.kind, eb.msg+"; "+joinFields(queryFaults), queryFaults...)
}

// withFaults joins the faults met before the calculation read its
// parameters to err, the calculation's answer, into one error; it is
// never nil, so that a request with a fault is never answered 200. The
// faults are unreadable input, which decides the status. The
// calculation's own complaint about a parameter whose value could not be
// read at all (a rawInvalid placeholder) is left out: the fault already
// says what is wrong with it.
func withFaults(err error, faults []FieldError, vals map[string]raw) error {
	var ae *apiError
	if err != nil && !errors.As(err, &ae) {
		return err // a defect stays one, to be logged
	}
	all := faults
	extra := ""
	if ae != nil {
		all = slices.Clip(faults)
		for _, f := range ae.fields {
			if !slices.Contains(faults, f) && vals[f.Parameter].kind != rawInvalid {
				all = append(all, f)
			}
		}
		if len(ae.fields) == 0 {
			extra = "; " + ae.detail
		}
	}
	return newError(errInvalid, joinFields(all)+extra, all...)
}

// honourInline keeps on_error=inline, as read into out, only where the
// query that asked for it could be read: when the query had faults, its
// decoded values do not decide, and the raw query must hold the pair
// "on_error=inline" itself, with no other on_error pair and no fault of
// on_error.
func honourInline(out *outputOptions, query string, queryFaults []FieldError) {
	if !out.inline || len(queryFaults) == 0 {
		return
	}
	out.inline = inlineLiteral(query) && !slices.ContainsFunc(queryFaults, func(f FieldError) bool { return f.Parameter == "on_error" })
}

// inlineLiteral reports whether the raw query holds the pair
// "on_error=inline", as such, and no other pair named on_error.
func inlineLiteral(query string) bool {
	found := false
	for query != "" {
		var pair string
		pair, query, _ = strings.Cut(query, "&")
		switch name, _, _ := strings.Cut(pair, "="); {
		case pair == "on_error=inline":
			found = true
		case name == "on_error":
			return false
		}
	}
	return found
}

// notFinite is the error of a response with a result that is not a
// finite number in its output unit. It says which result, and names
// every input read, since any one of them, with the others, may be the
// extreme one.
func notFinite(resp *Response, out *outputOptions, p *params) error {
	detail := "the inputs lead to a result that is not a finite number; check them for extreme values"
	leads := "leads to a result that is not a finite number"
	if name := firstNotFinite(resp.Results, out); name != "" {
		detail = "the inputs lead to a result, " + name + ", that is not a finite number; check them for extreme values"
		leads = "leads to a result (" + name + ") that is not a finite number"
	}
	var fs []FieldError
	for _, n := range p.used {
		if !isControl(n) {
			fs = append(fs, FieldError{Parameter: n, Detail: "with the other inputs " + leads + ": check for extreme values"})
		}
	}
	return newError(errUnprocessable, detail, fs...)
}

// firstNotFinite returns the name of the first result of res that is not
// a finite number in its output unit, or "".
func firstNotFinite(res any, out *outputOptions) string {
	v := reflect.ValueOf(res).Elem()
	for _, f := range fieldsOf(v.Type()) {
		r := v.Field(f.index).Interface().(*Value)
		if r != nil && !finite(f.kind.Value(r.si, out.unitFor(f))) {
			return f.name
		}
	}
	return ""
}

// complete fills the parts of a response every calculation shares.
func (h *Handler) complete(resp *Response, name string, p *params) {
	resp.Calculation = name
	resp.Inputs = p.inputs
	resp.Versions = Versions{Service: h.opts.Version, Materials: h.cat.Version}
	resp.Cautions = append(standingCautions[:len(standingCautions):len(standingCautions)], resp.Cautions...)
	if resp.References == nil {
		resp.References = []string{}
	}
	resp.Warnings = inputWarnings(p, resp.Warnings)
	if resp.Warnings == nil {
		resp.Warnings = []string{}
	}
}

// inputWarnings puts the concerns of the inputs themselves (p.warnings)
// before the calculation's own warnings.
func inputWarnings(p *params, own []string) []string {
	if len(p.warnings) == 0 {
		return own
	}
	return append(p.warnings[:len(p.warnings):len(p.warnings)], own...)
}

// standingCautions go with every calculation.
var standingCautions = []string{
	"Preliminary engineering calculation: check it before relying on it.",
	"Design temperatures, coefficients and capacities must come from the governing local codes and the project's specifications.",
	"A licensed engineer checks the design before anything is built.",
}

// checked is implemented by results that carry pass/fail checks, so that
// the csv and xml formats show them too.
type checked interface{ checkList() []Check }

func checksOf(res any) []Check {
	if c, ok := res.(checked); ok {
		return c.checkList()
	}
	return nil
}

// renderer is implemented by results that have formats of their own, such
// as a table's CSV or a chart. render returns a nil body to fall back to
// the generic formats.
type renderer interface {
	render(out *outputOptions, resp *Response) (body []byte, contentType string, err error)
}

// encode writes the answer in the format asked for and returns it with
// its content type; buf is a buffer to write JSON into, returned for
// reuse (body may be part of it).
func (h *Handler) encode(out *outputOptions, resp *Response, items []resultItem, buf []byte) (body []byte, contentType string, _ []byte, err error) {
	if r, ok := resp.Results.(renderer); ok {
		body, ct, err := r.render(out, resp)
		if err != nil || body != nil {
			return body, ct, buf, err
		}
	}
	switch out.format {
	case "text":
		body = textBody(items, checksOf(resp.Results), out.result)
		if body == nil {
			return nil, "", buf, newError(errUnprocessable, "result "+out.result+" is not computed for these inputs",
				FieldError{Parameter: "result", Detail: "not computed for these inputs"})
		}
	case "csv":
		body = csvBody(items, checksOf(resp.Results), resp.Warnings, resp.Cautions)
	case "xml":
		body = xmlBody(resp.Calculation, items, checksOf(resp.Results), resp.Warnings, resp.Cautions)
	default:
		if typeOf(reflect.TypeOf(resp.Results)).valuesOnly {
			buf = appendResponse(buf, resp, items)
			body = buf
			break
		}
		if body, err = json.Marshal(resp); err != nil {
			return nil, "", buf, err
		}
	}
	return body, contentTypes[out.format], buf, nil
}

// send writes a whole answer: the status, the Content-Type, and the
// body. Content-Length is set here only for a body over 1 KiB: net/http
// adds it itself to a smaller answer, which its buffer holds until the
// handler returns (the ResponseWriter documentation). It is gin's c.Data
// without the header values that call allocates each time.
func send(c *gin.Context, status int, contentType string, body []byte) {
	hd := c.Writer.Header()
	hd["Content-Type"] = contentTypeHeader(contentType)
	if len(body) > 1<<10 {
		hd["Content-Length"] = []string{strconv.Itoa(len(body))}
	}
	c.Status(status)
	_, _ = c.Writer.Write(body)
}

// sendJSON writes v as JSON, as gin's c.JSON does (encoding/json), with
// its length declared.
func sendJSON(c *gin.Context, status int, v any) {
	body, err := json.Marshal(v)
	if err != nil {
		panic(err) // the recovery middleware answers 500; only our own types come here
	}
	send(c, status, contentTypes["json"], body)
}

// contentTypeHeaders are the Content-Type header values the service
// sends, each made once. They are shared by every response: the header
// map is only ever given a new value, never changed in place.
var contentTypeHeaders = func() map[string][]string {
	m := map[string][]string{problemContentType: {problemContentType}, yamlContentType: {yamlContentType}}
	for _, ct := range contentTypes {
		m[ct] = []string{ct}
	}
	return m
}()

func contentTypeHeader(ct string) []string {
	if v, ok := contentTypeHeaders[ct]; ok {
		return v
	}
	return []string{ct}
}

const (
	problemContentType = "application/problem+json"
	yamlContentType    = "application/yaml; charset=utf-8"
)

// problem writes err as RFC 9457 problem+json, or, where the caller asked
// on_error=inline for a text, csv or xml answer, as a 200 "#ERROR:" line
// that a spreadsheet cell can show.
func (h *Handler) problem(c *gin.Context, out *outputOptions, err error) {
	pr := problemOf(err, safePath(c.Request.URL.Path))
	pr.RequestID = c.Writer.Header().Get(requestIDHeader)
	c.Set(problemKey, pr.Type)
	if pr.Status == http.StatusInternalServerError {
		h.log.Error("unexpected error", zap.Error(err), zap.String("request_id", pr.RequestID))
	}
	if out != nil && out.inline && out.format != "json" {
		send(c, http.StatusOK, contentTypes["text"], []byte("#ERROR: "+pr.Detail))
		return
	}
	body, _ := json.Marshal(pr)
	c.Header("Cache-Control", "no-store")
	if pr.Status == http.StatusUnsupportedMediaType && unsupportedCoding(c.Request.Header) != "" {
		c.Header("Accept-Encoding", "identity") // RFC 9110 12.5.3: the codings accepted
	}
	send(c, pr.Status, problemContentType, body)
	c.Abort()
}
