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
	"slices"
	"strings"
	"time"

	"capbank/web"
	"capbank/web/store/postgres"
)

const serveUsage = `usage: capbank serve [--addr HOST:PORT] [--data DIR | --database URL] [--token TOKEN] [--compute-timeout DURATION]
                     [--compute-slots N] [--trust-proxy]

Starts capbank's web server: the design page, where a bank is sized as
you type, and the JSON API (POST /api/v1/size, described at
/api/v1/openapi.json). It stops gracefully on an interrupt or SIGTERM.
"capbank" with no command does the same.

With an access token (--token, or the environment variable CAPBANK_TOKEN)
every change to the cell library and the saved designs needs it; sizing,
exports and measurements never do.

The cell library and the saved designs live in an SQLite file in --data,
or, with --database postgres://… (or the environment variable
CAPBANK_DATABASE_URL), in a PostgreSQL database that any number of
capbank instances may share.

flags:
`

// defaultServeArgs are the serve flags of capbank with no command: none,
// so the defaults apply. Tests point them at a free port.
var defaultServeArgs []string

// isServeFlag reports whether arg is one of serve's flags, so that
// capbank --addr HOST:PORT serves without naming the command.
func isServeFlag(arg string) bool {
	name, _, _ := strings.Cut(strings.TrimLeft(arg, "-"), "=")
	return strings.HasPrefix(arg, "-") && (name == "addr" || name == "data" || name == "database" || slices.Contains(guardFlagNames, name))
}

// shutdownGrace is how long requests in flight get to finish on shutdown.
const shutdownGrace = 10 * time.Second

func runServe(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank serve", flag.ContinueOnError)
	flags.SetOutput(stderr)
	addr := flags.String("addr", "127.0.0.1:8080", "listen on `HOST:PORT` (port 0 picks a free one)")
	data := flags.String("data", "capbank-data", "the data `DIR`ectory, created when missing")
	database := flags.String("database", "", "a PostgreSQL database `URL` (postgres://USER@HOST:PORT/DATABASE) instead of the SQLite file in --data; default $"+databaseEnv)
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
	dbURL, err := databaseURL(*database)
	if err != nil {
		return usageFailure(stderr, usage, "capbank serve: %v", err)
	}
	return serve(ctx, *addr, *data, dbURL, opts, stderr)
}

// databaseEnv names the PostgreSQL database when --database is not given.
const databaseEnv = "CAPBANK_DATABASE_URL"

// databaseURL is the --database flag or, without it, $CAPBANK_DATABASE_URL:
// empty (SQLite in the data directory) or a postgres:// URL.
func databaseURL(flagValue string) (string, error) {
	u := flagValue
	from := "--database"
	if u == "" {
		u, from = os.Getenv(databaseEnv), databaseEnv
	}
	if u != "" && !postgres.IsURL(u) {
		return "", fmt.Errorf("%s must be a PostgreSQL URL, postgres://USER@HOST:PORT/DATABASE; leave it out to keep the data in an SQLite file in --data", from)
	}
	return u, nil
}

// serve runs the web server on addr until ctx is done, then shuts it down,
// giving requests in flight shutdownGrace to finish.
func serve(ctx context.Context, addr, dataDir, dbURL string, opts guardOptions, stderr io.Writer) error {
	log := slog.New(slog.NewTextHandler(stderr, nil))
	if err := os.MkdirAll(dataDir, 0o755); err != nil {
		return fmt.Errorf("cannot create the data directory: %w", err)
	}
	if dbURL == "" {
		if err := checkDataDir(dataDir); err != nil {
			return err
		}
	}
	st, err := web.OpenDatabase(ctx, dataDir, dbURL)
	if err != nil {
		if dbURL != "" {
			return fmt.Errorf("cannot open the PostgreSQL database: %w", err)
		}
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
	log.Info("capbank is serving", "url", "http://"+ln.Addr().String()+"/", "data", dataDir, "database", st.Describe())
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
