package handlers

import (
	"math"
	"net/http"
	"net/url"
	"slices"
	"strings"
	"testing"

	"github.com/thermalmovement/service/internal/materials"
	"github.com/thermalmovement/service/internal/units"
)

func q(kv ...string) string {
	v := url.Values{}
	for i := 0; i < len(kv); i += 2 {
		v.Set(kv[i], kv[i+1])
	}
	return v.Encode()
}

func closeTo(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)+1e-15
}

func TestLinearHTTP(t *testing.T) {
	r := newTestHandler(t).Router()
	tests := []struct {
		name   string
		query  string
		result string
		want   float64
		unit   string
	}{
		// EN 1993-1-1 3.2.6 steel 12e-6/K (from memory, not re-read): 48 m x 12e-6 x 50 K = 28.8 mm.
		{"catalogue steel", q("length", "48 m", "material", "structural-steel", "t_initial", "-15 degC", "t_final", "35 degC"), "delta_length", 28.8, "mm"},
		// AASHTO LRFD 6.4.1 steel 6.5e-6/degF and eq. 3.12.2.3-1 (memory):
		// 100 ft x 6.5e-6 x 120 degF = 0.078 ft = 0.936 in.
		{"AASHTO in us units", q("length", "100 ft", "alpha", "6.5e-6 1/degF", "delta_t", "120 degF", "units", "us"), "delta_length", 0.936, "in"},
		// The same with the temperatures absolute: 0..120 degF is still a 120 degF difference.
		{"absolute degF", q("length", "100 ft", "alpha", "6.5e-6 1/degF", "t_initial", "0 degF", "t_final", "120 degF", "delta_length_unit", "in"), "delta_length", 0.936, "in"},
		// A per-degF coefficient is per Fahrenheit interval (NIST SP 811, from memory): 6.5e-6/degF = 1.17e-5/K.
		{"alpha in SI", q("length", "100 ft", "alpha", "6.5e-6 1/degF", "delta_t", "120 degF"), "alpha_mean", 1.17e-5, "1/K"},
		{"object-free ppm", q("length", "10 m", "alpha", "11.7 ppm/K", "delta_t", "10 K"), "delta_length", 1.17, "mm"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			d := decode(t, do(t, r, "GET", "/v1/expansion/linear?"+tt.query, "", ""))
			checkResult(t, d, tt.result, tt.want, tt.unit, 1e-11, 3)
		})
	}
}

func TestLinearPOSTEqualsGET(t *testing.T) {
	r := newTestHandler(t).Router()
	get := do(t, r, "GET", "/v1/expansion/linear?"+q("length", "30 m", "alpha", "12e-6/K", "delta_t", "40 K"), "", "")
	post := do(t, r, "POST", "/v1/expansion/linear", "application/json", `{"length": {"value": 30, "unit": "m"}, "alpha": "12e-6/K", "delta_t": "40 K"}`)
	if get.Code != 200 || post.Code != 200 || get.Body.String() != post.Body.String() {
		t.Errorf("GET and POST differ:\n%s\n%s", get.Body.String(), post.Body.String())
	}
}

