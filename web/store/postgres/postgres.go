// Package postgres keeps capbank's library in a PostgreSQL database shared
// by any number of capbank instances (github.com/jackc/pgx/v5 and its
// pool). It is the backend of capbank/web/store for a department.
//
// The schema is a numbered list of embedded SQL migrations, recorded in
// schema_migrations and applied at open while the instance holds a
// PostgreSQL advisory lock (pg_advisory_lock) keyed by the schema, so that
// instances starting together migrate once: the first applies them, the
// others wait and find nothing left to do.
//
// Every write is one SERIALIZABLE transaction. When PostgreSQL refuses one
// because it conflicted with another instance's write (serialization
// failure, deadlock, or a unique key taken meanwhile) the whole
// transaction runs again, up to maxAttempts times; nothing is ever half
// written. A database that cannot be reached is store.ErrUnavailable.
package postgres

import (
	"context"
	"embed"
	"errors"
	"fmt"
	"math/rand/v2"
	"strconv"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"

	"capbank/web/store"
)

//go:embed migrations/*.sql
var migrationFiles embed.FS

// DB is an open capbank PostgreSQL database: the store.Store over it.
type DB struct {
	store.Store
	b *backend
}

type backend struct {
	pool *pgxpool.Pool
	desc string
}

// maxAttempts bounds how often a write that conflicted is run again.
const maxAttempts = 20

// IsURL reports whether s names a PostgreSQL database (postgres:// or
// postgresql://).
func IsURL(s string) bool {
	return strings.HasPrefix(s, "postgres://") || strings.HasPrefix(s, "postgresql://")
}

// Open connects to the database at url (postgres://…; a search_path
// parameter selects the schema) and applies any migrations it lacks.
func Open(ctx context.Context, url string) (*DB, error) {
	b, err := connect(ctx, url)
	if err != nil {
		return nil, err
	}
	if err := b.migrate(ctx); err != nil {
		b.Close()
		return nil, err
	}
	return &DB{Store: store.New(b), b: b}, nil
}

// Migrate connects to the database at url, applies any migrations it lacks
// and returns the schema version.
func Migrate(ctx context.Context, url string) (int, error) {
	db, err := Open(ctx, url)
	if err != nil {
		return 0, err
	}
	defer db.Close()
	return db.SchemaVersion(ctx)
}

func connect(ctx context.Context, url string) (*backend, error) {
	cfg, err := pgxpool.ParseConfig(url)
	if err != nil {
		// pgx's message may quote the URL; say what is wrong without it.
		return nil, fmt.Errorf("%w: the database URL is not a PostgreSQL connection URL (postgres://USER@HOST:PORT/DATABASE)", store.ErrInvalid)
	}
	desc := fmt.Sprintf("postgres://%s@%s:%d/%s", cfg.ConnConfig.User, cfg.ConnConfig.Host, cfg.ConnConfig.Port, cfg.ConnConfig.Database)
	if sp := cfg.ConnConfig.RuntimeParams["search_path"]; sp != "" {
		desc += "?search_path=" + sp
	}
	pool, err := pgxpool.NewWithConfig(ctx, cfg)
	if err != nil {
		return nil, fmt.Errorf("store: connect to %s: %w", desc, classify(err))
	}
	b := &backend{pool: pool, desc: desc}
	if err := b.Ping(ctx); err != nil {
		pool.Close()
		return nil, fmt.Errorf("store: connect to %s: %w", desc, err)
	}
	return b, nil
}

func (b *backend) Close() error     { b.pool.Close(); return nil }
func (b *backend) Describe() string { return b.desc }

// Ping checks that the database answers a query.
func (b *backend) Ping(ctx context.Context) error {
	var one int
	return classify(b.pool.QueryRow(ctx, `SELECT 1`).Scan(&one))
}

// SchemaVersion returns the highest migration applied.
func (b *backend) SchemaVersion(ctx context.Context) (int, error) {
	var v *int64
	if err := b.pool.QueryRow(ctx, `SELECT MAX(version) FROM schema_migrations`).Scan(&v); err != nil {
		return 0, classify(err)
	}
	if v == nil {
		return 0, nil
	}
	return int(*v), nil
}

// migrate applies the migrations the schema lacks, holding an advisory
// lock keyed by the schema's name on one connection meanwhile.
func (b *backend) migrate(ctx context.Context) error {
	ms, err := store.Migrations(migrationFiles, "migrations")
	if err != nil {
		return err
	}
	conn, err := b.pool.Acquire(ctx)
	if err != nil {
		return fmt.Errorf("store: migrate: %w", classify(err))
	}
	defer conn.Release()
	const key = `hashtext('capbank schema migrations in ' || current_schema())`
	if _, err := conn.Exec(ctx, `SELECT pg_advisory_lock(`+key+`)`); err != nil {
		return fmt.Errorf("store: migrate: waiting for the migration lock: %w", classify(err))
	}
	defer conn.Exec(context.WithoutCancel(ctx), `SELECT pg_advisory_unlock(`+key+`)`)
	var schema *string
	if err := conn.QueryRow(ctx, `SELECT current_schema()`).Scan(&schema); err != nil {
		return fmt.Errorf("store: migrate: %w", classify(err))
	}
	if schema == nil {
		return fmt.Errorf("%w: the database has no schema to create capbank's tables in: its search_path names none that exists", store.ErrInvalid)
	}
	if _, err := conn.Exec(ctx, `CREATE TABLE IF NOT EXISTS schema_migrations (
		version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)`); err != nil {
		return fmt.Errorf("store: migrations table: %w", classify(err))
	}
	for _, m := range ms {
		err := pgx.BeginFunc(ctx, conn, func(tx pgx.Tx) error {
			var n int
			if err := tx.QueryRow(ctx, `SELECT COUNT(*) FROM schema_migrations WHERE version = $1`, m.Version).Scan(&n); err != nil {
				return err
			}
			if n > 0 {
				return nil
			}
			if _, err := tx.Exec(ctx, m.SQL); err != nil {
				return err
			}
			_, err := tx.Exec(ctx, `INSERT INTO schema_migrations (version, name, applied_at) VALUES ($1, $2, $3)`, m.Version, m.Name, store.Now())
			return err
		})
		if err != nil {
			return fmt.Errorf("store: migration %s: %w", m.Name, classify(err))
		}
	}
	return nil
}

