package handlers

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"

	"github.com/thermalmovement/service/internal/materials"
)

// batchTestHandler returns handlers with the given options (Version set
// to "test" when empty).
func batchTestHandler(tb testing.TB, opts Options) *Handler {
	tb.Helper()
	cat, err := materials.Load()
	if err != nil {
		tb.Fatal(err)
	}
	if opts.Version == "" {
		opts.Version = "test"
	}
	h, err := New(zap.NewNop(), prometheus.NewRegistry(), cat, opts)
	if err != nil {
		tb.Fatal(err)
	}
	return h
}

// post sends a batch through the router.
func post(t testing.TB, h http.Handler, target, contentType, accept, body string) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(http.MethodPost, target, strings.NewReader(body))
	if contentType != "" {
		req.Header.Set("Content-Type", contentType)
	}
	if accept != "" {
		req.Header.Set("Accept", accept)
	}
	w := httptest.NewRecorder()
	h.ServeHTTP(w, req)
	return w
}

// singleNumbers answers one case as a single GET and returns each
// result's number exactly as the JSON carries it, keyed "name [unit]"
// like a batch column.
func singleNumbers(t testing.TB, h http.Handler, calc string, params url.Values) (map[string]string, string) {
	t.Helper()
	w := httptest.NewRecorder()
	h.ServeHTTP(w, httptest.NewRequest(http.MethodGet, "/v1/"+calc+"?"+params.Encode(), nil))
	if w.Code != http.StatusOK {
		var p Problem
		_ = json.Unmarshal(w.Body.Bytes(), &p)
		return nil, p.Detail
	}
	var body struct {
		Results map[string]struct {
			Value json.Number
			Unit  string
		}
		Warnings []string
	}
	dec := json.NewDecoder(w.Body)
	dec.UseNumber()
	if err := dec.Decode(&body); err != nil {
		t.Fatal(err)
	}
	out := map[string]string{}
	for k, v := range body.Results {
		out[k+" ["+v.Unit+"]"] = v.Value.String()
	}
	out["warnings"] = strings.Join(body.Warnings, "; ")
	return out, ""
}

// postCSVBatch posts a CSV batch of calc and returns its records, header
// first, after checking the answer is a 200 with rows rows.
func postCSVBatch(t *testing.T, h http.Handler, calc, body string, rows int) [][]string {
	t.Helper()
	w := post(t, h, "/v1/batch/"+calc, "text/csv", "", body)
	recs := readCSV(t, w.Body.Bytes())
	if w.Code != http.StatusOK || len(recs) != rows+1 {
		t.Fatalf("batch %s: status %d, %d records, want %d rows: %s", calc, w.Code, len(recs), rows, w.Body)
	}
	return recs
}

// postOverHTTP posts body to url over a real connection and returns the
// response, its body read to the end (and so its trailers).
func postOverHTTP(t *testing.T, url, contentType string, body io.Reader) (*http.Response, []byte) {
	t.Helper()
	resp, err := http.Post(url, contentType, body)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	out, err := io.ReadAll(resp.Body)
	if err != nil {
		t.Fatal(err)
	}
	return resp, out
}

func readCSV(t testing.TB, body []byte) [][]string {
	t.Helper()
	r := csv.NewReader(bytes.NewReader(body))
	r.FieldsPerRecord = -1
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatalf("answer is not CSV: %v\n%s", err, body)
	}
	return recs
}

// checkAgainstSingle compares every row of a CSV answer with the single
// request made of the same cells and query.
func checkAgainstSingle(t *testing.T, h http.Handler, calc string, query url.Values, recs [][]string, nInputs int) {
	t.Helper()
	header := recs[0]
	if n := len(header); header[n-1] != "error" || header[n-2] != "cautions" || header[n-3] != "warnings" {
		t.Fatalf("header %q does not end with warnings, cautions, error", header)
	}
	// The standing cautions once, in the first row.
	for i, rec := range recs[1:] {
		if got := strings.Contains(rec[len(rec)-2], standingCautions[0]); got != (i == 0) {
			t.Errorf("row %d cautions %q: the standing ones belong to the first row only", i+1, rec[len(rec)-2])
		}
	}
	for i, rec := range recs[1:] {
		params := url.Values{}
		for k, v := range query {
			params[k] = v
		}
		for c := 0; c < nInputs; c++ {
			if rec[c] != "" {
				params.Set(header[c], rec[c])
			}
		}
		want, detail := singleNumbers(t, h, calc, params)
		if got := rec[len(rec)-1]; got != detail {
			t.Errorf("row %d error = %q, want the single request's %q", i+1, got, detail)
		}
		// The numbers and the warnings: a row is computed briefly (no
		// method, no references), and must lose nothing else.
		for c := nInputs; c < len(header)-2; c++ {
			if rec[c] != want[header[c]] {
				t.Errorf("row %d %s = %q, single request %q", i+1, header[c], rec[c], want[header[c]])
			}
		}
	}
}