func TestLinearCurves(t *testing.T) {
	r := newTestHandler(t).Router()
	// Cryogenic: 304 stainless 293 K -> 77 K by the NIST fit (read):
	// e = (1 + f(77)) / (1 + f(293)) - 1 with f the published polynomial.
	f := func(T float64) float64 {
		return (-2.9554e2 - 3.9811e-1*T + 9.2683e-3*T*T - 2.0261e-5*T*T*T + 1.7127e-8*T*T*T*T) * 1e-5
	}
	want := 10 * ((1+f(77))/(1+f(293)) - 1) * 1000
	d := decode(t, do(t, r, "GET", "/v1/expansion/linear?"+q("length", "10 m", "material", "stainless-steel-304", "t_initial", "293 K", "t_final", "77 K"), "", ""))
	if got := d.Results["delta_length"].Value; !closeTo(got, want, 1e-9) {
		t.Errorf("304 293->77 K delta_length = %v mm, want %v", got, want)
	}
	if !strings.Contains(d.Method, "curve") && !strings.Contains(d.Method, "strain") {
		t.Errorf("method does not name the curve: %q", d.Method)
	}
	// Beyond every data of steel: 422 naming the material, unless extrapolate.
	w := do(t, r, "GET", "/v1/expansion/linear?"+q("length", "10 m", "material", "structural-steel", "t_initial", "20 degC", "t_final", "1500 degC"), "", "")
	if w.Code != http.StatusUnprocessableEntity {
		t.Fatalf("steel to 1500 degC: status %d, want 422", w.Code)
	}
	if p := decodeProblem(t, w); len(p.Errors) != 1 || p.Errors[0].Parameter != "material" {
		t.Errorf("problem names %+v, want material", p.Errors)
	}
	d = decode(t, do(t, r, "GET", "/v1/expansion/linear?"+q("length", "10 m", "material", "structural-steel", "t_initial", "20 degC", "t_final", "1500 degC", "extrapolate", "true"), "", ""))
	if len(d.Warnings) == 0 {
		t.Error("extrapolated answer carries no warning")
	}
	// Concrete has a constant coefficient only (10e-6/K, from memory of
	// EN 1992-1-1 3.1.3(5), over the catalogue's -30..60 degC): beyond it,
	// the same 422, in every format; extrapolate=true computes
	// 48 m x 10e-6 x 50 K = 24 mm with a warning.
	for _, format := range []string{"json", "text"} {
		w = do(t, r, "GET", "/v1/expansion/linear?"+q("length", "48 m", "material", "concrete", "t_initial", "20 degC", "t_final", "3000 degC", "format", format), "", "")
		if w.Code != http.StatusUnprocessableEntity {
			t.Fatalf("concrete to 3000 degC, format %s: status %d, want 422", format, w.Code)
		}
	}
	if p := decodeProblem(t, w); len(p.Errors) != 1 || p.Errors[0].Parameter != "material" || !strings.Contains(p.Errors[0].Detail, "extrapolate=true") {
		t.Errorf("problem names %+v, want material and the way out", p.Errors)
	}
	d = decode(t, do(t, r, "GET", "/v1/expansion/linear?"+q("length", "48 m", "material", "concrete", "t_initial", "20 degC", "t_final", "70 degC", "extrapolate", "true"), "", ""))
	if got := d.Results["delta_length"].Value; !closeTo(got, 24, 1e-12) || len(d.Warnings) == 0 {
		t.Errorf("concrete 20..70 degC extrapolated: delta_length %v mm, warnings %q; want 24 mm with a warning", got, d.Warnings)
	}
}

func TestAreaHTTP(t *testing.T) {
	r := newTestHandler(t).Router()
	// Isotropic plate: A (1 + alpha dT)^2 (any physics handbook, from memory).
	e := 24e-6 * 50.0
	d := decode(t, do(t, r, "GET", "/v1/expansion/area?"+q("length", "2.4 m", "width", "1.2 m", "alpha", "24e-6/K", "delta_t", "50 K"), "", ""))
	if got, want := d.Results["final_area"].Value, 2.88*(1+e)*(1+e); !closeTo(got, want, 1e-11) {
		t.Errorf("final_area = %v, want %v", got, want)
	}
	if got, want := d.Results["delta_area_linear"].Value, 2.88*2*e*1e6; !closeTo(got, want, 1e-11) {
		t.Errorf("delta_area_linear = %v mm2, want %v", got, want)
	}
	// A hole grows as the material would: diameter x (1 + e).
	d = decode(t, do(t, r, "GET", "/v1/expansion/area?"+q("diameter", "80 mm", "hole", "true", "alpha", "12e-6/K", "delta_t", "100 K"), "", ""))
	if got, want := d.Results["delta_diameter"].Value, 80*12e-6*100; !closeTo(got, want, 1e-11) {
		t.Errorf("hole delta_diameter = %v mm, want %v", got, want)
	}
	if !strings.Contains(d.Method, "hole") {
		t.Errorf("method does not mention the hole: %q", d.Method)
	}
	// Orthotropic.
	d = decode(t, do(t, r, "GET", "/v1/expansion/area?"+q("length", "1 m", "width", "1 m", "alpha_x", "10e-6/K", "alpha_y", "30e-6/K", "delta_t", "100 K"), "", ""))
	if got, want := d.Results["final_area"].Value, 1.001*1.003; !closeTo(got, want, 1e-12) {
		t.Errorf("orthotropic final_area = %v, want %v", got, want)
	}
}

