package handlers

import (
	"encoding/json"
	"encoding/xml"
	"flag"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
)

// The golden files under testdata/output are rewritten with
// go test ./internal/handlers/ -run TestOutputGolden -update.
var _ = func() bool {
	if flag.Lookup("update") == nil {
		flag.Bool("update", false, "rewrite golden files")
	}
	return true
}()

func outputUpdate() bool {
	f := flag.Lookup("update")
	return f != nil && f.Value.String() == "true"
}

// outputCases are requests whose text, CSV and XML bodies are kept as
// golden files. The scenarios are demo data.
var outputCases = []struct {
	name, target string
}{
	// Demo: a 30 m bay of a warehouse slab, concrete, from 15 degC at
	// casting to -10 degC in winter.
	{"linear-slab", "/v1/expansion/linear?length=30%20m&material=concrete&t_initial=15%20degC&t_final=-10%20degC"},
	{"linear-slab-us", "/v1/expansion/linear?length=30%20m&material=concrete&t_initial=15%20degC&t_final=-10%20degC&units=us&delta_length_unit=mm"},
	// Demo: an aluminium facade panel of 2.4 m x 1.2 m from 20 degC to 70 degC.
	{"area-panel", "/v1/expansion/area?length=2.4%20m&width=1.2%20m&material=aluminium-6061&t_initial=20%20degC&t_final=70%20degC"},
	// Demo: a steel heat-exchanger shell of 2.5 m3 filled with water, 10 to 80 degC.
	{"volume-shell", "/v1/expansion/volume?volume=2.5%20m3&material=water&vessel_material=structural-steel&t_initial=10%20degC&t_final=80%20degC"},
}

func TestOutputGolden(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range outputCases {
		for _, format := range []string{"text", "csv", "xml"} {
			name := tc.name + "." + format
			t.Run(name, func(t *testing.T) {
				w := do(t, r, http.MethodGet, tc.target+"&format="+format, "", "")
				if w.Code != http.StatusOK {
					t.Fatalf("status %d: %s", w.Code, w.Body)
				}
				if got, want := w.Header().Get("Content-Type"), contentTypes[format]; got != want {
					t.Errorf("Content-Type %q, want %q", got, want)
				}
				path := filepath.Join("testdata", "output", name+".golden")
				if outputUpdate() {
					if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
						t.Fatal(err)
					}
					if err := os.WriteFile(path, w.Body.Bytes(), 0o644); err != nil {
						t.Fatal(err)
					}
				}
				want, err := os.ReadFile(path)
				if err != nil {
					t.Fatalf("%v (run with -update to write it)", err)
				}
				if diff := cmp.Diff(string(want), w.Body.String()); diff != "" {
					t.Errorf("%s differs from %s (-want +got):\n%s", name, path, diff)
				}
			})
		}
	}
}

// jsonNumbers returns the results of a JSON answer as "name [unit]" ->
// the number's text exactly as written.
func jsonNumbers(t *testing.T, w *httptest.ResponseRecorder) (map[string]string, []string) {
	t.Helper()
	var body struct {
		Results json.RawMessage
	}
	if err := json.Unmarshal(w.Body.Bytes(), &body); err != nil {
		t.Fatal(err)
	}
	dec := json.NewDecoder(strings.NewReader(string(body.Results)))
	dec.UseNumber()
	out := map[string]string{}
	var order []string
	// Walk the object in order: {"name": {"value": n, "unit": u}, ...}.
	if _, err := dec.Token(); err != nil {
		t.Fatal(err)
	}
	for dec.More() {
		k, _ := dec.Token()
		var v struct {
			Value json.Number
			Unit  string
		}
		if err := dec.Decode(&v); err != nil {
			t.Fatal(err)
		}
		key := k.(string) + " [" + v.Unit + "]"
		out[key] = v.Value.String()
		order = append(order, key)
	}
	return out, order
}

