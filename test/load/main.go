// Command load runs a mixed workload against the service for a bounded
// time and reports throughput, latency percentiles, errors and the peak
// resident memory of the service process. It exits non-zero when any
// response is not the one expected (a transport error, a 5xx, a 503 from
// the in-flight bound, or a status that differs from the target's).
//
// By default it builds ./cmd/api, starts it on a loopback port and stops
// it at the end; --target points it at a running instance instead (then
// --pid gives the process whose memory to report).
//
//	go run ./test/load                       # 20 s at 300 requests/s
//	go run ./test/load -duration 60s -rate 800
//	go run ./test/load -target http://127.0.0.1:8080 -pid 1234
package main

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"time"

	vegeta "github.com/tsenart/vegeta/v12/lib"
)

func main() {
	if err := run(os.Args[1:], os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "load:", err)
		os.Exit(1)
	}
}

// target is one request of the workload and the status it must get.
type target struct {
	vegeta.Target
	want int
}

func get(path string, q url.Values, want int) target {
	u := path
	if q != nil {
		u += "?" + q.Encode()
	}
	return target{vegeta.Target{Method: http.MethodGet, URL: u}, want}
}

func post(path, query, body string, want int) target {
	u := path
	if query != "" {
		u += "?" + query
	}
	h := http.Header{"Content-Type": []string{"application/json"}}
	return target{vegeta.Target{Method: http.MethodPost, URL: u, Body: []byte(body), Header: h}, want}
}

// workload is the mix: calculations by GET and POST in several formats
// and unit systems, reference data, and requests that must be refused.
// Demo data: a footbridge girder, a facade panel, a heat-exchanger
// shell's water, a warehouse slab.
func workload() []target {
	v := func(kv ...string) url.Values {
		q := url.Values{}
		for i := 0; i+1 < len(kv); i += 2 {
			q.Set(kv[i], kv[i+1])
		}
		return q
	}
	return []target{
		get("/v1/expansion/linear", v("length", "48 m", "material", "structural-steel", "t_initial", "-15 degC", "t_final", "35 degC"), 200),
		get("/v1/expansion/linear", v("length", "120 ft", "alpha", "6.5e-6 1/degF", "delta_t", "90 degF", "units", "us"), 200),
		get("/v1/expansion/linear", v("length", "30 m", "material", "stainless-steel-304", "t_initial", "20 degC", "t_final", "400 degC", "format", "text", "result", "delta_length"), 200),
		get("/v1/expansion/area", v("length", "2.4 m", "width", "1.2 m", "material", "aluminium-6061", "t_initial", "20 degC", "t_final", "70 degC"), 200),
		get("/v1/expansion/area", v("diameter", "80 mm", "hole", "true", "material", "structural-steel", "delta_t", "200 K", "format", "csv"), 200),
		get("/v1/expansion/volume", v("volume", "2 m3", "material", "water", "t_initial", "10 degC", "t_final", "80 degC"), 200),
		get("/v1/expansion/volume", v("volume", "0.5 m3", "alpha", "12e-6/K", "delta_t", "30 K", "format", "xml"), 200),
		post("/v1/expansion/linear", "", `{"length": {"value": 48, "unit": "m"}, "material": "structural-steel", "delta_t": "50 K"}`, 200),
		post("/v1/expansion/area", "", `{"area": "2.88 m2", "alpha": "23e-6/K", "delta_t": "50 K"}`, 200),
		post("/v1/expansion/volume", "", `{"volume": "1.2 m3", "material": "water", "t_initial": "15 degC", "t_final": "60 degC", "vessel_material": "structural-steel"}`, 200),
		get("/v1/materials", nil, 200),
		get("/v1/materials/concrete", nil, 200),
		get("/v1/units", nil, 200),
		get("/healthz", nil, 200),
		// Refusals, as a busy service sees them.
		get("/v1/expansion/linear", v("length", "48 mtr", "material", "structural-steel", "delta_t", "50 K"), 400),
		get("/v1/expansion/linear", v("length", "-5 m", "alpha", "12e-6/K", "delta_t", "50 K"), 422),
		get("/v1/materials/unobtainium", nil, 404),
		post("/v1/expansion/area", "units=si", `{"length": "2.4 m", "width": 1.2}`, 400),
		post("/v1/expansion/linear", "units=us", `{"length": "48 m",`, 400),
	}
}

