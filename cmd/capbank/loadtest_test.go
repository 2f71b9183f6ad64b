package main

import (
	"context"
	"math"
	"net/http"
	"net/http/httptest"
	"strconv"
	"strings"
	"testing"

	"capbank/web"
)

// loadRow is one endpoint's line of the load test's table.
type loadRow struct {
	requests, errors int
	rps, p50, p99    float64
}

// parseLoadTable reads the table capbank loadtest prints: a header, then
// one line per endpoint ("POST /api/v1/size  requests rps p50 p99 errors").
func parseLoadTable(t *testing.T, out string) map[string]loadRow {
	t.Helper()
	rows := map[string]loadRow{}
	for _, line := range strings.Split(out, "\n") {
		f := strings.Fields(line)
		if len(f) != 7 || (f[0] != "POST" && f[0] != "GET") {
			continue
		}
		var r loadRow
		var err [5]error
		r.requests, err[0] = strconv.Atoi(f[2])
		r.rps, err[1] = strconv.ParseFloat(f[3], 64)
		r.p50, err[2] = strconv.ParseFloat(f[4], 64)
		r.p99, err[3] = strconv.ParseFloat(f[5], 64)
		r.errors, err[4] = strconv.Atoi(f[6])
		for _, e := range err {
			if e != nil {
				t.Fatalf("cannot read the line %q: %v", line, e)
			}
		}
		rows[f[0]+" "+f[1]] = r
	}
	return rows
}

// The load test against the real server (web.New, in-process on a
// loopback port) for a fraction of a second: both endpoints answered,
// every figure readable and positive, no error.
func TestLoadtestAgainstTheServer(t *testing.T) {
	t.Parallel()
	srv := httptest.NewServer(web.New(web.Config{DataDir: t.TempDir()}))
	defer srv.Close()
	code, stdout, stderr := runCapbank(t, context.Background(), "loadtest", "--url", srv.URL, "--concurrency", "4", "--duration", "400ms")
	if code != 0 {
		t.Fatalf("exit status %d, want 0; stderr:\n%s", code, stderr)
	}
	if !strings.Contains(stderr, srv.URL) || !strings.Contains(stderr, "4 connections (2 on POST /api/v1/size, 2 on GET /healthz)") {
		t.Errorf("stderr does not say what is driven:\n%s", stderr)
	}
	rows := parseLoadTable(t, stdout)
	for _, name := range []string{"POST /api/v1/size", "GET /healthz"} {
		r, ok := rows[name]
		switch {
		case !ok:
			t.Errorf("no line for %s in:\n%s", name, stdout)
		case r.errors != 0:
			t.Errorf("%s: %d errors, want 0", name, r.errors)
		case r.requests < 1 || !(r.rps > 0) || !(r.p50 > 0) || !(r.p99 >= r.p50):
			// p99 ≥ p50 by the definition of a percentile.
			t.Errorf("%s: requests %d, rps %v, p50 %v ms, p99 %v ms; want all positive and p99 ≥ p50", name, r.requests, r.rps, r.p50, r.p99)
		}
	}
	// The ratio line: sizing rps over health rps, in per cent.
	var pct float64
	for _, line := range strings.Split(stdout, "\n") {
		if s, ok := strings.CutPrefix(line, "sizing throughput: "); ok {
			pct, _ = strconv.ParseFloat(strings.Fields(s)[0], 64)
		}
	}
	// The table rounds each rps to 0.1 and the ratio line to 0.1 %: the
	// ratio of the rounded rps may differ from the line by the ratio's
	// error bound for ±0.05 rps on each, plus the line's own 0.05 %.
	sz, hc := rows["POST /api/v1/size"].rps, rows["GET /healthz"].rps
	want := 100 * sz / hc
	tol := 100*(0.05/hc+0.05*sz/(hc*hc)) + 0.05 + 1e-9
	if !(pct > 0) || math.Abs(pct-want) > tol {
		t.Errorf("sizing throughput %v %%, want %.2f %% ± %.2f (the two rps as the table rounds them)", pct, want, tol)
	}
}