func TestBatchCSVEqualsSingleRequests(t *testing.T) {
	h := batchTestHandler(t, Options{})
	r := h.Router()
	body := "length,alpha,material,delta_t,t_initial,t_final\r\n" +
		// dL = alpha L0 dT (ASTM E228's mean coefficient) with steel's
		// 12e-6/K (EN 1993-1-1 3.2.6, value from memory, not re-read):
		// 48 m x 12e-6/K x 50 K = 28.8 mm = 1.13385826772 in (1 in = 25.4 mm
		// exactly, NIST SP 811 B.8).
		"48 m,12e-6/K,,50 K,,\r\n" +
		"48 m,,structural-steel,,-15 degC,35 degC\r\n" +
		"100 ft,6.5e-6 1/degF,,120 degF,,\r\n" +
		"-3 m,12e-6/K,,50 K,,\r\n" + // not computable: its error, not the batch's
		"30 mtr,12e-6/K,,50 K,,\r\n" + // unreadable unit
		",,,,,\r\n" + // empty row
		"30 m,12e-6/K,\r\n" + // too few fields
		"12 m,,no-such-material,10 K,,\r\n" +
		"\"1,5 m\",12e-6/K,,10 K,,\r\n" // decimal comma: unreadable
	query := url.Values{"units": {"us"}, "delta_length_unit": {"mm"}}
	w := post(t, r, "/v1/batch/expansion/linear?"+query.Encode(), "text/csv", "", body)
	if w.Code != http.StatusOK {
		t.Fatalf("status %d: %s", w.Code, w.Body)
	}
	if ct := w.Header().Get("Content-Type"); ct != "text/csv; charset=utf-8" {
		t.Errorf("Content-Type %q", ct)
	}
	recs := readCSV(t, w.Body.Bytes())
	wantHeader := []string{"length", "alpha", "material", "delta_t", "t_initial", "t_final",
		"delta_length [mm]", "final_length [ft]", "strain [1]", "alpha_mean [1/degF]", "warnings", "cautions", "error"}
	if diff := cmp.Diff(wantHeader, recs[0]); diff != "" {
		t.Fatalf("header (-want +got):\n%s", diff)
	}
	if len(recs) != 10 {
		t.Fatalf("%d rows, want 9 and the header:\n%s", len(recs)-1, w.Body)
	}
	// Row 1 against the hand computation above.
	if got := recs[1][6]; got != "28.8" {
		t.Errorf("row 1 delta_length = %s mm, want 28.8", got)
	}
	// Inputs are echoed as sent.
	if diff := cmp.Diff([]string{"48 m", "12e-6/K", "", "50 K", "", ""}, recs[1][:6]); diff != "" {
		t.Errorf("row 1 inputs (-want +got):\n%s", diff)
	}
	for _, tc := range []struct {
		row  int
		want string
	}{
		{4, `invalid parameter "length": must be greater than zero`},
		{5, `unknown unit`},
		{6, "empty row"},
		{7, "row has 3 fields, the header row 6"},
		{8, "unknown material"},
		{9, `invalid parameter "length"`},
	} {
		if got := recs[tc.row][12]; !strings.Contains(got, tc.want) {
			t.Errorf("row %d error = %q, want it to say %q", tc.row, got, tc.want)
		}
		for c := 6; c < 10; c++ {
			if recs[tc.row][c] != "" {
				t.Errorf("row %d has result %q beside its error", tc.row, recs[tc.row][c])
			}
		}
	}
	// Every other row equals the single request; the empty and the
	// field-count rows are the ones whose errors a single request cannot know.
	recs = append(recs[:6], recs[8:]...)
	checkAgainstSingle(t, r, "expansion/linear", query, recs, 6)
}

func TestBatchAreaAndVolumeEqualSingleRequests(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	tests := []struct {
		calc, body string
		inputs     int
	}{
		{"expansion/area", "length,width,diameter,material,t_initial,t_final\n" +
			"2.4 m,1.2 m,,aluminium-6061,20 degC,70 degC\n" + // demo: a facade panel
			",,80 mm,structural-steel,20 degC,120 degC\n", 6},
		{"expansion/volume", "volume,material,vessel_material,t_initial,t_final\n" +
			"2.5 m3,water,structural-steel,10 degC,80 degC\n" + // demo: a heat-exchanger shell
			"400 L,water,,10 degC,60 degC\n", 5},
	}
	for _, tt := range tests {
		t.Run(tt.calc, func(t *testing.T) {
			w := post(t, r, "/v1/batch/"+tt.calc, "text/csv", "", tt.body)
			if w.Code != http.StatusOK {
				t.Fatalf("status %d: %s", w.Code, w.Body)
			}
			recs := readCSV(t, w.Body.Bytes())
			for i, rec := range recs[1:] {
				if rec[len(rec)-1] != "" {
					t.Errorf("row %d: %s", i+1, rec[len(rec)-1])
				}
			}
			checkAgainstSingle(t, r, tt.calc, url.Values{}, recs, tt.inputs)
		})
	}
}

