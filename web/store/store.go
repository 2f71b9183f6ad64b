// Package store is capbank's cell library and saved designs: the Store
// interface the web handlers and the command line use, the records and
// errors they see, the import and export of cells, the built-in demo
// cells, and the one implementation of the library's rules (demo cells are
// read-only, imports are all or nothing, copies are named, versions are
// bumped) over a Backend.
//
// Two backends hold the data: web/store/sqlite, the embedded default (one
// file in the data directory, no set-up), and web/store/postgres, a shared
// PostgreSQL database for several capbank instances. Each writes every
// change as one transaction (Backend.Write) and has its own numbered
// migrations; the rules live here once, so the two cannot drift.
package store

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"path"
	"sort"
	"strconv"
	"strings"
	"time"

	"capbank/sizing"
)

// Errors a caller maps to a status: ErrNotFound (404), ErrExists and
// ErrReadOnly (409), ErrInvalid (422), ErrBusy (503, send it again),
// ErrUnavailable (503, the database cannot be reached), ErrStale (412, the
// record changed since the version the caller read).
var (
	ErrNotFound    = errors.New("not found")
	ErrExists      = errors.New("already exists")
	ErrReadOnly    = errors.New("read-only")
	ErrInvalid     = errors.New("invalid")
	ErrBusy        = errors.New("the database is busy with other writes")
	ErrUnavailable = errors.New("the database cannot be reached")
	ErrStale       = errors.New("changed by someone else")
)

// ErrNoRows is what a backend's Row.Scan returns when the query found no
// row (each backend maps its driver's own to it).
var ErrNoRows = errors.New("store: no row")

// FileName is the SQLite database file's name in the data directory.
const FileName = "capbank.db"

// Row is one row of a query.
type Row interface{ Scan(dest ...any) error }

// Rows are the rows of a query; Close must be called.
type Rows interface {
	Next() bool
	Scan(dest ...any) error
	Err() error
	Close()
}

// Querier runs SQL on a backend: a connection pool for reads, or the
// transaction of a write. Queries are written with ? placeholders; a
// backend whose driver numbers them ($1, $2…) rewrites them. Errors come
// back classified: ErrNoRows, or wrapped in ErrBusy or ErrUnavailable, or a
// *StorageError.
type Querier interface {
	QueryRow(ctx context.Context, q string, args ...any) Row
	Query(ctx context.Context, q string, args ...any) (Rows, error)
	// Exec runs a statement and returns the rows it changed.
	Exec(ctx context.Context, q string, args ...any) (int64, error)
}

// Backend is a database that holds a capbank library.
type Backend interface {
	// Reader runs reads outside any write.
	Reader() Querier
	// Write runs f in one transaction, committed when f returns nil and
	// rolled back whole otherwise. Writes are serialisable: f may be run
	// again when the backend's database says it conflicted with another
	// write, so f must only touch the database.
	Write(ctx context.Context, f func(Querier) error) error
	// Ping checks that the database answers.
	Ping(ctx context.Context) error
	// SchemaVersion is the highest migration applied.
	SchemaVersion(ctx context.Context) (int, error)
	// Describe names the database for the log, without any password.
	Describe() string
	Close() error
}

// StorageError is a write the disk or the file system refused (full,
// read-only, failing); Reason says so in plain words.
type StorageError struct {
	Reason string
	Err    error
}

func (e *StorageError) Error() string { return e.Reason + ": " + e.Err.Error() }
func (e *StorageError) Unwrap() error { return e.Err }

// StorageFault says in plain words why the database could not be written
// when err is a fault of the disk or the file system rather than of the
// request, and "" for any other error. A write that failed so was rolled
// back whole: nothing of it was kept.
func StorageFault(err error) string {
	var se *StorageError
	if errors.As(err, &se) {
		return se.Reason
	}
	return ""
}

// Busy is true when err is a write or a read that could not run because
// the database was busy: nothing of it was kept and it may be sent again.
func Busy(err error) bool { return errors.Is(err, ErrBusy) }

// Unavailable is true when err is a database that could not be reached:
// nothing of the write was kept.
func Unavailable(err error) bool { return errors.Is(err, ErrUnavailable) }

