package web

import (
	"bytes"
	"capbank/web/form"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"math"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"strconv"
	"strings"
	"testing"
	"time"

	"capbank/sizing"
	"capbank/web/share"
)

// newServerWith is a test server built from cfg, with a fresh data
// directory and database, as newTestServer, and its logger filled in.
func newServerWith(t testing.TB, cfg Config) (*Server, *syncBuffer) {
	t.Helper()
	var logs syncBuffer
	cfg.DataDir = t.TempDir()
	st, err := OpenStore(context.Background(), cfg.DataDir)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	cfg.Store = st
	cfg.Logger = slog.New(slog.NewTextHandler(&logs, nil))
	return New(cfg), &logs
}

// heavyDesign is the invented demo design of testdata/ups-ride-through.json
// with its load replaced by n one-second steps alternating between drawing
// and charging (values invented), repeated repeat times, so that every
// candidate's sizing simulates every step: with 20 000 steps, or 500
// repeated 40 times, tens of milliseconds of solver work, far beyond a
// 1 ms deadline.
func heavyDesign(t testing.TB, n, repeat int) []byte {
	t.Helper()
	return demoWithLoad(t, n, repeat, 1, func(i int) float64 {
		if i%2 == 1 {
			return -200 - float64(i%5)*10
		}
		return 300 + float64(i%7)*10
	})
}

// feasibleHeavyDesign is the invented demo design with its load replaced
// by 20 000 one-millisecond steps alternating between drawing and
// charging 100 W (values invented), repeated 500 times: 10^7 steps a
// trial that every candidate carries, so each is sized in full — about
// 12 s of solver work on this machine's cores.
func feasibleHeavyDesign(t testing.TB) []byte { return feasibleHeavyDesignOf(t, 20000, 500) }

// feasibleHeavyDesignOf is feasibleHeavyDesign with n steps repeated
// repeat times.
func feasibleHeavyDesignOf(t testing.TB, n, repeat int) []byte {
	t.Helper()
	return demoWithLoad(t, n, repeat, 0.001, func(i int) float64 {
		if i%2 == 1 {
			return -100
		}
		return 100
	})
}

