package main

import (
	"fmt"
	"os"

	"capbank/web/store"
)

// checkDataDir makes sure capbank can write in the data directory before
// it opens the database there, so that a read-only directory is an error
// at start that names it, not a failure at the first save.
func checkDataDir(dir string) error {
	f, err := os.CreateTemp(dir, ".capbank-write-check-*")
	if err != nil {
		return fmt.Errorf("the data directory %s is not writable (%v); capbank keeps its database there: make it writable or choose another with --data", dir, err)
	}
	name := f.Name()
	f.Close()
	return os.Remove(name)
}

// openError says why the database in dir would not open, in plain words
// when the disk or the file system is the cause.
func openError(dir string, err error) error {
	if reason := store.StorageFault(err); reason != "" {
		return fmt.Errorf("cannot open the database in %s: %s (%w)", dir, reason, err)
	}
	return fmt.Errorf("cannot open the database in %s: %w", dir, err)
}
