package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capbank/sizing"
	"capbank/web/store"
	"capbank/web/store/postgres"
	"capbank/web/store/postgres/pgtest"
	"capbank/web/store/sqlite"
)

// runOK runs capbank with args and fails the test on an error.
func runOK(t *testing.T, args ...string) string {
	t.Helper()
	var stdout, stderr bytes.Buffer
	if err := run(context.Background(), args, &stdout, &stderr); err != nil {
		t.Fatalf("capbank %s: %v\n%s", strings.Join(args, " "), err, stderr.String())
	}
	return stdout.String()
}

// A library moves from SQLite to PostgreSQL and back with export-library
// and import-library without losing a byte: the files exported from each
// are identical, the design files are byte for byte the saved ones, and a
// design saved after the move gets a new id.
func TestLibraryRoundTripSQLitePostgres(t *testing.T) {
	ctx := context.Background()
	url := pgtest.Schema(t)
	dir := t.TempDir()
	from := filepath.Join(dir, "from")
	src, err := sqlite.Open(ctx, filepath.Join(mustMkdir(t, from), store.FileName))
	if err != nil {
		t.Fatal(err)
	}
	if err := src.SeedDemo(ctx, store.DemoCells()); err != nil {
		t.Fatal(err)
	}
	mine := sizing.Cell{ID: "mine", Name: "Invented cell, « ünïcode » & <tags>", RatedV: 2.7, CapacitanceF: 123.456789012345, ESROhm: 0.00731}
	if err := src.CreateCell(ctx, mine); err != nil {
		t.Fatal(err)
	}
	mine.Name += ", edited"
	if err := src.UpdateCell(ctx, mine); err != nil {
		t.Fatal(err)
	}
	// Odd spacing, key order and characters survive byte for byte.
	files := [][]byte{
		[]byte("{\"name\": \"hold-up\",  \"window\": {\"min_v\": 12, \"max_v\": 24},\n \"cells\": [\"demo-2v7-650f\"]}"),
		[]byte(`{"name":"tab	and \u00e9 and é","cells":[]}`),
		[]byte(`{"name":"to be deleted"}`),
	}
	var ids []int64
	for i, f := range files {
		id, err := src.SaveDesign(ctx, "design "+string(rune('A'+i)), f)
		if err != nil {
			t.Fatal(err)
		}
		ids = append(ids, id)
	}
	if err := src.RenameDesign(ctx, ids[0], "design A, renamed"); err != nil {
		t.Fatal(err)
	}
	if err := src.DeleteDesign(ctx, ids[2]); err != nil {
		t.Fatal(err)
	}
	src.Close()

	fromSQLite := filepath.Join(dir, "sqlite.json")
	fromPostgres := filepath.Join(dir, "postgres.json")
	backToSQLite := filepath.Join(dir, "back.json")
	runOK(t, "export-library", "--data", from, fromSQLite)
	if out := runOK(t, "migrate", "--database", url); !strings.Contains(out, "schema at version 3") {
		t.Errorf("migrate says %q; want the schema version 3", out)
	}
	if out := runOK(t, "import-library", "--database", url, fromSQLite); !strings.Contains(out, "2 designs imported") {
		t.Errorf("import-library says %q", out)
	}
	runOK(t, "export-library", "--database", url, fromPostgres)
	back := filepath.Join(dir, "back")
	runOK(t, "import-library", "--data", back, fromPostgres)
	runOK(t, "export-library", "--data", back, backToSQLite)

	a, _ := os.ReadFile(fromSQLite)
	b, _ := os.ReadFile(fromPostgres)
	c, _ := os.ReadFile(backToSQLite)
	if len(a) < 1000 || !bytes.Equal(a, b) || !bytes.Equal(a, c) {
		t.Fatalf("the library files differ (%d, %d, %d bytes)", len(a), len(b), len(c))
	}

	pg, err := postgres.Open(ctx, url)
	if err != nil {
		t.Fatal(err)
	}
	defer pg.Close()
	for i, id := range ids[:2] {
		d, err := pg.GetDesign(ctx, id)
		if err != nil || !bytes.Equal(d.JSON, files[i]) {
			t.Errorf("design %d on PostgreSQL: %q, %v; want byte for byte %q", id, d.JSON, err, files[i])
		}
	}
	if d, _ := pg.GetDesign(ctx, ids[0]); d.Name != "design A, renamed" || d.Version != 2 {
		t.Errorf("design %d: %q at version %d; want the rename at version 2", ids[0], d.Name, d.Version)
	}
	if r, err := pg.GetCell(ctx, "mine"); err != nil || r.Cell.Name != mine.Name || r.Version != 2 || r.Cell.CapacitanceF != mine.CapacitanceF {
		t.Errorf("cell on PostgreSQL: %+v, %v", r, err)
	}
	next, err := pg.SaveDesign(ctx, "after the move", []byte(`{}`))
	if err != nil || next <= ids[1] {
		t.Errorf("a design saved after the move got id %d (%v); want one above %d", next, err, ids[1])
	}
	// A database with designs of its own takes no library file.
	var stderr bytes.Buffer
	if err := run(ctx, []string{"import-library", "--database", url, fromSQLite}, &bytes.Buffer{}, &stderr); err == nil || !strings.Contains(stderr.String(), "new, empty database") {
		t.Errorf("import into a used database: %v, %s; want a refusal", err, stderr.String())
	}
}

func mustMkdir(t *testing.T, dir string) string {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	return dir
}

// CAPBANK_DATABASE_URL selects PostgreSQL as --database does: the log
// names the database without a password, the demo cells are written into
// it, and a cell saved through the server is in the PostgreSQL schema. A
// URL that is not PostgreSQL's is a usage error naming where it came from.
func TestServeDatabaseFromTheEnvironment(t *testing.T) {
	url := pgtest.Schema(t)
	t.Setenv(databaseEnv, url)
	base, stop, logs := startServe(t, "serve", "--addr", "127.0.0.1:0", "--data", t.TempDir())
	status, _, body := post(t, "POST", base+"api/v1/cells", "application/json", crashCell("from-env"), nil)
	if err := stop(); err != nil {
		t.Fatal(err)
	}
	if status != 201 {
		t.Fatalf("POST a cell: %d %s", status, body)
	}
	if l := logs.String(); !strings.Contains(l, `database="postgres://`) || !strings.Contains(l, "search_path=capbank_test_") {
		t.Errorf("the log does not name the PostgreSQL database:\n%s", logs)
	}
	pg, err := postgres.Open(context.Background(), url)
	if err != nil {
		t.Fatal(err)
	}
	defer pg.Close()
	if _, err := pg.GetCell(context.Background(), "from-env"); err != nil {
		t.Errorf("the cell saved through the server: %v", err)
	}
	if _, err := pg.GetCell(context.Background(), store.DemoCells()[0].ID); err != nil {
		t.Errorf("no demo cells in the PostgreSQL database: %v", err)
	}

	t.Setenv(databaseEnv, "mysql://root@db/capbank")
	code, _, stderr := runCapbank(t, context.Background(), "serve", "--addr", "127.0.0.1:0", "--data", t.TempDir())
	if code != 2 || !strings.Contains(stderr, databaseEnv+" must be a PostgreSQL URL") {
		t.Errorf("a MySQL URL: exit %d, stderr %s; want 2 naming %s", code, stderr, databaseEnv)
	}
}