func TestVolumeHTTP(t *testing.T) {
	r := newTestHandler(t).Router()
	// Water 10 -> 80 degC in a full steel vessel: V rho(10)/rho(80) by Kell
	// (1975), capacity (1 + 12e-6 x 70)^3 (verification.md, Liquids).
	kell := func(c float64) float64 {
		return (999.83952 + 16.945176*c - 7.9870401e-3*c*c - 46.170461e-6*c*c*c + 105.56302e-9*c*c*c*c - 280.54253e-12*c*c*c*c*c) / (1 + 16.879850e-3*c)
	}
	v := 2.5
	liquid := v * kell(10) / kell(80)
	capacity := v * math.Pow(1+12e-6*70, 3)
	d := decode(t, do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "2.5 m3", "material", "water", "t_initial", "10 degC", "t_final", "80 degC", "vessel_material", "structural-steel"), "", ""))
	if got := d.Results["final_volume"].Value; !closeTo(got, liquid, 1e-11) {
		t.Errorf("final_volume = %v, want %v", got, liquid)
	}
	if got, want := d.Results["net_overflow"].Value, (liquid-capacity)*1000; !closeTo(got, want, 1e-9) {
		t.Errorf("net_overflow = %v L, want %v", got, want)
	}
	if len(d.Warnings) == 0 {
		t.Error("an overflowing vessel carries no warning")
	}
	// Solid: V (1 + e)^3 and 3 e V.
	d = decode(t, do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "1 m3", "alpha", "10e-6/K", "delta_t", "100 K"), "", ""))
	if got, want := d.Results["delta_volume"].Value, (math.Pow(1.001, 3)-1)*1000; !closeTo(got, want, 1e-11) {
		t.Errorf("solid delta_volume = %v L, want %v", got, want)
	}
	if got := d.Results["delta_volume_linear"].Value; !closeTo(got, 3, 1e-12) {
		t.Errorf("solid delta_volume_linear = %v L, want 3", got)
	}
	// Water by a difference only: it needs absolute temperatures.
	w := do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "1 m3", "material", "water", "delta_t", "10 K"), "", "")
	if w.Code != http.StatusUnprocessableEntity {
		t.Errorf("water by delta_t: %d, want 422", w.Code)
	}
}

// TestContractErrors walks the contract's error list over HTTP.
func TestContractErrors(t *testing.T) {
	r := newTestHandler(t).Router()
	tests := []struct {
		name, method, target, ctype, body string
		status                            int
		params                            []string
	}{
		{"bare number", "GET", "/v1/expansion/linear?" + q("length", "30", "alpha", "12e-6/K", "delta_t", "10 K"), "", "", 400, []string{"length"}},
		{"unknown unit", "GET", "/v1/expansion/linear?" + q("length", "30 mtr", "alpha", "12e-6/K", "delta_t", "10 K"), "", "", 400, []string{"length"}},
		{"NaN", "GET", "/v1/expansion/linear?" + q("length", "NaN m", "alpha", "12e-6/K", "delta_t", "10 K"), "", "", 400, []string{"length"}},
		{"Inf", "GET", "/v1/expansion/linear?" + q("length", "1e999 m", "alpha", "12e-6/K", "delta_t", "10 K"), "", "", 400, []string{"length"}},
		{"wrong dimension", "GET", "/v1/expansion/linear?" + q("length", "30 kg", "alpha", "12e-6/K", "delta_t", "10 K"), "", "", 400, []string{"length"}},
		{"missing", "GET", "/v1/expansion/linear?" + q("alpha", "12e-6/K", "delta_t", "10 K"), "", "", 400, []string{"length"}},
		{"unknown field", "GET", "/v1/expansion/linear?" + q("length", "3 m", "alpha", "12e-6/K", "delta_t", "10 K", "lenght", "3 m"), "", "", 400, []string{"lenght"}},
		{"every bad field at once", "GET", "/v1/expansion/linear?" + q("length", "3", "alpha", "12e-6/m", "delta_t", "10"), "", "", 400, []string{"length", "alpha", "delta_t"}},
		{"malformed JSON", "POST", "/v1/expansion/linear", "application/json", `{"length": "3 m",`, 400, nil},
		{"trailing data", "POST", "/v1/expansion/linear", "application/json", `{"length": "3 m", "alpha": "12e-6/K", "delta_t": "1 K"} {}`, 400, nil},
		{"duplicate key", "POST", "/v1/expansion/linear", "application/json", `{"length": "3 m", "length": "4 m", "alpha": "12e-6/K", "delta_t": "1 K"}`, 400, nil},
		{"unknown material", "GET", "/v1/expansion/linear?" + q("length", "3 m", "material", "unobtainium", "delta_t", "10 K"), "", "", 404, []string{"material"}},
		{"unknown route", "GET", "/v1/expansion/linearr", "", "", 404, nil},
		{"unknown material id", "GET", "/v1/materials/unobtainium", "", "", 404, nil},
		{"wrong method", "DELETE", "/v1/expansion/linear", "", "", 405, nil},
		{"body too large", "POST", "/v1/expansion/linear", "application/json", `{"length": "` + strings.Repeat("1", 70<<10) + ` m"}`, 413, nil},
		{"wrong content type", "POST", "/v1/expansion/linear", "text/plain", `length=3m`, 415, nil},
		{"negative length", "GET", "/v1/expansion/linear?" + q("length", "-3 m", "alpha", "12e-6/K", "delta_t", "10 K"), "", "", 422, []string{"length"}},
		{"below 0 K", "GET", "/v1/expansion/linear?" + q("length", "3 m", "alpha", "12e-6/K", "t_initial", "-300 degC", "t_final", "20 degC"), "", "", 422, []string{"t_initial"}},
		{"contradictory", "GET", "/v1/expansion/linear?" + q("length", "3 m", "alpha", "12e-6/K", "delta_t", "10 K", "t_initial", "0 degC", "t_final", "10 degC"), "", "", 422, []string{"delta_t"}},
		{"bad output unit", "GET", "/v1/expansion/linear?" + q("length", "3 m", "alpha", "12e-6/K", "delta_t", "10 K", "delta_length_unit", "degC"), "", "", 400, []string{"delta_length_unit"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			w := do(t, r, tt.method, tt.target, tt.ctype, tt.body)
			if w.Code != tt.status {
				t.Fatalf("status %d, want %d: %s", w.Code, tt.status, w.Body.String())
			}
			p := decodeProblem(t, w)
			if p.Status != tt.status || p.Type == "" || p.Title == "" || p.Detail == "" {
				t.Errorf("incomplete problem %+v", p)
			}
			checkNames(t, p, tt.params...)
		})
	}
}

