// Package storetest is the one test suite of capbank's store: every
// backend's tests run it (Run) against a fresh, empty store of that backend
// per test, so that the SQLite and the PostgreSQL store cannot drift.
package storetest

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"sync"
	"testing"

	"capbank/sizing"
	"capbank/web/store"
)

// Factory opens a fresh, empty, migrated store for test t, closed when t
// ends.
type Factory func(t *testing.T) store.Store

// WithReopen opens a fresh store and gives a function that opens the same
// database again (after the first is closed).
func (open Factory) WithReopen(t *testing.T) (store.Store, func(t *testing.T) store.Store) {
	t.Helper()
	s := open(t)
	r, ok := s.(interface {
		Reopen(t *testing.T) store.Store
	})
	if !ok {
		t.Fatalf("the store %T cannot be reopened", s)
	}
	return s, r.Reopen
}

func fp(x float64) *float64 { return &x }

// testCell is an invented cell (not a real product).
func testCell(id string, c float64) sizing.Cell {
	return sizing.Cell{ID: id, Name: "test cell " + id, RatedV: 2.7, SurgeV: fp(2.85), CapacitanceF: c,
		CapacitanceTolerancePct: []float64{-10, 20}, ESROhm: 0.9 / c, LeakageA: fp(2e-6 * c), MassKg: fp(0.0002 * c), UnitPrice: fp(0.5 + 0.01*c)}
}

// Run runs every test of the suite on stores made by open.
func Run(t *testing.T, open Factory) {
	for _, tc := range []struct {
		name string
		f    func(*testing.T, Factory)
	}{
		{"DemoCellsAreReadOnly", testDemoCellsAreReadOnly},
		{"UserCellLifecycle", testUserCellLifecycle},
		{"ListCellsFilters", testListCellsFilters},
		{"DesignRoundTripAndSnapshot", testDesignRoundTripAndSnapshot},
		{"ImportCellsCSV", testImportCellsCSV},
		{"ImportTenThousandAndRoundTrip", testImportTenThousandAndRoundTrip},
		{"ReplaceDesign", testReplaceDesign},
		{"DuplicateCellName", testDuplicateCellName},
		{"ImportUpsert", testImportUpsert},
		{"BadCellCorpus", testBadCellCorpus},
		{"ImportCellsJSONShapes", testImportCellsJSONShapes},
		{"Versions", testVersions},
		{"ConcurrentEdits", testConcurrentEdits},
	} {
		t.Run(tc.name, func(t *testing.T) { tc.f(t, open) })
	}
}

func testDemoCellsAreReadOnly(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s := open(t)
	demo := testCell("demo-a", 50)
	demo.Source = "demo"
	if err := s.SeedDemo(ctx, []sizing.Cell{demo}); err != nil {
		t.Fatal(err)
	}
	if err := s.SeedDemo(ctx, []sizing.Cell{demo}); err != nil { // idempotent
		t.Fatal(err)
	}
	r, err := s.GetCell(ctx, "demo-a")
	if err != nil || !r.ReadOnly {
		t.Fatalf("demo cell %+v, %v; want read-only", r, err)
	}
	demo.Name = "edited"
	if err := s.UpdateCell(ctx, demo); !errors.Is(err, store.ErrReadOnly) {
		t.Errorf("update of a demo cell: %v, want store.ErrReadOnly", err)
	}
	if err := s.DeleteCell(ctx, "demo-a"); !errors.Is(err, store.ErrReadOnly) {
		t.Errorf("delete of a demo cell: %v, want store.ErrReadOnly", err)
	}
	dup, err := s.DuplicateCell(ctx, "demo-a", "")
	if err != nil || dup.Cell.ID != "demo-a-copy" || dup.Cell.Source == "demo" {
		t.Fatalf("duplicate: %+v, %v", dup, err)
	}
	dup.Cell.Name = "my copy"
	if err := s.UpdateCell(ctx, dup.Cell); err != nil {
		t.Errorf("update of the copy: %v", err)
	}
	if d2, _ := s.DuplicateCell(ctx, "demo-a", ""); d2.Cell.ID != "demo-a-copy2" {
		t.Errorf("second copy id %q, want demo-a-copy2", d2.Cell.ID)
	}
}