func TestBatchJSON(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	body := `[
		{"length": "48 m", "alpha": "12e-6/K", "delta_t": "50 K"},
		{"length": {"value": 48, "unit": "m"}, "material": "structural-steel", "t_initial": "-15 degC", "t_final": "35 degC"},
		{"length": 48, "alpha": "12e-6/K", "delta_t": "50 K"},
		{"length": null},
		[1, 2],
		{"length": "10 m", "alpha": "12e-6/K", "delta_t": "50 K", "units": "us"}
	]`
	w := post(t, r, "/v1/batch/expansion/linear", "application/json", "", body)
	if w.Code != http.StatusOK {
		t.Fatalf("status %d: %s", w.Code, w.Body)
	}
	if ct := w.Header().Get("Content-Type"); ct != "application/json; charset=utf-8" {
		t.Errorf("Content-Type %q", ct)
	}
	var rows []map[string]any
	dec := json.NewDecoder(w.Body)
	dec.UseNumber()
	if err := dec.Decode(&rows); err != nil {
		t.Fatalf("answer is not a JSON array: %v", err)
	}
	if len(rows) != 6 {
		t.Fatalf("%d rows, want 6: %v", len(rows), rows)
	}
	// 48 m x 12e-6/K x 50 K = 28.8 mm (see TestBatchCSVEqualsSingleRequests).
	if got := rows[0]["delta_length [mm]"]; got != json.Number("28.8") {
		t.Errorf("row 1 delta_length = %v, want 28.8", got)
	}
	if got := rows[1]["length"]; !cmp.Equal(got, map[string]any{"value": json.Number("48"), "unit": "m"}) {
		t.Errorf("row 2 echoes length as %v, want the object sent", got)
	}
	if rows[0]["error"] != "" || rows[1]["error"] != "" {
		t.Errorf("rows 1, 2 failed: %v, %v", rows[0]["error"], rows[1]["error"])
	}
	for i, want := range map[int]string{2: "bare number", 3: "null", 4: "JSON object", 5: "query string"} {
		if got, _ := rows[i]["error"].(string); !strings.Contains(got, want) {
			t.Errorf("row %d error = %q, want it to say %q", i+1, got, want)
		}
		if rows[i]["delta_length [mm]"] != nil {
			t.Errorf("row %d has a result beside its error", i+1)
		}
	}
	// The same numbers as single requests, bit for bit.
	want, _ := singleNumbers(t, r, "expansion/linear", url.Values{"length": {"48 m"}, "material": {"structural-steel"}, "t_initial": {"-15 degC"}, "t_final": {"35 degC"}})
	for k, v := range want {
		var got any = json.Number(v)
		if k == "warnings" {
			got = v
		}
		if rows[1][k] != got {
			t.Errorf("row 2 %s = %v, single request %s", k, rows[1][k], v)
		}
	}
}

func TestBatchForms(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	csvIn := "length,alpha,delta_t\n48 m,12e-6/K,50 K\n"
	jsonIn := `[{"length": "48 m", "alpha": "12e-6/K", "delta_t": "50 K"}]`
	tests := []struct {
		name, target, ct, accept, wantCT string
	}{
		{"csv in, csv out", "", "text/csv", "", "text/csv"},
		{"csv in, Accept json", "", "text/csv", "application/json", "application/json"},
		{"csv in, format json wins over Accept", "?format=json", "text/csv", "text/csv", "application/json"},
		{"json in, json out", "", "application/json", "", "application/json"},
		{"json in, Accept csv", "", "application/json", "text/csv;q=0.9, application/xml", "text/csv"},
		{"json in, format csv", "?format=csv", "application/json", "*/*", "text/csv"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			in := csvIn
			if tt.ct == "application/json" {
				in = jsonIn
			}
			w := post(t, r, "/v1/batch/expansion/linear"+tt.target, tt.ct, tt.accept, in)
			if w.Code != http.StatusOK || !strings.HasPrefix(w.Header().Get("Content-Type"), tt.wantCT) {
				t.Fatalf("status %d, Content-Type %q, want 200 %s: %s", w.Code, w.Header().Get("Content-Type"), tt.wantCT, w.Body)
			}
			var table [][]string
			if tt.wantCT == "text/csv" {
				table = readCSV(t, w.Body.Bytes())
			} else {
				var rows []map[string]any
				if err := json.Unmarshal(w.Body.Bytes(), &rows); err != nil {
					t.Fatal(err)
				}
				table = [][]string{{"length", "delta_length [mm]", "error"}, {fmt.Sprint(rows[0]["length"]), fmt.Sprint(rows[0]["delta_length [mm]"]), fmt.Sprint(rows[0]["error"])}}
			}
			col := func(name string) string {
				for i, h := range table[0] {
					if h == name {
						return table[1][i]
					}
				}
				t.Fatalf("no column %q in %q", name, table[0])
				return ""
			}
			if col("length") != "48 m" || col("delta_length [mm]") != "28.8" || col("error") != "" {
				t.Errorf("row = %q", table)
			}
		})
	}
}

