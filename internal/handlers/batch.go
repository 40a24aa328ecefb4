package handlers

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"io"
	"mime"
	"net/http"
	"reflect"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/gin-gonic/gin"
	"go.uber.org/zap"
	"go.yaml.in/yaml/v3"

	"github.com/thermalmovement/service/api"
	"github.com/thermalmovement/service/internal/units"
)

// Defaults of the batch limits when Options leaves them zero (the same as
// the flags' defaults of cmd/api).
const (
	defaultBatchMaxRows  = 100000
	defaultBatchMaxBytes = 32 << 20
)

const (
	// batchHoldBack is how much output is held before the status line is
	// sent. Up to then a limit reached is answered with a 413 problem;
	// after it only in-band (see batch).
	batchHoldBack = 64 << 10
	// batchFlushRows is how many rows are read, computed (by one worker)
	// and written together; after each such chunk, output already sent is
	// pushed to the network.
	batchFlushRows = 512
	// batchStatusTrailer is the HTTP trailer that tells a program how the
	// batch ended.
	batchStatusTrailer = "Batch-Status"
)

// batchSpec is a calculation offered as a batch.
type batchSpec struct {
	calcSpec
	fields []resultField
	checks []string // the names of the checks its results can carry
}

// tabular is implemented by results that are a table per case (a joint's
// setting table): a batch row cannot hold one.
type tabular interface{ table() }

// checkNamer is implemented by results that carry checks: it lists every
// check name they can hold, the check columns of a batch.
type checkNamer interface{ checkNames() []string }

// batchRoutes lists POST /v1/batch/{calculation}: one route whose
// wildcard names any calculation that has result numbers.
func (h *Handler) batchRoutes() []route {
	specs, tables := map[string]batchSpec{}, map[string]bool{}
	for _, c := range h.calculations() {
		fields := fieldsOf(reflect.TypeOf(c.results))
		if _, isTable := c.results.(tabular); isTable || len(fields) == 0 {
			tables[c.name] = true // a table or a chart per case: nothing to put in a row
			continue
		}
		spec := batchSpec{calcSpec: c, fields: fields}
		if cn, ok := c.results.(checkNamer); ok {
			spec.checks = cn.checkNames()
		}
		specs[c.name] = spec
	}
	return []route{{http.MethodPost, "/v1/batch/*calculation", h.batch(specs, tables)}}
}

// batch godoc
//
//	@Summary		Many cases of one calculation: CSV or a JSON array in, the same form out
//	@Description	Runs the calculation named in the path (any calculation endpoint below /v1/ but the setting table joints/gap/schedule, which answers a table per case: e.g. expansion/linear, expansion/area, expansion/volume, restraint, joints/gap) once per row, exactly as a single request would.
//	@Description	In: text/csv with a header row of parameter names and one case a row (an empty cell leaves the parameter out; a UTF-8 byte-order mark is allowed), or application/json with an array of request objects (the members of a single POST).
//	@Description	Parameters in the query string (other than the output options) apply to every row; a row that gives one too is an error of that row.
//	@Description	Out: CSV or JSON as format= asks, else as Accept asks (text/csv or application/json), else the form of the body. Each row has every input column as sent, then every result column with its unit in the name (`delta_length [mm]`; units by units= and <result>_unit=, empty or null where a result is not computed for the row), then for joints/gap a check_<name> column per check (pass, fail, or empty where the row has no such check), then `warnings`, `cautions` (each caution once, in the first row it applies to; the standing ones in the first row) and `error` (empty where the row computed). A JSON answer is an array of flat objects with exactly these keys, a table like the CSV. With a JSON body and a CSV answer the columns are the members of the first element.
//	@Description	Columns (or members) named id, ref, label, name, note, notes, comment or description (any case), or beginning with "#", label the rows: they are echoed and never read.
//	@Description	One bad row never fails the batch: its error column says what is wrong, in the words of the single request's problem detail. A CSV header column or query parameter the calculation does not take is a 400 problem naming it, since every row would be refused for it (named by the first row that reaches the calculation; a parameter this document declares for the calculation is never one).
//	@Description	Limits: rows (--batch-max-rows, default 100000) and body bytes (--batch-max-bytes, default 32 MiB). The answer streams: rows are computed and sent as they are read, so memory stays flat. A limit reached before 64 KiB of answer is ready is a 413 problem; after that the status line has been sent, so the answer ends with one more row whose error begins "batch stopped after row N:" and whose other cells are empty, and the trailer Batch-Status says "stopped after row N: ..." (else "complete: N rows"). A body whose Content-Length is over the byte limit is refused with 413 at once.
//	@Description	Demo example: three bays of a warehouse slab, `length,material,t_initial,t_final` / `30 m,concrete,15 degC,-10 degC` / ...
//	@Tags			batch
//	@Accept			text/csv,json
//	@Produce		text/csv,json
//	@Param			calculation	path		string	true	"the calculation, e.g. expansion/linear"
//	@Param			format		query		string	false	"csv or json (default: as Accept asks, else the form of the body)"	Enums(csv, json)
//	@Param			units		query		string	false	"si (default) or us"	Enums(si, us)
//	@Param			body		body		string	true	"CSV with a header row of parameter names, or a JSON array of request objects"
//	@Success		200			{string}	string	"the rows: inputs, results, checks, warnings, cautions, error"
//	@Failure		400			{object}	Problem
//	@Failure		404			{object}	Problem
//	@Failure		413			{object}	Problem
//	@Failure		415			{object}	Problem
//	@Router			/v1/batch/{calculation} [post]
func (h *Handler) batch(specs map[string]batchSpec, tables map[string]bool) gin.HandlerFunc {
	names := make([]string, 0, len(specs))
	for n := range specs {
		names = append(names, n)
	}
	sort.Strings(names)
	return func(c *gin.Context) {
		name := strings.TrimPrefix(c.Param("calculation"), "/")
		spec, ok := specs[name]
		if !ok {
			msg := "no batch calculation " + strconv.QuoteToASCII(name) + "; batches: " + strings.Join(names, ", ")
			if tables[name] {
				msg = name + " answers a table per case, which a batch row cannot hold: batch " + strings.TrimSuffix(name, "/schedule") + " with one row per installation temperature instead"
			}
			h.problem(c, nil, newError(errNotFound, msg))
			return
		}
		run, err := h.newBatchRun(c, spec)
		if err != nil {
			h.problem(c, nil, err)
			return
		}
		run.serve()
	}
}

