package handlers

import (
	"encoding/json"
	"net/http"
	"slices"
	"strings"
	"testing"
)

// A joint that closes, in every form a client can ask for. Demo data: a
// 60 m steel footbridge deck set at 12 degC with a 20 mm gap, designed
// for -36..59 degC. closing = alpha L (t_max - t_install) (AASHTO LRFD
// eq. 3.12.2.3-1 split at the installation temperature, from memory of
// the specification) = 12e-6/K x 60 m x 47 K = 33.84 mm, so the gap at
// t_max is 20 - 33.84 = -13.84 mm: the joint closes.
const closingJoint = "length=60%20m&alpha=12e-6/K&t_min=-36%20degC&t_max=59%20degC&t_install=12%20degC&gap_install=20%20mm"

const closingWarning = "check gap_stays_open fails: the joint closes before t_max"

func TestFailingCheckIsAWarning(t *testing.T) {
	r := newTestHandler(t).Router()
	w := do(t, r, http.MethodGet, "/v1/joints/gap?"+closingJoint, "", "")
	var body struct {
		Results struct {
			GapAtTMax Value   `json:"gap_at_t_max"`
			Checks    []Check `json:"checks"`
		}
		Warnings, Cautions []string
	}
	if err := json.Unmarshal(w.Body.Bytes(), &body); err != nil {
		t.Fatal(err)
	}
	if body.Results.GapAtTMax.Value != -13.84 {
		t.Errorf("gap_at_t_max = %v, want -13.84 mm", body.Results.GapAtTMax.Value)
	}
	if !hasPrefixIn(body.Warnings, closingWarning) {
		t.Errorf("warnings %q lack %q", body.Warnings, closingWarning)
	}
	if !slices.Contains(body.Cautions, standingCautions[2]) {
		t.Errorf("cautions %q lack the standing ones", body.Cautions)
	}

	// A passing joint has no such warning: 60 mm leaves 26.16 mm at t_max.
	w = do(t, r, http.MethodGet, "/v1/joints/gap?"+strings.Replace(closingJoint, "gap_install=20", "gap_install=60", 1), "", "")
	if strings.Contains(w.Body.String(), "check gap_stays_open fails") {
		t.Errorf("a joint that stays open warns that it closes: %s", w.Body.String())
	}
}

func TestBatchRowsCarryChecks(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	body := "length,alpha,t_min,t_max,t_install,gap_install,max_gap\n" +
		"60 m,12e-6/K,-36 degC,59 degC,12 degC,20 mm,100 mm\n" + // closes (see closingJoint)
		"60 m,12e-6/K,-36 degC,59 degC,12 degC,60 mm,\n" // stays open, no max_gap check
	w := post(t, r, "/v1/batch/joints/gap", "text/csv", "", body)
	if w.Code != http.StatusOK {
		t.Fatalf("status %d: %s", w.Code, w.Body)
	}
	recs := readCSV(t, w.Body.Bytes())
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	for _, name := range gapCheckNames {
		if _, ok := col["check_"+name]; !ok {
			t.Errorf("no column check_%s in %q", name, recs[0])
		}
	}
	if len(recs) != 3 {
		t.Fatalf("%d records, want a header and 2 rows", len(recs))
	}
	closes, open := recs[1], recs[2]
	if got := closes[col["check_gap_stays_open"]]; got != "fail" {
		t.Errorf("closing joint: check_gap_stays_open = %q, want fail", got)
	}
	if got := closes[col["check_within_max_gap"]]; got != "pass" {
		t.Errorf("closing joint: check_within_max_gap = %q, want pass (gap at t_min 54.56 mm)", got)
	}
	if !strings.Contains(closes[col["warnings"]], closingWarning) {
		t.Errorf("closing joint: warnings %q lack %q", closes[col["warnings"]], closingWarning)
	}
	if got := open[col["check_gap_stays_open"]]; got != "pass" {
		t.Errorf("open joint: check_gap_stays_open = %q, want pass", got)
	}
	if got := open[col["check_within_max_gap"]]; got != "" {
		t.Errorf("open joint without max_gap: check_within_max_gap = %q, want empty", got)
	}
	// Each caution once, in the first row it applies to.
	if got := closes[col["cautions"]]; !strings.Contains(got, standingCautions[2]) || !strings.Contains(got, jointCautions[1]) {
		t.Errorf("first row cautions %q lack the standing or joint ones", got)
	}
	if got := open[col["cautions"]]; got != "" {
		t.Errorf("second row cautions %q, want none repeated", got)
	}

	// The JSON answer has the same keys: "fail", "pass" or null.
	w = post(t, r, "/v1/batch/joints/gap?format=json", "text/csv", "", body)
	var rows []map[string]any
	if err := json.Unmarshal(w.Body.Bytes(), &rows); err != nil {
		t.Fatalf("%v: %s", err, w.Body)
	}
	if rows[0]["check_gap_stays_open"] != "fail" || rows[1]["check_within_max_gap"] != nil {
		t.Errorf("JSON rows: %v", rows)
	}
}

// A setting table is a table per case: it is not offered as a batch.
func TestScheduleIsNoBatch(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	w := post(t, r, "/v1/batch/joints/gap/schedule", "text/csv", "", "length,alpha,t_min,t_max,min_gap\n60 m,12e-6/K,-25 degC,50 degC,20 mm\n")
	if w.Code != http.StatusNotFound || !strings.Contains(w.Body.String(), "a table per case") || !strings.Contains(w.Body.String(), "batch joints/gap with one row per installation temperature") {
		t.Errorf("status %d, body %s; want 404 saying why and what to batch instead", w.Code, w.Body)
	}
}

