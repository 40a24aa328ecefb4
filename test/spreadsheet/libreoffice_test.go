// Package spreadsheet tests the service from a real spreadsheet program:
// LibreOffice Calc, driven headless through UNO by calc.py, evaluates
// WEBSERVICE and FILTERXML formulas against the service, and the numbers
// it reads must equal the JSON answers bit for bit.
//
// It needs the Debian packages libreoffice-calc and python3-uno (soffice,
// and UNO for /usr/bin/python3). Locally the tests skip without them;
// with CI=true they fail.
package spreadsheet

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"net"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"

	"github.com/thermalmovement/service/internal/handlers"
	"github.com/thermalmovement/service/internal/materials"
)

const python = "/usr/bin/python3"

// The test deployment requires an API key, which every cell sends as the
// api_key query parameter (a cell cannot send headers).
const apiKey = "demo-spreadsheet-key"

// office is a running headless LibreOffice.
type office struct {
	port int
	cmd  *exec.Cmd
}

// startOffice starts soffice with a fresh profile, or skips (fails with
// CI=true) when LibreOffice or python3-uno is missing.
func startOffice(t *testing.T) *office {
	t.Helper()
	missing := func(what string) {
		msg := what + ": install the Debian packages libreoffice-calc python3-uno (apt-get install -y libreoffice-calc python3-uno)"
		if os.Getenv("CI") == "true" {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	soffice, err := exec.LookPath("soffice")
	if err != nil {
		missing("soffice not found")
	}
	if out, err := exec.Command(python, "-c", "import uno").CombinedOutput(); err != nil {
		missing(python + " cannot import uno (" + strings.TrimSpace(string(out)) + ")")
	}
	port := freePort(t)
	profile := t.TempDir()
	cmd := exec.Command(soffice, "--headless", "--invisible", "--norestore", "--nologo", "--nodefault", "--nolockcheck",
		"--accept=socket,host=127.0.0.1,port="+strconv.Itoa(port)+";urp;",
		"-env:UserInstallation=file://"+filepath.ToSlash(profile))
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true} // soffice starts soffice.bin: stop both
	var logs bytes.Buffer
	cmd.Stdout, cmd.Stderr = &logs, &logs
	if err := cmd.Start(); err != nil {
		t.Fatalf("start soffice: %v", err)
	}
	t.Cleanup(func() {
		_ = syscall.Kill(-cmd.Process.Pid, syscall.SIGKILL)
		_ = cmd.Wait()
		if t.Failed() && logs.Len() > 0 {
			t.Logf("soffice output:\n%s", logs.String())
		}
	})
	return &office{port: port, cmd: cmd}
}

func freePort(t *testing.T) int {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	return ln.Addr().(*net.TCPAddr).Port
}

// cellIn is one cell to set; cellOut one read back.
type cellIn struct {
	Cell    string   `json:"cell"`
	Formula string   `json:"formula,omitempty"`
	String  *string  `json:"string,omitempty"`
	Value   *float64 `json:"value,omitempty"`
}

type cellOut struct {
	Sheet   string  `json:"sheet"`
	Cell    string  `json:"cell"`
	Formula string  `json:"formula"`
	String  string  `json:"string"`
	Value   float64 `json:"value"`
	Type    string  `json:"type"`
	Error   int     `json:"error"`
}

// run calls calc.py in the given mode and decodes its JSON.
func (o *office) run(t *testing.T, mode, arg string) map[string]cellOut {
	t.Helper()
	cmd := exec.Command(python, "calc.py", "--port", strconv.Itoa(o.port), mode, arg)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("calc.py %s: %v\n%s", mode, err, stderr.String())
	}
	var cells []cellOut
	if err := json.Unmarshal(out, &cells); err != nil {
		t.Fatalf("calc.py output: %v: %s", err, out)
	}
	m := make(map[string]cellOut, len(cells))
	for _, c := range cells {
		m[c.Cell] = c
	}
	return m
}

// set puts the cells in a fresh sheet, recalculates and reads them.
func (o *office) set(t *testing.T, cells []cellIn) map[string]cellOut {
	t.Helper()
	f := filepath.Join(t.TempDir(), "cells.json")
	b, _ := json.Marshal(cells)
	if err := os.WriteFile(f, b, 0o644); err != nil {
		t.Fatal(err)
	}
	return o.run(t, "set", f)
}

// startService serves the handlers on a loopback port, with one API key.
func startService(t *testing.T) (*httptest.Server, *handlers.Handler) {
	t.Helper()
	cat, err := materials.Load()
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256([]byte(apiKey))
	keys, err := handlers.LoadAPIKeys(strings.NewReader(hex.EncodeToString(sum[:]) + " spreadsheet-test\n"))
	if err != nil {
		t.Fatal(err)
	}
	h, err := handlers.New(zap.NewNop(), prometheus.NewRegistry(), cat, handlers.Options{Version: "spreadsheet-test", APIKeys: keys})
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(h.Router()) // 127.0.0.1
	t.Cleanup(srv.Close)
	return srv, h
}

