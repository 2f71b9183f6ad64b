package main

import (
	"bytes"
	"net/http"
	"net/http/httptest"
	"testing"

	"capbank/web"
)

// answerWriter is a ResponseWriter that counts the body and keeps none of
// it, so that the benchmark's time and allocations are the server's.
type answerWriter struct {
	h      http.Header
	status int
	n      int
}

func (w *answerWriter) Header() http.Header         { return w.h }
func (w *answerWriter) WriteHeader(status int)      { w.status = status }
func (w *answerWriter) Write(p []byte) (int, error) { w.n += len(p); return len(p), nil }

// BenchmarkSizingAnswer is the load test's sizing request (its demo
// design, POST /api/v1/size) served in-process, with and without
// Accept-Encoding gzip as a Go client and curl send it: the server's CPU
// time per answer (one request at a time) and the bytes sent. The network
// and the client are left out; capbank loadtest measures them.
func BenchmarkSizingAnswer(b *testing.B) {
	s := web.New(web.Config{DataDir: b.TempDir()})
	for _, tc := range []struct {
		name string
		gzip bool
	}{{"gzip", true}, {"identity", false}} {
		b.Run(tc.name, func(b *testing.B) {
			var sent int
			for b.Loop() {
				req := httptest.NewRequest(http.MethodPost, "/api/v1/size", bytes.NewReader([]byte(loadtestDesign)))
				req.Header.Set("Content-Type", "application/json")
				if tc.gzip {
					req.Header.Set("Accept-Encoding", "gzip")
				}
				w := &answerWriter{h: http.Header{}}
				s.ServeHTTP(w, req)
				if w.status != http.StatusOK {
					b.Fatalf("status %d", w.status)
				}
				sent = w.n
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/1e3/float64(b.N), "µs/answer")
			b.ReportMetric(float64(sent), "bytes_sent")
		})
	}
}