// batchRun is one batch request being served.
type batchRun struct {
	h       *Handler
	c       *gin.Context
	spec    batchSpec
	out     *outputOptions
	shared  map[string]raw // query parameters applied to every row
	inCSV   bool
	outCSV  bool
	maxRows int
	body    io.Reader
	// maxBytes is the body limit.
	maxBytes int64

	sink      *batchSink
	bw        *bufio.Writer
	w         batchWriter
	rows      int             // rows read
	requestID string          // for the log of a failing row
	carried   map[string]bool // cautions already written, by the writer (fresh)
}

// newBatchRun reads everything that decides the answer before a byte of
// the body is read: the query, the content types and the limits.
func (h *Handler) newBatchRun(c *gin.Context, spec batchSpec) (*batchRun, error) {
	vals := make(map[string]raw, 8)
	if errs := readQuery(c.Request.URL.RawQuery, vals); len(errs) > 0 {
		return nil, newError(errInvalid, "invalid query string", errs...)
	}
	qp := newParams(vals, h.cat, &h.unitCache)
	for _, n := range []string{"result", "on_error"} {
		if qp.has(n) {
			qp.take(n)
			qp.invalid(n, "not used by a batch: every result is a column, and errors go in the error column")
			delete(vals, n) // one problem with it is enough: readOutput must not read it again
		}
	}
	out := new(outputOptions)
	readOutput(out, qp, spec.fields, nil)
	format := ""
	if qp.has("format") {
		switch out.format {
		case "csv", "json":
			format = out.format
		default:
			if f := vals["format"].str; f == "text" || f == "xml" {
				qp.invalid("format", strconv.Quote(f)+": a batch answers csv or json")
			}
		}
	}
	if err := fieldsError(qp.errs); err != nil {
		return nil, err
	}
	shared := map[string]raw{}
	for k, v := range vals {
		if !qp.isUsed(k) && k != apiKeyParam {
			shared[k] = v
		}
	}

	inCSV, err := batchContentType(c.GetHeader("Content-Type"))
	if err != nil {
		return nil, err
	}
	if msg := unsupportedCoding(c.Request.Header); msg != "" {
		return nil, newError(errMediaType, msg)
	}
	outCSV := inCSV
	switch format {
	case "csv":
		outCSV = true
	case "json":
		outCSV = false
	default:
		if a, ok := acceptedForm(c.GetHeader("Accept")); ok {
			outCSV = a
		}
	}

	maxRows, maxBytes := h.opts.BatchMaxRows, h.opts.BatchMaxBytes
	if maxRows <= 0 {
		maxRows = defaultBatchMaxRows
	}
	if maxBytes <= 0 {
		maxBytes = defaultBatchMaxBytes
	}
	if c.Request.ContentLength > maxBytes {
		return nil, newError(errTooLarge, "batch body of "+strconv.FormatInt(c.Request.ContentLength, 10)+" bytes is over the limit of "+strconv.FormatInt(maxBytes, 10)+" bytes; split it")
	}
	// Rows are read while the answer is written: HTTP/1 servers must be
	// told, or they drain the body before the first byte is sent.
	_ = http.NewResponseController(c.Writer).EnableFullDuplex()

	out.format = "csv"
	if !outCSV {
		out.format = "json"
	}
	r := &batchRun{
		h: h, c: c, spec: spec, out: out, shared: shared,
		inCSV: inCSV, outCSV: outCSV, maxRows: maxRows,
		body:      &limitedBody{r: c.Request.Body, left: maxBytes, limit: maxBytes},
		maxBytes:  maxBytes,
		requestID: c.Writer.Header().Get(requestIDHeader),
	}
	r.sink = &batchSink{c: c, contentType: contentTypes[out.format]}
	r.bw = bufio.NewWriterSize(r.sink, batchHoldBack)
	return r, nil
}

// batchContentType reports whether a batch body is CSV (else JSON).
func batchContentType(ct string) (csvBody bool, err error) {
	refuse := func() error {
		return newError(errMediaType, "a batch body is text/csv (a header row of parameter names, one case a row) or application/json (an array of request objects), not "+strconv.QuoteToASCII(ct))
	}
	if ct == "" {
		return false, refuse()
	}
	mt, ps, perr := mime.ParseMediaType(ct)
	if perr != nil {
		return false, refuse()
	}
	if cs, ok := ps["charset"]; ok && !strings.EqualFold(cs, "utf-8") {
		return false, newError(errMediaType, "a batch body must be UTF-8, not "+strconv.QuoteToASCII(cs))
	}
	switch mt {
	case "text/csv", "application/csv":
		return true, nil
	case "application/json":
		return false, nil
	}
	return false, refuse()
}

