package logging

import (
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap/zapcore"
)

// TestSamplesBelowWarn: sampling leaves out repeated info lines but never
// a warning or an error, whose request ids callers quote; the counter
// counts exactly the lines left out. Without sampling every line is
// written. 300 lines of each level take well under a second, so they fall
// in one tick of the sampler.
func TestSamplesBelowWarn(t *testing.T) {
	const n = 300
	for _, sampling := range []bool{true, false} {
		var out Buffer
		reg := prometheus.NewRegistry()
		log, ws := New(zapcore.InfoLevel, sampling, &out, reg)
		for range n {
			log.Info("request")
			log.Warn("request")
			log.Error("unexpected error")
		}
		if err := ws.Stop(); err != nil {
			t.Fatal(err)
		}
		count := func(level string) int { return strings.Count(out.String(), `{"level":"`+level+`",`) }
		info, warn, errs := count("info"), count("warn"), count("error")
		var dropped float64
		mfs, err := reg.Gather()
		if err != nil {
			t.Fatal(err)
		}
		for _, mf := range mfs {
			if mf.GetName() == "thermal_log_lines_dropped_total" {
				dropped = mf.GetMetric()[0].GetCounter().GetValue()
			}
		}
		wantInfo := n
		if sampling {
			wantInfo = SampleFirst + (n-SampleFirst)/SampleThereafter
		}
		if info != wantInfo || warn != n || errs != n || info+int(dropped) != n {
			t.Errorf("sampling %v: %d info, %d warn, %d error lines and %v dropped; want %d, %d, %d and %d",
				sampling, info, warn, errs, dropped, wantInfo, n, n, n-wantInfo)
		}
	}
}

// TestLevel: lines below the level are not written, sampled or not, and
// are not counted as dropped.
func TestLevel(t *testing.T) {
	for _, sampling := range []bool{true, false} {
		var out Buffer
		log, ws := New(zapcore.WarnLevel, sampling, &out, prometheus.NewRegistry())
		log.Info("request")
		log.Warn("request")
		if err := ws.Stop(); err != nil {
			t.Fatal(err)
		}
		if got := out.String(); strings.Contains(got, `"level":"info"`) || !strings.Contains(got, `"level":"warn"`) {
			t.Errorf("sampling %v, level warn: wrote %q, want the warning only", sampling, got)
		}
	}
}