// The chart of a setting table prints its warnings and cautions below
// the plot: a printed chart travels alone.
func TestChartCarriesCautions(t *testing.T) {
	r := newTestHandler(t).Router()
	target := "/v1/joints/gap/schedule?length=60%20m&alpha=12e-6/K&t_min=-25%20degC&t_max=50%20degC&min_gap=20%20mm&max_gap=50%20mm&format=svg"
	w := do(t, r, http.MethodGet, target, "", "")
	if w.Code != http.StatusOK {
		t.Fatalf("status %d: %s", w.Code, w.Body)
	}
	svg := w.Body.String()
	// max_gap 50 mm is below min_gap + range = 20 + 54 = 74 mm (alpha L
	// (t_max - t_min), AASHTO LRFD eq. 3.12.2.3-1, from memory): it fails.
	for _, want := range []string{"check within_max_gap fails", "Preliminary engineering calculation", "licensed engineer"} {
		if !strings.Contains(svg, want) {
			t.Errorf("the chart lacks %q", want)
		}
	}
}

func hasPrefixIn(list []string, prefix string) bool {
	for _, s := range list {
		if strings.HasPrefix(s, prefix) {
			return true
		}
	}
	return false
}

// A batch row whose result is not a finite number says which, in the
// words of the single request (no physical value is checked here).
func TestBatchRowNotFinite(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	recs := postCSVBatch(t, r, "restraint", "material,delta_t,length,radius_of_gyration,end_condition\nstructural-steel,40 K,5e-324 m,57 mm,pinned\n", 1)
	single := decodeProblem(t, do(t, r, http.MethodGet, "/v1/restraint?material=structural-steel&delta_t=40%20K&length=5e-324%20m&radius_of_gyration=57%20mm&end_condition=pinned", "", ""))
	if got := recs[1][len(recs[1])-1]; got != single.Detail || !strings.Contains(got, "critical_stress") {
		t.Errorf("row error %q, single request %q; want the same, naming critical_stress", got, single.Detail)
	}
}

// A spreadsheet cell reads a check as text: result=check_<name> answers
// pass or fail, beside the numbers of the same request.
func TestTextCheckResult(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range []struct{ target, want string }{
		{"/v1/joints/gap?" + closingJoint + "&format=text&result=check_gap_stays_open", "fail"},
		{"/v1/joints/gap?" + strings.Replace(closingJoint, "gap_install=20", "gap_install=60", 1) + "&format=text&result=check_gap_stays_open", "pass"},
		{"/v1/joints/gap?" + closingJoint + "&format=text&result=gap_at_t_max", "-13.84"},
		// A setting table's check fails when a row fails: max_gap 50 mm
		// against min_gap + range = 74 mm (see TestChartCarriesCautions).
		{"/v1/joints/gap/schedule?length=60%20m&alpha=12e-6/K&t_min=-25%20degC&t_max=50%20degC&min_gap=20%20mm&max_gap=50%20mm&format=text&result=check_within_max_gap", "fail"},
	} {
		w := do(t, r, http.MethodGet, tc.target, "", "")
		if w.Code != http.StatusOK || w.Body.String() != tc.want {
			t.Errorf("%s: status %d, body %q; want %q", tc.target, w.Code, w.Body, tc.want)
		}
	}
	// A check these inputs do not have is not computed; an unknown one is
	// not a result, and the message lists the checks.
	if w := do(t, r, http.MethodGet, "/v1/joints/gap?"+closingJoint+"&format=text&result=check_within_max_gap", "", ""); w.Code != http.StatusUnprocessableEntity {
		t.Errorf("check without max_gap: status %d, want 422", w.Code)
	}
	w := do(t, r, http.MethodGet, "/v1/joints/gap?"+closingJoint+"&format=text&result=check_nope", "", "")
	if pr := decodeProblem(t, w); w.Code != http.StatusBadRequest || !strings.Contains(pr.Detail, "checks: check_gap_stays_open") {
		t.Errorf("unknown check: status %d, %q", w.Code, pr.Detail)
	}
	// Calculations without checks take no check_ result.
	if w := do(t, r, http.MethodGet, "/v1/expansion/linear?length=1%20m&alpha=1e-5/K&delta_t=1%20K&format=text&result=check_gap_stays_open", "", ""); w.Code != http.StatusBadRequest {
		t.Errorf("check on linear: status %d, want 400", w.Code)
	}
}

// A JSON batch row with bad members says what the single POST of the same
// object says, every bad member named (no physical value is checked).
func TestBatchJSONRowErrorsAsSingle(t *testing.T) {
	r := batchTestHandler(t, Options{}).Router()
	for _, elem := range []string{
		`{"length": null, "alpha": "1e-5/K", "delta_t": "x"}`,
		`{"length": {"value": 48}, "alpha": [1], "delta_t": "50 K"}`,
		`{"length": "3 m", "alpha": "1e-5/K", "delta_t": "5 K", "length": "4 m"}`,
	} {
		single := decodeProblem(t, do(t, r, http.MethodPost, "/v1/expansion/linear", "application/json", elem))
		w := post(t, r, "/v1/batch/expansion/linear?format=json", "application/json", "", "["+elem+"]")
		var rows []map[string]any
		if err := json.Unmarshal(w.Body.Bytes(), &rows); err != nil || len(rows) != 1 {
			t.Fatalf("%s: %v: %s", elem, err, w.Body)
		}
		if got := rows[0]["error"]; got != single.Detail {
			t.Errorf("%s: row error %q, single POST %q", elem, got, single.Detail)
		}
	}
}