// acceptedForm reads an Accept header: true for CSV, false for JSON, ok
// false when it names neither (or both equally, or anything).
func acceptedForm(accept string) (csvForm, ok bool) {
	bestQ, best := -1.0, ""
	for _, part := range strings.Split(accept, ",") {
		mt, ps, err := mime.ParseMediaType(strings.TrimSpace(part))
		if err != nil {
			continue
		}
		q := 1.0
		if s, has := ps["q"]; has {
			if v, err := strconv.ParseFloat(s, 64); err == nil {
				q = v
			}
		}
		if (mt == "text/csv" || mt == "application/json") && q > bestQ && q > 0 {
			bestQ, best = q, mt
		}
	}
	if best == "" {
		return false, false
	}
	return best == "text/csv", true
}

// limitedBody caps the body like http.MaxBytesReader, reporting the
// overflow as a *bodyTooLarge.
type limitedBody struct {
	r     io.Reader
	left  int64
	limit int64
}

// bodyTooLarge is the error of a batch body over its limit.
type bodyTooLarge struct{ limit int64 }

func (e *bodyTooLarge) Error() string {
	return "body over the limit of " + strconv.FormatInt(e.limit, 10) + " bytes; split the batch"
}

func (b *limitedBody) Read(p []byte) (int, error) {
	if b.left <= 0 {
		// One byte more tells a body of exactly the limit from a longer one.
		var one [1]byte
		n, err := b.r.Read(one[:])
		if n > 0 {
			return 0, &bodyTooLarge{b.limit}
		}
		return 0, err
	}
	if int64(len(p)) > b.left {
		p = p[:b.left]
	}
	n, err := b.r.Read(p)
	b.left -= int64(n)
	return n, err
}

// batchSink sends the status line and headers on the first write.
type batchSink struct {
	c           *gin.Context
	contentType string
	committed   bool
}

func (s *batchSink) Write(b []byte) (int, error) {
	if !s.committed {
		s.committed = true
		hd := s.c.Writer.Header()
		hd.Set("Content-Type", s.contentType)
		hd.Set("Cache-Control", "no-store")
		hd.Set("Trailer", batchStatusTrailer)
		s.c.Writer.WriteHeader(http.StatusOK)
	}
	return s.c.Writer.Write(b)
}

// batchRow is one case: its parameters in the order sent, and an error
// found while reading it.
type batchRow struct {
	names  []string
	vals   map[string]raw
	faults []FieldError // members of a JSON element whose value is not a parameter's
	err    string
}

// batchReader yields rows; io.EOF ends them, and any other error stops
// the batch (the body cannot be read on).
type batchReader interface {
	// columns are the input columns known before the first row (a CSV
	// header); nil for JSON.
	columns() []string
	// next fills row, which is empty, with the next row.
	next(row *batchRow) error
}

// batchWriter writes rows in one form.
type batchWriter interface {
	header(inputs []string, results []string) error
	row(c *computed) error
	stop(msg string) error
	end() error
}

// stopError ends a batch early, with its reason.
type stopError struct {
	kind errKind
	msg  string
}

func (e *stopError) Error() string { return e.msg }

func (r *batchRun) serve() {
	var rd batchReader
	var err error
	if r.inCSV {
		rd, err = newCSVReader(r.body, r.shared, r.spec.fields)
	} else {
		rd, err = newJSONReader(r.body)
	}
	if err != nil {
		r.h.problem(r.c, nil, err)
		return
	}
	results := make([]string, len(r.spec.fields), len(r.spec.fields)+len(r.spec.checks))
	for i, f := range r.spec.fields {
		results[i] = f.name + " [" + r.out.unitFor(f).Symbol + "]"
	}
	for _, n := range r.spec.checks {
		results = append(results, "check_"+n)
	}
	if r.outCSV {
		r.w = &csvRowWriter{w: r.bw, fields: r.spec.fields, checks: r.spec.checks}
	} else {
		jw := &jsonRowWriter{w: r.bw, results: results, fields: r.spec.fields, checks: r.spec.checks}
		if r.inCSV {
			jw.fixed = []string{}
		}
		r.w = jw
	}

	// Three stages overlap: a goroutine reads chunks of rows, workers (one
	// per core) compute a chunk each, and this goroutine writes the chunks
	// in the order read, each once its worker is done. No chunk waits for
	// another to be computed, and at most len(order) chunks are in flight,
	// so memory does not grow with the rows. A stop (unreadable body, row
	// limit) ends the batch after the rows read before it.
	quit := make(chan struct{})
	workers := min(runtime.GOMAXPROCS(0), 4)
	work := make(chan *batchChunk, workers)
	order := make(chan *batchChunk, workers+1)
	var wg sync.WaitGroup
	wg.Add(1 + workers)
	go func() {
		defer wg.Done()
		defer close(work)
		defer close(order)
		r.read(rd, rd.columns(), order, work, quit)
	}()
	for range workers {
		go func() {
			defer wg.Done()
			var p params // one per worker, reset for each row
			for ch := range work {
				for i := range ch.rows {
					r.compute(&ch.rows[i], ch.inputs, &p)
				}
				close(ch.computed)
			}
		}()
	}
	defer wg.Wait() // no stage outlives the handler
	defer close(quit)

	first := true
	for ch := range order {
		select {
		case <-ch.computed:
		case <-quit:
			return
		}
		if len(ch.rows) == 0 {
			r.finish(ch.inputs, results, first, ch.stop)
			return
		}
		if first {
			if err := r.unknownInputs(ch); err != nil {
				r.h.problem(r.c, nil, err)
				r.c.Writer.Flush() // final: the client may stop sending
				return
			}
			if err := r.w.header(ch.inputs, results); err != nil {
				return
			}
			first = false
		}
		for i := range ch.rows {
			ch.rows[i].notes = r.fresh(ch.rows[i].cautions)
			if err := r.w.row(&ch.rows[i]); err != nil {
				return // the client went away
			}
		}
		if r.sink.committed {
			if r.flush() != nil {
				return
			}
		}
		if ch.last {
			r.finish(ch.inputs, results, false, ch.stop)
			return
		}
		chunks.Put(ch)
	}
}

