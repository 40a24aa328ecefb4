// Command api serves the thermal-movement calculation service.
//
// Every setting is a flag, else an environment variable, else a built-in
// default; `api --help` lists them.
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"os/signal"
	"strconv"
	"strings"
	"syscall"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
	"github.com/prometheus/client_golang/prometheus/promhttp"
	"go.uber.org/zap"
	"go.uber.org/zap/zapcore"

	"github.com/thermalmovement/service/internal/handlers"
	"github.com/thermalmovement/service/internal/logging"
	"github.com/thermalmovement/service/internal/materials"
)

// Set at build time: -ldflags "-X main.version=1.2.3 -X main.commit=abc".
var (
	version = "dev"
	commit  = "unknown"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if err := run(ctx, os.Args[1:], os.Getenv, os.Stdout); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			os.Exit(0)
		}
		fmt.Fprintln(os.Stderr, "api:", err)
		os.Exit(1)
	}
}

// config is every setting of the process.
type config struct {
	addr            string
	metricsAddr     string
	shutdownDelay   time.Duration
	shutdownTimeout time.Duration
	readHeader      time.Duration
	read            time.Duration
	write           time.Duration
	idle            time.Duration
	maxHeaderBytes  int64
	maxURLBytes     int64
	maxBodyBytes    int64
	logLevel        string
	logSampling     bool
	apiKeysFile     string
	maxInFlight     int64
	batchMaxRows    int64
	batchMaxBytes   int64
	answerCache     int64
}

// parseConfig reads flags, falling back to environment variables, then
// to defaults, and checks the result. The environment variable of
// --flag-name is FLAG_NAME.
func parseConfig(args []string, getenv func(string) string, out io.Writer) (config, error) {
	var c config
	fs, errs := newFlagSet(&c, getenv, out)
	if err := fs.Parse(args); err != nil {
		return c, err
	}
	if len(*errs) > 0 {
		return c, errors.Join(*errs...)
	}
	if fs.NArg() > 0 {
		return c, fmt.Errorf("unexpected arguments %q", fs.Args())
	}
	return c, c.check()
}

// newFlagSet declares every setting of c as a flag whose default is its
// environment variable, when set, else the built-in default. Malformed
// environment values are collected in errs.
func newFlagSet(c *config, getenv func(string) string, out io.Writer) (*flag.FlagSet, *[]error) {
	fs := flag.NewFlagSet("api", flag.ContinueOnError)
	fs.SetOutput(out)
	errs := new([]error)
	str := func(p *string, name, def, usage string) {
		if v := getenv(envName(name)); v != "" {
			def = v
		}
		fs.StringVar(p, name, def, usage+" (env "+envName(name)+")")
	}
	dur := func(p *time.Duration, name string, def time.Duration, usage string) {
		if v := getenv(envName(name)); v != "" {
			d, err := time.ParseDuration(v)
			if err != nil {
				*errs = append(*errs, fmt.Errorf("%s=%q: %w", envName(name), v, err))
			}
			def = d
		}
		fs.DurationVar(p, name, def, usage+" (env "+envName(name)+")")
	}
	boolean := func(p *bool, name string, def bool, usage string) {
		if v := getenv(envName(name)); v != "" {
			b, err := strconv.ParseBool(v)
			if err != nil {
				*errs = append(*errs, fmt.Errorf("%s=%q: %w", envName(name), v, err))
			}
			def = b
		}
		fs.BoolVar(p, name, def, usage+" (env "+envName(name)+")")
	}
	integer := func(p *int64, name string, def int64, usage string) {
		if v := getenv(envName(name)); v != "" {
			n, err := strconv.ParseInt(v, 10, 64)
			if err != nil {
				*errs = append(*errs, fmt.Errorf("%s=%q: %w", envName(name), v, err))
			}
			def = n
		}
		fs.Int64Var(p, name, def, usage+" (env "+envName(name)+")")
	}
	str(&c.addr, "addr", ":8080", "listen address of the API")
	str(&c.metricsAddr, "metrics-addr", "", "separate listen address for /metrics; empty serves /metrics on --addr")
	dur(&c.shutdownDelay, "shutdown-delay", 0, "on SIGTERM, keep serving this long with /readyz at 503 before shutting down")
	dur(&c.shutdownTimeout, "shutdown-timeout", 15*time.Second, "longest wait for in-flight requests at shutdown")
	dur(&c.readHeader, "read-header-timeout", 5*time.Second, "http.Server ReadHeaderTimeout")
	dur(&c.read, "read-timeout", 30*time.Second, "http.Server ReadTimeout")
	dur(&c.write, "write-timeout", 60*time.Second, "http.Server WriteTimeout")
	dur(&c.idle, "idle-timeout", 120*time.Second, "http.Server IdleTimeout")
	integer(&c.maxHeaderBytes, "max-header-bytes", 16<<10, "largest request line and header block, bytes")
	integer(&c.maxURLBytes, "max-url-bytes", 8<<10, "longest request URI (path and query), bytes; longer: 414")
	integer(&c.maxBodyBytes, "max-body-bytes", 64<<10, "largest JSON body of a calculation, bytes")
	str(&c.logLevel, "log-level", "info", "debug, info, warn or error")
	boolean(&c.logSampling, "log-sampling", true, fmt.Sprintf("sample repeated log lines below warn as zap's production logger does: each second, the first %d lines of a level and message, then every %dth; false logs every line", logging.SampleFirst, logging.SampleThereafter))
	str(&c.apiKeysFile, "api-keys-file", "", "file of accepted API keys as SHA-256 hashes with labels; empty: no keys required")
	integer(&c.maxInFlight, "max-in-flight", 256, "requests served at once; beyond, 503 with Retry-After (0: no bound)")
	integer(&c.batchMaxRows, "batch-max-rows", 100000, "rows of one batch request")
	integer(&c.batchMaxBytes, "batch-max-bytes", 32<<20, "body of one batch request, bytes")
	integer(&c.answerCache, "answer-cache-bytes", 16<<20, "memory of the cache of whole answers to calculation GETs, bytes, so that a repeated request is not computed again; 0: no cache")
	return fs, errs
}

