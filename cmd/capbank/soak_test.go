package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"net/http"
	"os"
	"os/exec"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat"

	"capbank/web"
)

// soakEnv names the environment variable that sets the soak's length, as
// a Go duration ("60s"). .ci/run sets it to 60s and runs the soak on its
// own, after the suite, so that nothing else shares the two cores.
const soakEnv = "CAPBANK_SOAK_DURATION"

// soakWarmUp is how long the soak waits before it judges memory: the
// server's heap, connection buffers and SQLite page cache grow to their
// working size in the first seconds (common practice, no source).
const soakWarmUp = 10 * time.Second

// rssSample is one reading of a process's memory.
type rssSample struct {
	at       time.Duration // since the load started
	rssBytes float64       // resident set (VmRSS)
	fds      int           // open file descriptors
	heapLive float64       // the Go heap live after the last collection
	routines float64       // goroutines
}

// procStatusBytes reads the field (as "VmRSS", "VmHWM") of
// /proc/PID/status, which the kernel gives in kB (proc(5)).
func procStatusBytes(pid int, field string) (float64, error) {
	f, err := os.Open(fmt.Sprintf("/proc/%d/status", pid))
	if err != nil {
		return 0, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		if v, ok := strings.CutPrefix(sc.Text(), field+":"); ok {
			kb, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(v), " kB"), 64)
			return kb * 1024, err
		}
	}
	return 0, fmt.Errorf("no %s in /proc/%d/status", field, pid)
}

// sampleMemory reads the process's resident set and open files, and the
// server's live heap and goroutines (GET /healthz?runtime=1), every period
// until stop closes; the first failure to read the heap goes to lastErr.
func sampleMemory(pid int, url string, period time.Duration, stop <-chan struct{}, lastErr *error) []rssSample {
	var out []rssSample
	start := time.Now()
	tick := time.NewTicker(period)
	defer tick.Stop()
	for {
		select {
		case <-stop:
			return out
		case <-tick.C:
		}
		rss, err := procStatusBytes(pid, "VmRSS")
		if err != nil {
			return out // the process is gone; the test says so
		}
		fds, _ := os.ReadDir(fmt.Sprintf("/proc/%d/fd", pid))
		s := rssSample{at: time.Since(start), rssBytes: rss, fds: len(fds), heapLive: -1}
		if h, err := readRuntimeHealth(url); err == nil {
			s.heapLive, s.routines = float64(h.HeapLiveBytes), float64(h.Goroutines)
		} else if *lastErr == nil {
			*lastErr = err
		}
		out = append(out, s)
	}
}

const mib = 1 << 20

// readRuntimeHealth asks the server for its live heap and goroutines.
func readRuntimeHealth(url string) (web.RuntimeHealth, error) {
	var h web.RuntimeHealth
	resp, err := http.Get(strings.TrimSuffix(url, "/") + "/healthz?runtime=1")
	if err != nil {
		return h, err
	}
	defer resp.Body.Close()
	if resp.StatusCode != http.StatusOK {
		return h, fmt.Errorf("GET /healthz?runtime=1: %s", resp.Status)
	}
	return h, json.NewDecoder(resp.Body).Decode(&h)
}