// demoWithLoad is the invented demo design of testdata/ups-ride-through.json
// with its load replaced by n power steps of durationS each, step i drawing
// powerW(i) (negative: charging), repeated repeat times.
func demoWithLoad(t testing.TB, n, repeat int, durationS float64, powerW func(i int) float64) []byte {
	t.Helper()
	data, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	d, err := sizing.DecodeDesign(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	steps := make([]sizing.Step, n)
	vals := make([]float64, n)
	for i := range steps {
		vals[i] = powerW(i)
		steps[i] = sizing.Step{PowerW: &vals[i], DurationS: durationS}
	}
	d.Load.Steps, d.Load.Repeat = steps, &repeat
	out, err := json.Marshal(d)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// wantDeadlineMessage checks that text tells the user the limit and what
// to make smaller.
func wantDeadlineMessage(t *testing.T, text, limit string) {
	t.Helper()
	for _, want := range []string{"took longer than " + limit, "shorter load profile", "fewer candidate cells"} {
		if !strings.Contains(text, want) {
			t.Errorf("message lacks %q:\n%s", want, text)
		}
	}
}

// A sizing that runs past the compute deadline is answered 503 with a
// problem document (API, exports) that names the limit and what to do;
// with the default deadline the same design sizes. Without the deadline
// every request below would answer 200 after the full computation.
func TestComputeDeadlineAPI(t *testing.T) {
	t.Parallel()
	heavy := heavyDesign(t, 20000, 1)
	s, logs := newServerWith(t, Config{ComputeTimeout: time.Millisecond})
	for _, path := range []string{"/api/v1/size", "/export/boq-json", "/export/pdf", "/export/design"} {
		t.Run(path, func(t *testing.T) {
			req := httptest.NewRequest(http.MethodPost, path, bytes.NewReader(heavy))
			req.Header.Set("Content-Type", "application/json")
			rec := serve(s, req)
			wantStatus(t, rec, http.StatusServiceUnavailable)
			if ct := rec.Header().Get("Content-Type"); ct != problemCharset {
				t.Errorf("Content-Type %q, want %q", ct, problemCharset)
			}
			var p problem
			if err := json.Unmarshal(rec.Body.Bytes(), &p); err != nil {
				t.Fatal(err)
			}
			if p.Type != typeDeadline || p.Status != http.StatusServiceUnavailable {
				t.Errorf("problem %+v", p)
			}
			wantDeadlineMessage(t, p.Detail, "1 ms")
		})
	}
	if !strings.Contains(logs.String(), "compute deadline passed") {
		t.Errorf("no log line for the deadline:\n%s", logs)
	}

	// The default deadline (10 s) leaves the same design time to size.
	def, _ := newTestServer(t)
	rec := postJSON(t, def, heavy, "application/json")
	wantStatus(t, rec, http.StatusOK)
}

// heavyForm is the design form at its most steps: 500 one-second steps
// alternating between drawing and charging (values invented), repeated 40
// times, and four demo cells: tens of milliseconds of solver work.
func heavyForm() url.Values {
	v := designValues()
	for i := range form.MaxSteps {
		p := fmt.Sprintf("load.steps[%d].", i)
		val := 300 + (i%7)*10
		if i%2 == 1 {
			val = -200 - (i%5)*10
		}
		v.Set(p+"kind", "power")
		v.Set(p+"value", strconv.Itoa(val))
		v.Set(p+"duration_s", "1")
	}
	v.Set("load.repeat", "40")
	v["cells.pick"] = []string{"demo-2v7-650f", "demo-3v0-500f", "demo-2v7-1200f", "demo-hy-3v8-250f"}
	return v
}

// The page, the workspace and the results fragment answer 503 too: the
// page as an HTML page, an htmx request as the results status line.
func TestComputeDeadlinePages(t *testing.T) {
	t.Parallel()
	s, _ := newServerWith(t, Config{ComputeTimeout: time.Millisecond})
	cases := []struct {
		path string
		htmx bool
		sel  string // where the message is
	}{
		{"/", false, "[data-testid=error-page]"},
		{"/workspace", true, "#results-status"},
		{"/results", true, "#results-status"},
	}
	for _, c := range cases {
		t.Run(c.path, func(t *testing.T) {
			rec := postForm(t, s, c.path, heavyForm(), c.htmx)
			wantStatus(t, rec, http.StatusServiceUnavailable)
			doc := parse(t, rec)
			if doc.Find(c.sel).Length() != 1 {
				t.Fatalf("no %s in:\n%s", c.sel, rec.Body)
			}
			wantDeadlineMessage(t, text(doc, c.sel), "1 ms")
		})
	}
}

// A panic inside a computation, which runs outside echo's handler
// goroutine, is recovered there: logged, and answered as a panic (500)
// rather than ending the process.
func TestComputePanicIsRecovered(t *testing.T) {
	t.Parallel()
	s, logs := newTestServer(t)
	c := s.echo.NewContext(httptest.NewRequest(http.MethodPost, "/api/v1/size", nil), httptest.NewRecorder())
	_, err := compute(s, c, func(context.Context) (int, error) { panic("solver bug") })
	if !errors.Is(err, errPanic) {
		t.Fatalf("error %v, want errPanic", err)
	}
	if !strings.Contains(logs.String(), "solver bug") {
		t.Errorf("the panic is not logged:\n%s", logs)
	}
}

// A client that leaves during the computation gets nothing and is not
// logged as an error: htmx cancels a request when the next keystroke
// replaces it.
func TestComputeClientGone(t *testing.T) {
	t.Parallel()
	s, logs := newTestServer(t)
	ctx, cancel := context.WithCancel(context.Background())
	req := httptest.NewRequestWithContext(ctx, http.MethodPost, "/api/v1/size", nil)
	rec := httptest.NewRecorder()
	c := s.echo.NewContext(req, rec)
	release := make(chan struct{})
	defer close(release)
	cancel()
	_, err := compute(s, c, func(context.Context) (int, error) { <-release; return 1, nil })
	if !errors.Is(err, errClientGone) {
		t.Fatalf("error %v, want errClientGone", err)
	}
	s.handleError(err, c)
	if rec.Body.Len() != 0 || logs.String() != "" {
		t.Errorf("answered %q, logged %q; want nothing", rec.Body, logs)
	}
}

// closableLookup finds cells until closed, and nothing after.
func TestClosableLookup(t *testing.T) {
	t.Parallel()
	l := &closableLookup{lookup: func(id string) (sizing.Cell, bool) { return sizing.Cell{ID: id}, true }}
	if c, ok := l.find("a"); !ok || c.ID != "a" {
		t.Errorf("open lookup: %v %v", c, ok)
	}
	l.close()
	if _, ok := l.find("a"); ok {
		t.Error("closed lookup still finds cells")
	}
}

// The pages that size a design they are sent to by address answer 503 as
// well: a share link, a saved design, a comparison from a share link.
func TestComputeDeadlineLinks(t *testing.T) {
	t.Parallel()
	s, _ := newServerWith(t, Config{ComputeTimeout: time.Millisecond})
	heavy := heavyDesign(t, form.MaxSteps, 40)
	tok, err := share.Encode(heavy)
	if err != nil {
		t.Fatal(err)
	}
	id, err := s.store.SaveDesign(context.Background(), "heavy (invented)", heavy)
	if err != nil {
		t.Fatal(err)
	}
	for _, target := range []string{
		"/?d=" + tok,
		"/designs/" + strconv.FormatInt(id, 10),
		"/compare?d=" + tok,
	} {
		rec := get(t, s, target)
		wantStatus(t, rec, http.StatusServiceUnavailable)
		wantDeadlineMessage(t, text(parse(t, rec), "[data-testid=error-page]"), "1 ms")
	}
}

// heavyLog is a constant-current discharge log of an ideal 100 F, 25 mΩ
// cell at 1 A from 2.7 V (invented values, as testdata/measure/
// cc-discharge.csv), logged every millisecond for 200 s: 200 001 rows,
// some 4 MB, tens of milliseconds to read and fit.
func heavyLog() string {
	var b strings.Builder
	b.WriteString("# capbank test log: invented data.\ntime_s,voltage_v,current_a\n-1,2.7,0\n")
	for i := range 200_000 {
		t := float64(i) * 1e-3
		fmt.Fprintf(&b, "%.3f,%.5f,1\n", t, 2.7-1*0.025-t/100)
	}
	return b.String()
}

// The analysis of a measurement log is held to the compute deadline too:
// the API answers a 503 problem document, the page an error page, each
// asking for a shorter log. Without the deadline both would answer 200
// after the full fit, as they do with the default deadline.
func TestComputeDeadlineMeasure(t *testing.T) {
	t.Parallel()
	log := heavyLog()
	vals := url.Values{"method": {"constant-current"}, "rated_v": {"2.7"}}
	s, logs := newServerWith(t, Config{ComputeTimeout: time.Millisecond})
	for _, path := range []string{"/api/v1/measure", "/measure"} {
		t.Run(path, func(t *testing.T) {
			rec := postMultipart(t, s, path, vals, "log_csv", "long.csv", log)
			wantStatus(t, rec, http.StatusServiceUnavailable)
			body := rec.Body.String()
			if path == "/measure" {
				body = text(parse(t, rec), "[data-testid=error-page]")
			}
			for _, want := range []string{"Analysing this measurement log took longer than 1 ms", "trim it to the test", "capbank measure"} {
				if !strings.Contains(body, want) {
					t.Errorf("answer lacks %q:\n%.2000s", want, body)
				}
			}
		})
	}
	if !strings.Contains(logs.String(), `method=POST path=/api/v1/measure limit=1ms`) {
		t.Errorf("no log line for the deadline:\n%s", logs)
	}

	// The default deadline (10 s) leaves the same log time to be fitted:
	// C = I·Δt/ΔV = 100 F by the log's model (IEC 62391-1 constant-current
	// method), to 1 %.
	def, _ := newTestServer(t)
	rec := postMultipart(t, def, "/api/v1/measure", vals, "log_csv", "long.csv", log)
	wantStatus(t, rec, http.StatusOK)
	var out struct {
		Result struct {
			CapacitanceF float64 `json:"capacitance_f"`
		} `json:"result"`
	}
	if err := json.Unmarshal(rec.Body.Bytes(), &out); err != nil {
		t.Fatal(err)
	}
	if math.Abs(out.Result.CapacitanceF-100) > 1 {
		t.Errorf("C = %v F, want 100 F ± 1 %%", out.Result.CapacitanceF)
	}
}

// At most ComputeSlots computations run at once. With the one slot held by
// a computation that does not finish, a sizing waits QueueWait and is
// answered 503 /problems/busy with Retry-After; once the slot is free the
// same request sizes. Without the slots every request computes at once.
func TestComputeSlotsBound(t *testing.T) {
	t.Parallel()
	s, logs := newServerWith(t, Config{ComputeSlots: 1, QueueWait: 20 * time.Millisecond})
	hold := make(chan struct{})
	started := make(chan struct{})
	held := make(chan error, 1)
	go func() {
		c := s.echo.NewContext(httptest.NewRequest(http.MethodPost, "/api/v1/size", nil), httptest.NewRecorder())
		_, err := compute(s, c, func(context.Context) (int, error) { close(started); <-hold; return 1, nil })
		held <- err
	}()
	<-started
	body, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	rec := postJSON(t, s, body, "application/json")
	wantStatus(t, rec, http.StatusServiceUnavailable)
	if ra := rec.Header().Get("Retry-After"); ra != "1" {
		t.Errorf("Retry-After %q, want \"1\" (the 20 ms wait rounded up to whole seconds)", ra)
	}
	p := decodeProblem(t, rec)
	if p.Type != typeBusy || !strings.Contains(p.Detail, "send it again") {
		t.Errorf("problem %+v, want %s saying to send it again", p, typeBusy)
	}
	if !strings.Contains(logs.String(), "compute slots busy") {
		t.Errorf("no log line for the refusal:\n%s", logs)
	}
	close(hold)
	if err := <-held; err != nil {
		t.Fatal(err)
	}
	wantStatus(t, postJSON(t, s, body, "application/json"), http.StatusOK)
}

// A computation stopped by the deadline gives its slot back only when its
// goroutine has returned, and SizeContext returns within a step of the
// deadline: with one slot, a 200 ms deadline and a design of about 12 s of
// work, a second request finds the slot free within its 2 s queue wait.
// Without the cancellation the first computation would hold the slot for
// those 12 s and the second would be refused as busy.
func TestComputeDeadlineFreesItsSlot(t *testing.T) {
	t.Parallel()
	heavy := feasibleHeavyDesign(t)
	s, _ := newServerWith(t, Config{ComputeSlots: 1, QueueWait: 2 * time.Second, ComputeTimeout: 200 * time.Millisecond})
	for range 2 {
		rec := postJSON(t, s, heavy, "application/json")
		wantStatus(t, rec, http.StatusServiceUnavailable)
		if p := decodeProblem(t, rec); p.Type != typeDeadline {
			t.Fatalf("problem %+v, want %s", p, typeDeadline)
		}
	}
}
