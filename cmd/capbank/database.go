package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"capbank/web/store"
	"capbank/web/store/postgres"
	"capbank/web/store/sqlite"
)

const migrateUsage = `usage: capbank migrate [--data DIR | --database URL]

Applies the database migrations capbank's schema lacks, without serving,
and prints the schema version. capbank serve does the same at start; run
this before starting several instances of a new capbank on one PostgreSQL
database if you want the upgrade to be a step of its own. The migrations
run under a PostgreSQL advisory lock, so instances starting together
apply each of them once.

flags:
`

const exportLibraryUsage = `usage: capbank export-library [--data DIR | --database URL] [FILE]

Writes the whole library — every cell and every saved design, with its id,
name, times and version, the design files byte for byte — as one JSON file
(to FILE, or to standard output). capbank import-library reads it into
another database: this is how a library moves from the SQLite file of
one capbank to a department's PostgreSQL database, or back.

flags:
`

const importLibraryUsage = `usage: capbank import-library [--data DIR | --database URL] FILE

Reads a library file written by capbank export-library into a database
that holds no cells or designs of its own yet (a new one: the demo cells it
was created with are replaced by the file's), all of it or, on any error,
nothing.

flags:
`

// storeFlags are the flags that name a database: --data (SQLite) or
// --database (PostgreSQL, default $CAPBANK_DATABASE_URL).
type storeFlags struct{ data, database *string }

func addStoreFlags(flags *flag.FlagSet) storeFlags {
	return storeFlags{
		data:     flags.String("data", "capbank-data", "the data `DIR`ectory holding the SQLite database"),
		database: flags.String("database", "", "a PostgreSQL database `URL` instead of --data; default $"+databaseEnv),
	}
}

// open opens (creating and migrating) the database the flags name,
// without writing the demo cells.
func (f storeFlags) open(ctx context.Context) (store.Store, error) {
	u, err := databaseURL(*f.database)
	if err != nil {
		return nil, err
	}
	if u != "" {
		db, err := postgres.Open(ctx, u)
		if err != nil {
			return nil, fmt.Errorf("cannot open the PostgreSQL database: %w", err)
		}
		return db, nil
	}
	if err := os.MkdirAll(*f.data, 0o755); err != nil {
		return nil, fmt.Errorf("cannot create the data directory: %w", err)
	}
	db, err := sqlite.Open(ctx, filepath.Join(*f.data, store.FileName))
	if err != nil {
		return nil, openError(*f.data, err)
	}
	return db, nil
}

func runMigrate(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank migrate", flag.ContinueOnError)
	flags.SetOutput(stderr)
	sf := addStoreFlags(flags)
	cl, err := parseCommand(flags, args, migrateUsage)
	if err != nil {
		return err
	}
	if len(cl.pos) > 0 {
		return usageFailure(stderr, cl.usage, "capbank migrate: takes no arguments (got %q)", cl.pos[0])
	}
	st, err := sf.open(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	v, err := st.SchemaVersion(ctx)
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "%s: schema at version %d\n", st.Describe(), v)
	return nil
}

func runExportLibrary(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank export-library", flag.ContinueOnError)
	flags.SetOutput(stderr)
	sf := addStoreFlags(flags)
	cl, err := parseCommand(flags, args, exportLibraryUsage)
	if err != nil {
		return err
	}
	if len(cl.pos) > 1 {
		return usageFailure(stderr, cl.usage, "capbank export-library: takes at most one file (got %d arguments)", len(cl.pos))
	}
	st, err := sf.open(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	lib, err := st.Library(ctx)
	if err != nil {
		return err
	}
	out := stdout
	if len(cl.pos) == 1 {
		f, err := os.Create(cl.pos[0])
		if err != nil {
			return fmt.Errorf("cannot write the library file: %w", err)
		}
		defer f.Close()
		out = f
	}
	enc := json.NewEncoder(out)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	return enc.Encode(lib)
}

func runImportLibrary(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank import-library", flag.ContinueOnError)
	flags.SetOutput(stderr)
	sf := addStoreFlags(flags)
	cl, err := parseCommand(flags, args, importLibraryUsage)
	if err != nil {
		return err
	}
	if len(cl.pos) != 1 {
		return usageFailure(stderr, cl.usage, "capbank import-library: takes one library file (got %d arguments)", len(cl.pos))
	}
	data, err := os.ReadFile(cl.pos[0])
	if err != nil {
		return fmt.Errorf("cannot read the library file: %w", err)
	}
	var lib store.LibraryFile
	if err := json.Unmarshal(data, &lib); err != nil {
		return fmt.Errorf("%s is not a library file written by capbank export-library: %w", cl.pos[0], err)
	}
	st, err := sf.open(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	if err := st.RestoreLibrary(ctx, lib); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "%s: %d cells and %d designs imported\n", st.Describe(), len(lib.Cells), len(lib.Designs))
	return nil
}