// jsonResult fetches a request as JSON and returns the number at path
// (below "results") as written, and its unit.
func jsonResult(t *testing.T, rawURL string, path ...string) (string, string) {
	t.Helper()
	v, ok := jsonAt(t, rawURL, path...).(map[string]any)
	if !ok {
		t.Fatalf("%s: no result at %v", rawURL, path)
	}
	return v["value"].(json.Number).String(), v["unit"].(string)
}

// jsonCheck returns "pass" or "fail" for the named check of the JSON
// answer to rawURL, as format=text&result=check_<name> answers it.
func jsonCheck(t *testing.T, rawURL, name string) string {
	t.Helper()
	checks, _ := jsonAt(t, rawURL, "checks").([]any)
	for _, c := range checks {
		if m, ok := c.(map[string]any); ok && m["name"] == name {
			if m["pass"] == true {
				return "pass"
			}
			return "fail"
		}
	}
	t.Fatalf("%s: no check %q", rawURL, name)
	return ""
}

// jsonAt returns the member of the results of the JSON answer to rawURL
// (without its format, result and on_error options) at path.
func jsonAt(t *testing.T, rawURL string, path ...string) any {
	t.Helper()
	u, err := url.Parse(rawURL)
	if err != nil {
		t.Fatal(err)
	}
	q := u.Query()
	for _, k := range []string{"format", "result", "on_error"} {
		q.Del(k)
	}
	u.RawQuery = q.Encode()
	req, _ := http.NewRequest(http.MethodGet, u.String(), nil)
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	if resp.StatusCode != http.StatusOK {
		var p handlers.Problem
		_ = json.NewDecoder(resp.Body).Decode(&p)
		t.Fatalf("GET %s: %d %s", u, resp.StatusCode, p.Detail)
	}
	var body map[string]any
	dec := json.NewDecoder(resp.Body)
	dec.UseNumber()
	if err := dec.Decode(&body); err != nil {
		t.Fatal(err)
	}
	var cur any = body["results"]
	for _, p := range path {
		switch c := cur.(type) {
		case map[string]any:
			cur = c[p]
		case []any:
			i, _ := strconv.Atoi(p)
			if i >= len(c) {
				t.Fatalf("%s: no element %d", u, i)
			}
			cur = c[i]
		}
	}
	return cur
}

// sameBits reports whether a number LibreOffice holds is the float64 of
// the JSON text.
func sameBits(cell float64, jsonText string) bool {
	want, err := strconv.ParseFloat(jsonText, 64)
	return err == nil && math.Float64bits(cell) == math.Float64bits(want)
}

// check is one number read from a spreadsheet: a calculation, its
// parameters, the result (xpath and JSON path) and output options.
type check struct {
	calc   string
	params string // query string
	result string // a top-level result, read with format=text too; or
	xpath  string // for a nested one (a schedule's row), FILTERXML only
	path   []string
}

var checks = []check{
	// Demo data: a footbridge girder, a warehouse slab, a facade panel,
	// a heat-exchanger shell.
	{calc: "expansion/linear", params: "length=48 m&material=structural-steel&t_initial=-15 degC&t_final=35 degC", result: "delta_length"},
	{calc: "expansion/linear", params: "length=48 m&material=structural-steel&t_initial=-15 degC&t_final=35 degC&units=us", result: "final_length"},
	{calc: "expansion/linear", params: "length=30 m&material=stainless-steel-304&t_initial=-150 degC&t_final=20 degC&delta_length_unit=in", result: "delta_length"},
	{calc: "expansion/linear", params: "length=48 m&alpha=12e-6/K&delta_t=50 K", result: "alpha_mean"},
	{calc: "expansion/area", params: "length=2.4 m&width=1.2 m&material=aluminium-6061&t_initial=20 degC&t_final=70 degC", result: "delta_area"},
	{calc: "expansion/area", params: "diameter=80 mm&hole=true&material=structural-steel&delta_t=100 K&units=us", result: "final_diameter"},
	{calc: "expansion/volume", params: "volume=2.5 m3&material=water&vessel_material=structural-steel&t_initial=10 degC&t_final=80 degC", result: "net_overflow"},
	{calc: "expansion/volume", params: "volume=400 L&beta=2.1e-4/K&delta_t=40 K&delta_volume_unit=gal", result: "delta_volume"},
	{calc: "differential", params: "length=2.4 m&material_a=aluminium-6061&material_b=structural-steel&delta_t=50 K", result: "differential_movement"},
	{calc: "restraint", params: "material=structural-steel&delta_t=30 K&area=1200 mm2&units=us", result: "stress"},
	{calc: "joints/gap", params: "length=30 m&material=concrete&t_min=-10 degC&t_max=45 degC&t_install=15 degC&min_gap=5 mm", result: "gap_install"},
	{calc: "joints/gap/schedule", params: "length=30 m&material=concrete&t_min=-10 degC&t_max=45 degC&t_install_from=5 degC&t_install_to=25 degC&t_install_step=10 K&min_gap=5 mm",
		xpath: "//row[2]/gap_install", path: []string{"rows", "1", "gap_install"}},
	{calc: "joints/spacing", params: "thickness=200 mm", result: "spacing_max"},
	{calc: "temperatures/bridge", params: "method=en1991-1-5&shade_t_min=-18 degC&shade_t_max=34 degC&deck_type=3", result: "t_max"},
}

