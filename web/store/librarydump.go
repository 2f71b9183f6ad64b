package store

import (
	"context"
	"fmt"
)

// LibraryFile is a whole library as export-library writes it and
// import-library reads it: every cell and every design with its id, name,
// times and version, the design files byte for byte.
type LibraryFile struct {
	Format  string          `json:"format"`
	Cells   []LibraryCell   `json:"cells"`
	Designs []LibraryDesign `json:"designs"`
}

// LibraryFormat names the LibraryFile layout.
const LibraryFormat = "capbank-library/1"

// LibraryCell is one cell of a LibraryFile: its design-file JSON as stored.
type LibraryCell struct {
	ID           string  `json:"id"`
	Name         string  `json:"name"`
	RatedV       float64 `json:"rated_v"`
	CapacitanceF float64 `json:"capacitance_f"`
	Source       string  `json:"source"`
	ReadOnly     bool    `json:"read_only"`
	CellJSON     string  `json:"cell_json"`
	CreatedAt    string  `json:"created_at"`
	UpdatedAt    string  `json:"updated_at"`
	Version      int64   `json:"version"`
}

// LibraryDesign is one saved design of a LibraryFile.
type LibraryDesign struct {
	ID         int64  `json:"id"`
	Name       string `json:"name"`
	DesignJSON string `json:"design_json"`
	CreatedAt  string `json:"created_at"`
	UpdatedAt  string `json:"updated_at"`
	Version    int64  `json:"version"`
}

// Library reads every cell and design as stored, in one transaction.
func (s *library) Library(ctx context.Context) (LibraryFile, error) {
	lib := LibraryFile{Format: LibraryFormat, Cells: []LibraryCell{}, Designs: []LibraryDesign{}}
	err := s.b.Write(ctx, func(tx Querier) error {
		lib.Cells, lib.Designs = lib.Cells[:0], lib.Designs[:0]
		rows, err := tx.Query(ctx, `SELECT id, name, rated_v, capacitance_f, source, read_only, cell_json, created_at, updated_at, version FROM cells ORDER BY id`)
		if err != nil {
			return err
		}
		for rows.Next() {
			var c LibraryCell
			var ro int
			if err := rows.Scan(&c.ID, &c.Name, &c.RatedV, &c.CapacitanceF, &c.Source, &ro, &c.CellJSON, &c.CreatedAt, &c.UpdatedAt, &c.Version); err != nil {
				rows.Close()
				return err
			}
			c.ReadOnly = ro == 1
			lib.Cells = append(lib.Cells, c)
		}
		rows.Close()
		if err := rows.Err(); err != nil {
			return err
		}
		rows, err = tx.Query(ctx, `SELECT id, name, design_json, created_at, updated_at, version FROM designs ORDER BY id`)
		if err != nil {
			return err
		}
		defer rows.Close()
		for rows.Next() {
			var d LibraryDesign
			if err := rows.Scan(&d.ID, &d.Name, &d.DesignJSON, &d.CreatedAt, &d.UpdatedAt, &d.Version); err != nil {
				return err
			}
			lib.Designs = append(lib.Designs, d)
		}
		return rows.Err()
	})
	return lib, err
}

// RestoreLibrary writes lib into a store that holds no user cell and no
// design (the demo cells it may hold are replaced by the file's), keeping
// every id, name, time and version; all of it or, on any error, none.
func (s *library) RestoreLibrary(ctx context.Context, lib LibraryFile) error {
	if lib.Format != LibraryFormat {
		return fmt.Errorf("%w: the library file's format is %q; this capbank reads %q", ErrInvalid, lib.Format, LibraryFormat)
	}
	return s.b.Write(ctx, func(tx Querier) error {
		var n int64
		if err := tx.QueryRow(ctx, `SELECT (SELECT COUNT(*) FROM cells WHERE read_only = 0) + (SELECT COUNT(*) FROM designs)`).Scan(&n); err != nil {
			return err
		}
		if n > 0 {
			return fmt.Errorf("%w: the target already holds %d user cells or designs; import a library only into a new, empty database", ErrExists, n)
		}
		if _, err := tx.Exec(ctx, `DELETE FROM cells`); err != nil {
			return err
		}
		for _, c := range lib.Cells {
			ro := 0
			if c.ReadOnly {
				ro = 1
			}
			if _, err := tx.Exec(ctx, `INSERT INTO cells (id, name, rated_v, capacitance_f, source, read_only, cell_json, created_at, updated_at, version)
				VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`, c.ID, c.Name, c.RatedV, c.CapacitanceF, c.Source, ro, c.CellJSON, c.CreatedAt, c.UpdatedAt, c.Version); err != nil {
				return err
			}
		}
		for _, d := range lib.Designs {
			if _, err := tx.Exec(ctx, `INSERT INTO designs (id, name, design_json, created_at, updated_at, version) VALUES (?, ?, ?, ?, ?, ?)`,
				d.ID, d.Name, d.DesignJSON, d.CreatedAt, d.UpdatedAt, d.Version); err != nil {
				return err
			}
		}
		if f, ok := s.b.(sequenceFixer); ok {
			return f.FixSequences(ctx, tx)
		}
		return nil
	})
}

// sequenceFixer is a backend whose id sequences must be moved past ids
// written explicitly.
type sequenceFixer interface {
	FixSequences(ctx context.Context, tx Querier) error
}
