// Package logging builds the service's JSON logger: the one cmd/api runs
// with, and the one the benchmarks and the performance harness measure,
// so that they measure what is served.
package logging

import (
	"io"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"
	"go.uber.org/zap/zapcore"
)

// The sampling figures of zap.NewProductionConfig: each second, the first
// SampleFirst lines of a level and message, then every SampleThereafter-th.
const (
	SampleFirst      = 100
	SampleThereafter = 100
)

// New builds the JSON logger writing to out. Its lines are buffered and
// written at least once a second (one write per line would cost a system
// call per request); the returned syncer's Stop flushes them at exit, and
// its Sync writes what is buffered at once.
//
// With sampling, each second the first SampleFirst lines of a level and
// message below warn are written, then every SampleThereafter-th, as zap's
// production logger samples: at the request rates of a design office every
// request is logged, and under load the log costs little. Warnings and
// errors (a 503, a 500 and its "unexpected error" line) are never sampled,
// so the request id of a failed request is always in the log.
// thermal_log_lines_dropped_total, registered on reg, counts the lines
// left out; the request metrics count every request either way.
func New(level zapcore.Level, sampling bool, out io.Writer, reg prometheus.Registerer) (*zap.Logger, *zapcore.BufferedWriteSyncer) {
	ws := &zapcore.BufferedWriteSyncer{WS: zapcore.AddSync(out), Size: 256 << 10, FlushInterval: time.Second}
	enc := zapcore.NewJSONEncoder(zap.NewProductionEncoderConfig())
	dropped := prometheus.NewCounter(prometheus.CounterOpts{
		Name: "thermal_log_lines_dropped_total",
		Help: "Log lines below warn left out by sampling (--log-sampling); the request metrics still count every request.",
	})
	reg.MustRegister(dropped)
	if !sampling {
		return zap.New(zapcore.NewCore(enc, ws, level)), ws
	}
	below := zap.LevelEnablerFunc(func(l zapcore.Level) bool { return level.Enabled(l) && l < zapcore.WarnLevel })
	above := zap.LevelEnablerFunc(func(l zapcore.Level) bool { return level.Enabled(l) && l >= zapcore.WarnLevel })
	sampled := zapcore.NewSamplerWithOptions(zapcore.NewCore(enc, ws, below), time.Second, SampleFirst, SampleThereafter,
		zapcore.SamplerHook(func(_ zapcore.Entry, d zapcore.SamplingDecision) {
			if d&zapcore.LogDropped != 0 {
				dropped.Inc()
			}
		}))
	return zap.New(zapcore.NewTee(sampled, zapcore.NewCore(enc, ws, above))), ws
}
