package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"os"
	"os/signal"
	"strings"
	"syscall"
	"time"
	"unicode"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/serve"
	"github.com/centroidlab/centroid/scale"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if err := run(ctx, os.Args[1:], os.Getenv, os.Stderr, nil); err != nil {
		fmt.Fprintln(os.Stderr, "service:", err)
		os.Exit(1)
	}
}

// tokenEnv names the environment variable that may hold the admin token.
const tokenEnv = "SERVICE_ADMIN_TOKEN"

// maxTokenFile is the largest admin token file read.
const maxTokenFile = 4 << 10

// shutdownTimeout is how long requests in flight may take to finish.
const shutdownTimeout = 10 * time.Second

// config is what the flags say.
type config struct {
	addr      string
	modelPath string
	seed      uint64
	k         int
	limits    serve.Limits
	tokenFile string
}

// parseFlags parses the command line. Secrets are not flags: the admin
// token comes from $SERVICE_ADMIN_TOKEN or the file named by
// -admin-token-file.
func parseFlags(args []string, out io.Writer) (*config, error) {
	c := &config{}
	fs := flag.NewFlagSet("service", flag.ContinueOnError)
	fs.SetOutput(out)
	fs.StringVar(&c.addr, "addr", "127.0.0.1:8080", "address to listen on (host:port; port 0 picks a free one)")
	fs.StringVar(&c.modelPath, "model", "", "model document to serve (default: cluster the demo stations)")
	fs.Uint64Var(&c.seed, "seed", 1, "seed of the demo stations and of the demo clustering")
	fs.IntVar(&c.k, "k", 5, "clusters of the demo clustering")
	fs.Int64Var(&c.limits.MaxBody, "max-body", serve.DefaultMaxBody, "largest POST /v1/assign body in bytes")
	fs.IntVar(&c.limits.MaxRows, "max-rows", 0, "most rows per POST /v1/assign request (0: as many as fit in -max-body, see package serve)")
	fs.Int64Var(&c.limits.MaxModelBytes, "max-model-bytes", serve.DefaultMaxModelBytes, "largest model document in bytes (the -model file and PUT /v1/model)")
	fs.IntVar(&c.limits.MaxModelValues, "max-model-values", serve.DefaultMaxModelValues, "largest k·d of a model (the -model file and PUT /v1/model)")
	fs.StringVar(&c.tokenFile, "admin-token-file", "", "file holding the bearer token that enables PUT /v1/model (or set $"+tokenEnv+"; neither: swaps disabled)")
	if err := fs.Parse(args); err != nil {
		return nil, err
	}
	if fs.NArg() > 0 {
		return nil, fmt.Errorf("unexpected arguments %q", fs.Args())
	}
	return c, nil
}

// adminToken returns the admin token and where it came from, or "" if
// none is configured.
func adminToken(c *config, getenv func(string) string, log *slog.Logger) (token, source string, err error) {
	env := getenv(tokenEnv)
	switch {
	case env != "" && c.tokenFile != "":
		return "", "", fmt.Errorf("the admin token is given twice, in $%s and by -admin-token-file: give one", tokenEnv)
	case env != "":
		token, source = env, "$"+tokenEnv
	case c.tokenFile != "":
		token, err = readTokenFile(c.tokenFile, log)
		if err != nil {
			return "", "", err
		}
		source = "file " + c.tokenFile
	default:
		return "", "", nil
	}
	if strings.IndexFunc(token, func(r rune) bool { return unicode.IsSpace(r) || unicode.IsControl(r) }) >= 0 {
		return "", "", fmt.Errorf("the admin token from %s holds white space or control characters", source)
	}
	return token, source, nil
}

// readTokenFile reads an admin token file: one line, surrounding white
// space dropped. It warns if others than the owner may read the file.
func readTokenFile(path string, log *slog.Logger) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", fmt.Errorf("admin token: %w", err)
	}
	defer f.Close()
	if fi, err := f.Stat(); err == nil && fi.Mode().Perm()&0o077 != 0 {
		log.Warn("the admin token file can be read by other users; make it readable by the service only (chmod 600)", "file", path)
	}
	b, err := io.ReadAll(io.LimitReader(f, maxTokenFile+1))
	if err != nil {
		return "", fmt.Errorf("admin token: %w", err)
	}
	if len(b) > maxTokenFile {
		return "", fmt.Errorf("admin token file %s is longer than %d bytes", path, maxTokenFile)
	}
	token := strings.TrimSpace(string(b))
	if token == "" {
		return "", fmt.Errorf("admin token file %s is empty", path)
	}
	return token, nil
}

// run parses args, loads or fits the model, serves until ctx is done and
// then shuts down gracefully. getenv reads the environment. Logs go to logw
// as JSON. If ready is not nil it is called with the listening address once
// the server accepts connections.
func run(ctx context.Context, args []string, getenv func(string) string, logw io.Writer, ready func(addr string)) error {
	c, err := parseFlags(args, logw)
	if err != nil {
		return err
	}
	log := slog.New(slog.NewJSONHandler(logw, nil))
	token, source, err := adminToken(c, getenv, log)
	if err != nil {
		return err
	}

	var m *kmeans.Model
	if c.modelPath != "" {
		m, err = readModelFile(c.modelPath, c.limits)
	} else {
		m, err = demoModel(ctx, c.seed, c.k)
	}
	if err != nil {
		return err
	}
	srv, err := serve.NewServer(m, &serve.Options{Limits: c.limits, AdminToken: token, Logger: log})
	if err != nil {
		return err
	}

	ln, err := net.Listen("tcp", c.addr)
	if err != nil {
		return err
	}
	hs := srv.HTTPServer()
	lim := srv.Limits()
	sum, _ := m.Checksum()
	swaps := "disabled: no admin token, PUT /v1/model answers 403"
	if srv.SwapsEnabled() {
		swaps = "enabled: PUT /v1/model with the admin token from " + source
	}
	log.Info("serving", "addr", ln.Addr().String(), "model", sum, "k", m.K(), "features", m.Features(), "swaps", swaps,
		"max_body", lim.MaxBody, "max_rows", lim.MaxRows, "max_model_bytes", lim.MaxModelBytes, "max_model_values", lim.MaxModelValues)
	if !loopback(ln.Addr()) {
		log.Warn("listening beyond this machine: every client that reaches this address can label rows and read the model", "addr", ln.Addr().String())
	}
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

// loopback reports whether addr is a loopback address.
func loopback(addr net.Addr) bool {
	ta, ok := addr.(*net.TCPAddr)
	return ok && ta.IP.IsLoopback()
}

// readModelFile reads a model document within the model limits of the
// server (zero: the server's defaults).
func readModelFile(path string, lim serve.Limits) (*kmeans.Model, error) {
	dl := kmeans.DecodeLimits{MaxBytes: lim.MaxModelBytes, MaxValues: lim.MaxModelValues}
	if dl.MaxBytes == 0 {
		dl.MaxBytes = serve.DefaultMaxModelBytes
	}
	if dl.MaxValues == 0 {
		dl.MaxValues = serve.DefaultMaxModelValues
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	m, err := kmeans.ReadModel(f, &dl)
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
