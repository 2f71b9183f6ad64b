package postgres

import (
	"context"
	"sync"
	"testing"

	"capbank/web/store"
	"capbank/web/store/postgres/pgtest"
	"capbank/web/store/storetest"
)

func mustOpen(t *testing.T, url string) *DB {
	t.Helper()
	s, err := Open(context.Background(), url)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	return s
}

// reopenable is a test's store with the URL of its schema.
type reopenable struct {
	*DB
	url string
}

func (r reopenable) Reopen(t *testing.T) store.Store { return reopenable{mustOpen(t, r.url), r.url} }

// TestSuite runs the store's one test suite on PostgreSQL, each test in
// a schema of its own.
func TestSuite(t *testing.T) {
	storetest.Run(t, func(t *testing.T) store.Store {
		url := pgtest.Schema(t)
		return reopenable{mustOpen(t, url), url}
	})
}

// Three instances opening one fresh schema at once apply each migration
// once: the advisory lock makes the others wait, then find nothing to do.
func TestConcurrentOpenMigratesOnce(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	url := pgtest.Schema(t)
	var wg sync.WaitGroup
	errs := make([]error, 3)
	dbs := make([]*DB, 3)
	for i := range 3 {
		wg.Go(func() { dbs[i], errs[i] = Open(ctx, url) })
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Fatalf("instance %d: %v", i, err)
		}
		defer dbs[i].Close()
	}
	ms, err := store.Migrations(migrationFiles, "migrations")
	if err != nil {
		t.Fatal(err)
	}
	var n, maxV int
	if err := dbs[0].b.pool.QueryRow(ctx, `SELECT COUNT(*), MAX(version) FROM schema_migrations`).Scan(&n, &maxV); err != nil {
		t.Fatal(err)
	}
	// One record per migration file, the last one the highest.
	if n != len(ms) || maxV != ms[len(ms)-1].Version {
		t.Errorf("%d migration records up to version %d; want %d up to %d", n, maxV, len(ms), ms[len(ms)-1].Version)
	}
}
