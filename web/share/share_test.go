package share

import (
	"bytes"
	"compress/flate"
	"encoding/base64"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestRoundTripDemoDesign(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile("../../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	tok, err := Encode(raw)
	if err != nil {
		t.Fatal(err)
	}
	// URL-safe: only the base64url alphabet (RFC 4648 §5), no padding.
	if strings.Trim(tok, "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_") != "" {
		t.Errorf("token has characters outside base64url: %q", tok)
	}
	// Compact: well under the pretty-printed file.
	if len(tok) >= len(raw)/2 {
		t.Errorf("token %d characters for a %d-byte file; want under half", len(tok), len(raw))
	}
	back, err := Decode(tok)
	if err != nil {
		t.Fatal(err)
	}
	var want bytes.Buffer
	json.Compact(&want, raw)
	if !bytes.Equal(back, want.Bytes()) {
		t.Errorf("round trip changed the design")
	}
}

func TestDecodeErrors(t *testing.T) {
	t.Parallel()
	tok, _ := Encode([]byte(`{"name":"x"}`))
	bomb := func() string {
		var z bytes.Buffer
		w, _ := flate.NewWriter(&z, flate.BestCompression)
		w.Write(bytes.Repeat([]byte(" "), MaxDesignBytes+10))
		w.Close()
		return base64.RawURLEncoding.EncodeToString(z.Bytes())
	}()
	notJSON := func() string {
		var z bytes.Buffer
		w, _ := flate.NewWriter(&z, 9)
		w.Write([]byte("hello"))
		w.Close()
		return base64.RawURLEncoding.EncodeToString(z.Bytes())
	}()
	for _, c := range []struct{ name, tok, want string }{
		{"empty", "", "carries no design"},
		{"not base64", "abc$def", "not base64url"},
		{"cut short", tok[:len(tok)/2], "damaged or cut short"},
		{"expands too far", bomb, "larger than"},
		{"not a design", notJSON, "does not hold a design"},
		{"too long", strings.Repeat("A", MaxTokenBytes+1), "too long"},
	} {
		_, err := Decode(c.tok)
		if !errors.Is(err, ErrToken) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want …%s…", c.name, err, c.want)
		}
	}
	if _, err := Encode([]byte(`{"x":`)); !errors.Is(err, ErrToken) {
		t.Errorf("Encode of broken JSON: %v", err)
	}
}

// FuzzDecode: any token either decodes to valid JSON within the size limit
// or fails with an ErrToken; it never panics or hangs.
func FuzzDecode(f *testing.F) {
	tok, _ := Encode([]byte(`{"name":"x","window":{"max_v":42,"min_v":21}}`))
	f.Add(tok)
	f.Add("")
	f.Add("AAAA")
	f.Add("-_-_")
	f.Fuzz(func(t *testing.T, s string) {
		out, err := Decode(s)
		if err != nil {
			if !errors.Is(err, ErrToken) {
				t.Fatalf("error %v is not an ErrToken", err)
			}
			return
		}
		if len(out) > MaxDesignBytes || !json.Valid(out) {
			t.Fatalf("decoded %d bytes, valid JSON %v", len(out), json.Valid(out))
		}
	})
}

// TestBadShareCorpus: every bad token in testdata/bad/share is an ErrToken.
func TestBadShareCorpus(t *testing.T) {
	t.Parallel()
	files, _ := filepath.Glob("../../testdata/bad/share/*.txt")
	if len(files) < 3 {
		t.Fatalf("only %d bad tokens", len(files))
	}
	for _, f := range files {
		b, _ := os.ReadFile(f)
		if _, err := Decode(strings.TrimSpace(string(b))); !errors.Is(err, ErrToken) {
			t.Errorf("%s: %v, want an ErrToken", filepath.Base(f), err)
		}
	}
}

// EncodeFast's token decodes to the compact design, as Encode's does, and
// writers shared between goroutines through the pool never mix two
// designs (go test -race).
func TestEncodeFastRoundTrip(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile("../../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	done := make(chan error)
	for i := range 8 {
		go func() {
			design := bytes.Replace(raw, []byte(`"name": "`), []byte(`"name": "`+strings.Repeat("x", i)), 1)
			var want bytes.Buffer
			json.Compact(&want, design)
			for range 20 {
				tok, err := EncodeFast(design)
				if err != nil {
					done <- err
					return
				}
				back, err := Decode(tok)
				if err != nil || !bytes.Equal(back, want.Bytes()) {
					done <- errors.New("a fast token did not round-trip")
					return
				}
				if _, err := Encode(design); err != nil {
					done <- err
					return
				}
			}
			done <- nil
		}()
	}
	for range 8 {
		if err := <-done; err != nil {
			t.Error(err)
		}
	}
}
