// Package sqlite keeps capbank's library in an embedded SQLite database
// (modernc.org/sqlite, pure Go): one file in the data directory, created on
// first open with no set-up step. It is the default backend of
// capbank/web/store.
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
// start is an error for which store.Busy is true: nothing of it was kept,
// and it may be sent again.
package sqlite

import (
	"context"
	"database/sql"
	"embed"
	"errors"
	"fmt"
	"time"

	"capbank/web/store"

	_ "modernc.org/sqlite" // registers the "sqlite" driver
)

//go:embed migrations/*.sql
var migrationFiles embed.FS

// DB is an open capbank SQLite database: the store.Store over it, with
// SQLite's own checks.
type DB struct {
	store.Store
	b *backend
}

// backend is the store.Backend of one database file.
type backend struct {
	path string
	// db reads: any number of connections, each reading its own snapshot
	// of the WAL alongside the writer.
	db *sql.DB
	// writer is the one connection that writes, its transactions begun
	// IMMEDIATE (see the package comment).
	writer *sql.DB
}

// writeWait bounds how long a write waits for its turn on the writer
// connection before it is store.ErrBusy. A write here is a person saving a
// cell or a design, a few milliseconds with its commit synced; busyTimeout
// bounds the wait for another process's write lock once it is its turn.
const (
	writeWait   = 15 * time.Second
	busyTimeout = 5 * time.Second
)

// Open opens (creating if needed) the database file at path and applies
// any migrations it lacks.
func Open(ctx context.Context, path string) (*DB, error) {
	return openTo(ctx, path, 0)
}

// openTo opens the database and migrates it to version upTo (0: the
// latest); tests use it to build older versions.
func openTo(ctx context.Context, dbPath string, upTo int) (*DB, error) {
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
	b := &backend{path: dbPath, db: db, writer: writer}
	if err := b.migrate(ctx, upTo); err != nil {
		b.Close()
		return nil, err
	}
	return &DB{Store: store.New(b), b: b}, nil
}

func openPool(ctx context.Context, dbPath, dsn string) (*sql.DB, error) {
	db, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, fmt.Errorf("store: open %s: %w", dbPath, classify(err))
	}
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		return nil, fmt.Errorf("store: open %s: %w", dbPath, classify(err))
	}
	return db, nil
}

// Close closes the database.
func (b *backend) Close() error { return errors.Join(b.db.Close(), b.writer.Close()) }

// Describe is the database file's path.
func (b *backend) Describe() string { return b.path }

// Ping checks that the file still answers a read.
func (b *backend) Ping(ctx context.Context) error {
	var one int
	return classify(b.db.QueryRowContext(ctx, `SELECT 1`).Scan(&one))
}

// SchemaVersion returns the highest migration applied.
func (b *backend) SchemaVersion(ctx context.Context) (int, error) {
	var v sql.NullInt64
	err := b.db.QueryRowContext(ctx, `SELECT MAX(version) FROM schema_migrations`).Scan(&v)
	return int(v.Int64), classify(err)
}

func (b *backend) migrate(ctx context.Context, upTo int) error {
	if _, err := b.writer.ExecContext(ctx, `CREATE TABLE IF NOT EXISTS schema_migrations (
		version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)`); err != nil {
		return fmt.Errorf("store: migrations table: %w", classify(err))
	}
	ms, err := store.Migrations(migrationFiles, "migrations")
	if err != nil {
		return err
	}
	for _, m := range ms {
		if upTo > 0 && m.Version > upTo {
			break
		}
		err := b.Write(ctx, func(tx store.Querier) error {
			var n int
			if err := tx.QueryRow(ctx, `SELECT COUNT(*) FROM schema_migrations WHERE version = ?`, m.Version).Scan(&n); err != nil {
				return err
			}
			if n > 0 {
				return nil
			}
			if _, err := tx.Exec(ctx, m.SQL); err != nil {
				return err
			}
			_, err := tx.Exec(ctx, `INSERT INTO schema_migrations (version, name, applied_at) VALUES (?, ?, ?)`,
				m.Version, m.Name, store.Now())
			return err
		})
		if err != nil {
			return fmt.Errorf("store: migration %s: %w", m.Name, err)
		}
	}
	return nil
}

// Reader reads on the pool of reading connections.
func (b *backend) Reader() store.Querier { return querier{b.db} }

// Write runs f in one write transaction on the writer connection,
// committing when f returns nil. It waits at most writeWait for the
// connection (other writes of this process before it), then at most
// busyTimeout for the write lock (another process's write); either wait
// that runs out is an error for which store.Busy is true, with nothing
// written.
func (b *backend) Write(ctx context.Context, f func(store.Querier) error) error {
	wait, cancel := context.WithTimeout(ctx, writeWait)
	conn, err := b.writer.Conn(wait)
	cancel()
	if err != nil {
		if ctx.Err() == nil && errors.Is(err, context.DeadlineExceeded) {
			return fmt.Errorf("store: waited %v for the writes before this one: %w", writeWait, store.ErrBusy)
		}
		return classify(err)
	}
	defer conn.Close()
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		return classify(err)
	}
	if err := f(querier{tx}); err != nil {
		tx.Rollback()
		return err
	}
	return classify(tx.Commit())
}

// sqlRunner is what database/sql's DB, Conn and Tx have in common.
type sqlRunner interface {
	QueryRowContext(ctx context.Context, q string, args ...any) *sql.Row
	QueryContext(ctx context.Context, q string, args ...any) (*sql.Rows, error)
	ExecContext(ctx context.Context, q string, args ...any) (sql.Result, error)
}

// querier is a store.Querier over database/sql; SQLite takes ? as it is.
type querier struct{ r sqlRunner }

func (q querier) QueryRow(ctx context.Context, s string, args ...any) store.Row {
	return row{q.r.QueryRowContext(ctx, s, args...)}
}

func (q querier) Query(ctx context.Context, s string, args ...any) (store.Rows, error) {
	r, err := q.r.QueryContext(ctx, s, args...)
	if err != nil {
		return nil, classify(err)
	}
	return rows{r}, nil
}

func (q querier) Exec(ctx context.Context, s string, args ...any) (int64, error) {
	res, err := q.r.ExecContext(ctx, s, args...)
	if err != nil {
		return 0, classify(err)
	}
	n, err := res.RowsAffected()
	return n, classify(err)
}

type row struct{ r *sql.Row }

func (r row) Scan(dest ...any) error { return classify(r.r.Scan(dest...)) }

type rows struct{ r *sql.Rows }

func (r rows) Next() bool             { return r.r.Next() }
func (r rows) Scan(dest ...any) error { return classify(r.r.Scan(dest...)) }
func (r rows) Err() error             { return classify(r.r.Err()) }
func (r rows) Close()                 { r.r.Close() }
