package main

import (
	"context"
	"encoding/json"
	"errors"
	"expvar"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"os"
	"os/signal"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if err := run(ctx, os.Args[1:], os.Stderr, nil); err != nil {
		fmt.Fprintln(os.Stderr, "service:", err)
		os.Exit(1)
	}
}

// Server timeouts: a slow or stalled client cannot hold a connection
// (or a goroutine) for long.
const (
	readHeaderTimeout = 5 * time.Second
	readTimeout       = 15 * time.Second
	writeTimeout      = 30 * time.Second
	idleTimeout       = 2 * time.Minute
	shutdownTimeout   = 10 * time.Second
)

// run parses args, loads or fits the model, serves until ctx is done and
// then shuts down gracefully. Logs go to logw as JSON. If ready is not
// nil it is called with the listening address once the server accepts
// connections.
func run(ctx context.Context, args []string, logw io.Writer, ready func(addr string)) error {
	fs := flag.NewFlagSet("service", flag.ContinueOnError)
	fs.SetOutput(logw)
	addr := fs.String("addr", "127.0.0.1:8080", "address to listen on (host:port; port 0 picks a free one)")
	modelPath := fs.String("model", "", "model document to serve (default: cluster the demo stations)")
	seed := fs.Uint64("seed", 1, "seed of the demo stations and of the demo clustering")
	k := fs.Int("k", 5, "clusters of the demo clustering")
	lim := DefaultLimits
	fs.Int64Var(&lim.MaxBody, "max-body", lim.MaxBody, "largest /v1/assign body in bytes")
	fs.IntVar(&lim.MaxRows, "max-rows", lim.MaxRows, "most rows per /v1/assign request")
	fs.Int64Var(&lim.MaxModelBytes, "max-model-bytes", lim.MaxModelBytes, "largest model document for PUT /v1/model in bytes")
	fs.IntVar(&lim.MaxModelValues, "max-model-values", lim.MaxModelValues, "largest k·d of a model for PUT /v1/model")
	token := fs.String("admin-token", os.Getenv("SERVICE_ADMIN_TOKEN"), "bearer token required by PUT /v1/model (default $SERVICE_ADMIN_TOKEN; empty: none)")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if lim.MaxBody < 1 || lim.MaxRows < 1 || lim.MaxModelBytes < 1 || lim.MaxModelValues < 1 {
		return errors.New("limits must be positive")
	}
	log := slog.New(slog.NewJSONHandler(logw, nil))

	var m *kmeans.Model
	var err error
	if *modelPath != "" {
		m, err = readModelFile(*modelPath, lim)
	} else {
		m, err = demoModel(ctx, *seed, *k)
	}
	if err != nil {
		return err
	}
	srv, err := NewServer(m, lim, *token, log)
	if err != nil {
		return err
	}
	publishVars(srv)

	ln, err := net.Listen("tcp", *addr)
	if err != nil {
		return err
	}
	hs := &http.Server{
		Handler:           srv.Handler(),
		ReadHeaderTimeout: readHeaderTimeout,
		ReadTimeout:       readTimeout,
		WriteTimeout:      writeTimeout,
		IdleTimeout:       idleTimeout,
		MaxHeaderBytes:    64 << 10,
		ErrorLog:          slog.NewLogLogger(log.Handler(), slog.LevelWarn),
	}
	sum, _ := m.Checksum()
	log.Info("serving", "addr", ln.Addr().String(), "model", sum, "k", m.K(), "features", m.Features())
	if ready != nil {
		ready(ln.Addr().String())
	}
	errc := make(chan error, 1)
	go func() { errc <- hs.Serve(ln) }()
	select {
	case err := <-errc:
		return err
	case <-ctx.Done():
	}
	log.Info("shutting down")
	sctx, cancel := context.WithTimeout(context.Background(), shutdownTimeout)
	defer cancel()
	if err := hs.Shutdown(sctx); err != nil {
		return fmt.Errorf("shutdown: %w", err)
	}
	if err := <-errc; !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	log.Info("stopped")
	return nil
}

// current is the server whose counters the expvar "service" shows.
var current atomic.Pointer[Server]

// publishVars publishes the first server's counters as the expvar
// "service" (expvar names are process-wide and may be published once).
func publishVars(srv *Server) {
	if expvar.Get("service") == nil {
		expvar.Publish("service", expvar.Func(func() any { return json.RawMessage(current.Load().Vars().String()) }))
	}
	current.Store(srv)
}

// readModelFile reads a model document within the limits.
func readModelFile(path string, lim Limits) (*kmeans.Model, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	m, err := kmeans.ReadModel(f, &kmeans.DecodeLimits{MaxBytes: lim.MaxModelBytes, MaxValues: lim.MaxModelValues})
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return m, nil
}

// Demo clustering: the Riverton stations, z-scored, with the library defaults.
const demoStations = 500

// demoModel fits k clusters on the demo stations and names the features.
func demoModel(ctx context.Context, seed uint64, k int) (*kmeans.Model, error) {
	_, x := bikeshare.Generate(demoStations, seed)
	res, err := kmeans.Cluster(ctx, kmeans.Problem{Data: x, K: k, Scaler: &scale.ZScore{}}, &kmeans.Settings{Seed: seed}, nil)
	if err != nil {
		return nil, err
	}
	m, err := res.Model.WithFeatures(bikeshare.Features())
	if err != nil {
		return nil, err
	}
	return m.WithCreated(time.Now()), nil
}
