package store

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestBadCellCorpus: every bad cell file in testdata/bad/cells (CSV and
// JSON imports) is refused with a file error or a rejected row that says
// why in plain words, never naming a Go type, and imports nothing.
func TestBadCellCorpus(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	csvs, _ := filepath.Glob("../../testdata/bad/cells/*.csv")
	jsons, _ := filepath.Glob("../../testdata/bad/cells/*.json")
	if len(csvs) < 5 || len(jsons) < 5 {
		t.Fatalf("only %d bad cell CSV files and %d JSON files", len(csvs), len(jsons))
	}
	s := mustOpen(t, filepath.Join(t.TempDir(), FileName))
	for _, f := range append(csvs, jsons...) {
		fh, err := os.Open(f)
		if err != nil {
			t.Fatal(err)
		}
		var rep ImportReport
		if strings.HasSuffix(f, ".json") {
			rep, err = s.ImportCellsJSON(ctx, fh, ImportAdd)
		} else {
			rep, err = s.ImportCellsCSV(ctx, fh, ImportAdd)
		}
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
		if rep.Imported || reason == "" || goTypeName.MatchString(reason) {
			t.Errorf("%s: imported %v, reason %q", filepath.Base(f), rep.Imported, reason)
		}
	}
	if all, _ := s.ListCells(ctx, CellFilter{}); len(all) != 0 {
		t.Errorf("%d cells imported from bad files", len(all))
	}
}

// FuzzImportCellsCSV: any bytes as a cell CSV give a report (a file error,
// or rows each accepted or rejected with a reason), never a panic; a bad
// file imports nothing.
func FuzzImportCellsCSV(f *testing.F) {
	f.Add([]byte("id,rated_v,capacitance_f,esr_ohm\na,2.7,100,0.009\n"))
	f.Add([]byte("\ufeffid,name,rated_v,capacitance_f,esr_ohm,capacitance_minus_pct,capacitance_plus_pct\r\na,\"x, y\",2.7,100,0.009,-10,20\r\n"))
	f.Add([]byte("id,rated_v,capacitance_f,esr_ohm\na,2.7,1e400,9m\n"))
	s, err := Open(context.Background(), filepath.Join(f.TempDir(), FileName))
	if err != nil {
		f.Fatal(err)
	}
	defer s.Close()
	f.Fuzz(func(t *testing.T, data []byte) {
		ctx := context.Background()
		rep, err := s.ImportCellsCSV(ctx, bytes.NewReader(data), ImportAdd)
		if err != nil {
			t.Fatalf("import error %v", err)
		}
		for _, r := range rep.Rows {
			if !r.Accepted && r.Reason == "" {
				t.Fatalf("row %d rejected without a reason", r.Line)
			}
		}
		if rep.Imported {
			// Keep the library empty for the next input.
			for _, r := range rep.Rows {
				if err := s.DeleteCell(ctx, r.ID); err != nil {
					t.Fatalf("delete %q: %v", r.ID, err)
				}
			}
		}
	})
}