func TestBatchRefusals(t *testing.T) {
	r := batchTestHandler(t, Options{BatchMaxRows: 3, BatchMaxBytes: 4096}).Router()
	okCSV := "length,alpha,delta_t\n48 m,12e-6/K,50 K\n"
	tests := []struct {
		name, target, ct, body string
		status                 int
		detail                 string
	}{
		{"unknown calculation", "/v1/batch/expansion/lengthwise", "text/csv", okCSV, 404, "expansion/area, expansion/linear"},
		{"no content type", "/v1/batch/expansion/linear", "", okCSV, 415, "text/csv"},
		{"xml body", "/v1/batch/expansion/linear", "application/xml", "<a/>", 415, "application/json"},
		{"latin-1", "/v1/batch/expansion/linear", "text/csv; charset=iso-8859-1", okCSV, 415, "UTF-8"},
		{"format text", "/v1/batch/expansion/linear?format=text", "text/csv", okCSV, 400, "csv or json"},
		{"result", "/v1/batch/expansion/linear?result=strain", "text/csv", okCSV, 400, "every result is a column"},
		{"bad unit override", "/v1/batch/expansion/linear?delta_length_unit=kg", "text/csv", okCSV, 400, "delta_length_unit"},
		{"empty body", "/v1/batch/expansion/linear", "text/csv", "", 400, "header row"},
		{"unnamed column", "/v1/batch/expansion/linear", "text/csv", "length,,delta_t\n", 400, "column 2"},
		{"two columns one name", "/v1/batch/expansion/linear", "text/csv", "length,length\n", 400, "names two columns"},
		{"output option column", "/v1/batch/expansion/linear", "text/csv", "length,delta_length_unit\n", 400, "query string"},
		{"column and query", "/v1/batch/expansion/linear?alpha=12e-6/K", "text/csv", okCSV, 400, "both the query and the header"},
		{"unknown column", "/v1/batch/expansion/linear", "text/csv", "length,alpha,delta_t,colour\n48 m,12e-6/K,50 K,red\n", 400, "colour unknown parameter (a column)"},
		{"unknown query parameter", "/v1/batch/expansion/linear?shade=1", "text/csv", okCSV, 400, "shade unknown parameter (a query parameter)"},
		{"unknown query parameter, JSON", "/v1/batch/expansion/linear?shade=1", "application/json", `[{"length": "1 m", "alpha": "1e-6/K", "delta_t": "1 K"}]`, 400, "shade unknown parameter"},
		{"json not array", "/v1/batch/expansion/linear", "application/json", `{"length": "1 m"}`, 400, "array"},
		{"json malformed", "/v1/batch/expansion/linear", "application/json", `[{"length": }]`, 400, "malformed JSON"},
		{"rows over the limit", "/v1/batch/expansion/linear", "text/csv", okCSV + "1 m,1e-6/K,1 K\n2 m,1e-6/K,1 K\n3 m,1e-6/K,1 K\n", 413, "over the limit of 3 rows"},
		{"bytes over the limit", "/v1/batch/expansion/linear", "text/csv", okCSV + strings.Repeat("1 m,1e-6/K,1 K\n", 400), 413, "4096 bytes"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			w := post(t, r, tt.target, tt.ct, "", tt.body)
			if w.Code != tt.status {
				t.Fatalf("status %d, want %d: %s", w.Code, tt.status, w.Body)
			}
			p := decodeProblem(t, w)
			if !strings.Contains(p.Detail+fmt.Sprint(p.Errors), tt.detail) {
				t.Errorf("problem %+v does not say %q", p, tt.detail)
			}
		})
	}
	// An output option a batch does not use is one problem, even when its
	// value would be wrong as well.
	if p := decodeProblem(t, post(t, r, "/v1/batch/expansion/linear?result=x", "text/csv", "", okCSV)); len(p.Errors) != 1 || p.Errors[0].Parameter != "result" {
		t.Errorf("result=x: errors %+v, want one, on result", p.Errors)
	}
	// The first row that reaches the calculation decides, beside other
	// faults of its own: a gap row first still finds the column, and so
	// does a misspelled required column (the row also lacks length); a
	// parameter api/openapi.yaml declares is never called unknown, so a
	// first row refused for a bad beta, which expansion/volume may stop at,
	// does not make material unknown for the rest.
	for _, body := range []string{"length,alpha,delta_t,colour\n,,,\n48 m,12e-6/K,50 K,red\n", "lenght,alpha,delta_t\n48 m,12e-6/K,50 K\n"} {
		if w := post(t, r, "/v1/batch/expansion/linear", "text/csv", "", body); w.Code != http.StatusBadRequest || !strings.Contains(w.Body.String(), "unknown parameter (a column)") {
			t.Errorf("%q: status %d, want 400 naming the column: %s", body, w.Code, w.Body)
		}
	}
	for _, name := range []string{"expansion/linear", "expansion/area", "expansion/volume", "restraint", "differential", "joints/gap", "joints/spacing", "temperatures/bridge"} {
		if d := documented()["/v1/"+name]; len(d) < 3 || !d["format"] {
			t.Errorf("documented inputs of %s: %v, want its query parameters from api/openapi.yaml", name, d)
		}
	}
	if !documented()["/v1/expansion/volume"]["material"] || documented()["/v1/expansion/linear"]["colour"] {
		t.Error("documented inputs: want material for expansion/volume and no colour for expansion/linear")
	}
	w1 := post(t, batchTestHandler(t, Options{}).Router(), "/v1/batch/expansion/volume", "text/csv", "", "volume,beta,material,delta_t\n1 m3,abc,structural-steel,10 K\n1 m3,2e-4/K,structural-steel,10 K\n")
	if rows := readCSV(t, w1.Body.Bytes()); w1.Code != http.StatusOK || len(rows) != 3 || strings.Contains(w1.Body.String(), "unknown") || rows[2][len(rows[2])-1] != "" {
		t.Errorf("volume batch with a bad beta first: status %d, want 200 with row 2 computed and nothing unknown: %s", w1.Code, w1.Body)
	}
	// Label columns (id, ref, ..., or a name beginning with "#") are
	// echoed and never read: the rows compute (12e-6/K x 48 m x 50 K =
	// 28.8 mm, dL = alpha L dT).
	wl := post(t, r, "/v1/batch/expansion/linear", "text/csv", "", "Ref,length,alpha,delta_t,#note\nB1,48 m,12e-6/K,50 K,north bay\n")
	if rows := readCSV(t, wl.Body.Bytes()); wl.Code != http.StatusOK || len(rows) != 2 || rows[1][0] != "B1" || rows[1][4] != "north bay" || rows[1][5] != "28.8" || rows[1][len(rows[1])-1] != "" {
		t.Errorf("label columns: status %d, want the row computed with its labels echoed: %s", wl.Code, wl.Body)
	}
	// A JSON label given twice is a fault of its row, as any member is.
	wd := post(t, r, "/v1/batch/expansion/linear", "application/json", "", `[{"id": 1, "id": 2, "length": "48 m", "alpha": "12e-6/K", "delta_t": "50 K"}]`)
	if wd.Code != http.StatusOK || !strings.Contains(wd.Body.String(), "given more than once") {
		t.Errorf("a label given twice: status %d, want the row's error: %s", wd.Code, wd.Body)
	}
	// A JSON label of any value is no fault of its row.
	wj := post(t, r, "/v1/batch/expansion/linear", "application/json", "", `[{"notes": null, "id": 1.5e400, "ref": [1, 2], "length": "48 m", "alpha": "12e-6/K", "delta_t": "50 K"}]`)
	if wj.Code != http.StatusOK || !strings.Contains(wj.Body.String(), `"delta_length [mm]":28.8`) || !strings.Contains(wj.Body.String(), `"error":""`) {
		t.Errorf("JSON labels of odd values: status %d, want the row computed: %s", wj.Code, wj.Body)
	}
	// A member of one JSON element is that element's own: the other rows
	// are answered.
	w0 := post(t, r, "/v1/batch/expansion/linear", "application/json", "", `[{"length": "1 m", "alpha": "1e-6/K", "delta_t": "1 K", "colour": "red"}, {"length": "1 m", "alpha": "1e-6/K", "delta_t": "1 K"}]`)
	if w0.Code != http.StatusOK || !strings.Contains(w0.Body.String(), `"error":"invalid parameter \"colour\": unknown parameter"`) {
		t.Errorf("unknown member of one JSON element: status %d, want 200 with that row's error: %s", w0.Code, w0.Body)
	}
	// A body of unknown length over the byte limit is refused as well,
	// while nothing has been sent.
	req := httptest.NewRequest(http.MethodPost, "/v1/batch/expansion/linear", io.MultiReader(strings.NewReader(okCSV), strings.NewReader(strings.Repeat("1 m,1e-6/K,1 K\n", 400))))
	req.ContentLength = -1
	req.Header.Set("Content-Type", "text/csv")
	w := httptest.NewRecorder()
	r.ServeHTTP(w, req)
	if w.Code != http.StatusRequestEntityTooLarge {
		t.Errorf("chunked body over the limit: status %d, want 413: %s", w.Code, w.Body)
	}
	// Exactly at the limits is fine.
	w = post(t, r, "/v1/batch/expansion/linear", "text/csv", "", okCSV+"1 m,1e-6/K,1 K\n2 m,1e-6/K,1 K\n")
	if w.Code != http.StatusOK || len(readCSV(t, w.Body.Bytes())) != 4 {
		t.Errorf("3 rows at a limit of 3: status %d: %s", w.Code, w.Body)
	}
}

