package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/url"
	"os"
	"slices"
	"strings"
	"sync"
	"time"

	"capbank/sizing"
)

const loadtestUsage = `usage: capbank loadtest --url URL[,URL…] [--concurrency N] [--duration D] [--design FILE] [--writes PERCENT]

Drives a running capbank server for a while and prints, for POST
/api/v1/size (with a demo design, or the design file --design names) and
for GET /healthz, the requests answered, requests per second, the median
and 99th-percentile latency and the errors. The connections are shared
evenly between the two endpoints, which run at the same time; each
connection sends its next request as soon as the last is answered. Any
error (a refused connection, a timeout, a status other than 200, a sizing
answer without candidates) is counted, and makes the exit status 1.

Several URLs (instances of one capbank behind no proxy) share the
connections in turn. With --writes PERCENT, that share of the
connections writes saved designs instead (its line, POST
/api/v1/designs, counts a save and the DELETE of what it saved, with its
If-Match, as one request) and the rest size: no health checks.

flags:
`

// loadtestDesign is the demo design the load test sizes: invented data,
// three invented cells, a few steps, the size of a design typed into the
// page.
const loadtestDesign = `{
  "name": "Load test: 24 V controller hold-up (invented demo data)",
  "window": {"max_v": 24, "min_v": 12},
  "load": {"efficiency": 0.9, "steps": [
    {"power_w": 120, "duration_s": 8},
    {"power_w": 600, "duration_s": 1.5},
    {"current_a": 2, "duration_s": 5},
    {"rest": true, "duration_s": 2}
  ]},
  "cells": [
    {"id": "load-a", "name": "Load-test cell A (invented)", "rated_v": 2.7, "capacitance_f": 100, "esr_ohm": 0.012, "leakage_a": 0.0003, "peak_current_a": 60, "unit_price": 2.1},
    {"id": "load-b", "name": "Load-test cell B (invented)", "rated_v": 2.7, "capacitance_f": 350, "esr_ohm": 0.0032, "leakage_a": 0.0008, "peak_current_a": 170, "unit_price": 4.8},
    {"id": "load-c", "name": "Load-test cell C (invented)", "rated_v": 3.0, "capacitance_f": 150, "esr_ohm": 0.008, "leakage_a": 0.0005, "peak_current_a": 90, "unit_price": 3.3}
  ]
}`

// loadEndpoint is one endpoint the load test drives and what it saw.
type loadEndpoint struct {
	name   string // "POST /api/v1/size"
	method string
	path   string
	body   []byte
	ctype  string
	// check returns nil when a 200 answer's body is what the endpoint
	// should give.
	check func(body []byte) error

	// designWrite makes a request a saved design's POST and DELETE.
	designWrite bool

	mu        sync.Mutex
	latencies []time.Duration // of the answered requests
	errors    int
	firstErr  string
}

func (e *loadEndpoint) record(d time.Duration, err error) {
	e.mu.Lock()
	defer e.mu.Unlock()
	if err != nil {
		if e.errors == 0 {
			e.firstErr = err.Error()
		}
		e.errors++
		return
	}
	e.latencies = append(e.latencies, d)
}

// once sends one request and reads the whole answer.
func (e *loadEndpoint) once(ctx context.Context, client *http.Client, base string) error {
	if e.designWrite {
		return e.writeOnce(ctx, client, base)
	}
	var body io.Reader
	if e.body != nil {
		body = bytes.NewReader(e.body)
	}
	req, err := http.NewRequestWithContext(ctx, e.method, base+e.path, body)
	if err != nil {
		return err
	}
	if e.ctype != "" {
		req.Header.Set("Content-Type", e.ctype)
	}
	resp, err := client.Do(req)
	if err != nil {
		return err
	}
	data, err := io.ReadAll(resp.Body)
	resp.Body.Close()
	if err != nil {
		return err
	}
	if resp.StatusCode != http.StatusOK {
		return fmt.Errorf("status %d", resp.StatusCode)
	}
	return e.check(data)
}

// percentile returns the q-quantile (0 ≤ q ≤ 1) of sorted durations by the
// nearest-rank method: the smallest value with at least q of the values
// at or below it (common practice, no source).
func percentile(sorted []time.Duration, q float64) time.Duration {
	if len(sorted) == 0 {
		return 0
	}
	k := int(math.Ceil(q*float64(len(sorted)))) - 1
	return sorted[min(max(k, 0), len(sorted)-1)]
}

