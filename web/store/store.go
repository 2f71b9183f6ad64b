// Package store keeps capbank's cell library and saved designs in an
// embedded SQLite database (modernc.org/sqlite, pure Go): one file in the
// data directory, created on first open with no set-up step.
//
// The schema is a numbered list of embedded SQL migrations, applied in order
// at open and recorded in schema_migrations. The database runs in WAL mode
// with foreign keys on; every query takes a context.
//
// Writes queue: every write is one transaction on the store's single
// writer connection, begun IMMEDIATE. In WAL mode a deferred transaction
// that reads first and then writes cannot wait for the write lock — SQLite
// calls the busy handler only for a connection that holds no transaction
// yet, so the upgrade fails at once with SQLITE_BUSY (or
// SQLITE_BUSY_SNAPSHOT when another writer committed since its read) and
// busy_timeout never applies. BEGIN IMMEDIATE takes the write lock first,
// where busy_timeout does apply (another process writing the same file);
// the one writer connection makes this process's own writes wait their
// turn in Go instead of polling SQLite's lock. A write that still cannot
// start is an error for which Busy is true: nothing of it was kept, and it
// may be sent again.
package store

import (
	"context"
	"database/sql"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"path"
	"sort"
	"strconv"
	"strings"
	"time"

	_ "modernc.org/sqlite" // registers the "sqlite" driver
)

//go:embed migrations/*.sql
var migrationFiles embed.FS

// Errors a caller maps to a status: ErrNotFound (404), ErrExists and
// ErrReadOnly (409), ErrInvalid (422), ErrBusy (503, send it again).
var (
	ErrNotFound = errors.New("not found")
	ErrExists   = errors.New("already exists")
	ErrReadOnly = errors.New("read-only")
	ErrInvalid  = errors.New("invalid")
	ErrBusy     = errors.New("the database is busy with other writes")
)

// Store is an open capbank database.
type Store struct {
	// db reads: any number of connections, each reading its own snapshot
	// of the WAL alongside the writer.
	db *sql.DB
	// writer is the one connection that writes, its transactions begun
	// IMMEDIATE (see the package comment).
	writer *sql.DB
}

// writeWait bounds how long a write waits for its turn on the writer
// connection before it is ErrBusy. A write here is a person saving a cell or
// a design, a few milliseconds with its commit synced; busyTimeout bounds
// the wait for another process's write lock once it is its turn.
const (
	writeWait   = 15 * time.Second
	busyTimeout = 5 * time.Second
)

// FileName is the database file's name in the data directory.
const FileName = "capbank.db"

// Open opens (creating if needed) the database file at path and applies
// any migrations it lacks.
func Open(ctx context.Context, path string) (*Store, error) {
	return openTo(ctx, path, 0)
}

// openTo opens the database and migrates it to version upTo (0: the
// latest); tests use it to build older versions.
func openTo(ctx context.Context, dbPath string, upTo int) (*Store, error) {
	// _pragma parameters apply to every connection the pool opens.
	// synchronous(FULL): in WAL mode NORMAL syncs the log only at a
	// checkpoint, so a commit already answered could roll back after a
	// power loss; FULL syncs it at every commit (SQLite, PRAGMA
	// synchronous). Writes here are a person saving a cell or a design.
	// _txlock=immediate: every transaction the writer begins is BEGIN
	// IMMEDIATE (modernc.org/sqlite's DSN parameter).
	dsn := "file:" + dbPath + "?_pragma=journal_mode(WAL)&_pragma=foreign_keys(1)&_pragma=synchronous(FULL)" +
		fmt.Sprintf("&_pragma=busy_timeout(%d)", busyTimeout.Milliseconds())
	// The writer opens first: it creates the file and turns on WAL.
	writer, err := openPool(ctx, dbPath, dsn+"&_txlock=immediate")
	if err != nil {
		return nil, err
	}
	writer.SetMaxOpenConns(1)
	db, err := openPool(ctx, dbPath, dsn)
	if err != nil {
		writer.Close()
		return nil, err
	}
	s := &Store{db: db, writer: writer}
	if err := s.migrate(ctx, upTo); err != nil {
		s.Close()
		return nil, err
	}
	return s, nil
}

