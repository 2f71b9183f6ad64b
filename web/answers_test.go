package web

import (
	"bytes"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"os"
	"reflect"
	"strings"
	"testing"

	"github.com/labstack/echo/v4"
)

// sizeRequest posts a design file to target, asking for gzip when gz is set.
func sizeRequest(t testing.TB, s http.Handler, target string, body []byte, gz bool) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(http.MethodPost, target, bytes.NewReader(body))
	req.Header.Set("Content-Type", "application/json")
	if gz {
		req.Header.Set("Accept-Encoding", "gzip")
	}
	return serve(s, req)
}

// isCompact reports whether b is one line of JSON as json.Compact writes
// it, ended by the encoder's newline.
func isCompact(t testing.TB, b []byte) bool {
	t.Helper()
	var c bytes.Buffer
	if err := json.Compact(&c, b); err != nil {
		t.Fatalf("the answer is not JSON: %v", err)
	}
	c.WriteByte('\n')
	return bytes.Equal(c.Bytes(), b)
}

// decodeAny decodes a JSON answer keeping every number as written.
func decodeAny(t testing.TB, b []byte) any {
	t.Helper()
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var v any
	if err := dec.Decode(&v); err != nil {
		t.Fatalf("the answer is not JSON: %v", err)
	}
	return v
}

// TestAPISizeCompactOrPretty: the sizing answer is compact JSON unless
// the client asks for ?pretty=1, and both carry the same figures, number
// for number as written (decoded with UseNumber and compared whole).
func TestAPISizeCompactOrPretty(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "logger-hold-up.json"} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			data, err := os.ReadFile("../testdata/" + name)
			if err != nil {
				t.Fatal(err)
			}
			compact := sizeRequest(t, s, "/api/v1/size", data, false)
			wantStatus(t, compact, http.StatusOK)
			pretty := sizeRequest(t, s, "/api/v1/size?pretty=1", data, false)
			wantStatus(t, pretty, http.StatusOK)
			if !isCompact(t, compact.Body.Bytes()) {
				t.Errorf("the default answer is not compact JSON: %.120q", compact.Body.String())
			}
			if !strings.Contains(pretty.Body.String(), "\n  \"candidates\": [") {
				t.Errorf("?pretty=1 did not indent the answer: %.120q", pretty.Body.String())
			}
			if pretty.Body.Len() <= compact.Body.Len() {
				t.Errorf("the indented answer (%d bytes) is not longer than the compact one (%d)", pretty.Body.Len(), compact.Body.Len())
			}
			if a, b := decodeAny(t, compact.Body.Bytes()), decodeAny(t, pretty.Body.Bytes()); !reflect.DeepEqual(a, b) {
				t.Error("the compact and the indented answers carry different figures")
			}
			// Compacting the indented answer gives the compact one byte
			// for byte: the same numbers written the same way.
			var c bytes.Buffer
			if err := json.Compact(&c, pretty.Body.Bytes()); err != nil {
				t.Fatal(err)
			}
			if c.String() != strings.TrimSuffix(compact.Body.String(), "\n") {
				t.Error("the indented answer, compacted, differs from the compact answer")
			}
		})
	}
}

// TestAPIProblemCompactOrPretty: a problem document follows the same rule
// as the report.
func TestAPIProblemCompactOrPretty(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	body := []byte(`{"window":{"max_v":48,"min_v":50},"load":{"steps":[{"power_w":100,"duration_s":-1}]},"cells":[]}`)
	compact := sizeRequest(t, s, "/api/v1/size", body, false)
	wantStatus(t, compact, http.StatusUnprocessableEntity)
	pretty := sizeRequest(t, s, "/api/v1/size?pretty=1", body, false)
	wantStatus(t, pretty, http.StatusUnprocessableEntity)
	if !isCompact(t, compact.Body.Bytes()) {
		t.Errorf("the problem is not compact JSON: %q", compact.Body.String())
	}
	if !strings.Contains(pretty.Body.String(), "\n  \"errors\": [") {
		t.Errorf("?pretty=1 did not indent the problem: %q", pretty.Body.String())
	}
	if a, b := decodeAny(t, compact.Body.Bytes()), decodeAny(t, pretty.Body.Bytes()); !reflect.DeepEqual(a, b) {
		t.Error("the compact and the indented problems differ")
	}
}

