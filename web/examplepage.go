package web

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/json"
	"net/http"
	"strconv"
	"sync"

	"github.com/labstack/echo/v4"

	"capbank/components"
)

// examplePage keeps the first page, GET / with the example design. The
// page depends on nothing but the library: the cells the example picks,
// which the design file it sizes holds in full, and the cells the picker
// lists. It is rendered once per state of those, keyed by the SHA-256 of
// both, and gzipped then at the best level; each GET / after it decodes
// the example and lists the library to make the key, and writes the same
// bytes.
type examplePage struct {
	mu       sync.Mutex
	key      [sha256.Size]byte
	html, gz []byte
}

func (m *examplePage) get(key [sha256.Size]byte) (html, gz []byte, ok bool) {
	m.mu.Lock()
	defer m.mu.Unlock()
	if m.html == nil || m.key != key {
		return nil, nil, false
	}
	return m.html, m.gz, true
}

func (m *examplePage) put(key [sha256.Size]byte, html, gz []byte) {
	m.mu.Lock()
	defer m.mu.Unlock()
	m.key, m.html, m.gz = key, html, gz
}

// isExamplePage is the request examplePage answers, which compresses its
// own answer (compressAnswers skips it).
func isExamplePage(r *http.Request) bool {
	return r.Method == http.MethodGet && r.URL.Path == "/" && r.URL.RawQuery == ""
}

// getExamplePage is GET /: the example design with its results, from the
// kept page when the library has not changed since it was rendered.
func (s *Server) getExamplePage(c echo.Context) error {
	f := exampleForm()
	picks := s.cellPicks(c, f)
	dec := f.Decode(s.lookup(c))
	var key [sha256.Size]byte
	cacheable := len(dec.Problems) == 0
	if cacheable {
		design, err1 := json.Marshal(dec.Design)
		listed, err2 := json.Marshal(picks)
		cacheable = err1 == nil && err2 == nil
		h := sha256.New()
		h.Write(design)
		h.Write([]byte{0})
		h.Write(listed)
		h.Sum(key[:0])
	}
	if cacheable {
		if html, gz, ok := s.example.get(key); ok {
			return writePage(c, html, gz)
		}
	}
	ev := evaluate(c.Request().Context(), f, s.lookup(c))
	var buf bytes.Buffer
	if err := components.Page(s.pageProps(ev, picks)).Render(c.Request().Context(), &buf); err != nil {
		return err
	}
	html := buf.Bytes()
	var gz []byte
	if len(html) >= gzipMinBytes {
		var zb bytes.Buffer
		zw, _ := gzip.NewWriterLevel(&zb, gzip.BestCompression)
		zw.Write(html)
		if err := zw.Close(); err != nil {
			return err
		}
		gz = zb.Bytes()
	}
	if cacheable && ev.report != nil && len(ev.problems) == 0 {
		s.example.put(key, html, gz)
	}
	return writePage(c, html, gz)
}

// writePage writes a page, gzipped when the client takes gzip and gz holds it.
func writePage(c echo.Context, html, gz []byte) error {
	h := c.Response().Header()
	body := html
	h.Add(echo.HeaderVary, echo.HeaderAcceptEncoding)
	if gz != nil && acceptsGzip(c.Request()) {
		h.Set(echo.HeaderContentEncoding, "gzip")
		body = gz
	}
	h.Set(echo.HeaderContentLength, strconv.Itoa(len(body)))
	return c.Blob(http.StatusOK, echo.MIMETextHTMLCharsetUTF8, body)
}