// TestFormatsCarryTheJSONNumbers checks that text, CSV and XML carry
// every result as the very characters of the JSON answer, in its order.
func TestFormatsCarryTheJSONNumbers(t *testing.T) {
	r := newTestHandler(t).Router()
	for _, tc := range outputCases {
		t.Run(tc.name, func(t *testing.T) {
			jw := do(t, r, http.MethodGet, tc.target, "", "")
			want, order := jsonNumbers(t, jw)
			var notes struct{ Warnings, Cautions []string }
			if err := json.Unmarshal(jw.Body.Bytes(), &notes); err != nil {
				t.Fatal(err)
			}
			if len(notes.Cautions) == 0 {
				t.Fatal("the JSON answer carries no cautions")
			}

			// CSV: the results, then the warnings and the cautions.
			w := do(t, r, http.MethodGet, tc.target+"&format=csv", "", "")
			recs := readCSV(t, w.Body.Bytes())
			if len(recs) != 2 {
				t.Fatalf("CSV has %d rows, want a header and one row", len(recs))
			}
			if diff := cmp.Diff(append(slices.Clone(order), "warnings", "cautions"), recs[0]); diff != "" {
				t.Errorf("CSV header (-JSON order +CSV):\n%s", diff)
			}
			for i, h := range recs[0][:len(order)] {
				if recs[1][i] != want[h] {
					t.Errorf("CSV %s = %q, JSON %q", h, recs[1][i], want[h])
				}
			}
			n := len(order)
			if len(recs[1]) != n+2 {
				t.Fatalf("CSV data row has %d fields, want %d results, warnings and cautions", len(recs[1]), n)
			}
			if got, want := recs[1][n], strings.Join(notes.Warnings, "; "); got != want {
				t.Errorf("CSV warnings = %q, JSON %q", got, want)
			}
			if got, want := recs[1][n+1], strings.Join(notes.Cautions, " "); got != want {
				t.Errorf("CSV cautions = %q, JSON %q", got, want)
			}

			w = do(t, r, http.MethodGet, tc.target+"&format=xml", "", "")
			var doc struct {
				Calculation string `xml:"calculation,attr"`
				Items       []struct {
					XMLName xml.Name
					Unit    string `xml:"unit,attr"`
					Text    string `xml:",chardata"`
				} `xml:",any"`
			}
			if err := xml.Unmarshal(w.Body.Bytes(), &doc); err != nil {
				t.Fatal(err)
			}
			var got, warnings, cautions []string
			for _, it := range doc.Items {
				switch it.XMLName.Local {
				case "warning":
					warnings = append(warnings, it.Text)
					continue
				case "caution":
					cautions = append(cautions, it.Text)
					continue
				}
				key := it.XMLName.Local + " [" + it.Unit + "]"
				got = append(got, key)
				if it.Text != want[key] {
					t.Errorf("XML %s = %q, JSON %q", key, it.Text, want[key])
				}
			}
			if diff := cmp.Diff(order, got); diff != "" {
				t.Errorf("XML elements (-JSON order +XML):\n%s", diff)
			}
			if diff := cmp.Diff(notes.Warnings, warnings, cmpopts.EquateEmpty()); diff != "" {
				t.Errorf("XML warnings (-JSON +XML):\n%s", diff)
			}
			if diff := cmp.Diff(notes.Cautions, cautions); diff != "" {
				t.Errorf("XML cautions (-JSON +XML):\n%s", diff)
			}

			for i, key := range order {
				name, _, _ := strings.Cut(key, " [")
				target := tc.target + "&format=text"
				if i > 0 {
					target += "&result=" + name
				}
				w := do(t, r, http.MethodGet, target, "", "")
				if w.Body.String() != want[key] {
					t.Errorf("text %s = %q, JSON %q", name, w.Body.String(), want[key])
				}
				if _, err := strconv.ParseFloat(w.Body.String(), 64); err != nil {
					t.Errorf("text %s = %q is not a bare number: %v", name, w.Body.String(), err)
				}
			}
		})
	}
}

func TestOutputErrors(t *testing.T) {
	r := newTestHandler(t).Router()
	bad := "/v1/expansion/linear?length=-3%20m&alpha=12e-6/K&delta_t=50%20K"
	tests := []struct {
		name, query string
		status      int
		ct, body    string
	}{
		{"text problem", "&format=text", 422, "application/problem+json", `"status":422`},
		{"text inline", "&format=text&on_error=inline", 200, contentTypes["text"], `#ERROR: invalid parameter "length": must be greater than zero`},
		{"csv inline", "&format=csv&on_error=inline", 200, contentTypes["text"], `#ERROR: invalid parameter "length"`},
		{"xml inline", "&format=xml&on_error=inline", 200, contentTypes["text"], `#ERROR: invalid parameter "length"`},
		{"json ignores inline", "&on_error=inline", 422, "application/problem+json", `"status":422`},
		{"bad format", "&format=xlsx", 400, "application/problem+json", `\"xlsx\" is not one of json, text, csv, xml`},
		{"bad on_error", "&format=text&on_error=quiet", 400, "application/problem+json", `on_error`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			w := do(t, r, http.MethodGet, bad+tt.query, "", "")
			if w.Code != tt.status || w.Header().Get("Content-Type") != tt.ct || !strings.Contains(w.Body.String(), tt.body) {
				t.Errorf("status %d %q %s, want %d %q containing %s", w.Code, w.Header().Get("Content-Type"), w.Body, tt.status, tt.ct, tt.body)
			}
		})
	}
	// result= must name a result.
	w := do(t, r, http.MethodGet, "/v1/expansion/linear?length=3%20m&alpha=12e-6/K&delta_t=50%20K&format=text&result=delta_width", "", "")
	if p := decodeProblem(t, w); w.Code != 400 || !strings.Contains(p.Detail, "results: delta_length, final_length") {
		t.Errorf("unknown result: %d %+v", w.Code, p)
	}
	// A result not computed for these inputs (final_diameter of a rectangle).
	w = do(t, r, http.MethodGet, "/v1/expansion/area?length=2%20m&width=1%20m&alpha=23e-6/K&delta_t=50%20K&format=text&result=final_diameter&on_error=inline", "", "")
	if !strings.HasPrefix(w.Body.String(), "#ERROR: result final_diameter is not computed") {
		t.Errorf("result not computed: %d %s", w.Code, w.Body)
	}
}
