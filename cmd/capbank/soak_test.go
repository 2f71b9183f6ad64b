package main

import (
	"bufio"
	"fmt"
	"os"
	"os/exec"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat"
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

// sampleMemory reads the process's resident set and open files every
// period until stop closes.
func sampleMemory(pid int, period time.Duration, stop <-chan struct{}) []rssSample {
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
		out = append(out, rssSample{at: time.Since(start), rssBytes: rss, fds: len(fds)})
	}
}

const mib = 1 << 20

// The soak: the real capbank binary serving on 127.0.0.1, driven by the
// real load command (a second process) at concurrency 64 for
// CAPBANK_SOAK_DURATION (60 s in .ci/run, the length issue 9 asks for).
// Every request must be answered 200 with a real answer, and memory must
// stay flat: after the warm-up, the resident set's least-squares trend
// (gonum stat.LinearRegression) over the rest of the run may add at most
// 10 % of its mean plus 8 MiB, and the open files may not grow by more
// than the 64 connections (both bounds common practice, no source: a leak
// of 100 bytes per request, at the several thousand requests a second
// this machine answers, adds tens of MiB over the run). The peak resident
// set (VmHWM) is logged for the note.
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
	wg.Go(func() { samples = sampleMemory(pid, 250*time.Millisecond, stop) })

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
	x, y := make([]float64, len(steady)), make([]float64, len(steady))
	minFDs, maxFDs := steady[0].fds, steady[0].fds
	for k, s := range steady {
		x[k], y[k] = s.at.Seconds(), s.rssBytes
		minFDs, maxFDs = min(minFDs, s.fds), max(maxFDs, s.fds)
	}
	_, slope := stat.LinearRegression(x, y, nil, false) // bytes per second
	mean := stat.Mean(y, nil)
	span := x[len(x)-1] - x[0]
	growth := slope * span
	t.Logf("after the %v warm-up: resident set mean %.1f MiB, trend %+.3f MiB/s, %+.1f MiB over %.0f s; open files %d–%d",
		soakWarmUp, mean/mib, slope/mib, growth/mib, span, minFDs, maxFDs)
	if limit := 0.10*mean + 8*mib; growth > limit {
		t.Errorf("memory is not flat: the resident set grew %.1f MiB over %.0f s of load, more than %.1f MiB (10 %% of its mean %.1f MiB plus 8 MiB)",
			growth/mib, span, limit/mib, mean/mib)
	}
	if maxFDs-minFDs > conns {
		t.Errorf("open files grew from %d to %d during the load, more than its %d connections", minFDs, maxFDs, conns)
	}
}
