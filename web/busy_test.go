package web

import (
	"database/sql"
	"fmt"
	"net/http"
	"net/url"
	"strings"
	"testing"

	"github.com/labstack/echo/v4"

	"capbank/web/store/sqlite"
)

// sqliteBusyError is a real SQLITE_BUSY from the driver: a write lock asked
// for, without waiting, while another connection holds it.
func sqliteBusyError(t *testing.T) error {
	t.Helper()
	ctx := t.Context()
	path := t.TempDir() + "/locked.db"
	db, err := sql.Open("sqlite", "file:"+path+"?_pragma=journal_mode(WAL)&_pragma=busy_timeout(0)")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	holder, err := db.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer holder.Close()
	if _, err := holder.ExecContext(ctx, `BEGIN IMMEDIATE`); err != nil {
		t.Fatal(err)
	}
	defer holder.ExecContext(ctx, `ROLLBACK`)
	other, err := db.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer other.Close()
	_, err = other.ExecContext(ctx, `BEGIN IMMEDIATE`)
	if err == nil {
		t.Fatal("a second write lock was granted")
	}
	// The store classifies the driver's errors before they reach a handler.
	return fmt.Errorf("saving the cell: %w", sqlite.Classify(err))
}

// A database still busy after the wait is a 503 that says to send the
// change again, with Retry-After, for the API and for a page — never a 500.
func TestBusyDatabaseIsA503(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	busy := sqliteBusyError(t)
	s.echo.POST("/api/v1/test-busy", func(echo.Context) error { return busy })
	s.echo.POST("/test-busy", func(echo.Context) error { return busy })

	rec := do(t, s, http.MethodPost, "/api/v1/test-busy", "application/json", `{}`)
	p := wantProblem(t, rec, http.StatusServiceUnavailable, "")
	if p.Type != "/problems/busy" || !strings.Contains(p.Title, "retry") || !strings.Contains(p.Detail, "send it again") {
		t.Errorf("problem %+v, want /problems/busy asking to retry", p)
	}
	if ra := rec.Header().Get("Retry-After"); ra == "" || strings.Trim(ra, "0123456789") != "" {
		t.Errorf("Retry-After %q, want a number of seconds", ra)
	}

	rec = postForm(t, s, "/test-busy", url.Values{}, false)
	wantStatus(t, rec, http.StatusServiceUnavailable)
	if !strings.Contains(rec.Body.String(), "busy") || rec.Header().Get("Retry-After") == "" {
		t.Errorf("page: Retry-After %q, body %.500s", rec.Header().Get("Retry-After"), rec.Body)
	}
}