func runLoadtest(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank loadtest", flag.ContinueOnError)
	flags.SetOutput(stderr)
	target := flags.String("url", "", "the server's base `URL`, as http://127.0.0.1:8080")
	conns := flags.Int("concurrency", 64, "`N` connections in all, half on each endpoint (at least 2)")
	duration := flags.Duration("duration", 20*time.Second, "how long to drive the server, as 20s or 1m")
	designFile := flags.String("design", "", "size the design in `FILE` instead of the built-in demo design")
	timeout := flags.Duration("timeout", 10*time.Second, "count a request as an error after this long")
	writes := flags.Float64("writes", 0, "`PERCENT` of the connections that save and delete designs instead (0: none, and half check health)")
	cl, err := parseCommand(flags, args, loadtestUsage)
	if err != nil {
		return err
	}
	usage := cl.usage
	if len(cl.pos) > 0 {
		return usageFailure(stderr, usage, "capbank loadtest: takes no arguments (got %q); the server goes in --url", cl.pos[0])
	}
	targets := strings.Split(*target, ",")
	u, err := url.Parse(targets[0])
	for _, t := range targets[1:] {
		if err == nil {
			var ut *url.URL
			if ut, err = url.Parse(t); err == nil && ((ut.Scheme != "http" && ut.Scheme != "https") || ut.Host == "") {
				err = errors.New("not an http:// address")
			}
		}
	}
	switch {
	case *target == "":
		return usageFailure(stderr, usage, "capbank loadtest: --url is required (the running server, as http://127.0.0.1:8080)")
	case err != nil || (u.Scheme != "http" && u.Scheme != "https") || u.Host == "":
		return usageFailure(stderr, usage, "capbank loadtest: --url must be an http:// or https:// address with a host (got %q)", *target)
	case *conns < 2:
		return usageFailure(stderr, usage, "capbank loadtest: --concurrency must be at least 2, one connection per endpoint (got %d)", *conns)
	case *duration <= 0:
		return usageFailure(stderr, usage, "capbank loadtest: --duration must be positive (got %v)", *duration)
	case *timeout <= 0:
		return usageFailure(stderr, usage, "capbank loadtest: --timeout must be positive (got %v)", *timeout)
	case !(*writes >= 0 && *writes < 100):
		return usageFailure(stderr, usage, "capbank loadtest: --writes must be a percentage from 0 to below 100 (got %v)", *writes)
	}
	design := []byte(loadtestDesign)
	if *designFile != "" {
		if design, err = os.ReadFile(*designFile); err != nil {
			return fmt.Errorf("cannot read the design file %q: %w", *designFile, pathReason(err))
		}
	}
	// A design the server would refuse would only measure refusals.
	if _, err := sizing.DecodeDesign(bytes.NewReader(design)); err != nil {
		return err
	}
	var bases []string
	for _, t := range targets {
		bases = append(bases, strings.TrimSuffix(strings.TrimSpace(t), "/"))
	}
	base := strings.Join(bases, ",")

	size := &loadEndpoint{name: "POST /api/v1/size", method: http.MethodPost, path: "/api/v1/size",
		body: design, ctype: "application/json", check: func(b []byte) error {
			if !bytes.Contains(b, []byte(`"candidates"`)) {
				return errors.New("answer without candidates")
			}
			return nil
		}}
	health := &loadEndpoint{name: "GET /healthz", method: http.MethodGet, path: "/healthz", check: func(b []byte) error {
		if !bytes.Contains(b, []byte(`"ok"`)) {
			return errors.New(`answer without "ok"`)
		}
		return nil
	}}
	endpoints := []*loadEndpoint{size, health}
	// pick gives connection i its endpoint.
	pick := func(i int) *loadEndpoint { return endpoints[i%2] }
	if *writes > 0 {
		w := &loadEndpoint{name: "POST /api/v1/designs", designWrite: true, body: designWriteBody(design)}
		endpoints = []*loadEndpoint{size, w}
		nw := max(1, int(math.Round(float64(*conns)**writes/100)))
		pick = func(i int) *loadEndpoint {
			if i < nw {
				return w
			}
			return size
		}
	}
	client := &http.Client{Timeout: *timeout, Transport: &http.Transport{
		Proxy: nil, MaxIdleConns: *conns, MaxIdleConnsPerHost: *conns, IdleConnTimeout: time.Minute}}
	defer client.CloseIdleConnections()

	counts := map[*loadEndpoint]int{}
	for i := range *conns {
		counts[pick(i)]++
	}
	fmt.Fprintf(stderr, "capbank loadtest: %s for %v, %d connections (%d on %s, %d on %s)\n",
		base, *duration, *conns, counts[endpoints[0]], endpoints[0].name, counts[endpoints[1]], endpoints[1].name)
	runCtx, cancel := context.WithTimeout(ctx, *duration)
	defer cancel()
	start := time.Now()
	var wg sync.WaitGroup
	for i := range *conns {
		e := pick(i)
		b := bases[i%len(bases)]
		wg.Go(func() {
			for runCtx.Err() == nil {
				t0 := time.Now()
				err := e.once(runCtx, client, b)
				if runCtx.Err() != nil {
					return // cut short by the end of the run: not the server's fault
				}
				e.record(time.Since(t0), err)
			}
		})
	}
	wg.Wait()
	elapsed := time.Since(start)

	fmt.Fprintf(stdout, "%-18s %9s %10s %9s %9s %7s\n", "endpoint", "requests", "rps", "p50_ms", "p99_ms", "errors")
	var rps [2]float64
	failed := 0
	for i, e := range endpoints {
		slices.Sort(e.latencies)
		n := len(e.latencies)
		rps[i] = float64(n) / elapsed.Seconds()
		fmt.Fprintf(stdout, "%-18s %9d %10.1f %9.3f %9.3f %7d\n", e.name, n, rps[i],
			ms(percentile(e.latencies, 0.5)), ms(percentile(e.latencies, 0.99)), e.errors)
		failed += e.errors
	}
	if rps[1] > 0 && endpoints[1] == health {
		fmt.Fprintf(stdout, "sizing throughput: %.1f %% of the health check's\n", 100*rps[0]/rps[1])
	}
	if ctx.Err() != nil {
		fmt.Fprintf(stdout, "interrupted after %.1f s\n", elapsed.Seconds())
	}
	if failed > 0 {
		var first []string
		for _, e := range endpoints {
			if e.errors > 0 {
				first = append(first, fmt.Sprintf("%s: %d (first: %s)", e.name, e.errors, e.firstErr))
			}
		}
		return fmt.Errorf("%d requests failed: %s", failed, strings.Join(first, "; "))
	}
	return nil
}