// check validates the settings together, so that a mistake stops the
// process at start-up rather than showing under load.
func (c config) check() error {
	var errs []error
	bad := func(format string, a ...any) { errs = append(errs, fmt.Errorf(format, a...)) }
	if err := checkAddr(c.addr); err != nil {
		bad("--addr %q: %w", c.addr, err)
	}
	if c.metricsAddr != "" {
		if err := checkAddr(c.metricsAddr); err != nil {
			bad("--metrics-addr %q: %w", c.metricsAddr, err)
		} else if c.metricsAddr == c.addr && !strings.HasSuffix(c.addr, ":0") {
			bad("--metrics-addr must differ from --addr")
		}
	}
	if c.shutdownDelay < 0 {
		bad("--shutdown-delay must not be negative")
	}
	if c.shutdownTimeout <= 0 {
		bad("--shutdown-timeout must be positive")
	}
	if c.readHeader <= 0 || c.read <= 0 || c.write <= 0 || c.idle <= 0 {
		bad("every timeout must be positive")
	}
	if c.maxHeaderBytes < 1024 || c.maxHeaderBytes > 1<<20 {
		bad("--max-header-bytes must be from 1024 to 1048576")
	}
	if c.maxURLBytes < 256 || c.maxURLBytes > c.maxHeaderBytes {
		bad("--max-url-bytes must be from 256 to --max-header-bytes")
	}
	if c.maxBodyBytes < 1024 {
		bad("--max-body-bytes must be at least 1024")
	}
	if c.maxInFlight < 0 || c.maxInFlight > 1<<20 {
		bad("--max-in-flight must be from 0 (no bound) to 1048576")
	}
	if c.batchMaxRows < 1 || c.batchMaxRows > 1<<31-1 {
		bad("--batch-max-rows must be positive")
	}
	if c.answerCache < 0 {
		bad("--answer-cache-bytes must not be negative (0: no cache)")
	}
	if c.batchMaxBytes < 1024 {
		bad("--batch-max-bytes must be at least 1024")
	}
	if _, err := zapcore.ParseLevel(c.logLevel); err != nil {
		bad("--log-level: %w", err)
	}
	return errors.Join(errs...)
}

// checkAddr checks a listen address of the form host:port, the port a
// number (0 picks a free one).
func checkAddr(addr string) error {
	_, port, err := net.SplitHostPort(addr)
	if err != nil {
		return err
	}
	if _, err := strconv.ParseUint(port, 10, 16); err != nil {
		return fmt.Errorf("port %q is not a number from 0 to 65535", port)
	}
	return nil
}

// loadAPIKeys reads the keys file named by --api-keys-file, if any.
func loadAPIKeys(name string) (*handlers.APIKeys, error) {
	if name == "" {
		return nil, nil
	}
	f, err := os.Open(name)
	if err != nil {
		return nil, fmt.Errorf("--api-keys-file: %w", err)
	}
	defer f.Close()
	keys, err := handlers.LoadAPIKeys(f)
	if err != nil {
		return nil, fmt.Errorf("--api-keys-file %s: %w", name, err)
	}
	return keys, nil
}

