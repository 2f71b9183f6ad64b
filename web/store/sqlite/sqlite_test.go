package sqlite

import (
	"context"
	"path/filepath"
	"testing"

	"capbank/web/store"
	"capbank/web/store/storetest"
)

func mustOpen(t *testing.T, path string) *DB {
	t.Helper()
	s, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	return s
}

// reopenable is a test's store with the path it lives at.
type reopenable struct {
	*DB
	path string
}

func (r reopenable) Reopen(t *testing.T) store.Store { return reopenable{mustOpen(t, r.path), r.path} }

// TestSuite runs the store's one test suite on SQLite files.
func TestSuite(t *testing.T) {
	storetest.Run(t, func(t *testing.T) store.Store {
		path := filepath.Join(t.TempDir(), store.FileName)
		return reopenable{mustOpen(t, path), path}
	})
}

// latest is the number of the last migration.
const latest = 3

func TestOpenFreshDatabase(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	s := mustOpen(t, filepath.Join(t.TempDir(), store.FileName))
	v, err := s.SchemaVersion(ctx)
	if err != nil || v != latest {
		t.Fatalf("schema version %d, %v; want %d", v, err, latest)
	}
	var mode string
	var fk int
	if err := s.b.db.QueryRowContext(ctx, `PRAGMA journal_mode`).Scan(&mode); err != nil || mode != "wal" {
		t.Errorf("journal_mode %q (%v), want wal", mode, err)
	}
	if err := s.b.db.QueryRowContext(ctx, `PRAGMA foreign_keys`).Scan(&fk); err != nil || fk != 1 {
		t.Errorf("foreign_keys %d (%v), want 1", fk, err)
	}
}

func TestMigrateFromVersion1(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), store.FileName)
	old, err := openTo(ctx, path, 1)
	if err != nil {
		t.Fatal(err)
	}
	if v, _ := old.SchemaVersion(ctx); v != 1 {
		t.Fatalf("old database at version %d, want 1", v)
	}
	// A cell as version 1 wrote it: no version column yet.
	if _, err := old.b.writer.ExecContext(ctx, `INSERT INTO cells (id, name, rated_v, capacitance_f, source, read_only, cell_json, created_at, updated_at)
		VALUES ('kept', 'Invented test cell', 2.7, 100, '', 0, '{"id":"kept","name":"Invented test cell","rated_v":2.7,"capacitance_f":100,"esr_ohm":0.009}', ?, ?)`, store.Now(), store.Now()); err != nil {
		t.Fatal(err)
	}
	old.Close()
	s := mustOpen(t, path)
	if v, _ := s.SchemaVersion(ctx); v != latest {
		t.Fatalf("migrated to %d, want %d", v, latest)
	}
	if r, err := s.GetCell(ctx, "kept"); err != nil || r.Version != 1 {
		t.Errorf("cell after migration: version %d, %v; want kept at version 1", r.Version, err)
	}
	if _, err := s.SaveDesign(ctx, "after migration", []byte(`{}`)); err != nil {
		t.Errorf("designs table missing after migration: %v", err)
	}
	// Opening again applies nothing twice.
	s.Close()
	s2 := mustOpen(t, path)
	var n int
	s2.b.db.QueryRowContext(ctx, `SELECT COUNT(*) FROM schema_migrations`).Scan(&n)
	if n != latest {
		t.Errorf("%d migration records, want %d", n, latest)
	}
}