func TestVolumeBetaWinsOverMaterial(t *testing.T) {
	r := newTestHandler(t).Router()
	// dV = beta V dT by definition of the mean volumetric coefficient
	// (common practice, no published source): 1 m3 x 2e-4 x 10 K = 2 L.
	d := decode(t, do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "1 m3", "beta", "2e-4/K", "material", "structural-steel", "delta_t", "10 K"), "", ""))
	if got := d.Results["delta_volume"].Value; !closeTo(got, 2, 1e-12) {
		t.Errorf("delta_volume = %v L, want 2", got)
	}
	if len(d.Warnings) == 0 {
		t.Error("no warning that beta was used instead of the catalogue")
	}
}

// Two shapes at once contradict each other: one 422 naming the second,
// and no "unknown parameter" for it (contract: 422 for contradictory
// inputs).
func TestAreaShapesContradict(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range []struct{ query, field, first string }{
		{"diameter=12%20mm&area=1%20m2", "diameter", "area"},
		{"length=2%20m&width=1%20m&area=2%20m2", "length", "area"},
		{"length=2%20m&width=1%20m&diameter=80%20mm", "diameter", "length"},
	} {
		w := do(t, r, http.MethodGet, "/v1/expansion/area?"+tc.query+"&alpha=1e-5/K&delta_t=1%20K", "", "")
		pr := decodeProblem(t, w)
		if w.Code != http.StatusUnprocessableEntity || len(pr.Errors) != 1 || pr.Errors[0].Parameter != tc.field ||
			!strings.Contains(pr.Errors[0].Detail, "contradicts "+tc.first) {
			t.Errorf("%s: status %d, errors %+v; want 422 with one error: %s contradicts %s", tc.query, w.Code, pr.Errors, tc.field, tc.first)
		}
	}
	// Three shapes: both that contradict the first are named.
	w := do(t, r, http.MethodGet, "/v1/expansion/area?area=1%20m2&length=2%20m&width=1%20m&diameter=80%20mm&alpha=1e-5/K&delta_t=1%20K", "", "")
	if pr := decodeProblem(t, w); w.Code != http.StatusUnprocessableEntity || len(pr.Errors) != 2 || pr.Errors[0].Parameter != "length" || pr.Errors[1].Parameter != "diameter" {
		t.Errorf("three shapes: status %d, errors %+v; want 422 naming length and diameter", w.Code, pr.Errors)
	}
}

// alpha_model=curve asks for a catalogue curve; with an explicit alpha
// there is none to use, and the answer says so rather than ignoring it.
func TestCurveModelWithExplicitAlphaWarns(t *testing.T) {
	r := newTestHandler(t).Router()
	d := decode(t, do(t, r, http.MethodGet, "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&t_initial=20%20degC&t_final=70%20degC&alpha_model=curve", "", ""))
	if !anyContains(d.Warnings, "alpha_model=curve") {
		t.Errorf("no warning that the curve model does not apply: %v", d.Warnings)
	}
	// 12e-6/K x 48 m x 50 K = 28.8 mm (dL = alpha L dT, ASTM E228 mean coefficient, from memory).
	checkResult(t, d, "delta_length", 28.8, "mm", 1e-12, len(standingCautions))
}

