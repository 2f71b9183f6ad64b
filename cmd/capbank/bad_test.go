package main

import (
	"context"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// fieldLine is one problem line on stderr: a field path, a colon, a message.
// A path may hold upper case: the key a file misspelt ("window.MAX_V").
var fieldLine = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_.\[\]]*: \S`)

// TestBadDesignCorpus sizes every malformed or invalid design in
// testdata/bad/designs: each must exit with status 2, write nothing on
// stdout, and write one "field: message" line per problem on stderr —
// never a panic, an internal error or a NaN.
func TestBadDesignCorpus(t *testing.T) {
	t.Parallel()
	files, err := filepath.Glob("../../testdata/bad/designs/*.json")
	if err != nil || len(files) < 50 {
		t.Fatalf("%d bad designs (%v); the corpus must hold at least 50", len(files), err)
	}
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			t.Parallel()
			status, stdout, stderr := runCapbank(t, context.Background(), "size", f)
			checkBadOutcome(t, status, stdout, stderr)
		})
	}
}

func checkBadOutcome(t *testing.T, status int, stdout, stderr string) {
	t.Helper()
	if status != 2 || stdout != "" {
		t.Fatalf("status %d, stdout %q, stderr %q; want status 2 and no stdout", status, stdout, stderr)
	}
	lines := strings.Split(strings.TrimRight(stderr, "\n"), "\n")
	for _, l := range lines {
		if !fieldLine.MatchString(l) || strings.Contains(l, "NaN") || strings.Contains(l, "panic") || strings.Contains(l, "internal error") {
			t.Errorf("stderr line %q is not a field message", l)
		}
	}
}

// TestBadDesignTooManySteps builds a design of 10^6 + 1 steps (too big to
// keep in the repository): the limit names the field.
func TestBadDesignTooManySteps(t *testing.T) {
	t.Parallel()
	var b strings.Builder
	b.WriteString(`{"window":{"max_v":42,"min_v":21},"load":{"steps":[`)
	for i := range 1_000_001 {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(`{"power_w":1,"duration_s":1}`)
	}
	b.WriteString(`]},"cells":[{"id":"a","rated_v":2.7,"capacitance_f":10,"esr_ohm":0.1}]}`)
	path := filepath.Join(t.TempDir(), "huge.json")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	status, stdout, stderr := runCapbank(t, context.Background(), "size", path)
	checkBadOutcome(t, status, stdout, stderr)
	if !strings.Contains(stderr, "load.steps: must have at most 1000000 items") {
		t.Errorf("stderr %q does not name the steps limit", stderr)
	}
}
