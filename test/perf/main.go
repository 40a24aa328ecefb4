// Command perf measures the service against the floor that plain HTTP
// sets (issue 7). In one run on one machine it serves
//
//	(a) the real service: ./cmd/api built into a temporary directory and
//	    run as a child process on a free loopback port, with its request
//	    log written to a file, exactly as it runs in production; and
//	(b) a bare net/http server, also a child process (this program run
//	    again with -serve-bare), whose handler returns the byte-identical
//	    body of (a)'s answer to the linear expansion GET, with the same
//	    Content-Type; and
//	(a') the same build run again with --answer-cache-bytes 0
//	    ("computed"): the service as it answers a request it has not
//	    answered before. The service as it runs by default answers the
//	    repeated request from its cache of answers; the target is judged
//	    on it, and computed's ratio is printed beside it (-computed=false
//	    leaves it out);
//
// drives them all alternately with the same closed-loop load generator (a
// fixed number of workers, each with one keep-alive connection, sending
// the next request when the previous answer is read), and prints the
// requests per second and p50/p99 latency of each, their ratio and the
// spread over the rounds. It then posts a CSV batch of linear rows to
// POST /v1/batch/expansion/linear and prints rows per second and the peak
// memory (VmHWM) of the service process.
//
// With -floors it also serves the same bytes from two more children
// between those two: gin alone, and the service's own router and
// middleware with one more route that writes the bytes and computes
// nothing, so that the share of the framework, of the middleware and of
// the calculation work shows.
//
// With -work (by default 10us,20us) it also serves the bytes from bare
// servers that first spend that much arithmetic per request (a busy loop
// timed at their start-up). Their ratios to bare read the throughput
// target as a budget: the work per request a server may add to the bare
// one and keep the target ratio, and the work the service's ratio
// matches.
//
// Every server is a separate process with the same GOMAXPROCS, and they
// share the machine with the load generator, so the ratio follows their
// CPU per request: the program prints each server's (from /proc) and the
// load generator's (getrusage), and the service CPU at which the ratio
// would reach its target. With -inprocess the service runs inside this program instead
// (handlers.New(...).Router() behind an http.Server on 127.0.0.1), which
// allows -cpuprofile, -memprofile and a net/http/pprof listener; the bare
// server stays a child process, so that mode flatters neither side but is
// less symmetric: use it for profiles, the default for the figures.
//
// Usage:
//
//	go run ./test/perf [-rounds 5] [-duration 5s] [-concurrency 32]
//
// It exits non-zero only on errors (a server that does not start, wrong
// answers, a batch answered with an error); a figure below its target is
// printed as BELOW TARGET.
package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"flag"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/http/pprof"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"runtime"
	rpprof "runtime/pprof"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
	"github.com/prometheus/client_golang/prometheus/promhttp"
	"go.uber.org/zap"
	"go.uber.org/zap/zapcore"

	"github.com/thermalmovement/service/internal/handlers"
	"github.com/thermalmovement/service/internal/logging"
	"github.com/thermalmovement/service/internal/materials"
)

// The measured request: the linear expansion of the demo footbridge
// girder (demo data).
const linearPath = "/v1/expansion/linear?length=48%20m&alpha=12e-6/K&delta_t=50%20K"

// Targets of issue 7.
const (
	targetRatio      = 0.8
	targetBatchRowsS = 300000
	targetBatchSize  = 100000 // rows of the batch the rate target is set for
)

type config struct {
	duration    time.Duration
	warmup      time.Duration
	rounds      int
	concurrency int
	client      string
	batchRows   int
	inprocess   bool
	cpuprofile  string
	memprofile  string
	pprofAddr   string
	keep        bool
	floors      bool
	work        []time.Duration
	answerCache int64
	computed    bool
}

func main() {
	// The bare server: this program started again by itself.
	if len(os.Args) > 1 && os.Args[1] == "-serve-bare" {
		if err := serveBare(os.Args[2:]); err != nil {
			fmt.Fprintln(os.Stderr, "perf bare server:", err)
			os.Exit(1)
		}
		return
	}
	var c config
	flag.DurationVar(&c.duration, "duration", 5*time.Second, "length of one measured run of one server")
	flag.DurationVar(&c.warmup, "warmup", time.Second, "unmeasured run of each server before the rounds")
	flag.IntVar(&c.rounds, "rounds", 5, "rounds; each round runs both servers, in alternating order")
	flag.IntVar(&c.concurrency, "concurrency", 32, "closed-loop workers, one keep-alive connection each")
	flag.StringVar(&c.client, "client", "raw", "load generator: raw (minimal HTTP/1.1 over net.Conn) or nethttp (net/http.Client)")
	flag.IntVar(&c.batchRows, "batch-rows", 100000, "rows of the CSV batch (0: skip the batch)")
	flag.BoolVar(&c.inprocess, "inprocess", false, "run the service inside this program (for profiles) instead of building ./cmd/api")
	flag.StringVar(&c.cpuprofile, "cpuprofile", "", "with -inprocess: write a CPU profile of an extra run against the service")
	flag.StringVar(&c.memprofile, "memprofile", "", "with -inprocess: write an allocation profile after that run")
	flag.StringVar(&c.pprofAddr, "pprof-addr", "", "with -inprocess: serve net/http/pprof on this address, e.g. 127.0.0.1:6060")
	flag.BoolVar(&c.keep, "keep", false, "keep the temporary directory (binary, logs)")
	flag.BoolVar(&c.floors, "floors", false, "also measure two floors between bare and service: gin answering the bytes, and the service's router and middleware answering them")
	flag.Int64Var(&c.answerCache, "answer-cache-bytes", 16<<20, "the service's cache of answers, bytes (its --answer-cache-bytes; 0: none, every request computed)")
	flag.BoolVar(&c.computed, "computed", true, "also measure the service with no cache of answers (--answer-cache-bytes 0, a second child process): every request computed")
	work := flag.String("work", "10us,20us", "also measure the bare server spending these amounts of arithmetic per request before it answers (comma-separated; empty: none), to read the target as a CPU budget")
	flag.Parse()
	for _, f := range strings.Split(*work, ",") {
		if f = strings.TrimSpace(f); f == "" {
			continue
		}
		d, err := time.ParseDuration(f)
		if err != nil || d <= 0 || d > 10*time.Millisecond {
			fmt.Fprintf(os.Stderr, "perf: -work %q: want positive durations up to 10ms, e.g. 10us,20us\n", f)
			os.Exit(2)
		}
		if !slices.Contains(c.work, d) {
			c.work = append(c.work, d)
		}
	}
	if err := run(c); err != nil {
		fmt.Fprintln(os.Stderr, "perf:", err)
		os.Exit(1)
	}
}