// TestMixedTemperatureScales: t_* fields are absolute temperatures, and
// "20 degC" beside "50 K" is most often a rise of 50 K written in the
// wrong field. It is computed as written (50 K is -223.15 degC: T(K) =
// t(degC) + 273.15, from memory of NIST SP 811, not re-read) and the
// answer says so; scales that both have their zero elsewhere (degC,
// degF) or one scale throughout raise nothing.
func TestMixedTemperatureScales(t *testing.T) {
	r := newTestHandler(t).Router()
	const hint = "fields named t_* are absolute temperatures"
	for _, tc := range []struct {
		name, t1, t2 string
		warn         bool
	}{
		{"degC then K", "20 degC", "50 K", true},
		{"K then degC", "293.15 K", "50 degC", true},
		{"degF then degR", "68 degF", "600 degR", true},
		{"degC then degF", "20 degC", "100 degF", false},
		{"kelvin throughout", "300 K", "350 K", false},
		{"K then degR, both from absolute zero", "300 K", "600 degR", false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := decode(t, do(t, r, "GET", "/v1/expansion/linear?"+q("length", "48 m", "alpha", "12e-6/K", "t_initial", tc.t1, "t_final", tc.t2), "", ""))
			got := len(d.Warnings) > 0 && strings.Contains(d.Warnings[0], hint)
			if got != tc.warn {
				t.Errorf("warnings %q; want the scale warning: %v", d.Warnings, tc.warn)
			}
		})
	}
	d := decode(t, do(t, r, "GET", "/v1/expansion/linear?"+q("length", "48 m", "alpha", "12e-6/K", "t_initial", "20 degC", "t_final", "50 K"), "", ""))
	if !strings.Contains(d.Warnings[0], "50 K is -223.15 degC") {
		t.Errorf("warning %q does not give 50 K in degC", d.Warnings[0])
	}
	// Told once, however many temperatures change scale: a joint reads
	// three (NIST SP 811 conversions, from memory: 260 K is -13.15 degC,
	// 285 K is 11.85 degC).
	b := readJointBody(t, jointGet(t, r, "/v1/joints/gap", jq("length", "60 m", "alpha", "12e-6/K", "t_min", "260 K", "t_max", "40 degC", "t_install", "285 K", "min_gap", "20 mm")))
	if n := strings.Count(strings.Join(b.Warnings, "\n"), hint); n != 1 {
		t.Errorf("joint with two kelvin temperatures beside degC: %d scale warnings in %q, want 1", n, b.Warnings)
	}
	// A batch row carries the warning in its warnings column; the next row,
	// on one scale, does not.
	recs := postCSVBatch(t, r, "expansion/linear", "length,alpha,t_initial,t_final\n48 m,12e-6/K,20 degC,50 K\n48 m,12e-6/K,20 degC,50 degC\n", 2)
	col := slices.Index(recs[0], "warnings")
	if col < 0 || !strings.Contains(recs[1][col], hint) || recs[2][col] != "" {
		t.Errorf("batch warnings column: %q and %q; want the scale warning on the first row only", recs[1][col], recs[2][col])
	}
	// A joint whose t_max came out below t_min says what each one is.
	w := do(t, r, "GET", "/v1/joints/gap?"+q("length", "60 m", "alpha", "12e-6/K", "t_min", "-36 degC", "t_max", "95 K", "t_install", "12 degC", "min_gap", "20 mm"), "", "")
	if p := decodeProblem(t, w); w.Code != http.StatusUnprocessableEntity || len(p.Errors) == 0 || !strings.Contains(p.Errors[0].Detail, "t_max is -178.15 degC, t_min -36 degC") {
		t.Errorf("joint with t_max 95 K: %d %+v; want 422 giving both in degC", w.Code, p.Errors)
	}
}

// TestWaterAboveBoiling: Kell's (1975) equation covers liquid water to
// 150 degC at 1 atm (its title: "from 0 to 150 degC"); water at
// atmospheric pressure boils at 100 degC (any steam table, from memory),
// so above it the answer says it holds for pressurised water only.
func TestWaterAboveBoiling(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range []struct {
		t2   string
		warn bool
	}{{"90 degC", false}, {"100 degC", false}, {"120 degC", true}} {
		d := decode(t, do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "1 m3", "material", "water", "t_initial", "20 degC", "t_final", tc.t2), "", ""))
		got := false
		for _, w := range d.Warnings {
			got = got || strings.Contains(w, "boils at atmospheric pressure")
		}
		if got != tc.warn {
			t.Errorf("water 20 degC to %s: warnings %q, want the boiling warning: %v", tc.t2, d.Warnings, tc.warn)
		}
	}
}