// The soak: the real capbank binary serving on 127.0.0.1, driven by the
// real load command (a second process) at concurrency 64 for
// CAPBANK_SOAK_DURATION (60 s in .ci/run, the length issue 9 asks for).
// Every request must be answered 200 with a real answer, and memory must
// stay flat: after the warm-up, the least-squares trend (gonum
// stat.LinearRegression) of the server's live heap (the bytes its last
// collection kept, GET /healthz?runtime=1) over the rest of the run may add
// at most 10 % of its mean plus 4 MiB, the trend of its goroutines may not
// add more than the 64 connections (each request runs a few at once, so
// their count swings by more than that), nor may its open files grow by
// more than the connections (bounds common practice, no
// source: a leak of 100 bytes per request, at the thousands of requests a
// second this machine answers, adds tens of MiB over the run). The
// resident set is logged with its trend, and only bounded loosely (a
// quarter of its mean plus 32 MiB): the collector's rhythm moves it by
// tens of MiB either way within a minute, so it cannot see a slow leak
// but does see a runaway one.
//
// Without the variable (go test ./...) the same test runs for 3 s at
// concurrency 16, judging errors only: too short to judge memory.
func TestSoak(t *testing.T) {
	if testing.Short() {
		t.Skip("drives a capbank server with the load command")
	}
	duration, conns, judgeMemory := 3*time.Second, 16, false
	if v := os.Getenv(soakEnv); v != "" {
		d, err := time.ParseDuration(v)
		if err != nil || d < 3*soakWarmUp {
			t.Fatalf("%s=%q: want a duration of at least %v, as 60s", soakEnv, v, 3*soakWarmUp)
		}
		duration, conns, judgeMemory = d, 64, true
	}
	bin, _ := buildCapbank(t)
	data := t.TempDir()
	srv := startProcess(t, serveCmd(bin, data))
	defer srv.stop()
	url := srv.waitURL(t)
	pid := srv.cmd.Process.Pid

	before, _ := procStatusBytes(pid, "VmRSS")
	stop := make(chan struct{})
	var samples []rssSample
	var wg sync.WaitGroup
	var healthErr error
	wg.Go(func() { samples = sampleMemory(pid, url, 250*time.Millisecond, stop, &healthErr) })

	load := exec.Command(bin, "loadtest", "--url", url, "--concurrency", strconv.Itoa(conns), "--duration", duration.String())
	var stdout, stderr strings.Builder
	load.Stdout, load.Stderr = &stdout, &stderr
	err := load.Run()
	close(stop)
	wg.Wait()
	t.Logf("capbank loadtest --concurrency %d --duration %v:\n%s%s", conns, duration, stderr.String(), stdout.String())
	if err != nil {
		t.Fatalf("the load command failed (%v):\n%s\nserver log:\n%.4000s", err, stderr.String(), srv.stderr)
	}
	rows := parseLoadTable(t, stdout.String())
	for _, name := range []string{"POST /api/v1/size", "GET /healthz"} {
		r, ok := rows[name]
		switch {
		case !ok:
			t.Errorf("no line for %s", name)
		case r.errors != 0 || r.requests < 1:
			t.Errorf("%s: %d answered, %d errors; want answers and no error", name, r.requests, r.errors)
		}
	}
	select {
	case <-srv.done:
		t.Fatalf("the server exited during the soak: %v\n%.4000s", srv.cmd.ProcessState, srv.stderr)
	default:
	}
	peak, err := procStatusBytes(pid, "VmHWM")
	if err != nil {
		t.Fatal(err)
	}
	if len(samples) < 4 {
		t.Fatalf("only %d memory samples", len(samples))
	}
	last := samples[len(samples)-1]
	t.Logf("server memory: %.1f MiB before the load, %.1f MiB at the end, peak resident set (VmHWM) %.1f MiB; open files %d at the end",
		before/mib, last.rssBytes/mib, peak/mib, last.fds)
	if !judgeMemory {
		return
	}

	i := slices.IndexFunc(samples, func(s rssSample) bool { return s.at >= soakWarmUp })
	if i < 0 || len(samples)-i < 8 {
		t.Fatalf("too few samples after the %v warm-up (%d in all)", soakWarmUp, len(samples))
	}
	steady := samples[i:]
	trend := func(what string, y []float64, x []float64, unit float64, unitName string) (growth, mean float64) {
		_, slope := stat.LinearRegression(x, y, nil, false) // per second
		mean = stat.Mean(y, nil)
		growth = slope * (x[len(x)-1] - x[0])
		t.Logf("after the %v warm-up: %s mean %.1f%s, trend %+.3f%s/s, %+.1f%s over %.0f s",
			soakWarmUp, what, mean/unit, unitName, slope/unit, unitName, growth/unit, unitName, x[len(x)-1]-x[0])
		return growth, mean
	}
	var xr, rss, xh, heap, routines []float64
	minFDs, maxFDs := steady[0].fds, steady[0].fds
	for _, s := range steady {
		xr, rss = append(xr, s.at.Seconds()), append(rss, s.rssBytes)
		if s.heapLive >= 0 {
			xh, heap, routines = append(xh, s.at.Seconds()), append(heap, s.heapLive), append(routines, s.routines)
		}
		minFDs, maxFDs = min(minFDs, s.fds), max(maxFDs, s.fds)
	}
	if len(heap) < len(steady)/2 {
		t.Fatalf("the server answered GET /healthz?runtime=1 to %d of %d samples; the first failure: %v", len(heap), len(steady), healthErr)
	}
	if growth, mean := trend("live heap", heap, xh, mib, " MiB"); growth > 0.10*mean+4*mib {
		t.Errorf("memory is not flat: the live heap grew %.1f MiB over the load, more than %.1f MiB (10 %% of its mean %.1f MiB plus 4 MiB)",
			growth/mib, (0.10*mean+4*mib)/mib, mean/mib)
	}
	if growth, mean := trend("resident set", rss, xr, mib, " MiB"); growth > 0.25*mean+32*mib {
		t.Errorf("the resident set ran away: it grew %.1f MiB over the load, more than %.1f MiB (a quarter of its mean %.1f MiB plus 32 MiB)",
			growth/mib, (0.25*mean+32*mib)/mib, mean/mib)
	}
	if growth, _ := trend("goroutines", routines, xh, 1, ""); growth > float64(conns) {
		t.Errorf("goroutines grew by %.0f over the load (trend), more than its %d connections", growth, conns)
	}
	t.Logf("open files %d–%d", minFDs, maxFDs)
	if maxFDs-minFDs > conns {
		t.Errorf("open files grew from %d to %d during the load, more than its %d connections", minFDs, maxFDs, conns)
	}
}