func ms(d time.Duration) float64 { return d.Seconds() * 1e3 }

// designWriteBody is the body that saves design under a load-test name.
func designWriteBody(design []byte) []byte {
	return []byte(`{"name":"Load test (invented demo data)","design":` + string(design) + `}`)
}

// writeOnce saves a design and deletes it again with the ETag it was
// saved at: both must succeed (201, 204).
func (e *loadEndpoint) writeOnce(ctx context.Context, client *http.Client, base string) error {
	send := func(method, target string, body []byte, header map[string]string, want int) (*http.Response, error) {
		var r io.Reader
		if body != nil {
			r = bytes.NewReader(body)
		}
		req, err := http.NewRequestWithContext(ctx, method, target, r)
		if err != nil {
			return nil, err
		}
		for k, v := range header {
			req.Header.Set(k, v)
		}
		resp, err := client.Do(req)
		if err != nil {
			return nil, err
		}
		io.Copy(io.Discard, resp.Body)
		resp.Body.Close()
		if resp.StatusCode != want {
			return nil, fmt.Errorf("%s: status %d", method, resp.StatusCode)
		}
		return resp, nil
	}
	resp, err := send(http.MethodPost, base+"/api/v1/designs", e.body, map[string]string{"Content-Type": "application/json"}, http.StatusCreated)
	if err != nil {
		return err
	}
	loc, tag := resp.Header.Get("Location"), resp.Header.Get("ETag")
	if loc == "" || tag == "" {
		return errors.New("POST: a saved design without Location or ETag")
	}
	_, err = send(http.MethodDelete, base+loc, nil, map[string]string{"If-Match": tag}, http.StatusNoContent)
	return err
}