// TestJoinedCurvesAnswer: an aluminium facade mullion (demo data, 6 m)
// from -20 to 80 degC lies across the catalogue's NIST fit (to 300 K) and
// its EN 1999-1-2 formula (from 20 degC). The answer says where they are
// joined and cites both; the strain itself is checked against the two
// published formulas in internal/materials (TestChainedCurves). Here: the
// length change is L0 e with e from the catalogue (ASTM E228 definition,
// from memory), and no warning of a constant used beyond its range.
func TestJoinedCurvesAnswer(t *testing.T) {
	h := newTestHandler(t)
	al, _ := h.cat.Get("aluminium-6061")
	e, err := al.Linear(units.Celsius(-20), units.Celsius(80), materials.Auto, false)
	if err != nil {
		t.Fatal(err)
	}
	d := decode(t, do(t, h.Router(), http.MethodGet, "/v1/expansion/linear?length=6%20m&material=aluminium-6061&t_initial=-20%20degC&t_final=80%20degC", "", ""))
	checkResult(t, d, "delta_length", 6000*e.Strain, "mm", 1e-9, len(standingCautions))
	if !strings.Contains(d.Method, "joined at tj = 26.85 degC") || !anyContains(d.References, "NIST") || !anyContains(d.References, "EN 1999-1-2") || len(d.Warnings) != 0 {
		t.Errorf("method %q, references %q, warnings %q; want the join at 26.85 degC, both curves cited, no warning", d.Method, d.References, d.Warnings)
	}
}

// TestImplausibleInputsWarn: temperatures and changes beyond what
// structures, pipes and vessels meet (over 2000 degC, changes over
// 2000 K) and a modulus under 1 MPa are computed with a warning to check
// the value. The bounds are common practice, no published source; the
// 9000 degF case is (9000 - 32) / 1.8 = 4982.2 degC, and a change of
// 3700 degF is 3700 / 1.8 = 2056 K (NIST SP 811, from memory).
func TestImplausibleInputsWarn(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range []struct {
		query, warn string // warn: "" for none
	}{
		{"/v1/expansion/linear?length=1%20m&alpha=12e-6/K&delta_t=2000%20K", ""},
		{"/v1/expansion/linear?length=1%20m&alpha=12e-6/K&delta_t=-2001%20K", "delta_t is -2001 K, a change over 2000 K"},
		{"/v1/expansion/linear?length=1%20m&alpha=12e-6/K&delta_t=3700%20degF", "delta_t is 3700 degF (2056 K), a change over 2000 K"},
		{"/v1/expansion/linear?length=1%20m&alpha=12e-6/K&t_initial=-270%20degC&t_final=1999%20degC", "the change from t_initial to t_final is 2269 K, a change over 2000 K"},
		{"/v1/expansion/linear?length=1%20m&alpha=12e-6/K&t_initial=20%20degC&t_final=2000%20degC", ""},
		{"/v1/expansion/linear?length=1%20m&alpha=12e-6/K&t_initial=20%20degC&t_final=2001%20degC", "t_final is 2001 degC, above 2000 degC"},
		{"/v1/expansion/linear?length=1%20m&alpha=12e-6/K&t_initial=20%20degF&t_final=9000%20degF", "t_final is 9000 degF (4982.22 degC), above 2000 degC"},
		{"/v1/restraint?alpha=12e-6/K&delta_t=40%20K&modulus=210%20kPa&yield_strength=1%20MPa", "modulus is 210 kPa, under 1 MPa"},
		{"/v1/restraint?alpha=12e-6/K&delta_t=40%20K&modulus=1%20MPa&yield_strength=1%20MPa", ""},
	} {
		d := decode(t, do(t, r, http.MethodGet, tc.query, "", ""))
		got := anyContains(d.Warnings, "check the value") || anyContains(d.Warnings, "check the unit")
		if tc.warn == "" && got || tc.warn != "" && !anyContains(d.Warnings, tc.warn) {
			t.Errorf("%s: warnings %q; want %q", tc.query, d.Warnings, tc.warn)
		}
	}
}

// TestLiquidBeyondItsRange: a liquid with a constant volumetric
// coefficient only follows the rule of a solid with a constant only: an
// interval outside the coefficient's range is a 422 naming material
// unless extrapolate=true, and then it warns; a difference wider than the
// range warns. Demo data: 1 m3 of ethanol in a demo tank. dV = beta V0 dT
// (volumetric form of ASTM E228's mean coefficient, from memory) with the
// catalogue's 1.1e-3/K (handbook value at 20 degC, from memory of the CRC
// Handbook): 70 K gives 77 L.
func TestLiquidBeyondItsRange(t *testing.T) {
	r := newTestHandler(t).Router()
	base := "/v1/expansion/volume?volume=1%20m3&material=ethanol"
	w := do(t, r, http.MethodGet, base+"&t_initial=20%20degC&t_final=90%20degC", "", "")
	if p := decodeProblem(t, w); w.Code != http.StatusUnprocessableEntity || len(p.Errors) != 1 || p.Errors[0].Parameter != "material" || !strings.Contains(p.Errors[0].Detail, "extrapolate=true") {
		t.Errorf("ethanol 20..90 degC: status %d, errors %+v; want 422 naming material and extrapolate=true", w.Code, p.Errors)
	}
	for _, q := range []string{"&t_initial=20%20degC&t_final=90%20degC&extrapolate=true", "&delta_t=70%20K"} {
		d := decode(t, do(t, r, http.MethodGet, base+q, "", ""))
		checkResult(t, d, "delta_volume", 77, "L", 1e-9, len(standingCautions))
		if !anyContains(d.Warnings, "volumetric coefficient of ethanol holds for") {
			t.Errorf("%s: warnings %q, want one on the coefficient's range", q, d.Warnings)
		}
	}
	d := decode(t, do(t, r, http.MethodGet, base+"&t_initial=10%20degC&t_final=35%20degC", "", ""))
	if len(d.Warnings) != 0 {
		t.Errorf("ethanol within 0..40 degC: warnings %q, want none", d.Warnings)
	}
}

