package main

import (
	"flag"
	"fmt"
	"log/slog"
	"net"
	"net/http"
	"os"
	"time"

	"capbank/web"
)

// tokenEnv is the environment variable that gives the access token when
// --token does not.
const tokenEnv = "CAPBANK_TOKEN"

// minTokenLen is the shortest access token serve accepts: the server has
// no limit on guesses, so a token must be too long to guess.
const minTokenLen = 12

// Timeouts of the HTTP server. A request's headers must arrive within
// readHeaderTimeout, its body within readTimeout (a 16 MiB upload over a
// slow link); the connection of an idle keep-alive client closes after
// idleTimeout.
const (
	readHeaderTimeout = 10 * time.Second
	readTimeout       = 2 * time.Minute
	idleTimeout       = 2 * time.Minute
	// writeSlack is the time left to write an answer once it is computed.
	writeSlack = time.Minute
)

// guardFlags are serve's flags for who may write and how long a request
// may compute.
type guardFlags struct {
	token          *string
	computeTimeout *time.Duration
	computeSlots   *int
	trustProxy     *bool
}

func addGuardFlags(flags *flag.FlagSet) guardFlags {
	return guardFlags{
		token: flags.String("token", "", "every write (cells, designs) needs this access `TOKEN`: API clients send "+
			"Authorization: Bearer TOKEN, a browser asks once at /unlock (default $"+tokenEnv+"; none: writes are open)"),
		computeTimeout: flags.Duration("compute-timeout", web.DefaultComputeTimeout,
			"the most one request may spend sizing or exporting before it is answered 503; the computation stops then"),
		computeSlots: flags.Int("compute-slots", 0, "how many sizings, exports and log analyses run at once; the rest wait up to "+
			web.DefaultQueueWait.String()+" for a slot, then are answered 503 with Retry-After (default 0: one per core)"),
		trustProxy: flags.Bool("trust-proxy", false, "believe X-Forwarded-For (the client named in the log) and X-Forwarded-Proto "+
			"(the access cookie made Secure): set it only behind a reverse proxy that sets both"),
	}
}

// guardFlagNames are the names isServeFlag knows.
var guardFlagNames = []string{"token", "compute-timeout", "compute-slots", "trust-proxy"}

// guardOptions are the checked values of guardFlags.
type guardOptions struct {
	token          string
	computeTimeout time.Duration
	computeSlots   int
	trustProxy     bool
}

// options checks the flags: the token comes from --token, else from
// $CAPBANK_TOKEN; it must be long enough and printable, without spaces, to
// travel in an Authorization header.
func (g guardFlags) options() (guardOptions, error) {
	tok := *g.token
	if tok == "" {
		tok = os.Getenv(tokenEnv)
	}
	if tok != "" {
		if len(tok) < minTokenLen {
			return guardOptions{}, fmt.Errorf("--token (or %s): must be at least %d characters, a long random string nobody could guess (got %d)",
				tokenEnv, minTokenLen, len(tok))
		}
		for _, r := range tok {
			if r <= ' ' || r > '~' {
				return guardOptions{}, fmt.Errorf("--token (or %s): must be printable ASCII without spaces, so that it can be sent as Authorization: Bearer TOKEN (got %q)",
					tokenEnv, r)
			}
		}
	}
	if *g.computeTimeout <= 0 {
		return guardOptions{}, fmt.Errorf("--compute-timeout: must be more than 0 (got %s)", *g.computeTimeout)
	}
	if *g.computeSlots < 0 {
		return guardOptions{}, fmt.Errorf("--compute-slots: must be 0 (one per core) or more (got %d)", *g.computeSlots)
	}
	return guardOptions{token: tok, computeTimeout: *g.computeTimeout, computeSlots: *g.computeSlots, trustProxy: *g.trustProxy}, nil
}

// apply puts the options into the web server's configuration.
func (o guardOptions) apply(cfg *web.Config) {
	cfg.Token, cfg.ComputeTimeout = o.token, o.computeTimeout
	cfg.ComputeSlots, cfg.TrustProxy = o.computeSlots, o.trustProxy
}

// logAccess says in the log who may write: with a token only its holders;
// without one, anyone who can reach the address, which is worth a warning
// when that is more than this machine.
func (o guardOptions) logAccess(log *slog.Logger, addr net.Addr) {
	if o.token != "" {
		log.Info("writes need the access token", "unlock", "/unlock")
		return
	}
	if ta, ok := addr.(*net.TCPAddr); ok && !ta.IP.IsLoopback() {
		log.Warn("no access token: anyone who can reach this address can change the cell library and the saved designs; start with --token or " + tokenEnv)
	}
}

// newHTTPServer is the HTTP server of capbank serve with every timeout
// set. net/http counts WriteTimeout from the end of the request's headers,
// so it must cover reading the body (readTimeout), the computation (the
// compute deadline) and writing the answer: a shorter one would cut off
// an answer the server had finished.
func newHTTPServer(h http.Handler, log *slog.Logger, computeTimeout time.Duration) *http.Server {
	return &http.Server{
		Handler:           h,
		ReadHeaderTimeout: readHeaderTimeout,
		ReadTimeout:       readTimeout,
		WriteTimeout:      readTimeout + computeTimeout + writeSlack,
		IdleTimeout:       idleTimeout,
		ErrorLog:          slog.NewLogLogger(log.Handler(), slog.LevelWarn),
	}
}