func run(c config) error {
	switch {
	case c.rounds < 1 || c.concurrency < 1 || c.duration <= 0:
		return errors.New("-rounds, -concurrency and -duration must be positive")
	case c.client != "raw" && c.client != "nethttp":
		return fmt.Errorf("-client %q: want raw or nethttp", c.client)
	case !c.inprocess && (c.cpuprofile != "" || c.memprofile != "" || c.pprofAddr != ""):
		return errors.New("-cpuprofile, -memprofile and -pprof-addr need -inprocess")
	}
	dir, err := os.MkdirTemp("", "thermal-perf-")
	if err != nil {
		return err
	}
	if c.keep {
		fmt.Println("temporary directory kept:", dir)
	} else {
		defer os.RemoveAll(dir)
	}

	// The service, and the same build computing every request: both
	// child processes of one binary, or both in this process.
	var svc, computed *server
	var bin string
	if !c.inprocess {
		if bin, err = buildService(dir); err != nil {
			return err
		}
	}
	start := func(name, pprofAddr string, answerCache int64) (*server, error) {
		if c.inprocess {
			return startInProcess(dir, name, pprofAddr, answerCache)
		}
		return startService(dir, bin, name, answerCache)
	}
	if svc, err = start("service", c.pprofAddr, c.answerCache); err != nil {
		return err
	}
	defer svc.stop()
	if c.computed {
		if computed, err = start("computed", "", 0); err != nil {
			return err
		}
		defer computed.stop()
	}

	body, ctype, err := fetch(svc.base + linearPath)
	if err != nil {
		return fmt.Errorf("service: %w", err)
	}
	bodyFile := filepath.Join(dir, "body")
	if err := os.WriteFile(bodyFile, body, 0o600); err != nil {
		return err
	}
	kinds := []string{"bare"}
	if c.floors {
		kinds = append(kinds, "gin", "middleware")
	}
	for _, d := range c.work {
		kinds = append(kinds, workKind+d.String())
	}
	var others []*server
	if computed != nil {
		if b2, ct2, err := fetch(computed.base + computed.path); err != nil {
			return fmt.Errorf("computed service: %w", err)
		} else if !bytes.Equal(b2, body) || ct2 != ctype {
			return errors.New("the service without its cache does not answer the same bytes")
		}
	}
	for _, kind := range kinds {
		s, err := startBare(dir, kind, bodyFile, ctype)
		if err != nil {
			return err
		}
		defer s.stop()
		if b2, ct2, err := fetch(s.base + s.path); err != nil {
			return fmt.Errorf("%s server: %w", kind, err)
		} else if !bytes.Equal(b2, body) || ct2 != ctype {
			return fmt.Errorf("%s server does not answer the service's bytes", kind)
		}
		others = append(others, s)
	}
	bare := others[0]

	fmt.Printf("thermal-movement service vs bare net/http, %s/%s, %d CPUs, GOMAXPROCS %d, %s\n",
		runtime.GOOS, runtime.GOARCH, runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.Version())
	mode := "child process (./cmd/api built to a temp dir, request log to a file)"
	if c.inprocess {
		mode = "in process (handlers.New(...).Router() behind http.Server, request log to a file)"
	}
	fmt.Printf("service: %s; bare: child process; client: %s, %d closed-loop keep-alive connections\n", mode, c.client, c.concurrency)
	fmt.Printf("request: GET %s -> %d bytes, %s\n", linearPath, len(body), ctype)
	fmt.Printf("rounds: %d x %s per server, alternating order, after %s warm-up each; load average before: %s\n\n", c.rounds, c.duration, c.warmup, loadAvg())

	targets := []*server{svc}
	if computed != nil {
		targets = append(targets, computed)
	}
	targets = append(targets, others...)
	if c.warmup > 0 {
		for _, s := range targets {
			if _, err := load(c, s, body, c.warmup); err != nil {
				return err
			}
		}
	}
	res := map[*server][]result{}
	for r := 0; r < c.rounds; r++ {
		order := targets
		if r%2 == 1 {
			order = slices.Clone(targets)
			slices.Reverse(order)
		}
		for _, s := range order {
			x, err := load(c, s, body, c.duration)
			if err != nil {
				return err
			}
			res[s] = append(res[s], x)
			fmt.Printf("round %d  %-10s %9.0f req/s  p50 %8s  p99 %8s%s\n", r+1, s.name, x.rps, us(x.p50), us(x.p99), cpuNote(x.cpu, x.client))
		}
	}
	fmt.Println()
	a, b := summarise(res[svc]), summarise(res[bare])
	for _, x := range []struct {
		name string
		s    summary
	}{{"service", a}, {"bare", b}} {
		fmt.Printf("%-8s median %9.0f req/s (spread %.0f..%.0f)  p50 %s (%s..%s)  p99 %s (%s..%s)\n", x.name,
			x.s.rps, x.s.rpsMin, x.s.rpsMax, us(x.s.p50), us(x.s.p50Min), us(x.s.p50Max), us(x.s.p99), us(x.s.p99Min), us(x.s.p99Max))
	}
	var ratios []float64
	for i := range res[svc] {
		ratios = append(ratios, res[svc][i].rps/res[bare][i].rps)
	}
	slices.Sort(ratios)
	ratio := a.rps / b.rps
	fmt.Printf("ratio service/bare: %.3f (median req/s over median req/s; per-round ratios %.3f..%.3f)\n",
		ratio, ratios[0], ratios[len(ratios)-1])
	what := "the service as it runs"
	if c.answerCache > 0 {
		// Every request after the first repeats it: all but one are
		// answered from the cache of answers.
		what = "a repeated request (the service as it runs, answering from its cache of answers)"
	}
	fmt.Printf("%s: throughput ratio %.3f for %s, target >= %.2f\n", verdict(ratio >= targetRatio), ratio, what, targetRatio)
	cpuBudget("service", res[svc], res[bare])
	computedRatio := 0.0
	if computed != nil {
		// The figure of a request the service has not answered before:
		// the same build with no cache of answers computes every one.
		f := summarise(res[computed])
		computedRatio = f.rps / b.rps
		fmt.Printf("computed every time (--answer-cache-bytes 0): median %.0f req/s (spread %.0f..%.0f), ratio to bare %.3f\n",
			f.rps, f.rpsMin, f.rpsMax, computedRatio)
		fmt.Printf("%s: throughput ratio %.3f for a new request (computed; with the cache on, a new request also pays for being kept), target >= %.2f\n",
			verdict(computedRatio >= targetRatio), computedRatio, targetRatio)
		cpuBudget("computed", res[computed], res[bare])
	}
	// The bare server does the same work every round: when its rounds
	// differ much, something else was using the machine.
	if noise := b.rpsMax / b.rpsMin; noise > maxNoise {
		fmt.Printf("NOISY: bare req/s varied %.2fx across rounds (over %.2fx): other work shared the machine; load average now %s; rerun on a quiet machine\n",
			noise, maxNoise, loadAvg())
	}
	if c.floors {
		fmt.Println("floors: the same bytes answered by gin alone, and by the service's router and middleware (request id, metrics,")
		fmt.Println("  the sampled log, recovery, limits, load shedding, keys, ETag and caching headers) with no calculation:")
		for _, s := range others[1:3] { // gin, middleware
			f := summarise(res[s])
			fmt.Printf("  %-10s median %9.0f req/s, ratio to bare %.3f, server CPU %.1f µs/req\n", s.name, f.rps, f.rps/b.rps, micros(medianOf(res[s], serverCPU)))
		}
	}
	if len(c.work) > 0 {
		workBudget(res, others[len(others)-len(c.work):], c.work, b.rps, medianOf(res[bare], serverCPU), ratio, computedRatio)
	}

	if c.inprocess && (c.cpuprofile != "" || c.memprofile != "") {
		if err := profile(c, svc, body); err != nil {
			return err
		}
	}

	var batchErr error
	if c.batchRows > 0 {
		fmt.Println()
		batchErr = batch(c, svc)
	}
	fmt.Println()
	fmt.Println("peak memory:", svc.memory(), "(service);", bare.memory(), "(bare)")
	return batchErr
}

