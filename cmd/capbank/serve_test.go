package main

import (
	"bytes"
	"context"
	"io"
	"net/http"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"
)

// lockedBuffer collects the server's log while the test reads it.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

var servingURL = regexp.MustCompile(`url=(http://127\.0\.0\.1:\d+/)`)

// startServe runs capbank with args in the background and returns the URL
// it logs, a function that stops it and waits, and its log.
func startServe(t *testing.T, args ...string) (string, func() error, *lockedBuffer) {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	var stdout, stderr lockedBuffer
	done := make(chan error, 1)
	go func() { done <- run(ctx, args, &stdout, &stderr) }()
	stop := func() error {
		cancel()
		select {
		case err := <-done:
			return err
		case <-time.After(15 * time.Second):
			t.Fatal("capbank serve did not stop after its context ended")
			return nil
		}
	}
	for range 500 {
		if m := servingURL.FindStringSubmatch(stderr.String()); m != nil {
			return m[1], stop, &stderr
		}
		select {
		case err := <-done:
			t.Fatalf("capbank serve ended early: %v\n%s", err, stderr.String())
		case <-time.After(10 * time.Millisecond):
		}
	}
	stop()
	t.Fatalf("capbank serve logged no URL:\n%s", stderr.String())
	return "", nil, nil
}

func getBody(t *testing.T, url string) (int, string) {
	t.Helper()
	resp, err := http.Get(url)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	body, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, string(body)
}

// The real server on a free port answers /healthz and the design page,
// creates its data directory, and stops cleanly when its context ends.
func TestServe(t *testing.T) {
	t.Parallel()
	data := filepath.Join(t.TempDir(), "nested", "capbank-data")
	url, stop, logs := startServe(t, "serve", "--addr", "127.0.0.1:0", "--data", data)
	status, body := getBody(t, url+"healthz")
	if status != http.StatusOK || strings.TrimSpace(body) != `{"status":"ok"}` {
		t.Errorf("/healthz: %d %q", status, body)
	}
	status, body = getBody(t, url)
	if status != http.StatusOK || !strings.Contains(body, `id="design-form"`) {
		t.Errorf("/: status %d", status)
	}
	if fi, err := os.Stat(data); err != nil || !fi.IsDir() {
		t.Errorf("data directory not created: %v", err)
	}
	if err := stop(); err != nil {
		t.Errorf("serve returned %v", err)
	}
	if !strings.Contains(logs.String(), "stopped") {
		t.Errorf("no shutdown in the log:\n%s", logs)
	}
	if _, err := http.Get(url + "healthz"); err == nil {
		t.Error("the server still answers after shutdown")
	}
}

// capbank with no command serves, and so does capbank with serve's flags.
func TestNoCommandServes(t *testing.T) {
	defaultServeArgs = []string{"--addr", "127.0.0.1:0", "--data", t.TempDir()}
	t.Cleanup(func() { defaultServeArgs = nil })
	url, stop, _ := startServe(t)
	if status, _ := getBody(t, url+"healthz"); status != http.StatusOK {
		t.Errorf("/healthz: %d", status)
	}
	if err := stop(); err != nil {
		t.Errorf("serve returned %v", err)
	}

	url, stop, _ = startServe(t, "--addr", "127.0.0.1:0", "--data", t.TempDir())
	if status, _ := getBody(t, url+"healthz"); status != http.StatusOK {
		t.Errorf("/healthz: %d", status)
	}
	if err := stop(); err != nil {
		t.Errorf("serve returned %v", err)
	}
}

func TestServeUsageErrors(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"unknown flag", []string{"serve", "--port", "1"}, "flag provided but not defined: -port"},
		{"argument", []string{"serve", "extra"}, `capbank serve: takes no arguments (got "extra")`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			status, stdout, stderr := runCapbank(t, context.Background(), c.args...)
			if status != 2 || stdout != "" || !strings.Contains(stderr, c.want) || !strings.Contains(stderr, "usage: capbank serve") {
				t.Errorf("status %d, stdout %q, stderr:\n%s", status, stdout, stderr)
			}
		})
	}
	// A port that cannot be had is a plain failure, status 1.
	status, _, stderr := runCapbank(t, context.Background(), "serve", "--addr", "256.0.0.1:1", "--data", t.TempDir())
	if status != 1 || !strings.Contains(stderr, "cannot listen on 256.0.0.1:1") {
		t.Errorf("bad address: status %d, stderr %q", status, stderr)
	}
}