// batchChunk is a run of rows read together, with the input columns
// known when it was read and, on the last chunk, why the batch ended.
type batchChunk struct {
	rows     []computed
	inputs   []string
	last     bool          // no chunk follows
	stop     error         // the batch stopped early after these rows; nil at the end of the body
	computed chan struct{} // closed when every row is computed
}

// chunks keeps chunks written before, with their rows, so that batches
// allocate rows, their maps and their results once, not once per row. A
// pooled row still holds the strings of its last batch until it is reused
// (grow empties it) or the pool is dropped at a garbage collection.
var chunks = sync.Pool{New: func() any { return &batchChunk{rows: make([]computed, 0, batchFlushRows)} }}

// emptyChunk returns a chunk to fill.
func emptyChunk() *batchChunk {
	ch := chunks.Get().(*batchChunk)
	ch.rows, ch.inputs = ch.rows[:0], nil
	ch.last, ch.stop = false, nil
	ch.computed = make(chan struct{})
	return ch
}

// grow adds an empty row to the chunk, reusing the one a recycled chunk
// had in its place, and returns it.
func (ch *batchChunk) grow() *computed {
	ch.rows = ch.rows[:len(ch.rows)+1]
	c := &ch.rows[len(ch.rows)-1]
	if c.row == nil {
		c.row = &batchRow{vals: make(map[string]raw, 8)}
	}
	c.row.reset()
	c.items, c.warnings, c.checks, c.cautions, c.notes, c.msg = c.items[:0], nil, nil, nil, "", ""
	return c
}

// reset empties a row for a reader to fill, keeping its map and names.
func (row *batchRow) reset() {
	if row.vals == nil {
		row.vals = make(map[string]raw, 8)
	}
	clear(row.vals)
	row.names, row.err, row.faults = row.names[:0], "", nil
}

// read reads the body in chunks of batchFlushRows rows and sends each to
// order (for the writer) and to work (for a worker), until the body ends,
// a stop, or quit.
func (r *batchRun) read(rd batchReader, inputs []string, order, work chan<- *batchChunk, quit <-chan struct{}) {
	for sent := false; ; sent = true {
		ch := emptyChunk()
		for len(ch.rows) < batchFlushRows {
			row := ch.grow().row
			err := rd.next(row)
			switch {
			case err == io.EOF:
				ch.last = true
			case err != nil:
				ch.last, ch.stop = true, err
			case r.rows == r.maxRows:
				ch.last, ch.stop = true, &stopError{errTooLarge, "over the limit of " + strconv.Itoa(r.maxRows) + " rows; split the batch"}
			default:
				r.rows++
			}
			if ch.last {
				ch.rows = ch.rows[:len(ch.rows)-1] // not a row of the answer
				break
			}
			if !sent && inputs == nil && row.err == "" {
				inputs = append([]string(nil), row.names...)
			}
		}
		ch.inputs = inputs
		for _, out := range [...]chan<- *batchChunk{order, work} {
			select {
			case out <- ch:
			case <-quit:
				return
			}
		}
		if ch.last {
			return
		}
	}
}

// computed is one row and its answer.
type computed struct {
	row      *batchRow
	items    []resultItem
	warnings []string
	checks   []Check
	cautions []string // the calculation's own, beyond the standing ones
	notes    string   // the cautions this row is the first to carry (see fresh)
	msg      string
	unknown  []string // parameters the row was refused for as unknown
}

// fresh returns the cautions that no earlier row of the answer carried,
// the standing ones first, and records them as carried. A batch holds each
// caution once, in the first row it applies to: the same 900 bytes on
// every row of 100,000 would bury the table. The writer calls it, row by
// row in order.
func (r *batchRun) fresh(cautions []string) string {
	var out []string
	if r.carried == nil {
		r.carried = map[string]bool{}
		out = append(out, standingCautions...)
	}
	for _, c := range cautions {
		if !r.carried[c] {
			r.carried[c] = true
			out = append(out, c)
		}
	}
	return strings.Join(out, " ")
}