// cpuNote shows the CPU time per request of a server and of the load
// generator, when they are known.
func cpuNote(server, client time.Duration) string {
	if server <= 0 {
		return ""
	}
	return fmt.Sprintf("  server CPU %5.1f µs/req  load generator CPU %5.1f µs/req", micros(server), micros(client))
}

func serverCPU(r result) time.Duration { return r.cpu }
func clientCPU(r result) time.Duration { return r.client }

// medianOf is the median of f over the runs rs.
func medianOf(rs []result, f func(result) time.Duration) time.Duration {
	x := make([]time.Duration, len(rs))
	for i, r := range rs {
		x[i] = f(r)
	}
	slices.Sort(x)
	return median(x)
}

func micros(d time.Duration) float64 { return float64(d) / float64(time.Microsecond) }

// cpuBudget explains the ratio by the CPU each request costs. Server and
// load generator share the machine's cores, so when the cores are the
// bound, req/s is about cores / (server CPU + load generator CPU) per
// request, and the ratio about (bare + its load generator) / (service +
// its load generator). It prints the medians and the service CPU per
// request at which the ratio would reach the target.
func cpuBudget(name string, svc, bare []result) {
	s, sc, b, bc := medianOf(svc, serverCPU), medianOf(svc, clientCPU), medianOf(bare, serverCPU), medianOf(bare, clientCPU)
	if s <= 0 || b <= 0 {
		return
	}
	fmt.Printf("CPU per request (medians): %s %.1f + load generator %.1f µs; bare %.1f + load generator %.1f µs\n",
		name, micros(s), micros(sc), micros(b), micros(bc))
	fmt.Printf("  (bare + its load generator) / (%s + its load generator) = %.3f; the ratio %.2f needs it at about %.0f µs/req\n",
		name, micros(b+bc)/micros(s+sc), targetRatio, micros(b+bc)/targetRatio-micros(sc))
}