// TestSameScaleDifferenceExact: 50 to 100 degF is the change 50 degF, to
// the last digit: 12e-6/K x 48 m x 50 x 5/9 K = 16 mm (1 degF = 5/9 K,
// NIST SP 811, from memory). Mixed scales still meet at one temperature:
// -40 degF is -40 degC.
func TestSameScaleDifferenceExact(t *testing.T) {
	r := newTestHandler(t).Router()
	for q, want := range map[string]string{
		"t_initial=50%20degF&t_final=100%20degF":  "16",
		"delta_t=50%20degF":                       "16",
		"t_initial=-40%20degF&t_final=-40%20degC": "0",
		"t_initial=-40%20degC&t_final=-40%20degF": "0",
		"t_initial=59%20degF&t_final=60.8%20degF": "0.576",
	} {
		w := do(t, r, http.MethodGet, "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&format=text&"+q, "", "")
		if got := strings.TrimSpace(w.Body.String()); w.Code != http.StatusOK || got != want {
			t.Errorf("%s: %d %q, want %q exactly", q, w.Code, got, want)
		}
	}
	// A reading exactly at a limit stays at it, whatever is read before:
	// 122 degF is 50 degC, the top of EN 1991-1-5 Figure 6.1's Tmax range
	// (+20..+50 degC, as the bridge endpoint's README section states).
	if w := do(t, r, http.MethodGet, "/v1/temperatures/bridge?method=en1991-1-5&shade_t_min=1%20degF&shade_t_max=122%20degF&deck_type=2", "", ""); w.Code != http.StatusOK {
		t.Errorf("shade_t_max=122 degF after shade_t_min=1 degF: %d %s, want 200", w.Code, w.Body)
	}
}

// TestWaterExtrapolationLimits: extrapolate=true takes Kell's (1975)
// equation beyond 0..150 degC, but not above the critical point of water
// (647.096 K, IAPWS-95, from memory), where there is no liquid and the
// polynomial gives a negative density by 500 degC, nor below about
// -40 degC, where supercooled water freezes (homogeneous nucleation, from
// memory) and the equation, whose denominator 1 + 16.879850e-3 t (read)
// is zero at -59.24 degC, gives 25.7 kg/m3 at -58 degC.
func TestWaterExtrapolationLimits(t *testing.T) {
	r := newTestHandler(t).Router()
	base := "/v1/expansion/volume?volume=1%20m3&material=water&t_initial=20%20degC&extrapolate=true&t_final="
	for _, tc := range []struct{ t, want string }{{"500%20degC", "critical point"}, {"-80%20degC", "supercooled water freezes"}, {"-58%20degC", "supercooled water freezes"}, {"-40.01%20degC", "supercooled water freezes"}} {
		w := do(t, r, http.MethodGet, base+tc.t, "", "")
		if p := decodeProblem(t, w); w.Code != http.StatusUnprocessableEntity || len(p.Errors) != 1 || p.Errors[0].Parameter != "t_final" || !strings.Contains(p.Errors[0].Detail, tc.want) {
			t.Errorf("water to %s: status %d, errors %+v; want 422 on t_final saying %q", tc.t, w.Code, p.Errors, tc.want)
		}
	}
	d := decode(t, do(t, r, http.MethodGet, base+"200%20degC", "", ""))
	if !anyContains(d.Warnings, "extrapolated beyond 0..150 degC") || !(d.Results["delta_volume"].Value > 0) {
		t.Errorf("water to 200 degC extrapolated: %+v; want a positive expansion with the extrapolation warning", d)
	}
}