// TestCalcReadsTheJSONNumbers sets WEBSERVICE and FILTERXML formulas for
// every calculation in a fresh Calc sheet and compares what Calc reads
// with the JSON answers, bit for bit.
func TestCalcReadsTheJSONNumbers(t *testing.T) {
	o := startOffice(t)
	srv, h := startService(t)

	// Every calculation endpoint has a check.
	covered := map[string]bool{}
	for _, c := range checks {
		covered["/v1/"+c.calc] = true
	}
	for _, rt := range h.Routes() {
		if rt[0] == http.MethodGet && strings.HasPrefix(rt[1], "/v1/") && !strings.HasPrefix(rt[1], "/v1/materials") && rt[1] != "/v1/units" && !covered[rt[1]] {
			t.Errorf("calculation %s has no spreadsheet check: add one to checks", rt[1])
		}
	}

	str := func(s string) *string { return &s }
	var cells []cellIn
	type expect struct {
		check
		url                       string
		textCell, numCell, xmlNum string
		unitCell, inlineCell      string
	}
	var expects []expect
	for i, c := range checks {
		row := i + 1
		base := srv.URL + "/v1/" + c.calc + "?" + strings.ReplaceAll(c.params, " ", "%20") + "&api_key=" + apiKey
		e := expect{check: c, url: base}
		xpath := c.xpath
		if c.result != "" {
			xpath = "//" + c.result
			e.path = []string{c.result}
			textURL := base + "&format=text&result=" + c.result
			e.textCell, e.numCell = fmt.Sprintf("A%d", row), fmt.Sprintf("B%d", row)
			cells = append(cells,
				cellIn{Cell: e.textCell, Formula: `=WEBSERVICE("` + textURL + `")`},
				cellIn{Cell: e.numCell, Formula: `=NUMBERVALUE(` + e.textCell + `;".")`})
		}
		// The URL in a cell, the XML in another, read by FILTERXML.
		e.xmlNum, e.unitCell = fmt.Sprintf("E%d", row), fmt.Sprintf("F%d", row)
		cells = append(cells,
			cellIn{Cell: fmt.Sprintf("C%d", row), String: str(base + "&format=xml")},
			cellIn{Cell: fmt.Sprintf("D%d", row), Formula: fmt.Sprintf("=WEBSERVICE(C%d)", row)},
			cellIn{Cell: e.xmlNum, Formula: fmt.Sprintf(`=NUMBERVALUE(FILTERXML(D%d;"%s");".")`, row, xpath)},
			cellIn{Cell: e.unitCell, Formula: fmt.Sprintf(`=FILTERXML(D%d;"%s/@unit")`, row, xpath)})
		expects = append(expects, e)
	}
	// An error as a cell shows it: on_error=inline; without it, #VALUE!.
	bad := srv.URL + "/v1/expansion/linear?length=-48%20m&alpha=12e-6/K&delta_t=50%20K&format=text&api_key=" + apiKey
	noKey := srv.URL + "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K&format=text"
	// A joint's check beside its gap, as the spreadsheet guide puts it.
	// Demo data: a 60 m steel deck set at 12 degC with 20 mm, designed for
	// -36..59 degC, closes (12e-6/K x 60 m x 47 K = 33.84 mm of closing,
	// AASHTO LRFD eq. 3.12.2.3-1, from memory).
	closing := srv.URL + "/v1/joints/gap?length=60%20m&alpha=12e-6/K&t_min=-36%20degC&t_max=59%20degC&t_install=12%20degC&gap_install=20%20mm&api_key=" + apiKey
	cells = append(cells,
		cellIn{Cell: "H1", Formula: `=WEBSERVICE("` + bad + `&on_error=inline")`},
		cellIn{Cell: "H2", Formula: `=WEBSERVICE("` + bad + `")`},
		cellIn{Cell: "H3", Formula: `=WEBSERVICE("` + noKey + `")`},
		cellIn{Cell: "H4", Formula: `=WEBSERVICE("` + closing + `&format=text&result=check_gap_stays_open")`},
		cellIn{Cell: "H5", Formula: `=FILTERXML(WEBSERVICE("` + closing + `&format=xml");"//check[@name='gap_stays_open']/@pass")`})

	start := time.Now()
	got := o.set(t, cells)
	t.Logf("Calc evaluated %d cells in %v", len(cells), time.Since(start).Round(time.Millisecond))

	for _, e := range expects {
		name := e.calc + " " + strings.Join(e.path, ".")
		want, unit := jsonResult(t, e.url, e.path...)
		if e.textCell != "" {
			if s := got[e.textCell].String; s != want {
				t.Errorf("%s: WEBSERVICE text %q, JSON %s", name, s, want)
			}
			if v := got[e.numCell].Value; !sameBits(v, want) {
				t.Errorf("%s: NUMBERVALUE(WEBSERVICE) = %v (bits %x), JSON %s", name, v, math.Float64bits(v), want)
			}
		}
		if v := got[e.xmlNum].Value; !sameBits(v, want) || got[e.xmlNum].Error != 0 {
			t.Errorf("%s: FILTERXML = %v (error %d), JSON %s", name, v, got[e.xmlNum].Error, want)
		}
		if u := got[e.unitCell].String; u != unit {
			t.Errorf("%s: FILTERXML unit %q, JSON %q", name, u, unit)
		}
	}
	if s := got["H1"].String; s != `#ERROR: invalid parameter "length": must be greater than zero` {
		t.Errorf("on_error=inline cell shows %q", s)
	}
	if got["H2"].Error == 0 || got["H3"].Error == 0 {
		t.Errorf("error answers without on_error=inline read as %q and %q, want Calc errors", got["H2"].String, got["H3"].String)
	}
	if got["H4"].String != "fail" || got["H5"].String != "false" {
		t.Errorf("the check of a closing joint reads %q (text) and %q (XML), want fail and false", got["H4"].String, got["H5"].String)
	}
}