// maxNoise is the largest max/min of the bare server's rounds for which
// the figures are taken as undisturbed.
const maxNoise = 1.25

// loadAvg returns the 1, 5 and 15 minute load averages.
func loadAvg() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return "unknown"
	}
	f := strings.Fields(string(b))
	if len(f) < 3 {
		return "unknown"
	}
	return strings.Join(f[:3], " ")
}

func verdict(ok bool) string {
	if ok {
		return "PASS"
	}
	return "BELOW TARGET"
}

// server is one target of the load.
type server struct {
	name string
	path string // the request sent: linearPath, or a floor's own route
	base string // http://127.0.0.1:port
	addr string
	cmd  *exec.Cmd    // a child process, or nil
	srv  *http.Server // the in-process service, or nil
	peak func() int64 // in-process peak heap sampler, or nil
	stop func()
}

// memory describes the server's peak memory: VmHWM for a child, the
// sampled peak of the Go heap in use for the in-process service.
func (s *server) memory() string {
	if s.cmd != nil {
		hwm, err := vmHWM(s.cmd.Process.Pid)
		if err != nil {
			return "unknown (" + err.Error() + ")"
		}
		return "VmHWM " + mib(hwm)
	}
	return "peak Go heap in use " + mib(s.peak()) + " (runtime.MemStats, whole harness process)"
}

// cpuTime is the user plus system CPU time a child process has used so
// far, from /proc/PID/stat (in clock ticks of 10 ms, the Linux default
// USER_HZ); 0 for the in-process service or when unreadable.
func (s *server) cpuTime() time.Duration {
	if s.cmd == nil {
		return 0
	}
	b, err := os.ReadFile("/proc/" + strconv.Itoa(s.cmd.Process.Pid) + "/stat")
	if err != nil {
		return 0
	}
	// The command name, field 2, is in parentheses and may hold spaces:
	// count the fields after its closing parenthesis (utime is field 14).
	i := bytes.LastIndexByte(b, ')')
	if i < 0 {
		return 0
	}
	f := strings.Fields(string(b[i+1:]))
	if len(f) < 13 {
		return 0
	}
	ut, err1 := strconv.ParseInt(f[11], 10, 64)
	st, err2 := strconv.ParseInt(f[12], 10, 64)
	if err1 != nil || err2 != nil {
		return 0
	}
	return time.Duration(ut+st) * 10 * time.Millisecond
}

func us(d time.Duration) time.Duration { return d.Round(time.Microsecond) }

func mib(b int64) string { return fmt.Sprintf("%.1f MiB", float64(b)/(1<<20)) }

// vmHWM reads the peak resident set size of a process from /proc.
func vmHWM(pid int) (int64, error) {
	data, err := os.ReadFile("/proc/" + strconv.Itoa(pid) + "/status")
	if err != nil {
		return 0, err
	}
	for _, line := range strings.Split(string(data), "\n") {
		if rest, ok := strings.CutPrefix(line, "VmHWM:"); ok {
			kb, err := strconv.ParseInt(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(rest), "kB")), 10, 64)
			return kb << 10, err
		}
	}
	return 0, errors.New("no VmHWM in /proc status")
}

func freeAddr() (string, error) {
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		return "", err
	}
	defer ln.Close()
	return ln.Addr().String(), nil
}

// startService builds ./cmd/api and runs it as a child process.
// buildService builds ./cmd/api into dir and returns the binary's path.
func buildService(dir string) (string, error) {
	out, err := exec.Command("go", "env", "GOMOD").Output()
	if err != nil {
		return "", fmt.Errorf("go env GOMOD: %w", err)
	}
	root := filepath.Dir(strings.TrimSpace(string(out)))
	bin := filepath.Join(dir, "api")
	build := exec.Command("go", "build", "-o", bin, "./cmd/api")
	build.Dir, build.Stdout, build.Stderr = root, os.Stderr, os.Stderr
	if err := build.Run(); err != nil {
		return "", fmt.Errorf("go build ./cmd/api: %w", err)
	}
	return bin, nil
}

// startService runs the built service as a child process with its
// default settings but the cache of answers, of answerCache bytes.
func startService(dir, bin, name string, answerCache int64) (*server, error) {
	addr, err := freeAddr()
	if err != nil {
		return nil, err
	}
	return startChild(name, filepath.Join(dir, name+".log"), addr, bin, "--addr", addr,
		"--answer-cache-bytes", strconv.FormatInt(answerCache, 10))
}

// startBare runs this program again as the bare server, or as one of the
// floors (kind gin or middleware), each answering the service's bytes.
func startBare(dir, kind, bodyFile, ctype string) (*server, error) {
	self, err := os.Executable()
	if err != nil {
		return nil, err
	}
	addr, err := freeAddr()
	if err != nil {
		return nil, err
	}
	s, err := startChild(kind, filepath.Join(dir, kind+".log"), addr, self, "-serve-bare", addr, bodyFile, ctype, kind)
	if err == nil && kind == "middleware" {
		s.path = floorPath
	}
	return s, err
}

