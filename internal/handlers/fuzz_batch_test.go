package handlers

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
)

// FuzzBatchCSV sends arbitrary CSV bodies to the linear batch: the
// service never panics and never answers 500, a 200 answer is CSV with
// the warnings and error columns, and no row meets an internal error.
func FuzzBatchCSV(f *testing.F) {
	for _, s := range []string{
		"length,alpha,delta_t\n48 m,12e-6/K,50 K\n",
		"length,material,t_initial,t_final\n30 m,concrete,15 degC,-10 degC\n,,,\n",
		"\ufefflength,alpha,delta_t\r\n\"1,5 m\",12e-6/K,50 K\r\n",
		"length,alpha,delta_t\n1e308 m,1e308/K,1e308 K\n-0 m,0/K,0 K\n",
		"length,alpha\n\"unterminated,1\n",
		"a,b,c\n1,2\n1,2,3,4\n",
		"length,,x\n",
		"length,alpha,delta_t\n\x00\xff,\"\"\"\",NaN K\n",
		"units,length\nus,1 m\n",
		"",
	} {
		f.Add([]byte(s))
	}
	h := batchTestHandler(f, Options{BatchMaxRows: 50, BatchMaxBytes: 16 << 10})
	r := h.Router()
	f.Fuzz(func(t *testing.T, body []byte) {
		w := postFuzzBatch(t, r, "/v1/batch/expansion/linear?units=us", "text/csv", body)
		if w == nil {
			return
		}
		cr := csv.NewReader(w.Body)
		cr.FieldsPerRecord = 0 // every row as wide as the header
		header, err := cr.Read()
		if err != nil {
			t.Fatalf("answer is not CSV: %v", err)
		}
		if n := len(header); n < 3 || header[n-1] != "error" || header[n-2] != "cautions" || header[n-3] != "warnings" {
			t.Fatalf("header %q", header)
		}
		for {
			rec, err := cr.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("answer is not CSV: %v", err)
			}
			if strings.Contains(rec[len(rec)-1], "unexpected condition") {
				t.Fatalf("internal error in a row: %q", rec)
			}
		}
	})
}

// FuzzBatchJSON sends arbitrary JSON bodies to the joint-gap batch, whose
// rows carry checks and cautions: the service never panics and never
// answers 500, a 200 answer is a JSON array of flat objects each with the
// check, warnings, cautions and error keys, and no row meets an internal
// error.
func FuzzBatchJSON(f *testing.F) {
	for _, s := range []string{
		`[{"length": "60 m", "alpha": "12e-6/K", "t_min": "-36 degC", "t_max": "59 degC", "t_install": "12 degC", "gap_install": "20 mm"}]`,
		`[{"length": "60 m", "material": "structural-steel", "t_min": "-25 degC", "t_max": "50 degC", "min_gap": "20 mm", "max_gap": "40 mm", "movement_capability": 25}]`,
		`[{"length": null, "alpha": [1], "t_min": {"value": 1}, "t_max": "x", "length": "2 m"}, 5, "a", {}]`,
		`[{"length": {"value": 60, "unit": "m"}, "alpha": 1e308, "t_min": "-1e308 degC", "t_max": "1e308 K", "gap_install": "-0 mm"}]`,
		`[{"format": "text", "units": "us"}]`,
		`[`, `{}`, `[[[[]]]]`, `[{"a": {"b": {"c": {}}}}]`, "",
	} {
		f.Add([]byte(s))
	}
	h := batchTestHandler(f, Options{BatchMaxRows: 50, BatchMaxBytes: 16 << 10})
	r := h.Router()
	f.Fuzz(func(t *testing.T, body []byte) {
		w := postFuzzBatch(t, r, "/v1/batch/joints/gap", "application/json", body)
		if w == nil {
			return
		}
		var rows []map[string]any
		if err := json.Unmarshal(w.Body.Bytes(), &rows); err != nil {
			t.Fatalf("answer is not a JSON array of objects: %v: %.300s", err, w.Body)
		}
		for i, row := range rows {
			if msg, _ := row["error"].(string); strings.HasPrefix(msg, "batch stopped") {
				continue // the in-band end of a batch stopped by a limit
			}
			for _, k := range []string{"check_gap_stays_open", "warnings", "cautions", "error"} {
				if _, ok := row[k]; !ok {
					t.Fatalf("row %d lacks %q: %v", i, k, row)
				}
			}
			if msg, _ := row["error"].(string); strings.Contains(msg, "unexpected condition") {
				t.Fatalf("internal error in row %d: %v", i, row)
			}
		}
	})
}

// postFuzzBatch posts a fuzzed batch body and checks the status: a 200
// answer is returned for its target to read; a refusal must be a 400 or
// 413 problem, and gives nil; anything else fails.
func postFuzzBatch(t *testing.T, h http.Handler, target, contentType string, body []byte) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(http.MethodPost, target, bytes.NewReader(body))
	req.Header.Set("Content-Type", contentType)
	w := httptest.NewRecorder()
	h.ServeHTTP(w, req)
	switch w.Code {
	case http.StatusOK:
		return w
	case http.StatusBadRequest, http.StatusRequestEntityTooLarge:
		if w.Header().Get("Content-Type") != "application/problem+json" {
			t.Fatalf("status %d without a problem: %q", w.Code, w.Body)
		}
		return nil
	}
	t.Fatalf("status %d: %s", w.Code, w.Body)
	return nil
}