// finish ends the answer: normally, or stopped by err. A stop before the
// status line was sent is a problem response; after it, a last row.
func (r *batchRun) finish(inputs, results []string, noHeader bool, err error) {
	var se *stopError
	if err != nil && !errors.As(err, &se) {
		se = &stopError{errInvalid, err.Error()}
	}
	if se != nil && !r.sink.committed {
		r.bw.Reset(io.Discard)
		r.h.problem(r.c, nil, newError(se.kind, "batch: "+se.msg))
		return
	}
	if noHeader {
		if r.w.header(inputs, results) != nil {
			return
		}
	}
	status := "complete: " + strconv.Itoa(r.rows) + " rows"
	if se != nil {
		status = "stopped after row " + strconv.Itoa(r.rows) + ": " + se.msg
		if r.w.stop("batch "+status+"; the rows after it were not read") != nil {
			return
		}
	}
	if r.w.end() != nil {
		return
	}
	if r.flush() != nil {
		return
	}
	r.c.Writer.Header().Set(batchStatusTrailer, status)
}

func (r *batchRun) flush() error {
	if err := r.bw.Flush(); err != nil {
		return err
	}
	r.c.Writer.Flush()
	return nil
}

// compute runs the calculation on one row, exactly as a single request
// runs it, and keeps in c its results in their output units, its warnings
// or its error message; p is the worker's parameter reader.
func (r *batchRun) compute(c *computed, columns []string, p *params) {
	c.warnings, c.checks, c.cautions, c.unknown = nil, nil, nil, nil
	c.msg = r.computeRow(c, columns, p)
}

// computeRow computes c's row into c.items and c.warnings and returns the
// row's error message, or "".
func (r *batchRun) computeRow(c *computed, columns []string, p *params) string {
	row := c.row
	if row.err != "" {
		return row.err
	}
	if len(row.names) == 0 {
		return "empty row"
	}
	if !r.inCSV { // a CSV header row was checked for these once, in newCSVReader
		for _, n := range row.names {
			if isOutput(n, r.spec.fields) {
				return "parameter " + strconv.Quote(n) + ": output options go in the query string of the batch, for every row"
			}
			if _, dup := r.shared[n]; dup {
				return "parameter " + strconv.Quote(n) + " given in both the query and the row"
			}
		}
		for _, n := range row.names {
			if r.outCSV && !contains(columns, n) {
				return "parameter " + strconv.Quote(n) + " is not a member of the first element, whose members are the columns of a CSV answer"
			}
		}
	}
	// The row's own map takes the shared parameters: it serves this row only.
	for k, v := range r.shared {
		row.vals[k] = v
	}
	p.reset(row.vals, r.h.cat, &r.h.unitCache)
	for _, n := range row.names {
		if isLabel(n) {
			p.markUsed(n) // echoed, never read
		}
	}
	// A row writes no method or references: they need not be built.
	p.brief = true
	for _, f := range row.faults { // as calculation does: nothing is computed
		p.invalid(f.Parameter, f.Detail)
	}
	resp, err := r.call(p)
	if len(row.faults) > 0 {
		err = withFaults(err, row.faults, row.vals)
	}
	if err != nil {
		c.unknown = unknownNames(err)
		return problemOf(err, "").Detail
	}
	items, ok := r.out.convert(resp.Results, c.items[:0])
	c.items = items
	if !ok {
		return problemOf(notFinite(resp, r.out, p), "").Detail // the words of the single request
	}
	c.warnings, c.checks, c.cautions = inputWarnings(p, resp.Warnings), checksOf(resp.Results), resp.Cautions
	return ""
}

// isLabel reports whether a column (or JSON member) of a batch labels its
// row rather than feeding the calculation: a name that begins with "#",
// or id, ref, label, name, note, notes, comment or description in any
// case. A label is echoed in the answer like every input and never read.
func isLabel(n string) bool {
	if strings.HasPrefix(n, "#") {
		return true
	}
	switch strings.ToLower(n) {
	case "id", "ref", "label", "name", "note", "notes", "comment", "description":
		return true
	}
	return false
}

// unknownNames returns the parameters err refuses as unknown.
func unknownNames(err error) []string {
	var ae *apiError
	if !errors.As(err, &ae) {
		return nil
	}
	var names []string
	for _, f := range ae.fields {
		if f.Detail == unknownParameter {
			names = append(names, f.Parameter)
		}
	}
	return names
}

// documented lists the query parameters api/openapi.yaml declares for each
// GET route: the inputs a calculation takes, whatever the values.
var documented = sync.OnceValue(func() map[string]map[string]bool {
	var doc struct {
		Paths map[string]struct {
			Get struct {
				Parameters []struct{ Name, In string }
			}
		}
	}
	out := map[string]map[string]bool{}
	if yaml.Unmarshal(api.Spec, &doc) != nil {
		return out // no list: the first row alone decides
	}
	for path, item := range doc.Paths {
		names := map[string]bool{}
		for _, p := range item.Get.Parameters {
			if p.In == "query" {
				names[p.Name] = true
			}
		}
		out[path] = names
	}
	return out
})