func envName(flagName string) string {
	b := []byte(flagName)
	for i, ch := range b {
		switch {
		case ch == '-':
			b[i] = '_'
		case 'a' <= ch && ch <= 'z':
			b[i] = ch - 'a' + 'A'
		}
	}
	return string(b)
}

// run starts the service and blocks until ctx is done and the service has
// drained.
func run(ctx context.Context, args []string, getenv func(string) string, stdout io.Writer) error {
	cfg, err := parseConfig(args, getenv, stdout)
	if err != nil {
		return err
	}
	level, _ := zapcore.ParseLevel(cfg.logLevel)
	reg := prometheus.NewRegistry()
	log, logOut := logging.New(level, cfg.logSampling, stdout, reg)
	defer func() { _ = logOut.Stop() }()

	keys, err := loadAPIKeys(cfg.apiKeysFile)
	if err != nil {
		return err
	}
	cat, err := materials.Load()
	if err != nil {
		return err
	}
	reg.MustRegister(collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	metricsHandler := promhttp.HandlerFor(reg, promhttp.HandlerOpts{Registry: reg})
	opts := handlers.Options{Version: version, Commit: commit, MaxBodyBytes: cfg.maxBodyBytes, MaxURLBytes: int(cfg.maxURLBytes),
		MaxInFlight: int(cfg.maxInFlight), BatchMaxRows: int(cfg.batchMaxRows), BatchMaxBytes: cfg.batchMaxBytes, APIKeys: keys,
		AnswerCacheBytes: cfg.answerCache}
	if cfg.metricsAddr == "" {
		opts.Metrics = metricsHandler
	}
	h, err := handlers.New(log, reg, cat, opts)
	if err != nil {
		return err
	}

	ln, err := net.Listen("tcp", cfg.addr)
	if err != nil {
		return err
	}
	srv := &http.Server{
		Handler:           h.Router(),
		ReadHeaderTimeout: cfg.readHeader,
		ReadTimeout:       cfg.read,
		WriteTimeout:      cfg.write,
		IdleTimeout:       cfg.idle,
		MaxHeaderBytes:    int(cfg.maxHeaderBytes),
		ErrorLog:          zap.NewStdLog(log.Named("http")),
	}
	servers := []*http.Server{srv}
	listeners := []net.Listener{ln}
	if cfg.metricsAddr != "" {
		mln, err := net.Listen("tcp", cfg.metricsAddr)
		if err != nil {
			ln.Close()
			return err
		}
		mux := http.NewServeMux()
		mux.Handle("GET /metrics", metricsHandler)
		servers = append(servers, &http.Server{Handler: mux, ReadHeaderTimeout: cfg.readHeader,
			ReadTimeout: cfg.read, WriteTimeout: cfg.write, IdleTimeout: cfg.idle,
			MaxHeaderBytes: int(cfg.maxHeaderBytes), ErrorLog: srv.ErrorLog})
		listeners = append(listeners, mln)
	}
	errc := make(chan error, len(servers))
	for i, s := range servers {
		go func() { errc <- s.Serve(listeners[i]) }()
	}
	metricsAt := ln.Addr().String()
	if len(listeners) > 1 {
		metricsAt = listeners[1].Addr().String()
	}
	log.Info("serving", zap.String("addr", ln.Addr().String()), zap.String("version", version),
		zap.String("commit", commit), zap.String("materials", cat.Version),
		zap.String("metrics_addr", metricsAt), zap.Int("api_keys", keys.Len()),
		zap.Int64("max_in_flight", cfg.maxInFlight))
	_ = logOut.Sync()

	select {
	case err := <-errc:
		for _, s := range servers {
			_ = s.Close()
		}
		return err
	case <-ctx.Done():
	}
	// Draining: readiness fails at once, requests are still served for
	// the delay (so that the endpoints controller removes the pod), then
	// the servers stop taking connections and in-flight requests finish.
	h.Drain()
	log.Info("draining", zap.Duration("shutdown_delay", cfg.shutdownDelay))
	_ = logOut.Sync()
	time.Sleep(cfg.shutdownDelay)
	sctx, cancel := context.WithTimeout(context.Background(), cfg.shutdownTimeout)
	defer cancel()
	var errs []error
	for _, s := range servers {
		if err := s.Shutdown(sctx); err != nil {
			errs = append(errs, err)
		}
	}
	log.Info("stopped")
	return errors.Join(errs...)
}
