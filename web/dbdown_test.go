package web

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"net/url"
	"strings"
	"sync"
	"testing"

	"capbank/web/store/postgres/pgtest"
)

// cutProxy forwards TCP connections to a PostgreSQL server until cut:
// then it drops every connection and refuses new ones, as a database that
// went away does, until mended.
type cutProxy struct {
	ln     net.Listener
	target string
	mu     sync.Mutex
	cut    bool
	conns  []net.Conn
}

func newCutProxy(t *testing.T, target string) *cutProxy {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	p := &cutProxy{ln: ln, target: target}
	t.Cleanup(func() { ln.Close(); p.setCut(true) })
	go func() {
		for {
			c, err := ln.Accept()
			if err != nil {
				return
			}
			p.mu.Lock()
			cut := p.cut
			p.mu.Unlock()
			if cut {
				c.Close()
				continue
			}
			up, err := net.Dial("tcp", target)
			if err != nil {
				c.Close()
				continue
			}
			p.mu.Lock()
			p.conns = append(p.conns, c, up)
			p.mu.Unlock()
			go func() { io.Copy(up, c); up.Close() }()
			go func() { io.Copy(c, up); c.Close() }()
		}
	}()
	return p
}

func (p *cutProxy) setCut(cut bool) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.cut = cut
	if cut {
		for _, c := range p.conns {
			c.Close()
		}
		p.conns = nil
	}
}

// A PostgreSQL database that goes away mid-run: a save gets 503 "Nothing
// was saved" (never a 500), /healthz says 503, nothing half-written stays;
// when the database is back the next save succeeds, with no restart.
func TestDatabaseGoneMidRun(t *testing.T) {
	t.Parallel()
	base, err := url.Parse(pgtest.Schema(t))
	if err != nil {
		t.Fatal(err)
	}
	proxy := newCutProxy(t, base.Host)
	base.Host = proxy.ln.Addr().String()
	var logs syncBuffer
	st, err := OpenDatabase(context.Background(), t.TempDir(), base.String())
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	s := New(Config{DataDir: t.TempDir(), Store: st, Logger: slog.New(slog.NewTextHandler(&logs, nil))})

	cell := func(id string) string {
		return strings.Replace(userCellJSON, `"bench-2v7-80f"`, fmt.Sprintf("%q", id), 1)
	}
	wantStatus(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", cell("before")), http.StatusCreated)

	proxy.setCut(true)
	for i := range 3 {
		rec := do(t, s, http.MethodPost, "/api/v1/cells", "application/json", cell(fmt.Sprintf("while-down-%d", i)))
		p := wantProblem(t, rec, http.StatusServiceUnavailable, "")
		if p.Title != "Nothing was saved" || rec.Header().Get("Retry-After") == "" {
			t.Errorf("a save while the database is down: %+v, Retry-After %q; want 503 Nothing was saved, with Retry-After", p, rec.Header().Get("Retry-After"))
		}
	}
	wantStatus(t, do(t, s, http.MethodGet, "/healthz", "", ""), http.StatusServiceUnavailable)

	proxy.setCut(false)
	wantStatus(t, do(t, s, http.MethodGet, "/healthz", "", ""), http.StatusOK)
	wantStatus(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", cell("after")), http.StatusCreated)
	for _, id := range []string{"before", "after"} {
		wantStatus(t, do(t, s, http.MethodGet, "/api/v1/cells/"+id, "", ""), http.StatusOK)
	}
	for i := range 3 {
		wantStatus(t, do(t, s, http.MethodGet, fmt.Sprintf("/api/v1/cells/while-down-%d", i), "", ""), http.StatusNotFound)
	}
}
