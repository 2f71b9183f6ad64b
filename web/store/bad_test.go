package store_test

import (
	"bytes"
	"context"
	"path/filepath"
	"testing"

	"capbank/web/store"
	"capbank/web/store/sqlite"
)

// FuzzImportCellsCSV: any bytes as a cell CSV give a report (a file error,
// or rows each accepted or rejected with a reason), never a panic; a bad
// file imports nothing.
func FuzzImportCellsCSV(f *testing.F) {
	f.Add([]byte("id,rated_v,capacitance_f,esr_ohm\na,2.7,100,0.009\n"))
	f.Add([]byte("\ufeffid,name,rated_v,capacitance_f,esr_ohm,capacitance_minus_pct,capacitance_plus_pct\r\na,\"x, y\",2.7,100,0.009,-10,20\r\n"))
	f.Add([]byte("id,rated_v,capacitance_f,esr_ohm\na,2.7,1e400,9m\n"))
	s, err := sqlite.Open(context.Background(), filepath.Join(f.TempDir(), store.FileName))
	if err != nil {
		f.Fatal(err)
	}
	defer s.Close()
	f.Fuzz(func(t *testing.T, data []byte) {
		ctx := context.Background()
		rep, err := s.ImportCellsCSV(ctx, bytes.NewReader(data), store.ImportAdd)
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