// unknownInputs is a 400 for the parameters every row carries, the CSV
// header's columns and the query's, that the calculation does not take:
// each row would be refused for them. The first row that reaches the
// calculation names them, and a name api/openapi.yaml declares for the
// calculation is never one (a row refused for a bad value may have stopped
// before reading it); nothing of the answer has been sent yet.
func (r *batchRun) unknownInputs(first *batchChunk) error {
	if r.sink.committed {
		return nil
	}
	i := slices.IndexFunc(first.rows, func(c computed) bool { return c.row.err == "" && len(c.row.names) > 0 })
	if i < 0 {
		return nil
	}
	var fs []FieldError
	declared := documented()["/v1/"+r.spec.name]
	for _, n := range first.rows[i].unknown {
		if declared[n] {
			continue
		}
		where := "query parameter"
		if _, shared := r.shared[n]; !shared {
			if !r.inCSV || !contains(first.inputs, n) {
				continue // one JSON element's member: that row's error
			}
			where = "column"
		}
		fs = append(fs, FieldError{Parameter: n, Detail: unknownParameter + " (a " + where + "): " + r.spec.name + " has no input of this name"})
	}
	if fs == nil {
		return nil
	}
	return newError(errInvalid, joinFields(fs)+"; every row would be refused", fs...)
}

// isOutput reports whether a name is an output option: format, units,
// result, on_error or the <result>_unit of one of fields.
func isOutput(n string, fields []resultField) bool {
	if !isControl(n) {
		return false
	}
	if !strings.HasSuffix(n, "_unit") {
		return true
	}
	return fieldByName(fields, strings.TrimSuffix(n, "_unit")) != nil
}

// call runs the calculation, turning a panic (a defect) into the error
// of its row so that the other rows are still answered.
func (r *batchRun) call(p *params) (resp *Response, err error) {
	defer func() {
		if v := recover(); v != nil {
			r.h.log.Error("panic in batch row", zap.Any("panic", v), zap.String("calculation", r.spec.name),
				zap.String("request_id", r.requestID))
			resp, err = nil, errors.New("panic")
		}
	}()
	resp, err = r.spec.fn(p)
	if err == nil && (resp == nil || resp.Results == nil) {
		err = errors.New("no results")
	}
	return resp, err
}

// csvReader reads a CSV batch: a header row of parameter names, then
// one case a row.
type csvReader struct {
	r      *csv.Reader
	header []string
	line   int
}

func newCSVReader(body io.Reader, shared map[string]raw, fields []resultField) (*csvReader, error) {
	r := csv.NewReader(body)
	r.FieldsPerRecord = -1
	r.ReuseRecord = true
	rec, err := r.Read()
	if err != nil {
		return nil, readError(err, "the header row")
	}
	if len(rec) == 1 && strings.Contains(rec[0], ";") {
		return nil, newError(errInvalid, "invalid CSV header row", FieldError{Parameter: "column 1",
			Detail: "the header row is one column holding \";\": separate the columns with commas (a spreadsheet in a locale with decimal commas may save CSV with semicolons)"})
	}
	header := make([]string, len(rec))
	var errs []FieldError
	seen := map[string]bool{}
	for i, h := range rec {
		if i == 0 {
			h = strings.TrimPrefix(h, "\ufeff")
		}
		h = strings.TrimSpace(h)
		header[i] = h
		col := "column " + strconv.Itoa(i+1)
		switch {
		case h == "":
			errs = append(errs, FieldError{Parameter: col, Detail: "has no name; the header row names a parameter in every column"})
		case !utf8.ValidString(h):
			errs = append(errs, FieldError{Parameter: col, Detail: "name is not valid UTF-8"})
		case seen[h]:
			errs = append(errs, FieldError{Parameter: h, Detail: "names two columns"})
		case isOutput(h, fields):
			errs = append(errs, FieldError{Parameter: h, Detail: "an output option: give it in the query string of the batch, for every row"})
		}
		if _, dup := shared[h]; dup && h != "" {
			errs = append(errs, FieldError{Parameter: h, Detail: "given in both the query and the header row"})
		}
		seen[h] = true
	}
	if len(errs) > 0 {
		return nil, newError(errInvalid, "invalid CSV header row", errs...)
	}
	return &csvReader{r: r, header: header, line: 1}, nil
}

// readError turns an error reading the body before the answer started
// into the error to answer.
func readError(err error, what string) error {
	var pe *csv.ParseError
	var tl *bodyTooLarge
	switch {
	case errors.As(err, &tl):
		return newError(errTooLarge, "batch: "+tl.Error())
	case err == io.EOF:
		return newError(errInvalid, "the body is empty: send "+what+" first")
	case errors.As(err, &pe):
		return newError(errInvalid, "CSV "+what+": "+pe.Err.Error())
	}
	return newError(errInvalid, "the body cannot be read")
}

func (r *csvReader) columns() []string { return r.header }

// csvStop interprets an error of the CSV reader: the end, a stop, or a
// malformed line, which becomes the row's error while the reader goes on.
func csvStop(err error, row *batchRow) error {
	var pe *csv.ParseError
	var tl *bodyTooLarge
	switch {
	case err == io.EOF:
		return io.EOF
	case errors.As(err, &tl):
		return &stopError{errTooLarge, tl.Error()}
	case errors.As(err, &pe) && pe.Line > pe.StartLine:
		// A quoted field ran over line ends: the lines it took (to the end
		// of the body, when its quote is never closed) are no rows of the
		// answer, so the batch cannot go on as if they were read.
		return &stopError{errInvalid, "CSV line " + strconv.Itoa(pe.StartLine) + ": " + pe.Err.Error() +
			"; a quoted field runs from that line to line " + strconv.Itoa(pe.Line) + ", so the lines between are no rows: check its quotes"}
	case errors.As(err, &pe):
		row.err = "CSV line " + strconv.Itoa(pe.StartLine) + ": " + pe.Err.Error()
		return nil
	}
	return &stopError{errInvalid, "the body cannot be read"}
}