func run(args []string, out io.Writer) error {
	fs := flag.NewFlagSet("load", flag.ContinueOnError)
	targetURL := fs.String("target", "", "base URL of a running service; empty: build and start ./cmd/api on a loopback port")
	pid := fs.Int("pid", 0, "with --target: process id whose peak memory to report")
	duration := fs.Duration("duration", 20*time.Second, "length of the attack")
	rate := fs.Int("rate", 300, "requests per second")
	workers := fs.Uint64("workers", 16, "initial concurrent requests")
	timeout := fs.Duration("timeout", 5*time.Second, "timeout of one request")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if *duration <= 0 || *duration > time.Hour || *rate <= 0 {
		return errors.New("--duration must be from 0 to 1h and --rate positive")
	}
	base := strings.TrimSuffix(*targetURL, "/")
	if base == "" {
		svc, err := startService()
		if err != nil {
			return err
		}
		defer svc.stop()
		base, *pid = svc.base, svc.cmd.Process.Pid
	}

	work := workload()
	want := map[string]int{}
	tgts := make([]vegeta.Target, len(work))
	for i, w := range work {
		w.URL = base + w.URL
		key := w.Method + " " + w.URL
		if _, dup := want[key]; dup {
			return fmt.Errorf("workload: %s twice; results are matched by method and URL", key)
		}
		want[key] = w.want
		tgts[i] = w.Target
	}
	atk := vegeta.NewAttacker(vegeta.Workers(*workers), vegeta.Timeout(*timeout), vegeta.KeepAlive(true))
	var m vegeta.Metrics
	unexpected := map[string]int{}
	for res := range atk.Attack(vegeta.NewStaticTargeter(tgts...), vegeta.Rate{Freq: *rate, Per: time.Second}, *duration, "mixed") {
		m.Add(res)
		key := res.Method + " " + res.URL
		// vegeta sets Error to the status text of a non-2xx answer too;
		// code 0 is a transport error.
		if int(res.Code) != want[key] {
			detail := ""
			if res.Code == 0 {
				detail = " " + res.Error
			}
			unexpected[fmt.Sprintf("%s %s -> %d%s (want %d)", res.Method, strings.TrimPrefix(res.URL, base), res.Code, detail, want[key])]++
		}
	}
	m.Close()

	fmt.Fprintf(out, "requests      %d in %v (%d targets, rate %d/s)\n", m.Requests, m.Duration.Round(time.Millisecond), len(work), *rate)
	fmt.Fprintf(out, "throughput    %.1f requests/s (%.1f%% 2xx-3xx; the mix has %d of %d targets that must be refused)\n", float64(m.Requests)/m.Duration.Seconds(), 100*m.Success, countRefusals(work), len(work))
	fmt.Fprintf(out, "latency       p50 %v  p90 %v  p95 %v  p99 %v  max %v\n", m.Latencies.P50, m.Latencies.P90, m.Latencies.P95, m.Latencies.P99, m.Latencies.Max)
	fmt.Fprintf(out, "status codes  %s\n", codes(m.StatusCodes))
	if *pid > 0 {
		hwm, err := peakRSS(*pid)
		if err != nil {
			return err
		}
		fmt.Fprintf(out, "peak RSS      %.1f MiB (VmHWM of pid %d)\n", float64(hwm)/(1<<20), *pid)
	} else {
		fmt.Fprintln(out, "peak RSS      not measured (give --pid)")
	}
	n := 0
	for k, c := range unexpected {
		fmt.Fprintf(out, "UNEXPECTED    %d x %s\n", c, k)
		n += c
	}
	if n > 0 {
		return fmt.Errorf("%d unexpected responses", n)
	}
	fmt.Fprintln(out, "errors        none unexpected")
	return nil
}

func countRefusals(w []target) int {
	n := 0
	for _, t := range w {
		if t.want >= 400 {
			n++
		}
	}
	return n
}

func codes(c map[string]int) string {
	keys := make([]string, 0, len(c))
	for k := range c {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	var b strings.Builder
	for _, k := range keys {
		fmt.Fprintf(&b, "%s:%d ", k, c[k])
	}
	return strings.TrimSpace(b.String())
}

// peakRSS reads the peak resident set size of a process, in bytes.
func peakRSS(pid int) (int64, error) {
	b, err := os.ReadFile("/proc/" + strconv.Itoa(pid) + "/status")
	if err != nil {
		return 0, err
	}
	for _, l := range strings.Split(string(b), "\n") {
		if f := strings.Fields(l); len(f) == 3 && f[0] == "VmHWM:" && f[2] == "kB" {
			kb, err := strconv.ParseInt(f[1], 10, 64)
			return kb << 10, err
		}
	}
	return 0, errors.New("no VmHWM in /proc/" + strconv.Itoa(pid) + "/status")
}

// service is a started instance of the binary.
type service struct {
	cmd  *exec.Cmd
	base string
	dir  string
}

// startService builds ./cmd/api (run from the module root) and starts it
// on a free loopback port, reading the port from its "serving" log line.
func startService() (*service, error) {
	dir, err := os.MkdirTemp("", "thermal-load-")
	if err != nil {
		return nil, err
	}
	bin := filepath.Join(dir, "api")
	build := exec.Command("go", "build", "-trimpath", "-o", bin, "./cmd/api")
	build.Stderr = os.Stderr
	if err := build.Run(); err != nil {
		os.RemoveAll(dir)
		return nil, fmt.Errorf("go build ./cmd/api (run from the module root): %w", err)
	}
	cmd := exec.Command(bin, "--addr", "127.0.0.1:0", "--max-in-flight", "1024")
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		return nil, err
	}
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		os.RemoveAll(dir)
		return nil, err
	}
	s := &service{cmd: cmd, dir: dir}
	addr := make(chan string, 1)
	go func() {
		sc := bufio.NewScanner(stdout)
		for sc.Scan() {
			var line struct{ Msg, Addr string }
			if json.Unmarshal(sc.Bytes(), &line) == nil && line.Msg == "serving" {
				addr <- line.Addr
			}
		}
	}()
	select {
	case a := <-addr:
		s.base = "http://" + a
	case <-time.After(30 * time.Second):
		s.stop()
		return nil, errors.New("the service did not start in 30 s")
	}
	return s, nil
}

// stop sends SIGTERM and waits for the exit.
func (s *service) stop() {
	defer os.RemoveAll(s.dir)
	_ = s.cmd.Process.Signal(syscall.SIGTERM)
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	done := make(chan struct{})
	go func() { _ = s.cmd.Wait(); close(done) }()
	select {
	case <-done:
	case <-ctx.Done():
		_ = s.cmd.Process.Kill()
	}
}
