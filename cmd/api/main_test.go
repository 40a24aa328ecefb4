package main

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/thermalmovement/service/internal/logging"
)

// servingLine waits for run's "serving" log line in b and returns it.
func servingLine(t *testing.T, b *logging.Buffer, done <-chan error) map[string]any {
	t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for time.Now().Before(deadline) {
		sc := bufio.NewScanner(strings.NewReader(b.String()))
		for sc.Scan() {
			var line map[string]any
			if json.Unmarshal(sc.Bytes(), &line) == nil && line["msg"] == "serving" {
				return line
			}
		}
		select {
		case err := <-done:
			t.Fatalf("run returned %v before serving; log:\n%s", err, b.String())
		case <-time.After(10 * time.Millisecond):
		}
	}
	t.Fatalf("no serving line in 10 s; log:\n%s", b.String())
	return nil
}

func noEnv(string) string { return "" }

// startRun starts run with args and returns the API address, the
// metrics address and run's result channel.
func startRun(t *testing.T, ctx context.Context, args []string, getenv func(string) string) (addr, metricsAddr string, done chan error, logs *logging.Buffer) {
	t.Helper()
	logs = &logging.Buffer{}
	done = make(chan error, 1)
	go func() { done <- run(ctx, args, getenv, logs) }()
	line := servingLine(t, logs, done)
	return line["addr"].(string), line["metrics_addr"].(string), done, logs
}

var client = &http.Client{Timeout: 5 * time.Second, Transport: &http.Transport{DisableKeepAlives: true}}

