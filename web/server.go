package web

import (
	"bytes"
	"compress/gzip"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io/fs"
	"log/slog"
	"net/http"
	"runtime/debug"
	"runtime/metrics"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/a-h/templ"
	"github.com/labstack/echo/v4"
	"github.com/labstack/echo/v4/middleware"

	"capbank/static"
	"capbank/web/store"
)

// MaxBodyBytes is the largest request body the server reads: a design
// file, or the design form with a profile CSV.
const MaxBodyBytes = 16 << 20

// serverGzipLevel is the gzip level of the answers the server writes
// afresh. The fastest level: on a 17 kB sizing report level 5 took about
// half of the answer's server time, and level 1 raised the sizing rate of
// capbank loadtest at concurrency 64 from 1151–1219 to 1419–1627 answers
// a second on a 2-core machine, for 7 % more bytes on the first page
// (README, Performance). Static files are compressed once, at the best
// level (staticAssets).
const serverGzipLevel = gzip.BestSpeed

// gzipMinBytes is the smallest answer worth compressing. An answer that
// fits in one TCP segment on Ethernet (1460 bytes of payload: the
// 1500-byte MTU of RFC 894 less 40 bytes of IPv4 and TCP headers) leaves
// in one packet compressed or not, so compressing it costs server time and
// saves the client nothing worth having (common practice, no source).
const gzipMinBytes = 1460

// Config is what the server needs from its command line.
type Config struct {
	// DataDir is the data directory; it must exist.
	DataDir string
	// Store is the cell library and the saved designs, opened by the caller
	// (OpenStore). Nil: the library is the built-in demo cells, read-only,
	// and saving answers 503.
	Store store.Store
	// Logger receives errors and panics; nil discards them.
	Logger *slog.Logger
	// ComputeTimeout is the most one request may spend sizing or writing
	// an export before it is answered 503; zero is DefaultComputeTimeout.
	ComputeTimeout time.Duration
	// ComputeSlots is how many computations (sizings, exports, analyses
	// of a measurement log) may run at once; zero is one per core
	// (GOMAXPROCS). The rest wait up to QueueWait for a slot, then are
	// answered 503 with Retry-After.
	ComputeSlots int
	// QueueWait is how long a computation waits for a free slot; zero is
	// DefaultQueueWait.
	QueueWait time.Duration
	// TrustProxy is set when capbank runs behind a reverse proxy that
	// sets X-Forwarded-For and X-Forwarded-Proto: then the log names the
	// client the proxy reports, and the access cookie is Secure when the
	// proxy says the client came over HTTPS. Unset (the default), those
	// headers are ignored, since any client can send them.
	TrustProxy bool
	// Token, when not empty, is the access token every write needs
	// (guard.go); empty leaves writes open to anyone who reaches the server.
	Token string
}

// Server is capbank's web server: the design page, its fragments for
// htmx, the JSON API and the static files.
type Server struct {
	echo    *echo.Echo
	log     *slog.Logger
	dataDir string
	store   store.Store
	css, js string // versioned URLs of the stylesheet and htmx
	// now dates the PDF report; tests fix it.
	now func() time.Time
	// computeTimeout is the compute deadline of one request (deadline.go).
	computeTimeout time.Duration
	// slots bound the computations running at once (deadline.go).
	slots *computeSlots
	// trustProxy: believe X-Forwarded-Proto (Config.TrustProxy).
	trustProxy bool
	// assets are the static files, compressed once (staticAssets).
	assets map[string]staticAsset
	// guard refuses cross-site writes and, with a token, writes without it.
	guard *guard
	// example is the first page as last rendered (examplePage).
	example examplePage
}

// New builds the server and its routes.
func New(cfg Config) *Server {
	log := cfg.Logger
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
	e := echo.New()
	e.HideBanner, e.HidePort = true, true
	s := &Server{echo: e, log: log, dataDir: cfg.DataDir, store: cfg.Store,
		css: assetURL("capbank.css"), js: assetURL("htmx.min.js"), assets: compressedAssets(), now: time.Now}
	s.computeTimeout = computeTimeoutOrDefault(cfg)
	s.slots = newComputeSlots(cfg.ComputeSlots, cfg.QueueWait)
	s.trustProxy = cfg.TrustProxy
	// The client's address: the connection's own unless a proxy in front
	// is trusted to report it (echo, "IP address extraction").
	e.IPExtractor = echo.ExtractIPDirect()
	if cfg.TrustProxy {
		e.IPExtractor = echo.ExtractIPFromXFFHeader()
	}
	e.HTTPErrorHandler = s.handleError
	// The security headers first, so that every answer carries them: a
	// refused body (413) and a recovered panic (500) too.
	e.Use(securityHeaders, s.recoverPanics, limitBody)
	e.Use(compressAnswers())
	s.useGuards(e, cfg)

	e.GET("/", s.getPage)
	e.POST("/", s.postPage)
	e.POST("/workspace", s.postWorkspace)
	e.POST("/results", s.postResults)
	e.POST("/results/candidate", s.postCandidate)
	e.POST("/export/:format", s.postExport)
	e.GET("/healthz", s.healthz)
	e.GET("/measure", s.getMeasure)
	e.POST("/measure", s.postMeasure)
	e.POST("/api/v1/measure", s.apiMeasure)
	e.POST("/api/v1/size", s.apiSize)
	e.POST("/api/v1/explore", s.apiExplore)
	e.GET("/explore", s.getExplore)
	e.GET("/explore.csv", s.getExploreCSV)
	e.GET("/explore/design.json", s.getExploreDesign)
	e.GET("/api/v1/openapi.json", s.openAPI)
	e.GET("/static/*", s.staticFile)
	s.libraryRoutes(e)
	return s
}

