package handlers

import (
	"net/http"
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus/collectors"
	"github.com/prometheus/client_golang/prometheus/testutil/promlint"
	dto "github.com/prometheus/client_model/go"
	"go.uber.org/zap/zapcore"
)

// opsAllowedLabels are the only label names a series may carry: each
// takes few values (a route template, not a path; a status code; a
// calculation name; a problem kind; the build).
var opsAllowedLabels = map[string]bool{
	"method": true, "route": true, "code": true, "calculation": true, "kind": true,
	"version": true, "commit": true, "materials": true,
}

// TestMetricsLint serves a mix of requests, then lints what the registry
// gathers with client_golang's promlint (base units, _total counters,
// naming), and checks that labels are few and bounded: the route label
// holds route templates only, however many distinct paths were asked.
func TestMetricsLint(t *testing.T) {
	e := newOpsEnv(t, Options{})
	e.reg.MustRegister(collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	e.do(http.MethodGet, opsLinear, nil)
	e.do(http.MethodGet, "/v1/expansion/linear?length=48%20mtr", nil)
	e.do(http.MethodPost, "/v1/expansion/linear", strings.NewReader(`{"length": "-1 m", "alpha": "12e-6/K", "delta_t": "5 K"}`))
	e.do(http.MethodGet, "/v1/materials/structural-steel", nil)
	e.do(http.MethodDelete, "/v1/expansion/linear", nil)
	for i := range 50 {
		e.do(http.MethodGet, "/v1/materials/no-such-"+strings.Repeat("x", i), nil)
		e.do(http.MethodGet, "/random/"+strings.Repeat("y", i)+"?secret=abc", nil)
	}

	mfs, err := e.reg.Gather()
	if err != nil {
		t.Fatal(err)
	}
	problems, err := promlint.NewWithMetricFamilies(mfs).Lint()
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range problems {
		t.Errorf("promlint: %s: %s", p.Metric, p.Text)
	}

	routes := map[string]bool{"unmatched": true}
	for _, r := range e.h.Routes() {
		routes[r[1]] = true
	}
	seen := map[string]bool{}
	for _, mf := range mfs {
		name := mf.GetName()
		if !strings.HasPrefix(name, "thermal_") {
			continue // the Go and process collectors'
		}
		seen[name] = true
		if mf.GetType() == dto.MetricType_COUNTER && !strings.HasSuffix(name, "_total") {
			t.Errorf("counter %s does not end in _total", name)
		}
		for _, unit := range []string{"_milliseconds", "_microseconds", "_ms", "_minutes", "_hours", "_kilobytes", "_megabytes", "_percent"} {
			if strings.Contains(name, unit) {
				t.Errorf("%s is not in base units (seconds, bytes, ratios)", name)
			}
		}
		if len(mf.GetMetric()) > 200 {
			t.Errorf("%s has %d series: a label takes unbounded values", name, len(mf.GetMetric()))
		}
		for _, m := range mf.GetMetric() {
			for _, l := range m.GetLabel() {
				if !opsAllowedLabels[l.GetName()] {
					t.Errorf("%s has label %q; allowed: method, route, code, calculation, kind, version, commit, materials", name, l.GetName())
				}
				if l.GetName() == "route" && !routes[l.GetValue()] {
					t.Errorf("%s route label %q is not a route template", name, l.GetValue())
				}
				if strings.Contains(l.GetValue(), "secret") || strings.Contains(l.GetValue(), "no-such") {
					t.Errorf("%s label %s=%q carries request data", name, l.GetName(), l.GetValue())
				}
			}
		}
	}
	for _, want := range []string{"thermal_http_requests_total", "thermal_http_request_duration_seconds", "thermal_calculation_errors_total", "thermal_build_info"} {
		if !seen[want] {
			t.Errorf("no metric %s gathered", want)
		}
	}
}

// A 503 (draining, shedding) is expected operation: logged as a warning,
// not as an error of the service (common practice, no published source).
func TestLevelFor(t *testing.T) {
	for status, want := range map[int]zapcore.Level{200: zapcore.InfoLevel, 404: zapcore.InfoLevel, 500: zapcore.ErrorLevel, 503: zapcore.WarnLevel} {
		if got := levelFor(status); got != want {
			t.Errorf("levelFor(%d) = %v, want %v", status, got, want)
		}
	}
}
