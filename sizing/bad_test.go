package sizing

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

// TestBadProfileCorpus: every malformed profile CSV in testdata/bad/profiles
// is refused with a CSVError naming its line, never a panic.
func TestBadProfileCorpus(t *testing.T) {
	t.Parallel()
	files, _ := filepath.Glob("../testdata/bad/profiles/*.csv")
	if len(files) < 5 {
		t.Fatalf("only %d bad profiles", len(files))
	}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		_, err = ParseProfileCSV(bytesReader(data))
		var pe *CSVError
		if !errors.As(err, &pe) || pe.Line < 1 || pe.Message == "" {
			t.Errorf("%s: %v, want a CSVError with a line", filepath.Base(f), err)
		}
	}
}

func bytesReader(b []byte) *byteReader { return &byteReader{b: b} }

type byteReader struct{ b []byte }

func (r *byteReader) Read(p []byte) (int, error) {
	if len(r.b) == 0 {
		return 0, io.EOF
	}
	n := copy(p, r.b)
	r.b = r.b[n:]
	return n, nil
}
