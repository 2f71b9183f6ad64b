package sqlite

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"capbank/sizing"
	"capbank/web/store"
)

// faultCell is an invented cell for the tests below.
func faultCell(id string) sizing.Cell {
	return sizing.Cell{ID: id, Name: "Invented test cell", RatedV: 2.7, CapacitanceF: 100, ESROhm: 0.009}
}

// The writer connection runs in WAL mode with synchronous FULL: SQLite's PRAGMA
// synchronous documentation says a commit under WAL + NORMAL "might roll
// back following a power loss or system crash", and FULL syncs the log at
// each commit so an answered save survives one.
func TestCommitsAreSyncedToDisk(t *testing.T) {
	t.Parallel()
	s := mustOpen(t, filepath.Join(t.TempDir(), store.FileName))
	journal, sync, err := s.durability(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	// SQLite's codes: synchronous 2 is FULL.
	if journal != "wal" || sync != 2 {
		t.Errorf("journal_mode %q, synchronous %d; want wal and 2 (FULL)", journal, sync)
	}
}

// IntegrityCheck is nil on a sound database and names the damage on one
// whose table pages were overwritten.
func TestIntegrityCheck(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), store.FileName)
	s, err := Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 300 {
		if err := s.CreateCell(ctx, faultCell("integrity-"+strings.Repeat("x", i%50)+itoa(i))); err != nil {
			t.Fatal(err)
		}
	}
	if err := s.IntegrityCheck(ctx); err != nil {
		t.Fatalf("a fresh database: %v", err)
	}
	s.Close() // checkpoints the log into the file

	// Zero a run of bytes inside the file's later pages, past the
	// schema on page 1.
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		t.Fatal(err)
	}
	fi, _ := f.Stat()
	if fi.Size() < 8*4096 {
		t.Fatalf("database only %d bytes", fi.Size())
	}
	for off := int64(2 * 4096); off < fi.Size()-4096; off += 3 * 4096 {
		f.WriteAt(make([]byte, 200), off+40)
	}
	f.Close()
	s, err = Open(ctx, path)
	if err != nil {
		t.Fatalf("the damage reached the schema (%v); damage table pages only", err)
	}
	defer s.Close()
	if err := s.IntegrityCheck(ctx); err == nil || !strings.Contains(err.Error(), "integrity check found") {
		t.Errorf("a damaged database: %v, want the problems found", err)
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// A write the disk or the file system refuses is a storage fault, named in
// plain words: a full database (SQLite's max_page_count stands in for a
// full disk: SQLITE_FULL either way) and a read-only one. Other errors are
// not.
func TestStorageFault(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), store.FileName)
	s := mustOpen(t, path)

	full, err := sql.Open("sqlite", "file:"+path+"?_pragma=busy_timeout(5000)")
	if err != nil {
		t.Fatal(err)
	}
	defer full.Close()
	full.SetMaxOpenConns(1) // max_page_count is a connection's setting
	if _, err := full.ExecContext(ctx, `PRAGMA max_page_count = 1`); err != nil {
		t.Fatal(err)
	}
	fs := store.New(&backend{db: full, writer: full})
	var fullErr error
	for i := 0; i < 50 && fullErr == nil; i++ {
		c := faultCell("full-" + itoa(i))
		c.Notes = strings.Repeat("y", 1500)
		fullErr = fs.CreateCell(ctx, c)
	}
	if got := store.StorageFault(fullErr); !strings.Contains(got, "full") {
		t.Errorf("full database: error %v, fault %q", fullErr, got)
	}

	ro, err := sql.Open("sqlite", "file:"+path+"?mode=ro")
	if err != nil {
		t.Fatal(err)
	}
	defer ro.Close()
	roErr := store.New(&backend{db: ro, writer: ro}).CreateCell(ctx, faultCell("read-only"))
	if got := store.StorageFault(roErr); !strings.Contains(got, "read-only") {
		t.Errorf("read-only database: error %v, fault %q", roErr, got)
	}

	// Not storage: a cell that exists, a missing one, a plain error.
	if err := s.CreateCell(ctx, faultCell("twice")); err != nil {
		t.Fatal(err)
	}
	for _, err := range []error{s.CreateCell(ctx, faultCell("twice")), func() error { _, err := s.GetCell(ctx, "none"); return err }(), os.ErrNotExist} {
		if got := store.StorageFault(err); got != "" {
			t.Errorf("%v: fault %q, want none", err, got)
		}
	}
}

// A write that cannot get the write lock within the busy timeout — another
// process holds it — is store.Busy, not a storage fault, and writes nothing.
// (The writer here waits 50 ms instead of the store's five seconds.)
func TestBusyWrite(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), store.FileName)
	s := mustOpen(t, path)

	holder, err := sql.Open("sqlite", "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	defer holder.Close()
	conn, err := holder.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	if _, err := conn.ExecContext(ctx, `BEGIN IMMEDIATE`); err != nil {
		t.Fatal(err)
	}
	defer conn.ExecContext(ctx, `ROLLBACK`)

	impatient, err := sql.Open("sqlite", "file:"+path+"?_pragma=busy_timeout(50)&_txlock=immediate")
	if err != nil {
		t.Fatal(err)
	}
	defer impatient.Close()
	busy := store.New(&backend{db: impatient, writer: impatient})
	err = busy.CreateCell(ctx, faultCell("while-locked"))
	if !store.Busy(err) || store.StorageFault(err) != "" {
		t.Errorf("write while another connection holds the lock: %v; store.Busy %v, fault %q", err, store.Busy(err), store.StorageFault(err))
	}
	if _, err := s.GetCell(ctx, "while-locked"); !errors.Is(err, store.ErrNotFound) {
		t.Errorf("the refused cell: %v, want not found", err)
	}
	for _, err := range []error{nil, store.ErrNotFound, os.ErrNotExist} {
		if store.Busy(err) {
			t.Errorf("store.Busy(%v) is true", err)
		}
	}
	if !store.Busy(fmt.Errorf("saving: %w", store.ErrBusy)) {
		t.Error("store.Busy(store.ErrBusy wrapped) is false")
	}
}