func testUserCellLifecycle(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s, reopen := open.WithReopen(t)
	c := testCell("mine", 300)
	if err := s.CreateCell(ctx, c); err != nil {
		t.Fatal(err)
	}
	if err := s.CreateCell(ctx, c); !errors.Is(err, store.ErrExists) {
		t.Errorf("second create: %v, want store.ErrExists", err)
	}
	bad := c
	bad.ID = "bad"
	bad.ESROhm = -1
	err := s.CreateCell(ctx, bad)
	if !errors.Is(err, store.ErrInvalid) || !strings.Contains(err.Error(), "esr_ohm: must be greater than 0") {
		t.Errorf("invalid cell: %v", err)
	}
	c.Name = "renamed"
	if err := s.UpdateCell(ctx, c); err != nil {
		t.Fatal(err)
	}
	// Survives a restart, figure for figure.
	s.Close()
	s = reopen(t)
	r, err := s.GetCell(ctx, "mine")
	if err != nil || !reflect.DeepEqual(r.Cell, c) {
		t.Fatalf("after restart: %+v, %v; want %+v", r.Cell, err, c)
	}
	if err := s.DeleteCell(ctx, "mine"); err != nil {
		t.Fatal(err)
	}
	if _, err := s.GetCell(ctx, "mine"); !errors.Is(err, store.ErrNotFound) {
		t.Errorf("after delete: %v, want store.ErrNotFound", err)
	}
}