func openPool(ctx context.Context, dbPath, dsn string) (*sql.DB, error) {
	db, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, fmt.Errorf("store: open %s: %w", dbPath, err)
	}
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		return nil, fmt.Errorf("store: open %s: %w", dbPath, err)
	}
	return db, nil
}

// Close closes the database.
func (s *Store) Close() error { return errors.Join(s.db.Close(), s.writer.Close()) }

type migration struct {
	version int
	name    string
	sql     string
}

func migrations() ([]migration, error) {
	entries, err := fs.ReadDir(migrationFiles, "migrations")
	if err != nil {
		return nil, err
	}
	var ms []migration
	for _, e := range entries {
		num, _, ok := strings.Cut(e.Name(), "_")
		v, err := strconv.Atoi(num)
		if !ok || err != nil {
			return nil, fmt.Errorf("store: migration %s is not named NNNN_name.sql", e.Name())
		}
		b, err := migrationFiles.ReadFile(path.Join("migrations", e.Name()))
		if err != nil {
			return nil, err
		}
		ms = append(ms, migration{version: v, name: e.Name(), sql: string(b)})
	}
	sort.Slice(ms, func(i, j int) bool { return ms[i].version < ms[j].version })
	return ms, nil
}

// SchemaVersion returns the highest migration applied.
func (s *Store) SchemaVersion(ctx context.Context) (int, error) {
	var v sql.NullInt64
	err := s.db.QueryRowContext(ctx, `SELECT MAX(version) FROM schema_migrations`).Scan(&v)
	return int(v.Int64), err
}

func (s *Store) migrate(ctx context.Context, upTo int) error {
	if _, err := s.writer.ExecContext(ctx, `CREATE TABLE IF NOT EXISTS schema_migrations (
		version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)`); err != nil {
		return fmt.Errorf("store: migrations table: %w", err)
	}
	ms, err := migrations()
	if err != nil {
		return err
	}
	for _, m := range ms {
		if upTo > 0 && m.version > upTo {
			break
		}
		err := s.tx(ctx, func(tx *sql.Tx) error {
			var n int
			if err := tx.QueryRowContext(ctx, `SELECT COUNT(*) FROM schema_migrations WHERE version = ?`, m.version).Scan(&n); err != nil {
				return err
			}
			if n > 0 {
				return nil
			}
			if _, err := tx.ExecContext(ctx, m.sql); err != nil {
				return err
			}
			_, err := tx.ExecContext(ctx, `INSERT INTO schema_migrations (version, name, applied_at) VALUES (?, ?, ?)`,
				m.version, m.name, now())
			return err
		})
		if err != nil {
			return fmt.Errorf("store: migration %s: %w", m.name, err)
		}
	}
	return nil
}

// tx runs f in one write transaction on the writer connection, committing
// when f returns nil. It waits at most writeWait for the connection (other
// writes of this process before it), then at most busyTimeout for the
// write lock (another process's write); either wait that runs out is an
// error for which Busy is true, with nothing written.
func (s *Store) tx(ctx context.Context, f func(*sql.Tx) error) error {
	wait, cancel := context.WithTimeout(ctx, writeWait)
	conn, err := s.writer.Conn(wait)
	cancel()
	if err != nil {
		if ctx.Err() == nil && errors.Is(err, context.DeadlineExceeded) {
			return fmt.Errorf("store: waited %v for the writes before this one: %w", writeWait, ErrBusy)
		}
		return err
	}
	defer conn.Close()
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		return err
	}
	if err := f(tx); err != nil {
		tx.Rollback()
		return err
	}
	return tx.Commit()
}

func now() string { return time.Now().UTC().Format(time.RFC3339Nano) }

func parseTime(s string) time.Time {
	t, _ := time.Parse(time.RFC3339Nano, s)
	return t
}