// workKind prefixes the kind of a bare server that spends a fixed amount
// of arithmetic per request before it answers, e.g. "bare+10µs".
const workKind = "bare+"

// floorPath is the route of the middleware floor: the service's router
// with one more route, under /v1/ as the calculations are, so that the
// same middleware (the ETag and caching headers included) runs for it.
const floorPath = "/v1/perf-floor?length=48%20m&alpha=12e-6/K&delta_t=50%20K"

func startChild(name, logFile, addr, bin string, args ...string) (*server, error) {
	lf, err := os.Create(logFile)
	if err != nil {
		return nil, err
	}
	cmd := exec.Command(bin, args...)
	cmd.Stdout, cmd.Stderr = lf, lf
	if err := cmd.Start(); err != nil {
		lf.Close()
		return nil, fmt.Errorf("start %s: %w", name, err)
	}
	done := make(chan struct{})
	go func() { _ = cmd.Wait(); lf.Close(); close(done) }()
	s := &server{name: name, path: linearPath, addr: addr, base: "http://" + addr, cmd: cmd}
	s.stop = func() {
		_ = cmd.Process.Signal(syscall.SIGTERM)
		select {
		case <-done:
		case <-time.After(10 * time.Second):
			_ = cmd.Process.Kill()
			<-done
		}
	}
	if err := waitReady(s.base+"/readyz", done); err != nil {
		s.stop()
		log, _ := os.ReadFile(logFile)
		return nil, fmt.Errorf("%s did not become ready: %w\n%s", name, err, log)
	}
	return s, nil
}

func waitReady(url string, exited <-chan struct{}) error {
	deadline := time.Now().Add(30 * time.Second)
	for time.Now().Before(deadline) {
		select {
		case <-exited:
			return errors.New("process exited")
		default:
		}
		resp, err := http.Get(url)
		if err == nil {
			resp.Body.Close()
			if resp.StatusCode == http.StatusOK {
				return nil
			}
		}
		time.Sleep(50 * time.Millisecond)
	}
	return errors.New("timed out")
}

// newHandler is the service's handler with cmd/api's default options.
func newHandler(log *zap.Logger, reg *prometheus.Registry, answerCache int64) (*handlers.Handler, error) {
	cat, err := materials.Load()
	if err != nil {
		return nil, err
	}
	return handlers.New(log, reg, cat, handlers.Options{Version: "perf", Commit: "perf", MaxBodyBytes: 64 << 10,
		Metrics: promhttp.HandlerFor(reg, promhttp.HandlerOpts{Registry: reg}), MaxInFlight: 256,
		BatchMaxRows: 100000, BatchMaxBytes: 32 << 20, AnswerCacheBytes: answerCache})
}

// startInProcess serves handlers.New(...).Router() as cmd/api does, with
// the same logger, registry and server timeouts.
func startInProcess(dir, name, pprofAddr string, answerCache int64) (*server, error) {
	lf, err := os.Create(filepath.Join(dir, name+".log"))
	if err != nil {
		return nil, err
	}
	// The logger of cmd/api, sampled as it samples by default (--log-sampling).
	reg := prometheus.NewRegistry()
	log, logOut := logging.New(zapcore.InfoLevel, true, lf, reg)
	reg.MustRegister(collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	h, err := newHandler(log, reg, answerCache)
	if err != nil {
		return nil, err
	}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		return nil, err
	}
	srv := &http.Server{Handler: h.Router(), ReadHeaderTimeout: 5 * time.Second, ReadTimeout: 30 * time.Second,
		WriteTimeout: 60 * time.Second, IdleTimeout: 120 * time.Second, MaxHeaderBytes: 16 << 10}
	go func() { _ = srv.Serve(ln) }()
	var ps *http.Server
	if pprofAddr != "" {
		mux := http.NewServeMux()
		mux.HandleFunc("/debug/pprof/", pprof.Index)
		mux.HandleFunc("/debug/pprof/profile", pprof.Profile)
		mux.HandleFunc("/debug/pprof/symbol", pprof.Symbol)
		mux.HandleFunc("/debug/pprof/trace", pprof.Trace)
		pln, err := net.Listen("tcp", pprofAddr)
		if err != nil {
			return nil, err
		}
		ps = &http.Server{Handler: mux}
		go func() { _ = ps.Serve(pln) }()
		fmt.Println("pprof: http://" + pln.Addr().String() + "/debug/pprof/")
	}
	var peak atomic.Int64
	stopSampler := make(chan struct{})
	go func() {
		var ms runtime.MemStats
		for {
			runtime.ReadMemStats(&ms)
			if v := int64(ms.HeapInuse); v > peak.Load() {
				peak.Store(v)
			}
			select {
			case <-stopSampler:
				return
			case <-time.After(20 * time.Millisecond):
			}
		}
	}()
	addr := ln.Addr().String()
	return &server{name: name, path: linearPath, addr: addr, base: "http://" + addr, srv: srv, peak: peak.Load, stop: func() {
		close(stopSampler)
		ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
		defer cancel()
		_ = srv.Shutdown(ctx)
		if ps != nil {
			_ = ps.Shutdown(ctx)
		}
		_ = logOut.Stop()
		lf.Close()
	}}, nil
}