// TestBatchLimitInBand checks the design for limits met after the answer
// started: over real HTTP, the answer ends with a row whose error says
// the batch stopped, and the Batch-Status trailer says so too.
func TestBatchLimitInBand(t *testing.T) {
	const limit = 3000 // rows: far more than the 64 KiB held back
	h := batchTestHandler(t, Options{BatchMaxRows: limit, BatchMaxBytes: 1 << 20})
	srv := httptest.NewServer(h.Router())
	defer srv.Close()
	for _, form := range []string{"csv", "json"} {
		t.Run(form, func(t *testing.T) {
			var body bytes.Buffer
			ct := "text/csv"
			if form == "csv" {
				body.WriteString("length,alpha,delta_t\n")
				for i := 0; i < limit+10; i++ {
					fmt.Fprintf(&body, "%d m,12e-6/K,50 K\n", i+1)
				}
			} else {
				ct = "application/json"
				body.WriteString("[")
				for i := 0; i < limit+10; i++ {
					if i > 0 {
						body.WriteString(",")
					}
					fmt.Fprintf(&body, `{"length":"%d m","alpha":"12e-6/K","delta_t":"50 K"}`, i+1)
				}
				body.WriteString("]")
			}
			resp, out := postOverHTTP(t, srv.URL+"/v1/batch/expansion/linear", ct, &body)
			if resp.StatusCode != http.StatusOK {
				t.Fatalf("status %d: %s", resp.StatusCode, out)
			}
			wantStop := "batch stopped after row 3000: over the limit of 3000 rows"
			var last string
			var n int
			if form == "csv" {
				recs := readCSV(t, out)
				n = len(recs) - 1
				last = recs[n][len(recs[n])-1]
			} else {
				var rows []map[string]any
				if err := json.Unmarshal(out, &rows); err != nil {
					t.Fatal(err)
				}
				n = len(rows)
				last, _ = rows[n-1]["error"].(string)
			}
			if n != limit+1 || !strings.HasPrefix(last, wantStop) {
				t.Errorf("%d rows ending %q, want %d rows and the stop row %q", n, last, limit+1, wantStop)
			}
			if got := resp.Trailer.Get(batchStatusTrailer); !strings.HasPrefix(got, "stopped after row 3000") {
				t.Errorf("trailer %s = %q", batchStatusTrailer, got)
			}
		})
	}
	// Under the limit the trailer says complete.
	resp, err := http.Post(srv.URL+"/v1/batch/expansion/linear", "text/csv", strings.NewReader("length,alpha,delta_t\n1 m,1e-6/K,1 K\n"))
	if err != nil {
		t.Fatal(err)
	}
	_, _ = io.Copy(io.Discard, resp.Body)
	resp.Body.Close()
	if got := resp.Trailer.Get(batchStatusTrailer); got != "complete: 1 rows" {
		t.Errorf("trailer %s = %q, want complete: 1 rows", batchStatusTrailer, got)
	}
}

