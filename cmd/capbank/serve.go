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
	"path/filepath"
	"slices"
	"strings"
	"time"

	"capbank/web"
	"capbank/web/store"
)

const serveUsage = `usage: capbank serve [--addr HOST:PORT] [--data DIR] [--token TOKEN] [--compute-timeout DURATION]
                     [--compute-slots N] [--trust-proxy]

Starts capbank's web server: the design page, where a bank is sized as
you type, and the JSON API (POST /api/v1/size, described at
/api/v1/openapi.json). It stops gracefully on an interrupt or SIGTERM.
"capbank" with no command does the same.

With an access token (--token, or the environment variable CAPBANK_TOKEN)
every change to the cell library and the saved designs needs it; sizing,
exports and measurements never do.

flags:
`

// defaultServeArgs are the serve flags of capbank with no command: none,
// so the defaults apply. Tests point them at a free port.
var defaultServeArgs []string

// isServeFlag reports whether arg is one of serve's flags, so that
// capbank --addr HOST:PORT serves without naming the command.
func isServeFlag(arg string) bool {
	name, _, _ := strings.Cut(strings.TrimLeft(arg, "-"), "=")
	return strings.HasPrefix(arg, "-") && (name == "addr" || name == "data" || slices.Contains(guardFlagNames, name))
}

// shutdownGrace is how long requests in flight get to finish on shutdown.
const shutdownGrace = 10 * time.Second

func runServe(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank serve", flag.ContinueOnError)
	flags.SetOutput(stderr)
	addr := flags.String("addr", "127.0.0.1:8080", "listen on `HOST:PORT` (port 0 picks a free one)")
	data := flags.String("data", "capbank-data", "the data `DIR`ectory, created when missing")
	guard := addGuardFlags(flags)
	cl, err := parseCommand(flags, args, serveUsage)
	if err != nil {
		return err
	}
	usage := cl.usage
	if len(cl.pos) > 0 {
		return usageFailure(stderr, usage, "capbank serve: takes no arguments (got %q)", cl.pos[0])
	}
	opts, err := guard.options()
	if err != nil {
		return usageFailure(stderr, usage, "capbank serve: %v", err)
	}
	return serve(ctx, *addr, *data, opts, stderr)
}

// serve runs the web server on addr until ctx is done, then shuts it down,
// giving requests in flight shutdownGrace to finish.
func serve(ctx context.Context, addr, dataDir string, opts guardOptions, stderr io.Writer) error {
	log := slog.New(slog.NewTextHandler(stderr, nil))
	if err := os.MkdirAll(dataDir, 0o755); err != nil {
		return fmt.Errorf("cannot create the data directory: %w", err)
	}
	if err := checkDataDir(dataDir); err != nil {
		return err
	}
	st, err := web.OpenStore(ctx, dataDir)
	if err != nil {
		return openError(dataDir, err)
	}
	defer st.Close()
	ln, err := net.Listen("tcp", addr)
	if err != nil {
		return fmt.Errorf("cannot listen on %s: %w", addr, err)
	}
	cfg := web.Config{DataDir: dataDir, Store: st, Logger: log}
	opts.apply(&cfg)
	srv := newHTTPServer(web.New(cfg), log, opts.computeTimeout)
	done := make(chan error, 1)
	go func() { done <- srv.Serve(ln) }()
	log.Info("capbank is serving", "url", "http://"+ln.Addr().String()+"/", "data", dataDir, "database", filepath.Join(dataDir, store.FileName))
	opts.logAccess(log, ln.Addr())

	select {
	case err := <-done:
		return fmt.Errorf("the server stopped: %w", err)
	case <-ctx.Done():
	}
	log.Info("shutting down")
	sctx, cancel := context.WithTimeout(context.Background(), shutdownGrace)
	defer cancel()
	if err := srv.Shutdown(sctx); err != nil {
		return fmt.Errorf("shutting down: %w", err)
	}
	if err := <-done; !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	log.Info("stopped")
	return nil
}