// serveBare is the bare server: every request gets the same bytes.
// Arguments: address, body file, content type, and the kind: bare (a
// net/http handler), gin (a gin engine with the one route) or middleware
// (the service's router and middleware with one more route, floorPath).
func serveBare(args []string) error {
	if len(args) != 4 {
		return errors.New("want: -serve-bare addr bodyfile content-type bare|gin|middleware")
	}
	body, err := os.ReadFile(args[1])
	if err != nil {
		return err
	}
	ctype := args[2]
	var handler http.Handler
	// Written as the service writes a whole answer: header values made
	// once, and net/http adding the length of a body its buffer holds.
	ctHeader := []string{ctype}
	fixed := func(c *gin.Context) {
		c.Writer.Header()["Content-Type"] = ctHeader
		if len(body) > 1<<10 {
			c.Writer.Header()["Content-Length"] = []string{strconv.Itoa(len(body))}
		}
		c.Status(http.StatusOK)
		_, _ = c.Writer.Write(body)
	}
	var spin int // busy-loop steps per request, for the work kinds
	if d, ok := strings.CutPrefix(args[3], workKind); ok {
		w, err := time.ParseDuration(d)
		if err != nil {
			return fmt.Errorf("kind %q: %w", args[3], err)
		}
		spin = int(w.Seconds() / secondsPerStep())
		args[3] = "bare"
	}
	switch args[3] {
	case "bare":
		handler = http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
			if spin > 0 {
				busy(spin)
			}
			w.Header().Set("Content-Type", ctype)
			_, _ = w.Write(body)
		})
	case "gin":
		gin.SetMode(gin.ReleaseMode)
		r := gin.New()
		r.GET(strings.Split(linearPath, "?")[0], fixed)
		r.GET("/readyz", fixed)
		handler = r
	case "middleware":
		// Logged as the service logs by default, sampled, to nowhere.
		reg := prometheus.NewRegistry()
		log, _ := logging.New(zapcore.InfoLevel, true, io.Discard, reg)
		h, err := newHandler(log, reg, 0)
		if err != nil {
			return err
		}
		r := h.Router()
		r.GET(strings.Split(floorPath, "?")[0], fixed)
		handler = r
	default:
		return fmt.Errorf("unknown kind %q", args[3])
	}
	ln, err := net.Listen("tcp", args[0])
	if err != nil {
		return err
	}
	srv := &http.Server{Handler: handler, ReadHeaderTimeout: 5 * time.Second}
	go func() {
		ch := make(chan os.Signal, 1)
		signal.Notify(ch, syscall.SIGTERM, os.Interrupt)
		<-ch
		_ = srv.Close()
	}()
	if err := srv.Serve(ln); !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	return nil
}

// fetch GETs url and returns its body and content type; anything but a
// 200 is an error.
func fetch(url string) ([]byte, string, error) {
	resp, err := http.Get(url)
	if err != nil {
		return nil, "", err
	}
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	if err != nil {
		return nil, "", err
	}
	if resp.StatusCode != http.StatusOK {
		return nil, "", fmt.Errorf("GET %s: %s: %s", url, resp.Status, b)
	}
	return b, resp.Header.Get("Content-Type"), nil
}

// result is one measured run.
type result struct {
	rps      float64
	p50, p99 time.Duration
	cpu      time.Duration // CPU (user+system) of the server process per request; 0 when unknown
	client   time.Duration // CPU of this process (the load generator) per request; 0 with -inprocess
}

// load runs the closed loop against s for d and checks every answer
// against want.
func load(c config, s *server, want []byte, d time.Duration) (result, error) {
	var stop atomic.Bool
	lat := make([][]time.Duration, c.concurrency)
	errs := make([]error, c.concurrency)
	var wg sync.WaitGroup
	var tr *http.Transport
	if c.client == "nethttp" {
		tr = &http.Transport{MaxIdleConnsPerHost: c.concurrency, MaxConnsPerHost: c.concurrency, DisableCompression: true}
		defer tr.CloseIdleConnections()
	}
	cpu0, self0 := s.cpuTime(), selfCPU()
	start := time.Now()
	timer := time.AfterFunc(d, func() { stop.Store(true) })
	defer timer.Stop()
	for w := 0; w < c.concurrency; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			l := make([]time.Duration, 0, 1<<14)
			var do func() ([]byte, error)
			if tr != nil {
				do = netHTTPClient(tr, s.base+s.path)
			} else {
				rc := &rawClient{addr: s.addr, req: []byte("GET " + s.path + " HTTP/1.1\r\nHost: " + s.addr + "\r\nUser-Agent: thermal-perf\r\n\r\n")}
				defer rc.close()
				do = rc.do
			}
			for !stop.Load() {
				t0 := time.Now()
				got, err := do()
				if err != nil {
					errs[w] = err
					break
				}
				l = append(l, time.Since(t0))
				if !bytes.Equal(got, want) {
					errs[w] = fmt.Errorf("%s answered different bytes (%d, want %d)", s.name, len(got), len(want))
					break
				}
			}
			lat[w] = l
		}()
	}
	wg.Wait()
	elapsed := time.Since(start)
	if err := errors.Join(errs...); err != nil {
		return result{}, fmt.Errorf("load on %s: %w", s.name, err)
	}
	all := slices.Concat(lat...)
	if len(all) == 0 {
		return result{}, fmt.Errorf("load on %s: no request completed", s.name)
	}
	var cpu, client time.Duration
	if cpu1 := s.cpuTime(); cpu1 > 0 && cpu0 > 0 {
		cpu = (cpu1 - cpu0) / time.Duration(len(all))
		client = (selfCPU() - self0) / time.Duration(len(all))
	}
	slices.Sort(all)
	q := func(p float64) time.Duration { return all[min(len(all)-1, int(p*float64(len(all))))] }
	return result{rps: float64(len(all)) / elapsed.Seconds(), p50: q(0.50), p99: q(0.99), cpu: cpu, client: client}, nil
}