func (r *csvReader) next(row *batchRow) error {
	rec, err := r.r.Read()
	if err != nil {
		return csvStop(err, row)
	}
	if len(rec) != len(r.header) {
		row.err = "row has " + strconv.Itoa(len(rec)) + " fields, the header row " + strconv.Itoa(len(r.header))
	}
	for i, cell := range rec {
		if i >= len(r.header) {
			break
		}
		v := strings.TrimSpace(cell)
		if v == "" {
			continue
		}
		if !utf8.ValidString(v) && row.err == "" {
			row.err = "parameter " + strconv.Quote(r.header[i]) + ": value is not valid UTF-8"
		}
		n := r.header[i]
		row.names = append(row.names, n)
		row.vals[n] = raw{kind: rawString, str: v, origin: v}
	}
	if len(row.names) == 0 && row.err == "" {
		row.err = "empty row"
	}
	return nil
}

// jsonReader reads a JSON batch: an array of request objects, one
// element at a time.
type jsonReader struct {
	dec *json.Decoder
	end bool
}

func newJSONReader(body io.Reader) (*jsonReader, error) {
	dec := json.NewDecoder(body)
	t, err := dec.Token()
	if err != nil {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			return nil, newError(errInvalid, "malformed JSON: "+jsonMessage(err))
		}
		return nil, readError(err, "a JSON array of request objects")
	}
	if d, ok := t.(json.Delim); !ok || d != '[' {
		return nil, newError(errInvalid, "a JSON batch is an array of request objects, such as [{\"length\": \"30 m\", ...}, ...]")
	}
	return &jsonReader{dec: dec}, nil
}

func (r *jsonReader) columns() []string { return nil }

func (r *jsonReader) next(row *batchRow) error {
	if r.end {
		return io.EOF
	}
	if !r.dec.More() {
		r.end = true
		if _, err := r.dec.Token(); err != nil {
			return jsonStop(err)
		}
		if _, err := r.dec.Token(); err != io.EOF {
			if err == nil {
				return &stopError{errInvalid, "malformed JSON: data after the array"}
			}
			return jsonStop(err)
		}
		return io.EOF
	}
	var elem json.RawMessage
	if err := r.dec.Decode(&elem); err != nil {
		return jsonStop(err)
	}
	*row = *decodeElement(elem)
	return nil
}

func jsonStop(err error) error {
	var tl *bodyTooLarge
	if errors.As(err, &tl) {
		return &stopError{errTooLarge, tl.Error()}
	}
	return &stopError{errInvalid, "malformed JSON: " + jsonMessage(err)}
}

// decodeElement reads one request object, keeping its members in order,
// as a single POST reads its body: a member whose value is not a
// parameter's is a fault of the row, and the other members are still
// read, so that the row's error names them all in the words of the single
// request. An element that is not an object is the error of its row.
func decodeElement(b []byte) *batchRow {
	row := &batchRow{vals: map[string]raw{}}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	if t, err := dec.Token(); err == nil {
		if d, ok := t.(json.Delim); !ok || d != '{' {
			return &batchRow{err: "each element of a batch is a JSON object of parameters"}
		}
	}
	dec = json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	faults, err := decodeMembers(dec, row.vals, &row.names)
	if err != nil {
		return &batchRow{err: err.Error()}
	}
	// A label is never read: whatever its value (null, an array, a
	// number beyond float64), it is no fault of the row. Given twice, it
	// is, as in a CSV header.
	row.faults = slices.DeleteFunc(faults, func(f FieldError) bool { return isLabel(f.Parameter) && f.Detail != givenTwice })
	return row
}

// cellText is a parameter as a CSV cell: the text sent.
func cellText(v raw) string {
	switch v.kind {
	case rawString:
		return v.str
	case rawBool:
		return strconv.FormatBool(v.b)
	case rawObject:
		return strconv.FormatFloat(v.num, 'g', -1, 64) + " " + v.unit
	}
	return v.origin
}

// csvRowWriter writes rows as CSV, with CRLF line ends like format=csv.
type csvRowWriter struct {
	w      *bufio.Writer
	fields []resultField
	checks []string
	width  int // columns
	inputs []string
	buf    []byte
}

func (w *csvRowWriter) header(inputs, results []string) error {
	w.inputs = inputs
	w.width = len(inputs) + len(results) + 3
	b := w.buf[:0]
	for i, c := range append(append(append([]string(nil), inputs...), results...), "warnings", "cautions", "error") {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendCSVField(b, c)
	}
	return w.write(b)
}

func (w *csvRowWriter) row(c *computed) error {
	in, res := c.row, c.items
	b := w.buf[:0]
	for i, n := range w.inputs {
		if i > 0 {
			b = append(b, ',')
		}
		if v, ok := in.vals[n]; ok {
			b = appendCSVField(b, cellText(v))
		}
	}
	j := 0
	for i, f := range w.fields {
		if i > 0 || len(w.inputs) > 0 {
			b = append(b, ',')
		}
		if j < len(res) && res[j].name == f.name {
			b = units.AppendNumber(b, res[j].value) // a number never needs quotes
			j++
		}
	}
	for _, n := range w.checks {
		b = append(b, ',')
		if pass, ok := checkPassed(c.checks, n); ok {
			b = append(b, passFail(pass)...)
		}
	}
	b = append(b, ',')
	b = appendCSVField(b, strings.Join(c.warnings, "; "))
	b = append(b, ',')
	b = appendCSVField(b, c.notes)
	b = append(b, ',')
	b = appendCSVField(b, c.msg)
	return w.write(b)
}