// TestBatchCSVUnclosedQuote: a quote that is never closed takes every
// line after it into one field (RFC 4180 2.6: a quoted field may hold line
// breaks), so those rows cannot be answered. It checks no physical value
// beyond the 28.8 mm of TestLinearHTTP's girder. The
// batch stops there and says so, before the answer started (a 400) or
// after it (a stop row and the trailer), rather than end "complete" with
// rows missing. A stray quote within one line stays that row's error.
func TestBatchCSVUnclosedQuote(t *testing.T) {
	h := batchTestHandler(t, Options{BatchMaxRows: 100000, BatchMaxBytes: 1 << 20})
	srv := httptest.NewServer(h.Router())
	defer srv.Close()
	post := func(body string) (*http.Response, []byte) {
		t.Helper()
		return postOverHTTP(t, srv.URL+"/v1/batch/expansion/linear", "text/csv", strings.NewReader(body))
	}
	const head, good = "length,alpha,delta_t\n", "48 m,12e-6/K,50 K\n"

	resp, out := post(head + good + `"48 m,12e-6/K,50 K` + "\n" + good + good)
	if resp.StatusCode != http.StatusBadRequest || !strings.Contains(string(out), "CSV line 3") || !strings.Contains(string(out), "check its quotes") {
		t.Errorf("unclosed quote in a short batch: %d %s; want 400 naming line 3", resp.StatusCode, out)
	}

	const rows = 5000 // the answer has started before the fault
	resp, out = post(head + strings.Repeat(good, rows) + `"48 m,12e-6/K,50 K` + "\n" + strings.Repeat(good, 10))
	recs := readCSV(t, out)
	last := recs[len(recs)-1]
	wantStop := "batch stopped after row 5000: CSV line 5002"
	if resp.StatusCode != http.StatusOK || len(recs) != 1+rows+1 || !strings.HasPrefix(last[len(last)-1], wantStop) {
		t.Errorf("unclosed quote after %d rows: status %d, %d records ending %q; want %d rows and a stop row %q",
			rows, resp.StatusCode, len(recs), last[len(last)-1], rows, wantStop)
	}
	if got := resp.Trailer.Get(batchStatusTrailer); !strings.HasPrefix(got, "stopped after row 5000") {
		t.Errorf("trailer %s = %q, want stopped after row 5000", batchStatusTrailer, got)
	}

	resp, out = post(head + `48 m,12e-6/K,50 "K"` + "\n" + good)
	recs = readCSV(t, out)
	if resp.StatusCode != http.StatusOK || len(recs) != 3 || recs[1][len(recs[1])-1] == "" || recs[2][3] != "28.8" {
		t.Errorf("stray quote within a line: status %d, records %q; want its row's error and the next row answered", resp.StatusCode, recs)
	}
	if got := resp.Trailer.Get(batchStatusTrailer); got != "complete: 2 rows" {
		t.Errorf("trailer %s = %q, want complete: 2 rows", batchStatusTrailer, got)
	}
}