// Reader reads on the pool.
func (b *backend) Reader() store.Querier { return querier{b.pool} }

// Write runs f in one SERIALIZABLE transaction, again (after a short,
// random pause) when PostgreSQL says it conflicted with another write.
func (b *backend) Write(ctx context.Context, f func(store.Querier) error) error {
	var err error
	for attempt := 1; attempt <= maxAttempts; attempt++ {
		var ferr error // f's own error, classified already by querier
		err = pgx.BeginTxFunc(ctx, b.pool, pgx.TxOptions{IsoLevel: pgx.Serializable}, func(tx pgx.Tx) error {
			ferr = f(querier{tx})
			return ferr
		})
		if !retryable(err) {
			if err != nil && err == ferr {
				return err
			}
			return classify(err)
		}
		pause := time.Duration(rand.Int64N(int64(attempt) * int64(5*time.Millisecond)))
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(pause):
		}
	}
	return fmt.Errorf("store: the write conflicted with others %d times: %w (%w)", maxAttempts, store.ErrBusy, err)
}

// FixSequences moves the design id sequence past the ids a library
// restore wrote explicitly.
func (b *backend) FixSequences(ctx context.Context, tx store.Querier) error {
	_, err := tx.Exec(ctx, `SELECT setval(pg_get_serial_sequence('designs', 'id'), COALESCE((SELECT MAX(id) FROM designs), 0) + 1, false)`)
	return err
}

// retryable is a write PostgreSQL refused because of another write at the
// same time: running it again is the remedy.
func retryable(err error) bool {
	var pe *pgconn.PgError
	if !errors.As(err, &pe) {
		return false
	}
	switch pe.Code {
	case "40001", "40P01", "23505": // serialization_failure, deadlock_detected, unique_violation
		return true
	}
	return false
}

// classify maps pgx's errors to the store's: no row to store.ErrNoRows,
// a database that cannot be reached to store.ErrUnavailable, one out of
// resources to store.ErrBusy.
func classify(err error) error {
	if err == nil {
		return nil
	}
	if errors.Is(err, pgx.ErrNoRows) {
		return store.ErrNoRows
	}
	if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
		return err
	}
	if errors.Is(err, store.ErrNoRows) || errors.Is(err, store.ErrBusy) || errors.Is(err, store.ErrUnavailable) {
		return err
	}
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		switch {
		case strings.HasPrefix(pe.Code, "08"), pe.Code == "57P01", pe.Code == "57P02", pe.Code == "57P03":
			return fmt.Errorf("%w: %w", store.ErrUnavailable, err)
		case strings.HasPrefix(pe.Code, "53"), pe.Code == "55P03", pe.Code == "40001", pe.Code == "40P01":
			return fmt.Errorf("%w: %w", store.ErrBusy, err)
		}
		return err
	}
	// Not an answer from PostgreSQL: the connection failed.
	return fmt.Errorf("%w: %w", store.ErrUnavailable, err)
}

// runner is what pgxpool.Pool and pgx.Tx have in common.
type runner interface {
	QueryRow(ctx context.Context, q string, args ...any) pgx.Row
	Query(ctx context.Context, q string, args ...any) (pgx.Rows, error)
	Exec(ctx context.Context, q string, args ...any) (pgconn.CommandTag, error)
}

// querier is a store.Querier over pgx; it numbers the store's ? placeholders.
type querier struct{ r runner }

// numbered rewrites each ? in q as $1, $2… (the store's queries hold no ?
// in literals).
func numbered(q string) string {
	if !strings.Contains(q, "?") {
		return q
	}
	var b strings.Builder
	n := 0
	for _, r := range q {
		if r == '?' {
			n++
			b.WriteString("$" + strconv.Itoa(n))
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

func (q querier) QueryRow(ctx context.Context, s string, args ...any) store.Row {
	return row{q.r.QueryRow(ctx, numbered(s), args...)}
}

func (q querier) Query(ctx context.Context, s string, args ...any) (store.Rows, error) {
	r, err := q.r.Query(ctx, numbered(s), args...)
	if err != nil {
		return nil, classify(err)
	}
	return rows{r}, nil
}

func (q querier) Exec(ctx context.Context, s string, args ...any) (int64, error) {
	tag, err := q.r.Exec(ctx, numbered(s), args...)
	if err != nil {
		return 0, classify(err)
	}
	return tag.RowsAffected(), nil
}

type row struct{ r pgx.Row }

func (r row) Scan(dest ...any) error { return classify(r.r.Scan(dest...)) }

type rows struct{ r pgx.Rows }

func (r rows) Next() bool             { return r.r.Next() }
func (r rows) Scan(dest ...any) error { return classify(r.r.Scan(dest...)) }
func (r rows) Err() error             { return classify(r.r.Err()) }
func (r rows) Close()                 { r.r.Close() }