// checkPassed finds the named check among cs: whether it passed, and
// whether the row has it at all.
func checkPassed(cs []Check, name string) (pass, ok bool) {
	for _, c := range cs {
		if c.Name == name {
			return c.Pass, true
		}
	}
	return false, false
}

func (w *csvRowWriter) stop(msg string) error {
	b := w.buf[:0]
	for i := 0; i < w.width-1; i++ {
		b = append(b, ',')
	}
	b = appendCSVField(b, msg)
	return w.write(b)
}

// write ends the record b with CRLF (RFC 4180) and writes it.
func (w *csvRowWriter) write(b []byte) error {
	b = append(b, '\r', '\n')
	w.buf = b
	_, err := w.w.Write(b)
	return err
}

func (w *csvRowWriter) end() error { return nil }

// appendCSVField appends one CSV field, quoted as encoding/csv quotes:
// when it holds a comma, a quote, a line break or starts with a space.
func appendCSVField(b []byte, s string) []byte {
	if s == "" || !(strings.ContainsAny(s, ",\"\r\n") || s[0] == ' ' || s[0] == '\t' || s == `\.`) {
		return append(b, s...)
	}
	b = append(b, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			b = append(b, '"')
		}
		b = append(b, s[i])
	}
	return append(b, '"')
}

// jsonRowWriter writes rows as a JSON array of flat objects with the
// same keys as the CSV columns.
type jsonRowWriter struct {
	w       *bufio.Writer
	results []string // the result keys, then the check keys
	fields  []resultField
	checks  []string
	// fixed are the input columns of a CSV body, echoed in every row
	// (empty cells as ""); nil for a JSON body, whose rows echo their
	// own members.
	fixed []string
	n     int
	buf   []byte
}

func (w *jsonRowWriter) header(inputs, results []string) error {
	if w.fixed != nil {
		w.fixed = inputs
	}
	_, err := w.w.WriteString("[")
	return err
}

func (w *jsonRowWriter) open() {
	if w.n > 0 {
		w.buf = append(w.buf, ',')
	}
	w.buf = append(w.buf, '\n', '{')
	w.n++
}

func (w *jsonRowWriter) row(c *computed) error {
	in, res := c.row, c.items
	w.buf = w.buf[:0]
	w.open()
	names := in.names
	if w.fixed != nil {
		names = w.fixed
	}
	for _, n := range names {
		w.buf = appendJSONString(w.buf, n)
		w.buf = append(w.buf, ':')
		v, ok := in.vals[n]
		if !ok {
			v = raw{kind: rawString}
		}
		switch v.kind {
		case rawInvalid: // a value that could not be read: the row's error says why
			w.buf = append(w.buf, "null"...)
		case rawString:
			w.buf = appendJSONString(w.buf, v.str)
		case rawNumber:
			w.buf = append(w.buf, v.origin...)
		case rawBool:
			w.buf = strconv.AppendBool(w.buf, v.b)
		case rawObject:
			w.buf = append(w.buf, `{"value":`...)
			w.buf = strconv.AppendFloat(w.buf, v.num, 'g', -1, 64)
			w.buf = append(w.buf, `,"unit":`...)
			w.buf = appendJSONString(w.buf, v.unit)
			w.buf = append(w.buf, '}')
		}
		w.buf = append(w.buf, ',')
	}
	j := 0
	for i, f := range w.fields {
		w.buf = appendJSONString(w.buf, w.results[i])
		w.buf = append(w.buf, ':')
		if j < len(res) && res[j].name == f.name {
			w.buf = units.AppendNumber(w.buf, res[j].value)
			j++
		} else {
			w.buf = append(w.buf, "null"...)
		}
		w.buf = append(w.buf, ',')
	}
	for i, n := range w.checks {
		w.buf = appendJSONString(w.buf, w.results[len(w.fields)+i])
		w.buf = append(w.buf, ':')
		if pass, ok := checkPassed(c.checks, n); ok {
			w.buf = appendJSONString(w.buf, passFail(pass))
		} else {
			w.buf = append(w.buf, "null"...)
		}
		w.buf = append(w.buf, ',')
	}
	w.buf = append(w.buf, `"warnings":`...)
	w.buf = appendJSONString(w.buf, strings.Join(c.warnings, "; "))
	w.buf = append(w.buf, `,"cautions":`...)
	w.buf = appendJSONString(w.buf, c.notes)
	w.buf = append(w.buf, `,"error":`...)
	w.buf = appendJSONString(w.buf, c.msg)
	w.buf = append(w.buf, '}')
	_, err := w.w.Write(w.buf)
	return err
}

func (w *jsonRowWriter) stop(msg string) error {
	w.buf = w.buf[:0]
	w.open()
	w.buf = append(w.buf, `"error":`...)
	w.buf = appendJSONString(w.buf, msg)
	w.buf = append(w.buf, '}')
	_, err := w.w.Write(w.buf)
	return err
}

func (w *jsonRowWriter) end() error {
	_, err := w.w.WriteString("\n]\n")
	return err
}