// selfCPU is the user plus system CPU time this process has used so far.
// Outside -inprocess it is the load generator's: its connections, their
// system calls and the check of every answer.
func selfCPU() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func netHTTPClient(tr *http.Transport, url string) func() ([]byte, error) {
	cl := &http.Client{Transport: tr}
	var buf bytes.Buffer
	return func() ([]byte, error) {
		resp, err := cl.Get(url)
		if err != nil {
			return nil, err
		}
		buf.Reset()
		_, err = buf.ReadFrom(resp.Body)
		resp.Body.Close()
		if err == nil && resp.StatusCode != http.StatusOK {
			err = errors.New(resp.Status)
		}
		return buf.Bytes(), err
	}
}

// rawClient is a minimal HTTP/1.1 keep-alive client for one fixed
// request: it writes the request and reads the status line, the headers
// and a Content-Length or chunked body. It costs the machine less than
// net/http's client, so more of the CPU goes to the servers measured.
type rawClient struct {
	addr string
	req  []byte
	conn net.Conn
	r    *bufio.Reader
	body []byte
}

func (c *rawClient) close() {
	if c.conn != nil {
		c.conn.Close()
	}
}

func (c *rawClient) do() ([]byte, error) {
	if c.conn == nil {
		conn, err := net.Dial("tcp", c.addr)
		if err != nil {
			return nil, err
		}
		c.conn, c.r = conn, bufio.NewReaderSize(conn, 16<<10)
	}
	if _, err := c.conn.Write(c.req); err != nil {
		return nil, err
	}
	line, err := c.r.ReadSlice('\n')
	if err != nil {
		return nil, err
	}
	if len(line) < 12 || !bytes.HasPrefix(line, []byte("HTTP/1.1 ")) {
		return nil, fmt.Errorf("bad status line %q", line)
	}
	if string(line[9:12]) != "200" {
		return nil, fmt.Errorf("status %q", bytes.TrimSpace(line))
	}
	length, chunked, closing := -1, false, false
	for {
		h, err := c.r.ReadSlice('\n')
		if err != nil {
			return nil, err
		}
		if len(h) <= 2 {
			break
		}
		k, v, _ := bytes.Cut(h, []byte(":"))
		v = bytes.TrimSpace(v)
		switch {
		case bytes.EqualFold(k, []byte("Content-Length")):
			if length, err = strconv.Atoi(string(v)); err != nil {
				return nil, err
			}
		case bytes.EqualFold(k, []byte("Transfer-Encoding")):
			chunked = bytes.EqualFold(v, []byte("chunked"))
		case bytes.EqualFold(k, []byte("Connection")):
			closing = bytes.EqualFold(v, []byte("close"))
		}
	}
	c.body = c.body[:0]
	switch {
	case chunked:
		for {
			sl, err := c.r.ReadSlice('\n')
			if err != nil {
				return nil, err
			}
			sz, err := strconv.ParseInt(string(bytes.TrimSpace(sl)), 16, 64)
			if err != nil {
				return nil, err
			}
			if sz == 0 {
				if _, err := c.r.ReadSlice('\n'); err != nil { // empty trailer
					return nil, err
				}
				break
			}
			n := len(c.body)
			c.body = slices.Grow(c.body, int(sz)+2)[:n+int(sz)+2]
			if _, err := io.ReadFull(c.r, c.body[n:]); err != nil {
				return nil, err
			}
			c.body = c.body[:n+int(sz)]
		}
	case length >= 0:
		c.body = slices.Grow(c.body, length)[:length]
		if _, err := io.ReadFull(c.r, c.body); err != nil {
			return nil, err
		}
	default:
		return nil, errors.New("answer without Content-Length or chunked body")
	}
	if closing {
		c.conn.Close()
		c.conn = nil
	}
	return c.body, nil
}

// summary is the medians and spreads of a server's rounds.
type summary struct {
	rps, rpsMin, rpsMax float64
	p50, p50Min, p50Max time.Duration
	p99, p99Min, p99Max time.Duration
}

func summarise(rs []result) summary {
	var s summary
	rps := make([]float64, len(rs))
	p50 := make([]time.Duration, len(rs))
	p99 := make([]time.Duration, len(rs))
	for i, r := range rs {
		rps[i], p50[i], p99[i] = r.rps, r.p50, r.p99
	}
	slices.Sort(rps)
	slices.Sort(p50)
	slices.Sort(p99)
	s.rps, s.rpsMin, s.rpsMax = median(rps), rps[0], rps[len(rps)-1]
	s.p50, s.p50Min, s.p50Max = median(p50), p50[0], p50[len(p50)-1]
	s.p99, s.p99Min, s.p99Max = median(p99), p99[0], p99[len(p99)-1]
	return s
}

// median of a sorted slice; the mean of the middle two for an even count.
func median[T float64 | time.Duration](x []T) T {
	n := len(x)
	if n%2 == 1 {
		return x[n/2]
	}
	return (x[n/2-1] + x[n/2]) / 2
}