// TestAPISizeGzipOnlyWhenAsked: the sizing answer is gzipped when the
// client lists gzip in Accept-Encoding, and sent as it is when the client
// sends no Accept-Encoding; both decode to the same bytes.
func TestAPISizeGzipOnlyWhenAsked(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	data, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	plain := sizeRequest(t, s, "/api/v1/size", data, false)
	wantStatus(t, plain, http.StatusOK)
	if enc := plain.Header().Get("Content-Encoding"); enc != "" {
		t.Errorf("no Accept-Encoding, yet Content-Encoding %q", enc)
	}
	if plain.Body.Len() < gzipMinBytes {
		t.Fatalf("the report is %d bytes, too short to show compression", plain.Body.Len())
	}
	gz := sizeRequest(t, s, "/api/v1/size", data, true)
	wantStatus(t, gz, http.StatusOK)
	if enc := gz.Header().Get("Content-Encoding"); enc != "gzip" {
		t.Fatalf("Accept-Encoding gzip on a %d-byte report, yet Content-Encoding %q", plain.Body.Len(), enc)
	}
	got, err := gzipReader(gz.Body.Bytes())
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, plain.Body.Bytes()) {
		t.Error("the gzipped report differs from the plain one")
	}
}

// TestCompressAnswersThreshold: an answer that fits in one Ethernet TCP
// segment (1460 bytes: RFC 894's 1500-byte MTU less 40 bytes of IPv4 and
// TCP headers) is sent as it is even to a client that asks for gzip; from
// gzipMinBytes on it is gzipped, and only for a client that asks.
func TestCompressAnswersThreshold(t *testing.T) {
	t.Parallel()
	e := echo.New()
	e.Use(compressAnswers())
	e.GET("/n", func(c echo.Context) error {
		n := 0
		if err := echo.QueryParamsBinder(c).Int("n", &n).BindError(); err != nil {
			return err
		}
		return c.Blob(http.StatusOK, "application/json", bytes.Repeat([]byte("7"), n))
	})
	cases := []struct {
		name     string
		n        int
		askGzip  bool
		wantGzip bool
	}{
		{"a small problem document, asked", 300, true, false},
		{"1200 bytes, one segment, asked", 1200, true, false},
		{"one byte under the threshold, asked", gzipMinBytes - 1, true, false},
		{"at the threshold, asked", gzipMinBytes, true, true},
		{"a report, asked", 12_000, true, true},
		{"a report, not asked", 12_000, false, false},
	}
	for _, tc := range cases {
		req := httptest.NewRequest(http.MethodGet, "/n?n="+itoa(tc.n), nil)
		if tc.askGzip {
			req.Header.Set("Accept-Encoding", "gzip")
		}
		rec := httptest.NewRecorder()
		e.ServeHTTP(rec, req)
		wantStatus(t, rec, http.StatusOK)
		gz := rec.Header().Get("Content-Encoding") == "gzip"
		if gz != tc.wantGzip {
			t.Errorf("%s (%d bytes): gzipped %v, want %v", tc.name, tc.n, gz, tc.wantGzip)
		}
		body := rec.Body.Bytes()
		if gz {
			var err error
			if body, err = gzipReader(body); err != nil {
				t.Fatalf("%s: %v", tc.name, err)
			}
		}
		if len(body) != tc.n {
			t.Errorf("%s: %d bytes decoded, want %d", tc.name, len(body), tc.n)
		}
	}
}