// TestDemoWorkbook reads the formulas of docs/demo-workbook.ods, sets them
// into a fresh sheet pointed at the test service, and compares every value
// with the JSON answer of the request its row builds. (Formulas loaded
// from a file are not evaluated headless: their web calls are blocked
// as external content, Err:540.)
func TestDemoWorkbook(t *testing.T) {
	o := startOffice(t)
	srv, _ := startService(t)
	book, err := filepath.Abs(filepath.Join("..", "..", "docs", "demo-workbook.ods"))
	if err != nil {
		t.Fatal(err)
	}
	read := o.run(t, "dump", book)
	if !strings.Contains(read["A1"].String, "DEMO DATA") || read["B3"].String != "http://localhost:8080" {
		t.Fatalf("not the demo workbook: A1 %q, B3 %q", read["A1"].String, read["B3"].String)
	}
	var cells []cellIn
	for addr, c := range read {
		in := cellIn{Cell: addr}
		switch {
		case addr == "B3":
			s := srv.URL
			in.String = &s
		case c.Type == "formula":
			in.Formula = c.Formula
		case c.Type == "value":
			v := c.Value
			in.Value = &v
		default:
			s := c.String
			in.String = &s
		}
		cells = append(cells, in)
	}
	key := apiKey
	cells = append(cells, cellIn{Cell: "B4", String: &key})
	got := o.set(t, cells)

	rows, checkRows := 0, 0
	for r := 7; ; r++ {
		req, ok := got[fmt.Sprintf("H%d", r)]
		if !ok || req.Type != "formula" {
			break
		}
		rows++
		result := got[fmt.Sprintf("D%d", r)].String
		value := got[fmt.Sprintf("F%d", r)]
		if name, ok := strings.CutPrefix(result, "check_"); ok {
			checkRows++
			if want := jsonCheck(t, req.String, name); value.String != want || value.Error != 0 {
				t.Errorf("row %d (%s): Calc reads %q, JSON %s", r, got[fmt.Sprintf("A%d", r)].String, value.String, want)
			}
			continue
		}
		want, unit := jsonResult(t, req.String, result)
		if !sameBits(value.Value, want) || value.Error != 0 {
			t.Errorf("row %d (%s): Calc reads %v %q, JSON %s; answer %q", r, got[fmt.Sprintf("A%d", r)].String, value.Value, value.String, want, got[fmt.Sprintf("G%d", r)].String)
		}
		if u := got[fmt.Sprintf("E%d", r)].String; u != unit {
			t.Errorf("row %d: unit %q, JSON %q", r, u, unit)
		}
	}
	if rows < 8 || checkRows < 2 {
		t.Errorf("%d request rows, %d of them checks, found in the workbook; want at least 8 and 2", rows, checkRows)
	}
}
