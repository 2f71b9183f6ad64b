package store

import (
	"context"
	"os"
	"path/filepath"
	"testing"
)

// TestBadCellCSVCorpus: every bad cell CSV in testdata/bad/cells is refused
// with a file error or a rejected row that says why, and imports nothing.
func TestBadCellCSVCorpus(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	files, _ := filepath.Glob("../../testdata/bad/cells/*.csv")
	if len(files) < 5 {
		t.Fatalf("only %d bad cell files", len(files))
	}
	s := mustOpen(t, filepath.Join(t.TempDir(), FileName))
	for _, f := range files {
		fh, err := os.Open(f)
		if err != nil {
			t.Fatal(err)
		}
		rep, err := s.ImportCellsCSV(ctx, fh)
		fh.Close()
		if err != nil {
			t.Fatal(err)
		}
		reason := rep.Error
		for _, r := range rep.Rows {
			if !r.Accepted {
				reason = r.Reason
			}
		}
		if rep.Imported || reason == "" {
			t.Errorf("%s: imported %v, reason %q", filepath.Base(f), rep.Imported, reason)
		}
	}
	if all, _ := s.ListCells(ctx, CellFilter{}); len(all) != 0 {
		t.Errorf("%d cells imported from bad files", len(all))
	}
}