// Store is the cell library and the saved designs, as the web handlers
// and the command line use them. Versions: every cell and design has one,
// 1 when written first and one more at each change; a write given
// ifVersion > 0 is refused with a *StaleError (ErrStale) when the record's
// version is another, and ifVersion 0 writes whatever the version.
type Store interface {
	SeedDemo(ctx context.Context, cells []sizing.Cell) error
	ListCells(ctx context.Context, f CellFilter) ([]CellRecord, error)
	GetCell(ctx context.Context, id string) (CellRecord, error)
	Lookup(ctx context.Context) func(id string) (sizing.Cell, bool)
	CreateCell(ctx context.Context, c sizing.Cell) error
	UpdateCell(ctx context.Context, c sizing.Cell) error
	UpdateCellIf(ctx context.Context, c sizing.Cell, ifVersion int64) (int64, error)
	DeleteCell(ctx context.Context, id string) error
	DeleteCellIf(ctx context.Context, id string, ifVersion int64) error
	DuplicateCell(ctx context.Context, id, newID string) (CellRecord, error)
	ImportCellsCSV(ctx context.Context, r io.Reader, mode ImportMode) (ImportReport, error)
	ImportCellsJSON(ctx context.Context, r io.Reader, mode ImportMode) (ImportReport, error)

	SaveDesign(ctx context.Context, name string, designJSON []byte) (int64, error)
	GetDesign(ctx context.Context, id int64) (DesignRecord, error)
	ListDesigns(ctx context.Context) ([]DesignRecord, error)
	UpdateDesign(ctx context.Context, id int64, designJSON []byte) error
	ReplaceDesign(ctx context.Context, id int64, name string, designJSON []byte) error
	ReplaceDesignIf(ctx context.Context, id int64, name string, designJSON []byte, ifVersion int64) (int64, error)
	RenameDesign(ctx context.Context, id int64, name string) error
	RenameDesignIf(ctx context.Context, id int64, name string, ifVersion int64) (int64, error)
	DeleteDesign(ctx context.Context, id int64) error
	DeleteDesignIf(ctx context.Context, id int64, ifVersion int64) error
	DuplicateDesign(ctx context.Context, id int64, name string) (int64, error)

	// Library is every cell and every design, for export-library.
	Library(ctx context.Context) (LibraryFile, error)
	// RestoreLibrary writes a library file into an empty store, keeping
	// ids, names, times and versions.
	RestoreLibrary(ctx context.Context, lib LibraryFile) error

	Ping(ctx context.Context) error
	SchemaVersion(ctx context.Context) (int, error)
	Describe() string
	Close() error
}

// StaleError is a write refused because the record changed since the
// version the caller read: Current is its version now.
type StaleError struct {
	What    string
	Current int64
}

func (e *StaleError) Error() string {
	return fmt.Sprintf("%s was changed by someone else since you opened it (it is at version %d now)", e.What, e.Current)
}

func (e *StaleError) Unwrap() error { return ErrStale }

// New is the library kept in backend b.
func New(b Backend) Store { return &library{b: b} }

// library implements Store over a Backend.
type library struct{ b Backend }

func (s *library) Ping(ctx context.Context) error                 { return s.b.Ping(ctx) }
func (s *library) SchemaVersion(ctx context.Context) (int, error) { return s.b.SchemaVersion(ctx) }
func (s *library) Describe() string                               { return s.b.Describe() }
func (s *library) Close() error                                   { return s.b.Close() }

// Migration is one numbered schema step of a backend.
type Migration struct {
	Version int
	Name    string
	SQL     string
}

// Migrations reads the files NNNN_name.sql in dir of fsys, in order.
func Migrations(fsys fs.FS, dir string) ([]Migration, error) {
	entries, err := fs.ReadDir(fsys, dir)
	if err != nil {
		return nil, err
	}
	var ms []Migration
	for _, e := range entries {
		num, _, ok := strings.Cut(e.Name(), "_")
		v, err := strconv.Atoi(num)
		if !ok || err != nil {
			return nil, fmt.Errorf("store: migration %s is not named NNNN_name.sql", e.Name())
		}
		b, err := fs.ReadFile(fsys, path.Join(dir, e.Name()))
		if err != nil {
			return nil, err
		}
		ms = append(ms, Migration{Version: v, Name: e.Name(), SQL: string(b)})
	}
	sort.Slice(ms, func(i, j int) bool { return ms[i].Version < ms[j].Version })
	return ms, nil
}

// Now is the time a write records, as stored: UTC, RFC 3339 with
// nanoseconds.
func Now() string { return time.Now().UTC().Format(time.RFC3339Nano) }

func now() string { return Now() }

func parseTime(s string) time.Time {
	t, _ := time.Parse(time.RFC3339Nano, s)
	return t
}
