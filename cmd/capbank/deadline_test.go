package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/http"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"testing"
	"time"
)

// clockTicks is the kernel's USER_HZ, the unit of utime and stime in
// /proc/PID/stat: 100 on Linux for every architecture Go builds for
// (proc(5), sysconf(_SC_CLK_TCK)).
const clockTicks = 100

// cpuTime reads the CPU time (user + system) the process has used from
// /proc/PID/stat, fields 14 and 15 (proc(5)).
func cpuTime(t *testing.T, pid int) time.Duration {
	t.Helper()
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/stat", pid))
	if err != nil {
		t.Fatal(err)
	}
	// The command name (field 2) is in parentheses and may hold spaces;
	// the fields after the last ')' start at field 3.
	fields := strings.Fields(string(b[bytes.LastIndexByte(b, ')')+1:]))
	utime, err1 := strconv.ParseInt(fields[14-3], 10, 64)
	stime, err2 := strconv.ParseInt(fields[15-3], 10, 64)
	if err1 != nil || err2 != nil {
		t.Fatalf("reading /proc/%d/stat: %v %v", pid, err1, err2)
	}
	return time.Duration(utime+stime) * time.Second / clockTicks
}

// heavyDesignJSON is an invented 42 V ride-through design whose load is
// 20 000 one-millisecond steps alternating between drawing and charging
// 100 W, repeated 500 times (10^7 steps a trial), against four invented
// cells that all carry it: about 12 s of solver work on two cores.
func heavyDesignJSON(t *testing.T) []byte {
	t.Helper()
	steps := make([]map[string]float64, 20000)
	for i := range steps {
		p := 100.0
		if i%2 == 1 {
			p = -100
		}
		steps[i] = map[string]float64{"power_w": p, "duration_s": 0.001}
	}
	cells := make([]map[string]any, 4)
	for i := range cells {
		cells[i] = map[string]any{"id": fmt.Sprintf("heavy-%d", i), "rated_v": 2.7,
			"capacitance_f": 300 + 100*float64(i), "esr_ohm": 0.004 - 0.0005*float64(i), "leakage_a": 0.001}
	}
	d := map[string]any{"name": "heavy (invented)", "window": map[string]float64{"max_v": 42, "min_v": 21},
		"load": map[string]any{"efficiency": 0.94, "repeat": 500, "steps": steps}, "cells": cells}
	b, err := json.Marshal(d)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// The compute deadline stops the work, not just the answer: after the 503
// the server's CPU time stops growing. Sampled from 200 ms after the
// answer for 1 s, the server may use at most 100 ms of CPU (idle
// bookkeeping); a computation left running would use up to 2 s (both
// cores) in that second.
func TestComputeDeadlineStopsTheWork(t *testing.T) {
	bin, _ := buildCapbank(t)
	srv := startProcess(t, exec.Command(bin, "serve", "--addr", "127.0.0.1:0", "--data", t.TempDir(), "--compute-timeout", "300ms"))
	defer srv.stop()
	url := srv.waitURL(t)
	resp, err := http.Post(url+"api/v1/size", "application/json", bytes.NewReader(heavyDesignJSON(t)))
	if err != nil {
		t.Fatal(err)
	}
	body := new(bytes.Buffer)
	body.ReadFrom(resp.Body)
	resp.Body.Close()
	if resp.StatusCode != http.StatusServiceUnavailable || !strings.Contains(body.String(), "compute-deadline") {
		t.Fatalf("status %d, body %s; want 503 /problems/compute-deadline", resp.StatusCode, body)
	}
	pid := srv.cmd.Process.Pid
	time.Sleep(200 * time.Millisecond)
	before := cpuTime(t, pid)
	time.Sleep(time.Second)
	used := cpuTime(t, pid) - before
	if used > 100*time.Millisecond {
		t.Errorf("the server used %v of CPU in the second after the 503; the computation goes on. Its log:\n%s", used, srv.stderr)
	}
}