func testListCellsFilters(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s := open(t)
	for _, c := range []sizing.Cell{testCell("small", 5), testCell("mid", 400), testCell("big_one", 3000)} {
		if err := s.CreateCell(ctx, c); err != nil {
			t.Fatal(err)
		}
	}
	hv := testCell("hybrid", 200)
	hv.RatedV, hv.SurgeV = 3.8, fp(4.0)
	s.CreateCell(ctx, hv)
	ids := func(f store.CellFilter) string {
		rs, err := s.ListCells(ctx, f)
		if err != nil {
			t.Fatal(err)
		}
		var out []string
		for _, r := range rs {
			out = append(out, r.Cell.ID)
		}
		return strings.Join(out, ",")
	}
	for _, c := range []struct {
		f    store.CellFilter
		want string
	}{
		{store.CellFilter{}, "small,mid,big_one,hybrid"},
		{store.CellFilter{MinCapacitanceF: 100, MaxCapacitanceF: 1000}, "mid,hybrid"},
		{store.CellFilter{MinRatedV: 3}, "hybrid"},
		{store.CellFilter{Search: "BIG"}, "big_one"},
		{store.CellFilter{Search: "_"}, "big_one"}, // a literal underscore, not a LIKE wildcard
	} {
		if got := ids(c.f); got != c.want {
			t.Errorf("filter %+v: %s, want %s", c.f, got, c.want)
		}
	}

	// The longest search, each character a 4-byte one or a LIKE wildcard
	// that escaping doubles, stays within SQLite's pattern limit; one
	// character more is refused before it reaches SQLite.
	for _, q := range []string{strings.Repeat("😀", store.MaxSearchLen), strings.Repeat(`\`, store.MaxSearchLen), "big" + strings.Repeat("%", store.MaxSearchLen-3)} {
		if _, err := s.ListCells(ctx, store.CellFilter{Search: q}); err != nil {
			t.Errorf("a search of %d characters: %v", store.MaxSearchLen, err)
		}
	}
	for _, q := range []string{strings.Repeat("a", store.MaxSearchLen+1), strings.Repeat("%", 50_000)} {
		if _, err := s.ListCells(ctx, store.CellFilter{Search: q}); !errors.Is(err, store.ErrInvalid) || !strings.Contains(err.Error(), "at most 200") {
			t.Errorf("a search of %d characters: %v, want store.ErrInvalid naming the limit", len(q), err)
		}
	}
}

func testDesignRoundTripAndSnapshot(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s := open(t)
	c := testCell("used", 300)
	s.CreateCell(ctx, c)
	// Odd spacing and key order must survive byte for byte.
	js := []byte("{\"name\": \"hold-up\",  \"cells\": [{\"id\":\"used\",\"rated_v\":2.7,\"capacitance_f\":300,\"esr_ohm\":0.003}],\n \"window\": {\"min_v\": 12, \"max_v\": 24}}")
	id, err := s.SaveDesign(ctx, "hold-up", js)
	if err != nil {
		t.Fatal(err)
	}
	id2, _ := s.SaveDesign(ctx, "hold-up", js) // save again: a new design, never an overwrite
	if id2 == id {
		t.Errorf("saving again reused id %d", id)
	}
	// Deleting the library cell does not touch the saved design: it keeps
	// its own copy of every cell.
	if err := s.DeleteCell(ctx, "used"); err != nil {
		t.Fatal(err)
	}
	d, err := s.GetDesign(ctx, id)
	if err != nil || !bytes.Equal(d.JSON, js) || d.Name != "hold-up" {
		t.Fatalf("design %q %q, %v", d.Name, d.JSON, err)
	}
	if err := s.RenameDesign(ctx, id, "hold-up v2"); err != nil {
		t.Fatal(err)
	}
	dup, err := s.DuplicateDesign(ctx, id, "")
	if err != nil {
		t.Fatal(err)
	}
	dd, _ := s.GetDesign(ctx, dup)
	if dd.Name != "hold-up v2 (copy)" || !bytes.Equal(dd.JSON, js) {
		t.Errorf("duplicate %q", dd.Name)
	}
	list, _ := s.ListDesigns(ctx)
	if len(list) != 3 {
		t.Errorf("%d designs, want 3", len(list))
	}
	if err := s.DeleteDesign(ctx, id); err != nil {
		t.Fatal(err)
	}
	if _, err := s.GetDesign(ctx, id); !errors.Is(err, store.ErrNotFound) {
		t.Errorf("deleted design: %v", err)
	}
	if err := s.RenameDesign(ctx, 9999, "x"); !errors.Is(err, store.ErrNotFound) {
		t.Errorf("rename of a missing design: %v", err)
	}
	if _, err := s.SaveDesign(ctx, "  ", js); !errors.Is(err, store.ErrInvalid) {
		t.Errorf("blank name: %v", err)
	}
}

func testImportCellsCSV(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	cases := []struct {
		name      string
		csv       string
		imported  int
		fileError string
		rowError  string // in the first rejected row's reason
		badLine   int
	}{
		{"plain", "id,rated_v,capacitance_f,esr_ohm\na,2.7,100,0.009\nb,2.7,200,0.0045\n", 2, "", "", 0},
		{"BOM and CRLF", "\ufeffid,rated_v,capacitance_f,esr_ohm\r\na,2.7,100,0.009\r\n", 1, "", "", 0},
		{"quoted comma", "id,name,rated_v,capacitance_f,esr_ohm\na,\"cell, big\",2.7,100,0.009\n", 1, "", "", 0},
		{"tolerance pair", "id,rated_v,capacitance_f,esr_ohm,capacitance_minus_pct,capacitance_plus_pct\na,2.7,100,0.009,-10,20\n", 1, "", "", 0},
		{"missing column", "id,rated_v,capacitance_f\na,2.7,100\n", 0, `required column "esr_ohm" is missing`, "", 0},
		{"unit-less column", "id,rated_v,capacitance,esr_ohm\na,2.7,100,0.009\n", 0, `column "capacitance" has no unit; name it "capacitance_f"`, "", 0},
		{"unknown column", "id,rated_v,capacitance_f,esr_ohm,colour\na,2.7,100,0.009,red\n", 0, `unknown column "colour"`, "", 0},
		{"number with a prefix", "id,rated_v,capacitance_f,esr_ohm\na,2.7,100,9m\n", 0, "", `esr_ohm: "9m" is not a plain number`, 2},
		{"decimal comma", "id,rated_v,capacitance_f,esr_ohm\na,2.7,100,\"0,009\"\n", 0, "", `esr_ohm: "0,009" is not a plain number`, 2},
		{"NaN", "id,rated_v,capacitance_f,esr_ohm\na,2.7,NaN,0.009\n", 0, "", `capacitance_f: "NaN"`, 2},
		{"physics", "id,rated_v,surge_v,capacitance_f,esr_ohm\na,2.7,2.5,100,0.009\n", 0, "", "surge_v: must be at least rated_v", 2},
		{"one bad row stops all", "id,rated_v,capacitance_f,esr_ohm\na,2.7,100,0.009\nb,2.7,,0.009\nc,2.7,300,0.003\n", 0, "", "capacitance_f: is required", 3},
		{"repeated id", "id,rated_v,capacitance_f,esr_ohm\na,2.7,100,0.009\na,2.7,100,0.009\n", 0, "", `repeats the id "a" of line 2`, 3},
		{"bad quote", "id,rated_v,capacitance_f,esr_ohm\na,2.7,100,\"0.009\n", 0, "line 2", "", 0},
		{"empty", "", 0, "is empty", "", 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			s := open(t)
			rep, err := s.ImportCellsCSV(ctx, strings.NewReader(c.csv), store.ImportAdd)
			if err != nil {
				t.Fatal(err)
			}
			if c.fileError != "" {
				if !strings.Contains(rep.Error, c.fileError) {
					t.Errorf("file error %q, want …%s…", rep.Error, c.fileError)
				}
				return
			}
			all, _ := s.ListCells(ctx, store.CellFilter{})
			if len(all) != c.imported || rep.Imported != (c.imported > 0) {
				t.Errorf("library holds %d cells (imported %v), want %d; report %+v", len(all), rep.Imported, c.imported, rep)
			}
			if c.rowError != "" {
				var bad *store.ImportRow
				for i := range rep.Rows {
					if !rep.Rows[i].Accepted {
						bad = &rep.Rows[i]
						break
					}
				}
				if bad == nil || bad.Line != c.badLine || !strings.Contains(bad.Reason, c.rowError) {
					t.Errorf("rejected row %+v, want line %d: …%s…", bad, c.badLine, c.rowError)
				}
			}
		})
	}
}

func testImportTenThousandAndRoundTrip(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	var b strings.Builder
	b.WriteString("id,name,rated_v,capacitance_f,esr_ohm,leakage_a\n")
	for i := range 10000 {
		fmt.Fprintf(&b, "c%05d,=cmd|' /C calc'!A0,2.7,%d,%g,%g\n", i, 10+i, 0.9/float64(10+i), 2e-6*float64(10+i))
	}
	s := open(t)
	rep, err := s.ImportCellsCSV(ctx, strings.NewReader(b.String()), store.ImportAdd)
	if err != nil || !rep.Imported || rep.Accepted != 10000 {
		t.Fatalf("10 000 rows: %+v, %v", rep.Error, err)
	}
	rs, _ := s.ListCells(ctx, store.CellFilter{})
	cells := make([]sizing.Cell, len(rs))
	for i, r := range rs {
		cells[i] = r.Cell
	}
	// Export neutralises formula-looking text; import into a fresh library
	// restores it; the cells come back equal.
	var out bytes.Buffer
	if err := store.ExportCellsCSV(&out, cells); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(out.String(), ",'=cmd") {
		t.Errorf("export did not neutralise a formula-looking name")
	}
	s2 := open(t)
	rep, _ = s2.ImportCellsCSV(ctx, &out, store.ImportAdd)
	if !rep.Imported {
		t.Fatalf("re-import: %+v", rep.Rows[:1])
	}
	back, _ := s2.GetCell(ctx, "c00042")
	if !reflect.DeepEqual(back.Cell, cells[42]) {
		t.Errorf("round trip: %+v\nwant %+v", back.Cell, cells[42])
	}
	// JSON export and import, too.
	var js bytes.Buffer
	store.ExportCellsJSON(&js, cells[:3])
	s3 := open(t)
	rep, _ = s3.ImportCellsJSON(ctx, &js, store.ImportAdd)
	if !rep.Imported || rep.Accepted != 3 {
		t.Errorf("JSON import: %+v", rep)
	}
	rep, _ = s3.ImportCellsJSON(ctx, strings.NewReader(`[{"id":"x","rated_v":2.7,"capacitance_f":10,"esr_ohm":0.1,"colour":"red"}]`), store.ImportAdd)
	if rep.Imported || len(rep.Rows) != 1 || !strings.Contains(rep.Rows[0].Reason, `colour: is not a cell key`) {
		t.Errorf("JSON import with an unknown key: %+v", rep)
	}
}

func testReplaceDesign(t *testing.T, open Factory) {
	ctx := context.Background()
	s := open(t)
	id, err := s.SaveDesign(ctx, "first", []byte(`{"a":1}`))
	if err != nil {
		t.Fatal(err)
	}
	if err := s.ReplaceDesign(ctx, id, "second", []byte(`{"a": 2}`)); err != nil {
		t.Fatal(err)
	}
	got, err := s.GetDesign(ctx, id)
	if err != nil {
		t.Fatal(err)
	}
	if got.Name != "second" || string(got.JSON) != `{"a": 2}` {
		t.Errorf("after replace: %q %s, want second {\"a\": 2}", got.Name, got.JSON)
	}
	// A bad name changes nothing: the JSON stays as it was.
	if err := s.ReplaceDesign(ctx, id, strings.Repeat("x", 201), []byte(`{"a":3}`)); !errors.Is(err, store.ErrInvalid) {
		t.Fatalf("a 201-character name: %v, want store.ErrInvalid", err)
	}
	if got, _ := s.GetDesign(ctx, id); string(got.JSON) != `{"a": 2}` {
		t.Errorf("a refused replace changed the JSON to %s", got.JSON)
	}
	if err := s.ReplaceDesign(ctx, id+100, "", []byte(`{}`)); !errors.Is(err, store.ErrNotFound) {
		t.Errorf("replacing a missing design: %v, want store.ErrNotFound", err)
	}
}

// TestDuplicateCellName checks that a copy's name says it is a copy and
// not a demo cell, and that two copies never share a name, so that pick
// lists show no two identical names.
func testDuplicateCellName(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s := open(t)
	demos := store.DemoCells()
	if err := s.SeedDemo(ctx, demos); err != nil {
		t.Fatal(err)
	}
	demo := demos[0]
	base := strings.TrimSuffix(demo.Name, store.DemoMark)
	if base == demo.Name {
		t.Fatalf("demo cell name %q does not end in the demo mark %q", demo.Name, store.DemoMark)
	}
	long := testCell("long-name", 300)
	long.Name = strings.Repeat("é", 200) // the most a name may have
	if err := s.CreateCell(ctx, long); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name, id, want string
	}{
		{"first copy of a demo cell", demo.ID, base + " (copy)"},
		{"second copy of a demo cell", demo.ID, base + " (copy 2)"},
		{"copy of the copy", demo.ID + "-copy", base + " (copy) (copy)"},
		{"copy of a full-length name", "long-name", strings.Repeat("é", 193) + " (copy)"},
	}
	for _, tt := range tests {
		dup, err := s.DuplicateCell(ctx, tt.id, "")
		if err != nil {
			t.Fatalf("%s: %v", tt.name, err)
		}
		if dup.Cell.Name != tt.want || dup.Cell.Source == "demo" {
			t.Errorf("%s: name %q, source %q; want %q, not demo", tt.name, dup.Cell.Name, dup.Cell.Source, tt.want)
		}
		if strings.Contains(dup.Cell.Name, "demo, invented") {
			t.Errorf("%s: the copy %q still calls itself a demo", tt.name, dup.Cell.Name)
		}
	}
	all, err := s.ListCells(ctx, store.CellFilter{})
	if err != nil {
		t.Fatal(err)
	}
	names := map[string]string{}
	for _, r := range all {
		if other, seen := names[r.Cell.Name]; seen {
			t.Errorf("cells %s and %s share the name %q", other, r.Cell.ID, r.Cell.Name)
		}
		names[r.Cell.Name] = r.Cell.ID
		if r.ReadOnly != strings.HasSuffix(r.Cell.Name, store.DemoMark) {
			t.Errorf("cell %s %q: read-only %v, but its name says otherwise", r.Cell.ID, r.Cell.Name, r.ReadOnly)
		}
	}
}

// exportedCSV is the whole library exported as CSV, with edit applied to
// each row (a map from column name to value) before it is written back.
func exportedCSV(t *testing.T, s store.Store, edit func(row map[string]string)) string {
	t.Helper()
	rs, err := s.ListCells(context.Background(), store.CellFilter{})
	if err != nil {
		t.Fatal(err)
	}
	cells := make([]sizing.Cell, len(rs))
	for i, r := range rs {
		cells[i] = r.Cell
	}
	var out bytes.Buffer
	if err := store.ExportCellsCSV(&out, cells); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&out).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	w.Write(recs[0])
	for _, rec := range recs[1:] {
		row := map[string]string{}
		for i, h := range recs[0] {
			row[h] = rec[i]
		}
		edit(row)
		for i, h := range recs[0] {
			rec[i] = row[h]
		}
		w.Write(rec)
	}
	w.Flush()
	return b.String()
}

// TestImportUpsert checks that the library's own CSV export imports back
// in upsert mode, updating the user cells it changes, and that a changed
// demo cell is refused by id while the library stays as it was.
func testImportUpsert(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s := open(t)
	demos := store.DemoCells()
	if err := s.SeedDemo(ctx, demos); err != nil {
		t.Fatal(err)
	}
	for _, c := range []sizing.Cell{testCell("mine-a", 100), testCell("mine-b", 300)} {
		if err := s.CreateCell(ctx, c); err != nil {
			t.Fatal(err)
		}
	}
	n := len(demos) + 2
	unchanged := func(map[string]string) {}

	// Add mode (the default): every row's id is in the library.
	rep, err := s.ImportCellsCSV(ctx, strings.NewReader(exportedCSV(t, s, unchanged)), store.ImportAdd)
	if err != nil || rep.Imported || rep.Rejected != n || !strings.Contains(rep.Rows[0].Reason, "upsert") {
		t.Fatalf("add mode: imported %v, %d rejected of %d, first reason %q, %v; want all refused, naming upsert",
			rep.Imported, rep.Rejected, n, rep.Rows[0].Reason, err)
	}

	// Upsert: mine-a gets a new ESR (3 mΩ) and a new name, a new row is
	// added, the demo rows come back as exported.
	csvText := exportedCSV(t, s, func(row map[string]string) {
		if row["id"] == "mine-a" {
			row["esr_ohm"], row["name"] = "0.003", "mine A, remeasured"
		}
	}) + "mine-c,new cell,,2.7,,50,,,0.02,,,,,,,,,,,,,,,,,,,\r\n"
	rep, err = s.ImportCellsCSV(ctx, strings.NewReader(csvText), store.ImportUpsert)
	if err != nil || !rep.Imported {
		t.Fatalf("upsert: %+v, %v", rep, err)
	}
	// Two user cells updated, one added; the demo rows are left as they are.
	if rep.Updated != 2 || rep.Added != 1 || rep.Accepted != n+1 {
		t.Errorf("upsert: %d updated, %d added, %d accepted; want 2, 1, %d", rep.Updated, rep.Added, rep.Accepted, n+1)
	}
	a, _ := s.GetCell(ctx, "mine-a")
	if a.Cell.ESROhm != 0.003 || a.Cell.Name != "mine A, remeasured" {
		t.Errorf("mine-a after upsert: ESR %g Ω, name %q; want 0.003 Ω, the new name", a.Cell.ESROhm, a.Cell.Name)
	}
	if c, err := s.GetCell(ctx, "mine-c"); err != nil || c.Cell.CapacitanceF != 50 {
		t.Errorf("mine-c after upsert: %+v, %v", c.Cell, err)
	}
	for _, row := range rep.Rows {
		want := store.ActionUpdated
		switch {
		case row.ID == "mine-c":
			want = store.ActionAdded
		case strings.HasPrefix(row.ID, "mine-"):
		default:
			want = store.ActionUnchanged
		}
		if row.Action != want {
			t.Errorf("row %d (%s): action %q, want %q", row.Line, row.ID, row.Action, want)
		}
	}

	// A changed demo row is refused by id and nothing is written.
	demo := demos[0]
	csvText = exportedCSV(t, s, func(row map[string]string) {
		switch row["id"] {
		case demo.ID:
			row["esr_ohm"] = "0.5"
		case "mine-b":
			row["name"] = "should not be written"
		}
	})
	rep, err = s.ImportCellsCSV(ctx, strings.NewReader(csvText), store.ImportUpsert)
	if err != nil || rep.Imported || rep.Rejected != 1 {
		t.Fatalf("upsert of a changed demo cell: imported %v, %d rejected, %v; want refused, 1 rejected", rep.Imported, rep.Rejected, err)
	}
	for _, row := range rep.Rows {
		if row.ID == demo.ID && !strings.Contains(row.Reason, fmt.Sprintf("id %q is a built-in demo cell, which is read-only", demo.ID)) {
			t.Errorf("demo row reason %q, want it to name the id and say demo cells are read-only", row.Reason)
		}
	}
	if d, _ := s.GetCell(ctx, demo.ID); d.Cell.ESROhm != demo.ESROhm || !d.ReadOnly {
		t.Errorf("demo cell after the refused import: ESR %g Ω, read-only %v; want %g Ω, read-only", d.Cell.ESROhm, d.ReadOnly, demo.ESROhm)
	}
	if b, _ := s.GetCell(ctx, "mine-b"); b.Cell.Name != "test cell mine-b" {
		t.Errorf("mine-b after the refused import is named %q: the import was not all or nothing", b.Cell.Name)
	}

	if _, err := store.ParseImportMode("merge"); !errors.Is(err, store.ErrInvalid) {
		t.Errorf("store.ParseImportMode(merge) = %v, want store.ErrInvalid", err)
	}
}

// TestBadCellCorpus: every bad cell file in testdata/bad/cells (CSV and
// JSON imports) is refused with a file error or a rejected row that says
// why in plain words, never naming a Go type, and imports nothing.
func testBadCellCorpus(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	csvs, _ := filepath.Glob("../../../testdata/bad/cells/*.csv")
	jsons, _ := filepath.Glob("../../../testdata/bad/cells/*.json")
	if len(csvs) < 5 || len(jsons) < 5 {
		t.Fatalf("only %d bad cell CSV files and %d JSON files", len(csvs), len(jsons))
	}
	s := open(t)
	for _, f := range append(csvs, jsons...) {
		fh, err := os.Open(f)
		if err != nil {
			t.Fatal(err)
		}
		var rep store.ImportReport
		if strings.HasSuffix(f, ".json") {
			rep, err = s.ImportCellsJSON(ctx, fh, store.ImportAdd)
		} else {
			rep, err = s.ImportCellsCSV(ctx, fh, store.ImportAdd)
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
	if all, _ := s.ListCells(ctx, store.CellFilter{}); len(all) != 0 {
		t.Errorf("%d cells imported from bad files", len(all))
	}
}

// goTypeName matches the wording of encoding/json's errors, which name Go
// types (json.RawMessage, sizing.Cell, float64) that a user never sees.
var goTypeName = regexp.MustCompile(`Go (value|struct)|of type|json\.|sizing\.|float64|\[\]|unmarshal`)

// A cells JSON file of the wrong shape is refused as a whole with what the
// shape should be, and a cell of the wrong shape or with a value of the
// wrong kind is a rejected row naming the key, all in plain words.
func testImportCellsJSONShapes(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s := open(t)
	for _, c := range []struct {
		name, in string
		// file is in the file's error, row in the first row's reason.
		file, row string
	}{
		{"one cell, not a list", `{"id":"x","rated_v":2.7}`, "looks like a single cell; put it in a list, [ {…} ]", ""},
		{"cells an object", `{"cells": {"a": 1}}`, `has "cells" as a JSON object, not a list`, ""},
		{"an object without cells", `{"items": []}`, `without a "cells" key`, ""},
		{"a key beside cells", `{"cells": [], "version": 1}`, `has the key "version" beside "cells"`, ""},
		{"a string", `"cells"`, "is a JSON string, not a list of cells", ""},
		{"null", `null`, "is null, not a list of cells", ""},
		{"empty", " \n", "is empty", ""},
		{"not JSON", "[\n  {\"id\": x}\n]", "is not valid JSON at line 2, column 10", ""},
		{"truncated", `[{"id": "a"`, "ends too early", ""},
		{"a number for a cell", `[42]`, "", "must be a cell, an object {"},
		{"a list for a cell", `[[]]`, "", "not a JSON list"},
		{"null for a cell", `[null]`, "", "not null"},
		{"text for a number", `[{"id":"a","rated_v":"2.7","capacitance_f":10,"esr_ohm":0.1}]`, "", "rated_v: must be a number, not a JSON string"},
		{"an object for a number", `{"cells":[{"id":"a","rated_v":{},"capacitance_f":10,"esr_ohm":0.1}]}`, "", "rated_v: must be a number, not a JSON object"},
		{"a number for text", `[{"id":7,"rated_v":2.7,"capacitance_f":10,"esr_ohm":0.1}]`, "", "id: must be a string, not a JSON number"},
		{"a number too large", `[{"id":"a","rated_v":1e400,"capacitance_f":10,"esr_ohm":0.1}]`, "", "rated_v: is too large a number (1e400)"},
		{"unknown key", `[{"id":"a","rated_v":2.7,"capacitance_f":10,"esr_ohm":0.1,"esr":1}]`, "", `esr: is not a cell key`},
	} {
		rep, err := s.ImportCellsJSON(ctx, strings.NewReader(c.in), store.ImportAdd)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		reason := ""
		if len(rep.Rows) > 0 {
			reason = rep.Rows[0].Reason
		}
		if rep.Imported || !strings.Contains(rep.Error, c.file) || !strings.Contains(reason, c.row) {
			t.Errorf("%s: imported %v, file %q, row %q; want file %q, row %q", c.name, rep.Imported, rep.Error, reason, c.file, c.row)
		}
		if c.file != "" && !strings.Contains(rep.Error, store.CellsFileShape) && c.file != "ends too early" && !strings.HasPrefix(c.file, "is not valid JSON") {
			t.Errorf("%s: %q does not say what a cells JSON file is", c.name, rep.Error)
		}
		if goTypeName.MatchString(rep.Error + reason) {
			t.Errorf("%s: a Go type in %q", c.name, rep.Error+reason)
		}
	}
}

// testVersions: a cell and a design are at version 1 when written first
// and one more at each change; a change made on an older version is
// refused with the current one and changes nothing; 0 changes whatever
// the version.
func testVersions(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s := open(t)
	c := testCell("versioned", 100)
	if err := s.CreateCell(ctx, c); err != nil {
		t.Fatal(err)
	}
	r, _ := s.GetCell(ctx, c.ID)
	if r.Version != 1 {
		t.Fatalf("a new cell at version %d, want 1", r.Version)
	}
	c.Name = "first edit"
	v, err := s.UpdateCellIf(ctx, c, 1)
	if err != nil || v != 2 {
		t.Fatalf("edit at version 1: version %d, %v; want 2", v, err)
	}
	// A second engineer still holding version 1.
	c.Name = "second edit, on the old copy"
	_, err = s.UpdateCellIf(ctx, c, 1)
	var stale *store.StaleError
	if !errors.As(err, &stale) || !errors.Is(err, store.ErrStale) || stale.Current != 2 {
		t.Fatalf("edit on version 1 after version 2: %v; want a StaleError at version 2", err)
	}
	if store.Unavailable(err) || store.Busy(err) || store.StorageFault(err) != "" {
		t.Errorf("a stale edit is classified as a database failure: %v", err)
	}
	if err := s.DeleteCellIf(ctx, "no-such-cell", 1); !errors.Is(err, store.ErrNotFound) || store.Unavailable(err) {
		t.Errorf("delete of a missing cell: %v; want only not found", err)
	}
	if r, _ := s.GetCell(ctx, c.ID); r.Cell.Name != "first edit" || r.Version != 2 {
		t.Errorf("after the refused edit: %q at version %d; want the first edit at 2", r.Cell.Name, r.Version)
	}
	if err := s.DeleteCellIf(ctx, c.ID, 1); !errors.As(err, &stale) || stale.Current != 2 {
		t.Errorf("delete on version 1: %v; want stale at 2", err)
	}
	if err := s.UpdateCell(ctx, c); err != nil { // unconditional
		t.Fatal(err)
	}
	if err := s.DeleteCellIf(ctx, c.ID, 3); err != nil {
		t.Errorf("delete on the current version 3: %v", err)
	}
	if _, err := s.UpdateCellIf(ctx, c, 3); !errors.Is(err, store.ErrNotFound) {
		t.Errorf("edit of a deleted cell: %v; want not found", err)
	}

	id, err := s.SaveDesign(ctx, "versioned design", []byte(`{"v":1}`))
	if err != nil {
		t.Fatal(err)
	}
	d, _ := s.GetDesign(ctx, id)
	if d.Version != 1 {
		t.Fatalf("a new design at version %d, want 1", d.Version)
	}
	if v, err := s.ReplaceDesignIf(ctx, id, "", []byte(`{"v":2}`), 1); err != nil || v != 2 {
		t.Fatalf("replace at version 1: %d, %v; want 2", v, err)
	}
	if _, err := s.ReplaceDesignIf(ctx, id, "", []byte(`{"v":"lost"}`), 1); !errors.As(err, &stale) || stale.Current != 2 {
		t.Fatalf("replace on version 1 after 2: %v; want stale at 2", err)
	}
	if v, err := s.RenameDesignIf(ctx, id, "renamed", 2); err != nil || v != 3 {
		t.Fatalf("rename at version 2: %d, %v; want 3", v, err)
	}
	if _, err := s.RenameDesignIf(ctx, id, "lost", 2); !errors.As(err, &stale) || stale.Current != 3 {
		t.Errorf("rename on version 2 after 3: %v; want stale at 3", err)
	}
	if err := s.DeleteDesignIf(ctx, id, 2); !errors.As(err, &stale) {
		t.Errorf("delete on version 2 after 3: %v; want stale", err)
	}
	d, _ = s.GetDesign(ctx, id)
	if d.Name != "renamed" || string(d.JSON) != `{"v":2}` || d.Version != 3 {
		t.Errorf("after the refused changes: %q %s at version %d; want renamed {\"v\":2} at 3", d.Name, d.JSON, d.Version)
	}
	list, _ := s.ListDesigns(ctx)
	if len(list) != 1 || list[0].Version != 3 {
		t.Errorf("the list gives %+v; want one design at version 3", list)
	}
	if err := s.DeleteDesignIf(ctx, id, 3); err != nil {
		t.Errorf("delete at the current version: %v", err)
	}
}

// testConcurrentEdits: eight editors each read a design's version and
// write on it at once; exactly the writes whose version was still current
// succeed, every other is refused as stale, and the final version counts
// the successes: no update is lost.
func testConcurrentEdits(t *testing.T, open Factory) {
	t.Parallel()
	ctx := context.Background()
	s := open(t)
	id, err := s.SaveDesign(ctx, "contested", []byte(`{}`))
	if err != nil {
		t.Fatal(err)
	}
	const editors, rounds = 8, 5
	var mu sync.Mutex
	won, lost := 0, 0
	var wg sync.WaitGroup
	for e := range editors {
		wg.Go(func() {
			for r := range rounds {
				d, err := s.GetDesign(ctx, id)
				if err != nil {
					t.Error(err)
					return
				}
				_, err = s.ReplaceDesignIf(ctx, id, "", []byte(fmt.Sprintf(`{"editor":%d,"round":%d}`, e, r)), d.Version)
				mu.Lock()
				switch {
				case err == nil:
					won++
				case errors.Is(err, store.ErrStale):
					lost++
				default:
					t.Errorf("editor %d: %v", e, err)
				}
				mu.Unlock()
			}
		})
	}
	wg.Wait()
	d, _ := s.GetDesign(ctx, id)
	if won+lost != editors*rounds || d.Version != int64(1+won) || won == 0 {
		t.Errorf("%d writes won, %d refused, final version %d; want %d in all and version 1 + won", won, lost, d.Version, editors*rounds)
	}
}