// compressAnswers gzips the answers the server writes afresh at
// serverGzipLevel when the client lists gzip in Accept-Encoding and the
// answer reaches gzipMinBytes; a client that does not ask (an API client
// without Accept-Encoding) gets the answer as it is. Static files are
// skipped: they are compressed once (staticFile), and so is the first
// page (examplePage).
func compressAnswers() echo.MiddlewareFunc {
	return middleware.GzipWithConfig(middleware.GzipConfig{Level: serverGzipLevel, MinLength: gzipMinBytes,
		Skipper: func(c echo.Context) bool {
			return strings.HasPrefix(c.Request().URL.Path, "/static/") || isExamplePage(c.Request())
		}})
}

// ServeHTTP serves a request.
func (s *Server) ServeHTTP(w http.ResponseWriter, r *http.Request) { s.echo.ServeHTTP(w, r) }

// assetURL is a static file's URL with a hash of its content, so browsers
// may keep it for long and still fetch a new version at once.
func assetURL(name string) string {
	a, ok := compressedAssets()[name]
	if !ok {
		panic("web: static file missing: " + name) // embedded at build time
	}
	sum := sha256.Sum256(a.data)
	return "/static/" + name + "?v=" + hex.EncodeToString(sum[:6])
}

// staticAsset is a static file as served: its bytes, its media type and,
// when compressing pays, its gzip form.
type staticAsset struct {
	data, gz []byte
	ctype    string
}

// staticAssets compresses each static file once, at gzip's best
// compression, so that a request for one costs no compression: the
// answers the server writes afresh (pages, fragments, API answers) are
// compressed as they go at gzip's fastest level instead (serverGzipLevel).
func staticAssets() map[string]staticAsset {
	assets := map[string]staticAsset{}
	entries, err := fs.ReadDir(static.Files, ".")
	if err != nil {
		panic("web: static files unreadable: " + err.Error()) // embedded at build time
	}
	for _, e := range entries {
		name := e.Name()
		data, err := fs.ReadFile(static.Files, name)
		if err != nil {
			panic("web: static file unreadable: " + name)
		}
		a := staticAsset{data: data, ctype: "application/octet-stream"}
		switch {
		case strings.HasSuffix(name, ".css"):
			a.ctype = "text/css; charset=utf-8"
		case strings.HasSuffix(name, ".js"):
			a.ctype = "text/javascript; charset=utf-8"
		case strings.HasSuffix(name, ".svg"):
			a.ctype = "image/svg+xml"
		case strings.HasSuffix(name, "LICENSE"):
			a.ctype = "text/plain; charset=utf-8"
		}
		if len(data) >= gzipMinBytes {
			var b bytes.Buffer
			zw, _ := gzip.NewWriterLevel(&b, gzip.BestCompression)
			zw.Write(data)
			zw.Close()
			if b.Len() < len(data) {
				a.gz = b.Bytes()
			}
		}
		assets[name] = a
	}
	return assets
}

// compressedAssets is staticAssets, worked out once for every server the
// process builds.
var compressedAssets = sync.OnceValue(staticAssets)

// acceptsGzip is true when the request's Accept-Encoding lists gzip
// without refusing it by q=0 (RFC 9110, 12.5.3).
func acceptsGzip(r *http.Request) bool {
	for _, part := range strings.Split(r.Header.Get(echo.HeaderAcceptEncoding), ",") {
		coding, params, _ := strings.Cut(part, ";")
		if !strings.EqualFold(strings.TrimSpace(coding), "gzip") {
			continue
		}
		k, v, _ := strings.Cut(params, "=")
		if strings.EqualFold(strings.TrimSpace(k), "q") {
			q, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
			return err == nil && q > 0
		}
		return true
	}
	return false
}

func (s *Server) staticFile(c echo.Context) error {
	name := c.Param("*")
	a, ok := s.assets[name]
	if !ok {
		return echo.ErrNotFound
	}
	h := c.Response().Header()
	if c.QueryParam("v") != "" {
		h.Set("Cache-Control", "public, max-age=31536000, immutable")
	} else {
		h.Set("Cache-Control", "public, max-age=300")
	}
	body := a.data
	if a.gz != nil {
		h.Add(echo.HeaderVary, echo.HeaderAcceptEncoding)
		if c.Request().Method != http.MethodHead && acceptsGzip(c.Request()) {
			h.Set(echo.HeaderContentEncoding, "gzip")
			body = a.gz
		}
	}
	h.Set(echo.HeaderContentLength, strconv.Itoa(len(body)))
	return c.Blob(http.StatusOK, a.ctype, body)
}

