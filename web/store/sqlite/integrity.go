package sqlite

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"strings"

	"capbank/web/store"

	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// IntegrityCheck runs SQLite's PRAGMA integrity_check over the whole
// database: nil when SQLite answers "ok", else an error listing what it
// found (at most the first ten problems).
func (d *DB) IntegrityCheck(ctx context.Context) error {
	rows, err := d.b.db.QueryContext(ctx, `PRAGMA integrity_check(10)`)
	if err != nil {
		return fmt.Errorf("store: integrity check: %w", err)
	}
	defer rows.Close()
	var found []string
	for rows.Next() {
		var line string
		if err := rows.Scan(&line); err != nil {
			return fmt.Errorf("store: integrity check: %w", err)
		}
		found = append(found, line)
	}
	if err := rows.Err(); err != nil {
		return fmt.Errorf("store: integrity check: %w", err)
	}
	if len(found) == 1 && found[0] == "ok" {
		return nil
	}
	return fmt.Errorf("store: integrity check found: %s", strings.Join(found, "; "))
}

// durability is what the connection that commits runs with: the journal
// mode and the synchronous level (0 OFF, 1 NORMAL, 2 FULL, 3 EXTRA).
func (d *DB) durability(ctx context.Context) (journal string, synchronous int, err error) {
	conn, err := d.b.writer.Conn(ctx)
	if err != nil {
		return "", 0, err
	}
	defer conn.Close()
	if err := conn.QueryRowContext(ctx, `PRAGMA journal_mode`).Scan(&journal); err != nil {
		return "", 0, err
	}
	err = conn.QueryRowContext(ctx, `PRAGMA synchronous`).Scan(&synchronous)
	return journal, synchronous, err
}

// Classify is classify, for a driver error met outside the store.
func Classify(err error) error { return classify(err) }

// classify maps SQLite's errors to the store's: no row to
// store.ErrNoRows, a lock held too long to store.ErrBusy, a fault of the
// disk or the file system to a *store.StorageError.
func classify(err error) error {
	if err == nil {
		return nil
	}
	if errors.Is(err, sql.ErrNoRows) {
		return store.ErrNoRows
	}
	if reason := storageFault(err); reason != "" {
		return &store.StorageError{Reason: reason, Err: err}
	}
	if busy(err) {
		return fmt.Errorf("%w: %w", store.ErrBusy, err)
	}
	return err
}

// storageFault says in plain words why the database could not be written
// when err is a fault of the disk or the file system rather than of the
// request: the disk is full, the database or its directory is read-only,
// a write failed. It returns "" for any other error. A write that failed
// so was rolled back whole: nothing of it was kept, and what was saved
// before is intact.
func storageFault(err error) string {
	var se *sqlite.Error
	if !errors.As(err, &se) {
		return ""
	}
	switch se.Code() & 0xff { // the primary result code
	case sqlite3.SQLITE_FULL:
		return "the disk holding the data directory is full"
	case sqlite3.SQLITE_IOERR:
		return "the disk would not take the write (it may be full, failing, or over a file-size limit)"
	case sqlite3.SQLITE_READONLY:
		return "the database is read-only: the data directory or the database file is not writable, or its file system is mounted read-only"
	case sqlite3.SQLITE_CANTOPEN:
		return "the database file could not be opened: the data directory may not be writable"
	case sqlite3.SQLITE_PERM:
		return "the operating system refused access to the database file"
	}
	return ""
}

// busy is true when err is a write, or a read, that could not run because
// the database was busy: ErrBusy, or SQLite's SQLITE_BUSY or SQLITE_LOCKED
// (another process held the lock for longer than the busy timeout). A
// write that failed so was rolled back whole: it may simply be sent again.
func busy(err error) bool {
	var se *sqlite.Error
	if !errors.As(err, &se) {
		return false
	}
	switch se.Code() & 0xff {
	case sqlite3.SQLITE_BUSY, sqlite3.SQLITE_LOCKED:
		return true
	}
	return false
}