// TestVolumeShrinksToNothing: V = V0 (1 + beta dT) (ASTM E831's mean
// coefficient, applied to volume) is zero or negative when beta dT <= -1,
// a liquid that cannot exist: refused, naming the coefficient or the
// temperature change, as 1 + alpha dT <= 0 is for a solid.
func TestVolumeShrinksToNothing(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range []struct{ query, field string }{
		{q("volume", "1 m3", "beta", "1.1e-3/K", "delta_t", "-1000 K"), "beta"},
		{q("volume", "1 m3", "beta", "-1e-2/K", "delta_t", "99999 K"), "beta"},
		// A catalogue liquid: 1 - 5.7e-4 x 2000 < 0, named by the change.
		{q("volume", "1 m3", "material", "ethylene-glycol", "delta_t", "-2000 K"), "delta_t"},
	} {
		w := do(t, r, "GET", "/v1/expansion/volume?"+tc.query, "", "")
		if w.Code != http.StatusUnprocessableEntity || !strings.Contains(w.Body.String(), `"parameter":"`+tc.field+`"`) {
			t.Errorf("%s: %d %s; want 422 naming %s", tc.query, w.Code, w.Body.String(), tc.field)
		}
	}
	// 1 - 1.1e-3 x 900 = 0.01: still a volume, computed.
	w := do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "1 m3", "beta", "1.1e-3/K", "delta_t", "-900 K"), "", "")
	if w.Code != http.StatusOK {
		t.Errorf("beta dT = -0.99: %d %s", w.Code, w.Body.String())
	}
}

// TestVolumeBandHighEnd: a catalogue liquid whose beta is well below the
// top of its band warns, with how much more the volume changes there:
// ethylene glycol 5.7e-4/K in 5.7..6.4e-4/K (the catalogue's, from memory
// of the CRC Handbook), 6.4 / 5.7 - 1 = 12.28 %; dV = beta V0 dT =
// 5.7e-4 x 1 m3 x 30 K = 17.1 L. Ethanol's band (1.09..1.12e-3/K about
// 1.1e-3) is within 5 % and does not warn.
func TestVolumeBandHighEnd(t *testing.T) {
	r := newTestHandler(t).Router()
	d := decode(t, do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "1 m3", "material", "ethylene-glycol", "t_initial", "10 degC", "t_final", "40 degC"), "", ""))
	if got := d.Results["delta_volume"].Value; math.Abs(got-17.1) > 1e-9 {
		t.Errorf("delta_volume = %v L, want 17.1", got)
	}
	if !anyContains(d.Warnings, "at the high end the volume changes 12.28 % more") {
		t.Errorf("ethylene glycol: warnings %q", d.Warnings)
	}
	d = decode(t, do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "1 m3", "material", "ethanol", "t_initial", "10 degC", "t_final", "40 degC"), "", ""))
	if anyContains(d.Warnings, "high end") {
		t.Errorf("ethanol: warnings %q", d.Warnings)
	}
	// Cooled, the advice is the low level, not an expansion volume.
	d = decode(t, do(t, r, "GET", "/v1/expansion/volume?"+q("volume", "1 m3", "material", "ethylene-glycol", "t_initial", "40 degC", "t_final", "10 degC"), "", ""))
	if !anyContains(d.Warnings, "12.28 % more; check the low level") {
		t.Errorf("ethylene glycol cooled: warnings %q", d.Warnings)
	}
}

// TestAreaOrthotropicSigns: alpha_x and alpha_y are read as alpha is: a
// change with 1 + alpha dT <= 0 is refused (the side would shrink to
// nothing: L = L0 (1 + alpha dT), ASTM E831's mean coefficient), and a
// negative one warns as a likely sign slip. Carbon fibre along its fibres
// is about -0.4e-6/K (the catalogue's cfrp, from memory): 1 m x 1 m warmed
// 50 K shortens by 0.4e-6 x 50 = 20 um that way.
func TestAreaOrthotropicSigns(t *testing.T) {
	r := newTestHandler(t).Router()
	w := do(t, r, "GET", "/v1/expansion/area?"+q("length", "1 m", "width", "1 m", "alpha_x", "-9e-3/K", "alpha_y", "-9e-3/K", "delta_t", "200 K"), "", "")
	if w.Code != http.StatusUnprocessableEntity || !strings.Contains(w.Body.String(), `"parameter":"alpha_x"`) || !strings.Contains(w.Body.String(), `"parameter":"alpha_y"`) {
		t.Errorf("shrinking to nothing: %d %s", w.Code, w.Body)
	}
	d := decode(t, do(t, r, "GET", "/v1/expansion/area?"+q("length", "1 m", "width", "1 m", "alpha_x", "-0.4e-6/K", "alpha_y", "30e-6/K", "delta_t", "50 K"), "", ""))
	if got := d.Results["final_length"].Value; math.Abs(got-(1-20e-6)) > 1e-12 {
		t.Errorf("final_length = %v m, want %v", got, 1-20e-6)
	}
	if !anyContains(d.Warnings, "alpha_x is negative") || anyContains(d.Warnings, "alpha_y is negative") {
		t.Errorf("warnings %q", d.Warnings)
	}
}