// TestBatchCSVSemicolons: a CSV saved with semicolons (spreadsheets in
// locales with decimal commas do) is one column, since RFC 4180 separates
// fields by commas; the header row is refused with the reason rather than
// every row failing. It checks no physical value.
func TestBatchCSVSemicolons(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	w := do(t, r, "POST", "/v1/batch/expansion/linear", "text/csv", "length;alpha;delta_t\n48 m;12e-6/K;50 K\n")
	if p := decodeProblem(t, w); w.Code != http.StatusBadRequest || len(p.Errors) != 1 || !strings.Contains(p.Errors[0].Detail, "separate the columns with commas") {
		t.Errorf("semicolon CSV: %d %+v; want 400 naming the separator", w.Code, p.Errors)
	}
}

// rowSource is a CSV body of n rows made as it is read, so that the body
// itself takes no memory.
type rowSource struct {
	n, i int
	buf  []byte
}

func (s *rowSource) Read(p []byte) (int, error) {
	for len(s.buf) < len(p) && s.i <= s.n {
		if s.i == 0 {
			s.buf = append(s.buf, "length,material,alpha,t_initial,t_final\n"...)
		} else {
			s.buf = append(s.buf, sourceRow(s.i)...)
		}
		s.i++
	}
	if len(s.buf) == 0 {
		return 0, io.EOF
	}
	n := copy(p, s.buf)
	s.buf = s.buf[:copy(s.buf, s.buf[n:])]
	return n, nil
}

// sourceRow is case i: catalogue curves and constant coefficients, SI
// and US units, one bad row in 1000.
func sourceRow(i int) string {
	switch {
	case i%1000 == 0:
		return strconv.Itoa(i) + " furlong,,12e-6/K,10 degC,30 degC\n"
	case i%3 == 0:
		return strconv.Itoa(i%500+1) + " ft,,6.5e-6 1/degF,0 degF,120 degF\n"
	case i%3 == 1:
		return strconv.FormatFloat(float64(i)/100, 'g', -1, 64) + " m,stainless-steel-304,,-150 degC,20 degC\n"
	}
	return strconv.Itoa(i%97+1) + " m,concrete,,-10 degC,35 degC\n"
}

// streamWriter is an http.ResponseWriter that hands the body to a pipe
// as it is written, and counts it.
type streamWriter struct {
	h      http.Header
	status int
	pw     *io.PipeWriter
}

func (w *streamWriter) Header() http.Header { return w.h }
func (w *streamWriter) WriteHeader(s int)   { w.status = s }
func (w *streamWriter) Flush()              {}
func (w *streamWriter) Write(b []byte) (int, error) {
	if w.status == 0 {
		w.status = http.StatusOK
	}
	return w.pw.Write(b)
}