// A server that refuses the sizing: the errors are counted on their
// endpoint, named on stderr, and the exit status is 1.
func TestLoadtestCountsErrors(t *testing.T) {
	t.Parallel()
	mux := http.NewServeMux()
	mux.HandleFunc("POST /api/v1/size", func(w http.ResponseWriter, r *http.Request) {
		http.Error(w, "broken on purpose", http.StatusInternalServerError)
	})
	mux.HandleFunc("GET /healthz", func(w http.ResponseWriter, r *http.Request) { w.Write([]byte(`{"status":"ok"}`)) })
	srv := httptest.NewServer(mux)
	defer srv.Close()
	code, stdout, stderr := runCapbank(t, context.Background(), "loadtest", "--url", srv.URL+"/", "--concurrency", "2", "--duration", "200ms")
	if code != 1 {
		t.Fatalf("exit status %d, want 1; stderr:\n%s", code, stderr)
	}
	rows := parseLoadTable(t, stdout)
	if r := rows["POST /api/v1/size"]; r.errors < 1 || r.requests != 0 {
		t.Errorf("sizing: %d errors and %d answered, want every request an error", r.errors, r.requests)
	}
	if r := rows["GET /healthz"]; r.errors != 0 || r.requests < 1 {
		t.Errorf("health: %d errors and %d answered, want no error", r.errors, r.requests)
	}
	if !strings.Contains(stderr, "requests failed: POST /api/v1/size:") || !strings.Contains(stderr, "status 500") {
		t.Errorf("stderr does not name the failing endpoint and status:\n%s", stderr)
	}
}

func TestLoadtestBadFlags(t *testing.T) {
	t.Parallel()
	bad := writeFile(t, "bad.json", `{"window": {"max_v": "high"}}`)
	cases := []struct {
		name string
		args []string
		code int    // the exit status of main.go's exitStatus
		want string // on stderr
	}{
		{"no url", nil, 2, "--url is required"},
		{"not http", []string{"--url", "ftp://example.org"}, 2, "--url must be an http:// or https:// address"},
		{"no host", []string{"--url", "http://"}, 2, "--url must be"},
		{"one connection", []string{"--url", "http://127.0.0.1:1", "--concurrency", "1"}, 2, "--concurrency must be at least 2"},
		{"no time", []string{"--url", "http://127.0.0.1:1", "--duration", "0s"}, 2, "--duration must be positive"},
		{"an argument", []string{"--url", "http://127.0.0.1:1", "extra"}, 2, "takes no arguments"},
		{"missing design", []string{"--url", "http://127.0.0.1:1", "--design", "/nonexistent/d.json"}, 1, "cannot read the design file"},
		{"malformed design", []string{"--url", "http://127.0.0.1:1", "--design", bad}, 2, "window.max_v"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			code, stdout, stderr := runCapbank(t, context.Background(), append([]string{"loadtest"}, c.args...)...)
			if code != c.code || !strings.Contains(stderr, c.want) {
				t.Errorf("exit %d, stderr:\n%s\nwant exit %d and %q", code, stderr, c.code, c.want)
			}
			if stdout != "" {
				t.Errorf("stdout = %q, want nothing before the run starts", stdout)
			}
		})
	}
}

// With --writes and two URLs (two servers on one database), a quarter of
// the connections save and delete designs, the rest size, spread over
// both servers: every request answered, none failed, and every design the
// load test saved was deleted again with its ETag (but one the end of the
// run may cut short).
func TestLoadtestWritesAcrossInstances(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	st, err := web.OpenStore(context.Background(), dir)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	a := httptest.NewServer(web.New(web.Config{DataDir: dir, Store: st}))
	defer a.Close()
	b := httptest.NewServer(web.New(web.Config{DataDir: dir, Store: st}))
	defer b.Close()
	code, stdout, stderr := runCapbank(t, context.Background(), "loadtest", "--url", a.URL+","+b.URL, "--concurrency", "4", "--duration", "400ms", "--writes", "25")
	if code != 0 {
		t.Fatalf("exit status %d, want 0; stderr:\n%s", code, stderr)
	}
	if !strings.Contains(stderr, "4 connections (3 on POST /api/v1/size, 1 on POST /api/v1/designs)") {
		t.Errorf("stderr does not say what is driven:\n%s", stderr)
	}
	rows := parseLoadTable(t, stdout)
	for _, name := range []string{"POST /api/v1/size", "POST /api/v1/designs"} {
		if r := rows[name]; r.requests < 1 || r.errors != 0 {
			t.Errorf("%s: %+v; want answered requests and no error in:\n%s", name, r, stdout)
		}
	}
	if _, ok := rows["GET /healthz"]; ok {
		t.Errorf("health checks in a write mix:\n%s", stdout)
	}
	// The end of the run may cut the one write connection between its
	// save and its delete: at most one design is left.
	if ds, err := st.ListDesigns(context.Background()); err != nil || len(ds) > 1 {
		t.Errorf("%d designs left after the load test (%v); want each deleted but one cut short", len(ds), err)
	}
}