func get(t *testing.T, url string, header ...string) (int, http.Header, []byte) {
	t.Helper()
	req, err := http.NewRequest(http.MethodGet, url, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i+1 < len(header); i += 2 {
		req.Header.Set(header[i], header[i+1])
	}
	resp, err := client.Do(req)
	if err != nil {
		t.Fatalf("GET %s: %v", url, err)
	}
	defer resp.Body.Close()
	body, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, resp.Header, body
}

const linearQuery = "/v1/expansion/linear?length=48%20m&material=structural-steel&delta_t=50%20K"

// slowRequest is a POST whose body is sent in two parts over a raw
// connection, so that it stays in flight as long as the test wants.
type slowRequest struct {
	conn net.Conn
	rest string
}

func startSlowRequest(t *testing.T, addr string) *slowRequest {
	t.Helper()
	conn, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	body := `{"length": "48 m", "material": "structural-steel", "delta_t": "50 K"}`
	head := fmt.Sprintf("POST /v1/expansion/linear HTTP/1.1\r\nHost: test\r\nContent-Type: application/json\r\nContent-Length: %d\r\n\r\n", len(body))
	if _, err := io.WriteString(conn, head+body[:10]); err != nil {
		t.Fatal(err)
	}
	return &slowRequest{conn: conn, rest: body[10:]}
}

// finish sends the rest of the body and returns the response.
func (s *slowRequest) finish() (*http.Response, []byte, error) {
	defer s.conn.Close()
	_ = s.conn.SetDeadline(time.Now().Add(5 * time.Second))
	if _, err := io.WriteString(s.conn, s.rest); err != nil {
		return nil, nil, err
	}
	resp, err := http.ReadResponse(bufio.NewReader(s.conn), nil)
	if err != nil {
		return nil, nil, err
	}
	defer resp.Body.Close()
	body, err := io.ReadAll(resp.Body)
	return resp, body, err
}

// TestDrain shows the shutdown sequence with requests in flight: on
// cancel (SIGTERM), /readyz answers 503 at once while new requests are
// still served for --shutdown-delay; then the requests in flight finish
// and run returns nil.
func TestDrain(t *testing.T) {
	const delay = 800 * time.Millisecond
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	addr, _, done, logs := startRun(t, ctx, []string{"--addr", "127.0.0.1:0", "--shutdown-delay", delay.String(), "--shutdown-timeout", "5s"}, noEnv)
	base := "http://" + addr

	if code, _, body := get(t, base+"/readyz"); code != http.StatusOK {
		t.Fatalf("GET /readyz before drain = %d %s, want 200", code, body)
	}
	var slow []*slowRequest
	for range 3 {
		slow = append(slow, startSlowRequest(t, addr))
	}
	// Let the server read the headers, so that the requests are active.
	time.Sleep(100 * time.Millisecond)

	cancelled := time.Now()
	cancel()
	flipped := false
	for time.Since(cancelled) < delay/2 {
		if code, _, _ := get(t, base+"/readyz"); code == http.StatusServiceUnavailable {
			flipped = true
			break
		}
		time.Sleep(5 * time.Millisecond)
	}
	if !flipped {
		t.Fatalf("/readyz still not 503 %v after cancel", time.Since(cancelled))
	}
	if code, _, body := get(t, base+linearQuery); code != http.StatusOK {
		t.Errorf("calculation during the shutdown delay = %d %s, want 200", code, body)
	}
	if code, _, _ := get(t, base+"/healthz"); code != http.StatusOK {
		t.Errorf("/healthz during the shutdown delay = %d, want 200", code)
	}
	select {
	case err := <-done:
		t.Fatalf("run returned %v while requests were in flight", err)
	default:
	}

	// Past the delay the server is shutting down: it takes no new
	// connection, and the requests in flight still complete.
	time.Sleep(time.Until(cancelled.Add(delay + 200*time.Millisecond)))
	if conn, err := net.DialTimeout("tcp", addr, time.Second); err == nil {
		conn.Close()
		t.Errorf("a new connection was accepted after the shutdown delay")
	}
	for i, s := range slow {
		resp, body, err := s.finish()
		if err != nil {
			t.Fatalf("in-flight request %d: %v", i, err)
		}
		if resp.StatusCode != http.StatusOK || !bytes.Contains(body, []byte(`"delta_length"`)) {
			t.Errorf("in-flight request %d = %d %s, want 200 with delta_length", i, resp.StatusCode, body)
		}
	}
	select {
	case err := <-done:
		if err != nil {
			t.Fatalf("run = %v, want nil", err)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("run did not return after the requests in flight finished")
	}
	if !strings.Contains(logs.String(), `"msg":"draining"`) || !strings.Contains(logs.String(), `"msg":"stopped"`) {
		t.Errorf("log lacks draining and stopped lines:\n%s", logs.String())
	}
}

// TestHelpListsEveryFlag checks that --help names every flag with its
// environment variable, and that run treats --help as a clean exit.
func TestHelpListsEveryFlag(t *testing.T) {
	var out bytes.Buffer
	err := run(context.Background(), []string{"--help"}, noEnv, &out)
	if !errors.Is(err, flag.ErrHelp) {
		t.Fatalf("run(--help) = %v, want flag.ErrHelp", err)
	}
	help := out.String()
	var c config
	fs, _ := newFlagSet(&c, noEnv, io.Discard)
	n := 0
	fs.VisitAll(func(f *flag.Flag) {
		n++
		// A flag's name is followed by its type, or by the end of the line
		// for a bool.
		if !strings.Contains(help, "  -"+f.Name+" ") && !strings.Contains(help, "  -"+f.Name+"\n") || !strings.Contains(help, "(env "+envName(f.Name)+")") {
			t.Errorf("--help lacks -%s with (env %s):\n%s", f.Name, envName(f.Name), help)
		}
	})
	for _, name := range []string{"addr", "metrics-addr", "shutdown-delay", "shutdown-timeout", "api-keys-file", "max-in-flight", "max-url-bytes"} {
		if fs.Lookup(name) == nil {
			t.Errorf("no flag --%s", name)
		}
	}
	if n < 10 {
		t.Errorf("only %d flags", n)
	}
}

func TestEnvName(t *testing.T) {
	for in, want := range map[string]string{"addr": "ADDR", "shutdown-delay": "SHUTDOWN_DELAY", "api-keys-file": "API_KEYS_FILE"} {
		if got := envName(in); got != want {
			t.Errorf("envName(%q) = %q, want %q", in, got, want)
		}
	}
}

// TestConfigFromEnv checks the order flag, then environment, then default.
func TestConfigFromEnv(t *testing.T) {
	env := map[string]string{"SHUTDOWN_DELAY": "7s", "MAX_IN_FLIGHT": "12", "ADDR": "127.0.0.1:9999"}
	c, err := parseConfig([]string{"--addr", "127.0.0.1:7777"}, func(k string) string { return env[k] }, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if c.shutdownDelay != 7*time.Second || c.maxInFlight != 12 || c.addr != "127.0.0.1:7777" || c.shutdownTimeout != 15*time.Second {
		t.Errorf("parseConfig = %+v, want delay 7s from env, max-in-flight 12 from env, addr from the flag, timeout default 15s", c)
	}
	// The cache of answers is on by default, 16 MiB; 0 turns it off.
	if c.answerCache != 16<<20 {
		t.Errorf("answer cache %d bytes by default, want 16 MiB", c.answerCache)
	}
	c, err = parseConfig(nil, func(k string) string { return map[string]string{"ANSWER_CACHE_BYTES": "0"}[k] }, io.Discard)
	if err != nil || c.answerCache != 0 {
		t.Errorf("ANSWER_CACHE_BYTES=0: %d, %v", c.answerCache, err)
	}
}

// TestBadConfigFailsAtStart checks that run refuses a bad setting before
// it serves anything.
func TestBadConfigFailsAtStart(t *testing.T) {
	dir := t.TempDir()
	empty := filepath.Join(dir, "empty")
	if err := os.WriteFile(empty, []byte("# no keys yet\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	malformed := filepath.Join(dir, "malformed")
	if err := os.WriteFile(malformed, []byte("not-a-hash structures-team\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	taken, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer taken.Close()
	cases := []struct {
		name string
		args []string
		env  map[string]string
		want string
	}{
		{"negative delay", []string{"--shutdown-delay", "-1s"}, nil, "--shutdown-delay"},
		{"zero timeout", []string{"--shutdown-timeout", "0s"}, nil, "--shutdown-timeout"},
		{"bad env duration", nil, map[string]string{"SHUTDOWN_DELAY": "ten seconds"}, "SHUTDOWN_DELAY"},
		{"bad env integer", nil, map[string]string{"MAX_IN_FLIGHT": "many"}, "MAX_IN_FLIGHT"},
		{"bad env boolean", nil, map[string]string{"LOG_SAMPLING": "sometimes"}, "LOG_SAMPLING"},
		{"negative in-flight bound", []string{"--max-in-flight", "-1"}, nil, "--max-in-flight"},
		{"negative answer cache", []string{"--answer-cache-bytes", "-1"}, nil, "--answer-cache-bytes"},
		{"bad log level", []string{"--log-level", "loud"}, nil, "--log-level"},
		{"address without port", []string{"--addr", "localhost"}, nil, "--addr"},
		{"port not a number", []string{"--addr", ":http-alt"}, nil, "--addr"},
		{"metrics on the API address", []string{"--addr", ":8080", "--metrics-addr", ":8080"}, nil, "--metrics-addr"},
		{"tiny URL bound", []string{"--max-url-bytes", "10"}, nil, "--max-url-bytes"},
		{"tiny body cap", []string{"--max-body-bytes", "10"}, nil, "--max-body-bytes"},
		{"unknown flag", []string{"--colour", "blue"}, nil, "colour"},
		{"stray argument", []string{"serve"}, nil, "unexpected arguments"},
		{"missing keys file", []string{"--api-keys-file", filepath.Join(dir, "absent")}, nil, "--api-keys-file"},
		{"keys file without keys", []string{"--api-keys-file", empty}, nil, "no key"},
		{"malformed keys file", []string{"--api-keys-file", malformed}, nil, "line 1"},
		{"address taken", []string{"--addr", taken.Addr().String()}, nil, "address already in use"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			args := append([]string{"--addr", "127.0.0.1:0"}, tc.args...)
			ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
			defer cancel()
			err := run(ctx, args, func(k string) string { return tc.env[k] }, io.Discard)
			if err == nil || ctx.Err() != nil {
				t.Fatalf("run(%q) = %v, want an error at start", args, err)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("run(%q) = %v, want it to mention %q", args, err, tc.want)
			}
		})
	}
}

// TestAPIKeysAndLimits runs the service with a keys file, a separate
// metrics listener and the URL bound, over real connections.
func TestAPIKeysAndLimits(t *testing.T) {
	const key = "demo-key-for-the-footbridge-team" // demo data
	sum := sha256.Sum256([]byte(key))
	keysFile := filepath.Join(t.TempDir(), "keys")
	if err := os.WriteFile(keysFile, []byte("# demo keys\n"+hex.EncodeToString(sum[:])+" footbridge-team\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	env := map[string]string{"API_KEYS_FILE": keysFile}
	addr, metricsAddr, done, logs := startRun(t, ctx, []string{"--addr", "127.0.0.1:0", "--metrics-addr", "127.0.0.1:0"}, func(k string) string { return env[k] })
	defer func() {
		cancel()
		if err := <-done; err != nil {
			t.Errorf("run = %v", err)
		}
	}()
	base := "http://" + addr
	if addr == metricsAddr {
		t.Fatalf("metrics address %s is the API address", metricsAddr)
	}

	if code, h, body := get(t, base+linearQuery); code != http.StatusUnauthorized || h.Get("WWW-Authenticate") == "" ||
		h.Get("Content-Type") != "application/problem+json" {
		t.Errorf("without a key: %d %v %s, want 401 problem+json with WWW-Authenticate", code, h, body)
	}
	if code, _, body := get(t, base+linearQuery, "Authorization", "Bearer "+key); code != http.StatusOK {
		t.Errorf("with the key in the header: %d %s, want 200", code, body)
	}
	if code, _, body := get(t, base+linearQuery+"&api_key="+key); code != http.StatusOK {
		t.Errorf("with the key in the query: %d %s, want 200", code, body)
	}
	if code, _, _ := get(t, base+"/readyz"); code != http.StatusOK {
		t.Errorf("/readyz needs no key, got %d", code)
	}
	if code, _, _ := get(t, base+"/metrics"); code != http.StatusNotFound && code != http.StatusUnauthorized {
		t.Errorf("/metrics on the API address with --metrics-addr = %d, want it not served there", code)
	}
	code, _, metrics := get(t, "http://"+metricsAddr+"/metrics")
	if code != http.StatusOK || !bytes.Contains(metrics, []byte("thermal_http_requests_total")) {
		t.Errorf("GET /metrics on the metrics address = %d, want 200 with the request counter", code)
	}
	if bytes.Contains(metrics, []byte(key)) || strings.Contains(logs.String(), key) {
		t.Errorf("the API key reached the metrics or the logs")
	}

	long := base + linearQuery + "&api_key=" + key + "&pad=" + strings.Repeat("x", 9000)
	code, h, body := get(t, long)
	if code != http.StatusRequestURITooLong || h.Get("Content-Type") != "application/problem+json" {
		t.Errorf("a 9 KB URL = %d %s %s, want 414 problem+json", code, h.Get("Content-Type"), body)
	}
	var pr struct {
		Type   string `json:"type"`
		Status int    `json:"status"`
	}
	if err := json.Unmarshal(body, &pr); err != nil || pr.Status != http.StatusRequestURITooLong || pr.Type == "" {
		t.Errorf("414 body %s is not a problem with status 414", body)
	}
}

// TestLogSampling sends 400 requests, within a second on any machine
// this runs on: with the default sampling fewer request lines are written,
// and the lines written plus thermal_log_lines_dropped_total account for
// every request; with
// --log-sampling=false (LOG_SAMPLING=false) every request has its line.
// The figures (first 100 a second, then every 100th) are those of
// zap.NewProductionConfig, read from zap's config.go.
func TestLogSampling(t *testing.T) {
	const n = 400
	for _, tc := range []struct {
		name     string
		env      map[string]string
		sampling bool
	}{{"default", nil, true}, {"off", map[string]string{"LOG_SAMPLING": "false"}, false}} {
		t.Run(tc.name, func(t *testing.T) {
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			addr, _, done, logs := startRun(t, ctx, []string{"--addr", "127.0.0.1:0"}, func(k string) string { return tc.env[k] })
			keepAlive := &http.Client{Timeout: 5 * time.Second}
			began := time.Now()
			for i := range n {
				resp, err := keepAlive.Get("http://" + addr + linearQuery)
				if err != nil {
					t.Fatal(err)
				}
				_, _ = io.Copy(io.Discard, resp.Body)
				resp.Body.Close()
				if resp.StatusCode != http.StatusOK {
					t.Fatalf("request %d = %d", i, resp.StatusCode)
				}
			}
			took := time.Since(began)
			_, _, metrics := get(t, "http://"+addr+"/metrics")
			var dropped float64
			for line := range strings.Lines(string(metrics)) {
				if v, ok := strings.CutPrefix(line, "thermal_log_lines_dropped_total "); ok {
					if _, err := fmt.Sscan(v, &dropped); err != nil {
						t.Fatalf("metric line %q: %v", line, err)
					}
				}
			}
			cancel()
			if err := <-done; err != nil {
				t.Fatal(err)
			}
			lines := strings.Count(logs.String(), `"msg":"request","method":"GET","route":"/v1/expansion/linear"`)
			switch {
			case !bytes.Contains(metrics, []byte("\nthermal_log_lines_dropped_total ")):
				t.Fatalf("/metrics lacks thermal_log_lines_dropped_total:\n%s", metrics)
			case tc.sampling && lines+int(dropped) != n:
				t.Errorf("sampling: %d request lines and %v dropped, want them to add up to %d", lines, dropped, n)
			case tc.sampling && lines >= n && took < 900*time.Millisecond:
				// Within one second's tick at most 100 + 300/100 lines pass.
				t.Errorf("sampling: %d request lines of %d sent in %v, want fewer", lines, n, took)
			case !tc.sampling && (lines != n || dropped != 0):
				t.Errorf("no sampling: %d request lines and %v dropped, want %d and 0", lines, dropped, n)
			}
		})
	}
}