// TestBatch100kRowsStreams sends 100,000 rows and measures the peak heap
// growth while they are served: a batch held in memory would need more
// than 25 MB (the answer alone is over 15 MB), streaming needs a few
// buffers. Every 101st row is compared with a single request.
func TestBatch100kRowsStreams(t *testing.T) {
	if testing.Short() {
		t.Skip("100,000 rows; -short skips it")
	}
	const rows = 100000
	h := batchTestHandler(t, Options{})
	r := h.Router()
	// Single answers to compare with, made before measuring.
	type sample struct {
		params url.Values
		want   map[string]string
		detail string
	}
	samples := map[int]sample{}
	for i := 1; i <= rows; i += 101 {
		rec, _ := csv.NewReader(strings.NewReader(sourceRow(i))).Read()
		params := url.Values{}
		for c, name := range []string{"length", "material", "alpha", "t_initial", "t_final"} {
			if rec[c] != "" {
				params.Set(name, rec[c])
			}
		}
		want, detail := singleNumbers(t, r, "expansion/linear", params)
		samples[i] = sample{params, want, detail}
	}

	defer debug.SetGCPercent(debug.SetGCPercent(10))
	runtime.GC()
	var base runtime.MemStats
	runtime.ReadMemStats(&base)
	var peak atomic.Uint64
	stop := make(chan struct{})
	var sampler sync.WaitGroup
	sampler.Add(1)
	go func() {
		defer sampler.Done()
		var m runtime.MemStats
		for {
			runtime.ReadMemStats(&m)
			if m.HeapAlloc > peak.Load() {
				peak.Store(m.HeapAlloc)
			}
			select {
			case <-stop:
				return
			case <-time.After(2 * time.Millisecond):
			}
		}
	}()

	pr, pw := io.Pipe()
	w := &streamWriter{h: http.Header{}, pw: pw}
	req := httptest.NewRequest(http.MethodPost, "/v1/batch/expansion/linear", &rowSource{n: rows})
	req.ContentLength = -1
	req.Header.Set("Content-Type", "text/csv")
	go func() {
		r.ServeHTTP(w, req)
		pw.Close()
	}()
	cr := csv.NewReader(bufio.NewReader(pr))
	cr.ReuseRecord = true
	header, err := cr.Read()
	if err != nil {
		t.Fatal(err)
	}
	header = append([]string(nil), header...)
	n, errorsSeen, checked := 0, 0, 0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		n++
		if rec[len(rec)-1] != "" {
			errorsSeen++
		}
		s, ok := samples[n]
		if !ok {
			continue
		}
		checked++
		if got := rec[len(rec)-1]; got != s.detail {
			t.Errorf("row %d error %q, single request %q", n, got, s.detail)
		}
		for c := 5; c < len(header)-2; c++ {
			if rec[c] != s.want[header[c]] {
				t.Errorf("row %d %s = %q, single request %q", n, header[c], rec[c], s.want[header[c]])
			}
		}
	}
	close(stop)
	sampler.Wait()
	if w.status != http.StatusOK || n != rows {
		t.Fatalf("status %d, %d rows, want 200 and %d", w.status, n, rows)
	}
	if errorsSeen != rows/1000 || checked < rows/101 {
		t.Errorf("%d error rows (want %d), %d rows checked", errorsSeen, rows/1000, checked)
	}
	growth := int64(peak.Load()) - int64(base.HeapAlloc)
	t.Logf("peak heap growth over 100,000 rows: %.1f MiB", float64(growth)/(1<<20))
	if growth > 8<<20 {
		t.Errorf("peak heap grew by %.1f MiB serving 100,000 rows, want under 8 MiB: the batch is not streaming", float64(growth)/(1<<20))
	}
}

// BenchmarkBatchCSV reports the rows per second of a CSV batch of
// 10,000 linear-expansion rows (curves, constants, SI and US units).
func BenchmarkBatchCSV(b *testing.B) {
	const rows = 10000
	r := batchTestHandler(b, Options{}).Router()
	var body bytes.Buffer
	_, _ = io.Copy(&body, &rowSource{n: rows})
	w := &benchWriter{h: http.Header{}}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		w.reset()
		req := httptest.NewRequest(http.MethodPost, "/v1/batch/expansion/linear", bytes.NewReader(body.Bytes()))
		req.Header.Set("Content-Type", "text/csv")
		r.ServeHTTP(w, req)
		if w.status != http.StatusOK {
			b.Fatalf("status %d", w.status)
		}
	}
	b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}

// A batch row is computed without its method and references
// (params.brief) and keeps everything a row writes: the numbers and the
// warnings of the single request, the coefficient's own warnings among
// them (no physical value is checked here). Demo data: a footbridge
// girder and its deck joint.
func TestBatchRowsKeepWarnings(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	// An explicit alpha beside a material is used, with a warning; a
	// delta_t beyond the range of steel's constant warns too.
	recs := postCSVBatch(t, r, "expansion/linear", "length,alpha,material,delta_t\n48 m,12e-6/K,structural-steel,50 K\n48 m,,structural-steel,1000 K\n", 2)
	warnings := len(recs[0]) - 3
	for i, rec := range recs[1:] {
		if rec[warnings] == "" {
			t.Errorf("linear row %d has no warning: %q", i+1, rec)
		}
	}
	checkAgainstSingle(t, r, "expansion/linear", url.Values{}, recs, 4)

	// The joint closes before t_max (a failing check, with its warning),
	// and its alpha is given beside the material.
	const joint = "length=60+m&material=structural-steel&alpha=12e-6%2FK&t_install=15+degC&t_min=-20+degC&t_max=45+degC&gap_install=10+mm"
	q, _ := url.ParseQuery(joint)
	header := []string{"length", "material", "alpha", "t_install", "t_min", "t_max", "gap_install"}
	var cells []string
	for _, n := range header {
		cells = append(cells, q.Get(n))
	}
	recs = postCSVBatch(t, r, "joints/gap", strings.Join(header, ",")+"\n"+strings.Join(cells, ",")+"\n", 1)
	single := httptest.NewRecorder()
	r.ServeHTTP(single, httptest.NewRequest(http.MethodGet, "/v1/joints/gap?"+joint, nil))
	var want struct{ Warnings []string }
	if err := json.Unmarshal(single.Body.Bytes(), &want); err != nil || single.Code != http.StatusOK {
		t.Fatalf("single joint request: %d %s", single.Code, single.Body)
	}
	got := recs[1][len(recs[0])-3]
	if got != strings.Join(want.Warnings, "; ") || !strings.Contains(got, "was given") || !strings.Contains(got, "fails") {
		t.Errorf("joint row warnings %q, single request %q", got, want.Warnings)
	}
}