// healthPing bounds how long /healthz waits for the database.
const healthPing = 2 * time.Second

// healthz is GET /healthz: 200 {"status": "ok"} when the server and its
// database answer; 503 {"status": "unavailable"} when the database does
// not, with the reason in the log only (a load balancer's probe needs no
// more, and the reason may name hosts). With ?runtime=1 a healthy answer
// adds the live heap and the goroutine count (RuntimeHealth), for
// watching a long-running server.
func (s *Server) healthz(c echo.Context) error {
	if s.store != nil {
		ctx, cancel := context.WithTimeout(c.Request().Context(), healthPing)
		defer cancel()
		if err := s.store.Ping(ctx); err != nil {
			s.log.Error("health check: the database does not answer", "database", s.store.Describe(), "err", err)
			return c.JSON(http.StatusServiceUnavailable, map[string]string{"status": "unavailable"})
		}
	}
	if c.QueryParam("runtime") == "1" {
		return c.JSON(http.StatusOK, runtimeHealth())
	}
	return c.JSON(http.StatusOK, map[string]string{"status": "ok"})
}

// runtimeMetrics are the figures GET /healthz?runtime=1 adds: the Go
// heap's live bytes after the last collection and the goroutines running
// (runtime/metrics). A leak shows in them long before the resident set,
// which the collector's own rhythm moves by tens of MiB.
var runtimeMetrics = [...]string{"/gc/heap/live:bytes", "/sched/goroutines:goroutines"}

// RuntimeHealth is the answer of GET /healthz?runtime=1.
type RuntimeHealth struct {
	Status        string `json:"status"`
	HeapLiveBytes uint64 `json:"heap_live_bytes"`
	Goroutines    uint64 `json:"goroutines"`
}

func runtimeHealth() RuntimeHealth {
	var ss [len(runtimeMetrics)]metrics.Sample
	for i, n := range runtimeMetrics {
		ss[i].Name = n
	}
	metrics.Read(ss[:])
	h := RuntimeHealth{Status: "ok"}
	if ss[0].Value.Kind() == metrics.KindUint64 {
		h.HeapLiveBytes = ss[0].Value.Uint64()
	}
	if ss[1].Value.Kind() == metrics.KindUint64 {
		h.Goroutines = ss[1].Value.Uint64()
	}
	return h
}

// render writes a component with the status, buffered so that a failure
// while rendering still gets a proper error response.
func (s *Server) render(c echo.Context, status int, comp templ.Component) error {
	buf := renderBuffers.Get().(*bytes.Buffer)
	defer putRenderBuffer(buf)
	if err := comp.Render(c.Request().Context(), buf); err != nil {
		return fmt.Errorf("rendering: %w", err)
	}
	return c.HTMLBlob(status, buf.Bytes())
}

// renderBuffers keep the buffers pages are rendered into: a page of the
// design tool is over 100 kB, and a buffer grown to it afresh each time
// allocated twice that. The response copies the bytes out before the
// buffer goes back.
var renderBuffers = sync.Pool{New: func() any { return new(bytes.Buffer) }}

// maxPooledRender is the largest buffer kept for the next page: a page
// carrying a long logged profile (megabytes) is not worth holding.
const maxPooledRender = 1 << 20

func putRenderBuffer(b *bytes.Buffer) {
	if b.Cap() > maxPooledRender {
		return
	}
	b.Reset()
	renderBuffers.Put(b)
}

// recoverPanics turns a panic in a handler into an internal error: the
// stack goes to the log, the client gets a 500 problem with no details.
func (s *Server) recoverPanics(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) (err error) {
		defer func() {
			if r := recover(); r != nil {
				if r == http.ErrAbortHandler {
					panic(r)
				}
				s.log.Error("panic in handler", "method", c.Request().Method, "path", c.Request().URL.Path,
					"panic", fmt.Sprint(r), "stack", string(debug.Stack()))
				err = errPanic
			}
		}()
		return next(c)
	}
}

// limitBody caps every request body at MaxBodyBytes; reading past it fails
// with *http.MaxBytesError, which the error table maps to 413.
func limitBody(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		r := c.Request()
		if r.ContentLength > MaxBodyBytes {
			return &http.MaxBytesError{Limit: MaxBodyBytes}
		}
		r.Body = http.MaxBytesReader(c.Response(), r.Body, MaxBodyBytes)
		return next(c)
	}
}

// contentSecurity allows only the page's own scripts and styles: htmx is
// configured without eval and without its inline indicator styles.
const contentSecurity = "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; " +
	"form-action 'self'; frame-ancestors 'none'; base-uri 'none'; object-src 'none'"

func securityHeaders(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		h := c.Response().Header()
		h.Set("Content-Security-Policy", contentSecurity)
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("Referrer-Policy", "same-origin")
		return next(c)
	}
}