// profile drives the in-process service once more with the CPU profile
// on, then writes the allocation profile.
func profile(c config, svc *server, body []byte) error {
	fmt.Println()
	if c.cpuprofile != "" {
		f, err := os.Create(c.cpuprofile)
		if err != nil {
			return err
		}
		if err := rpprof.StartCPUProfile(f); err != nil {
			return err
		}
		x, err := load(c, svc, body, c.duration)
		rpprof.StopCPUProfile()
		f.Close()
		if err != nil {
			return err
		}
		fmt.Printf("profiled run: %.0f req/s; CPU profile in %s (go tool pprof -top %s)\n", x.rps, c.cpuprofile, c.cpuprofile)
	} else if _, err := load(c, svc, body, c.duration); err != nil {
		return err
	}
	if c.memprofile != "" {
		f, err := os.Create(c.memprofile)
		if err != nil {
			return err
		}
		defer f.Close()
		if err := rpprof.Lookup("allocs").WriteTo(f, 0); err != nil {
			return err
		}
		fmt.Printf("allocation profile in %s (go tool pprof -sample_index=alloc_space -top %s)\n", c.memprofile, c.memprofile)
	}
	return nil
}

// batch posts CSV batches of linear rows: a tenth of the rows first, then
// all of them batchRepeats times, and prints rows per second, the
// service's CPU time per row and its peak memory after each, so that
// memory growing with the row count shows; then the median and spread of
// the full-size runs, which the target is judged on.
func batch(c config, svc *server) error {
	var rates []float64
	for i, n := range append([]int{max(1, c.batchRows/10)}, slices.Repeat([]int{c.batchRows}, batchRepeats)...) {
		rate, err := postBatch(svc, n)
		if err != nil || rate == 0 {
			return err
		}
		if i > 0 {
			rates = append(rates, rate)
		}
	}
	slices.Sort(rates)
	med := rates[len(rates)/2]
	fmt.Printf("batch %d rows: median %.0f rows/s (spread %.0f..%.0f over %d runs)\n", c.batchRows, med, rates[0], rates[len(rates)-1], len(rates))
	if c.batchRows < targetBatchSize {
		fmt.Printf("no verdict: the batch target is set for %d rows\n", targetBatchSize)
		return nil
	}
	fmt.Printf("%s: batch %.0f rows/s, target >= %d\n", verdict(med >= targetBatchRowsS), med, targetBatchRowsS)
	return nil
}

// batchRepeats is how many times the full-size batch is posted.
const batchRepeats = 3

// postBatch posts one batch of n rows and prints what it cost; a rate of
// 0 with no error means the batch endpoint is not there.
func postBatch(svc *server, n int) (float64, error) {
	const path = "/v1/batch/expansion/linear"
	body := batchCSV(n)
	req, err := http.NewRequest(http.MethodPost, svc.base+path, bytes.NewReader(body))
	if err != nil {
		return 0, err
	}
	req.Header.Set("Content-Type", "text/csv")
	req.Header.Set("Accept", "text/csv")
	cpu0 := svc.cpuTime()
	t0 := time.Now()
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		return 0, fmt.Errorf("batch: %w", err)
	}
	out, err := io.ReadAll(resp.Body)
	elapsed := time.Since(t0)
	resp.Body.Close()
	cpu := svc.cpuTime() - cpu0
	if err != nil {
		return 0, fmt.Errorf("batch: %w", err)
	}
	switch {
	case resp.StatusCode == http.StatusNotFound:
		fmt.Println("batch endpoint not available (POST " + path + " answered 404)")
		return 0, nil
	case resp.StatusCode != http.StatusOK:
		return 0, fmt.Errorf("batch of %d rows: %s: %.300s", n, resp.Status, out)
	}
	rows, bad, err := countRows(out)
	if err != nil {
		return 0, fmt.Errorf("batch answer: %w", err)
	}
	if rows != n {
		return 0, fmt.Errorf("batch of %d rows answered %d rows", n, rows)
	}
	if bad > 0 {
		return 0, fmt.Errorf("batch: %d rows answered with an error", bad)
	}
	rate := float64(n) / elapsed.Seconds()
	perRow := ""
	if cpu > 0 {
		perRow = fmt.Sprintf(", service CPU %.1f µs/row", float64(cpu)/float64(time.Microsecond)/float64(n))
	}
	fmt.Printf("batch %7d rows (%.1f MB in, %.1f MB out): %s, %.0f rows/s%s; service %s\n",
		n, float64(len(body))/1e6, float64(len(out))/1e6, elapsed.Round(time.Millisecond), rate, perRow, svc.memory())
	return rate, nil
}

// batchCSV is n rows of linear expansions of girders from 1 m to 500 m
// (demo data).
func batchCSV(n int) []byte {
	b := make([]byte, 0, 24*n+32)
	b = append(b, "length,alpha,delta_t\r\n"...)
	for i := 0; i < n; i++ {
		b = strconv.AppendInt(b, int64(1+i%500), 10)
		b = append(b, " m,12e-6/K,50 K\r\n"...)
	}
	return b
}

// countRows counts the data rows of a CSV answer and those whose error
// column is not empty.
func countRows(b []byte) (rows, bad int, err error) {
	r := csv.NewReader(bytes.NewReader(b))
	r.ReuseRecord = true
	head, err := r.Read()
	if err != nil {
		return 0, 0, err
	}
	errCol := slices.Index(head, "error")
	for {
		rec, err := r.Read()
		if err == io.EOF {
			return rows, bad, nil
		}
		if err != nil {
			return rows, bad, err
		}
		rows++
		if errCol >= 0 && errCol < len(rec) && rec[errCol] != "" {
			bad++
		}
	}
}
