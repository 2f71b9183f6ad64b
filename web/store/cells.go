package store

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"time"
	"unicode/utf8"

	"capbank/sizing"
)

// CellRecord is a library cell with its bookkeeping.
type CellRecord struct {
	Cell sizing.Cell `json:"cell"`
	// ReadOnly marks the built-in demo cells: duplicate one to edit it.
	ReadOnly bool `json:"read_only"`
	// Version is 1 when the cell was written first and one more at each
	// change (the API's ETag).
	Version   int64     `json:"version"`
	CreatedAt time.Time `json:"created_at"`
	UpdatedAt time.Time `json:"updated_at"`
}

// MaxSearchLen is the most characters a CellFilter.Search may have. Escaped
// for LIKE, such a search stays far below SQLite's pattern limit
// (SQLITE_MAX_LIKE_PATTERN_LENGTH, 50 000 bytes): at most 4 bytes a
// character, doubled by escaping.
const MaxSearchLen = 200

// CellFilter narrows ListCells; zero fields do not filter.
type CellFilter struct {
	// Search matches the id or name, case-insensitively; at most
	// MaxSearchLen characters.
	Search string
	// MinRatedV, MaxRatedV in V; MinCapacitanceF, MaxCapacitanceF in F.
	MinRatedV, MaxRatedV             float64
	MinCapacitanceF, MaxCapacitanceF float64
}

// SeedDemo writes the built-in demo cells as read-only library cells,
// replacing older copies of them, in one transaction. User cells are never
// touched; a user cell with a demo cell's id keeps its place.
func (s *library) SeedDemo(ctx context.Context, cells []sizing.Cell) error {
	return s.b.Write(ctx, func(tx Querier) error {
		for i := range cells {
			c := cells[i]
			var ro int
			err := tx.QueryRow(ctx, `SELECT read_only FROM cells WHERE id = ?`, c.ID).Scan(&ro)
			switch {
			case errors.Is(err, ErrNoRows):
				if err := insertCell(ctx, tx, &c, true); err != nil {
					return err
				}
			case err != nil:
				return err
			case ro == 1:
				if err := updateCell(ctx, tx, &c); err != nil {
					return err
				}
			}
		}
		return nil
	})
}

func insertCell(ctx context.Context, tx Querier, c *sizing.Cell, readOnly bool) error {
	b, err := json.Marshal(c)
	if err != nil {
		return err
	}
	t := now()
	ro := 0
	if readOnly {
		ro = 1
	}
	_, err = tx.Exec(ctx, `INSERT INTO cells (id, name, rated_v, capacitance_f, source, read_only, cell_json, created_at, updated_at, version)
		VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, 1)`, c.ID, c.Name, c.RatedV, c.CapacitanceF, c.Source, ro, string(b), t, t)
	return err
}

func updateCell(ctx context.Context, tx Querier, c *sizing.Cell) error {
	b, err := json.Marshal(c)
	if err != nil {
		return err
	}
	_, err = tx.Exec(ctx, `UPDATE cells SET name = ?, rated_v = ?, capacitance_f = ?, source = ?, cell_json = ?, updated_at = ?,
		version = version + 1 WHERE id = ?`, c.Name, c.RatedV, c.CapacitanceF, c.Source, string(b), now(), c.ID)
	return err
}

// ListCells returns the library's cells that pass the filter, ordered by
// rated voltage, then capacitance, then id. A search longer than
// MaxSearchLen characters is ErrInvalid.
func (s *library) ListCells(ctx context.Context, f CellFilter) ([]CellRecord, error) {
	if n := utf8.RuneCountInString(f.Search); n > MaxSearchLen {
		return nil, fmt.Errorf("%w: the search has %d characters; it may have at most %d", ErrInvalid, n, MaxSearchLen)
	}
	q := `SELECT cell_json, read_only, created_at, updated_at, version FROM cells WHERE 1 = 1`
	var args []any
	if f.Search != "" {
		q += ` AND (lower(id) LIKE ? ESCAPE '\' OR lower(name) LIKE ? ESCAPE '\')`
		pat := "%" + likeEscape(strings.ToLower(f.Search)) + "%"
		args = append(args, pat, pat)
	}
	for _, c := range []struct {
		cond string
		v    float64
	}{{`rated_v >= ?`, f.MinRatedV}, {`rated_v <= ?`, f.MaxRatedV}, {`capacitance_f >= ?`, f.MinCapacitanceF}, {`capacitance_f <= ?`, f.MaxCapacitanceF}} {
		if c.v > 0 {
			q += ` AND ` + c.cond
			args = append(args, c.v)
		}
	}
	q += ` ORDER BY rated_v, capacitance_f, id`
	rows, err := s.b.Reader().Query(ctx, q, args...)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []CellRecord
	for rows.Next() {
		r, err := scanCell(rows)
		if err != nil {
			return nil, err
		}
		out = append(out, r)
	}
	return out, rows.Err()
}

func likeEscape(s string) string {
	return strings.NewReplacer(`\`, `\\`, `%`, `\%`, `_`, `\_`).Replace(s)
}

type scanner interface{ Scan(...any) error }

func scanCell(r scanner) (CellRecord, error) {
	var js, created, updated string
	var ro int
	var version int64
	if err := r.Scan(&js, &ro, &created, &updated, &version); err != nil {
		return CellRecord{}, err
	}
	var rec CellRecord
	if err := json.Unmarshal([]byte(js), &rec.Cell); err != nil {
		return CellRecord{}, fmt.Errorf("store: a stored cell does not decode: %w", err)
	}
	rec.ReadOnly = ro == 1
	rec.Version = version
	rec.CreatedAt, rec.UpdatedAt = parseTime(created), parseTime(updated)
	return rec, nil
}

// GetCell returns the cell of that id, or ErrNotFound.
func (s *library) GetCell(ctx context.Context, id string) (CellRecord, error) {
	r, err := scanCell(s.b.Reader().QueryRow(ctx, `SELECT cell_json, read_only, created_at, updated_at, version FROM cells WHERE id = ?`, id))
	if errors.Is(err, ErrNoRows) {
		return CellRecord{}, fmt.Errorf("cell %q: %w", id, ErrNotFound)
	}
	return r, err
}

// Lookup returns the cell of that id, for sizing.Design.ResolveCells.
func (s *library) Lookup(ctx context.Context) func(id string) (sizing.Cell, bool) {
	return func(id string) (sizing.Cell, bool) {
		r, err := s.GetCell(ctx, id)
		return r.Cell, err == nil
	}
}

// validCell wraps sizing.ValidateCell's problems in ErrInvalid.
func validCell(c *sizing.Cell) error {
	if err := sizing.ValidateCell(c); err != nil {
		return fmt.Errorf("%w: %w", ErrInvalid, err)
	}
	return nil
}

// CreateCell adds a user cell; ErrExists when the id is taken, ErrInvalid
// (wrapping the sizing.ValidationError) when the cell is not valid.
func (s *library) CreateCell(ctx context.Context, c sizing.Cell) error {
	if err := validCell(&c); err != nil {
		return err
	}
	return s.b.Write(ctx, func(tx Querier) error {
		var n int
		if err := tx.QueryRow(ctx, `SELECT COUNT(*) FROM cells WHERE id = ?`, c.ID).Scan(&n); err != nil {
			return err
		}
		if n > 0 {
			return fmt.Errorf("cell %q: %w", c.ID, ErrExists)
		}
		return insertCell(ctx, tx, &c, false)
	})
}

// UpdateCell replaces a user cell whatever its version; ErrNotFound,
// ErrReadOnly for a demo cell, ErrInvalid.
func (s *library) UpdateCell(ctx context.Context, c sizing.Cell) error {
	_, err := s.UpdateCellIf(ctx, c, 0)
	return err
}

// UpdateCellIf replaces a user cell when its version is ifVersion (any
// version when 0) and returns its new version; a *StaleError otherwise.
func (s *library) UpdateCellIf(ctx context.Context, c sizing.Cell, ifVersion int64) (int64, error) {
	if err := validCell(&c); err != nil {
		return 0, err
	}
	var version int64
	err := s.b.Write(ctx, func(tx Querier) error {
		v, err := writable(ctx, tx, c.ID, ifVersion)
		if err != nil {
			return err
		}
		version = v + 1
		return updateCell(ctx, tx, &c)
	})
	return version, err
}

// writable checks that cell id is a user cell at version ifVersion (any
// when 0) and returns its version.
func writable(ctx context.Context, tx Querier, id string, ifVersion int64) (int64, error) {
	var ro int
	var version int64
	err := tx.QueryRow(ctx, `SELECT read_only, version FROM cells WHERE id = ?`, id).Scan(&ro, &version)
	if errors.Is(err, ErrNoRows) {
		return 0, fmt.Errorf("cell %q: %w", id, ErrNotFound)
	}
	if err != nil {
		return 0, err
	}
	if ro == 1 {
		return 0, fmt.Errorf("cell %q is a demo cell; duplicate it to edit: %w", id, ErrReadOnly)
	}
	if ifVersion > 0 && version != ifVersion {
		return 0, &StaleError{What: fmt.Sprintf("cell %q", id), Current: version}
	}
	return version, nil
}

// DeleteCell removes a user cell whatever its version. Saved designs keep
// their own copy of every cell, so they are not affected. ErrNotFound,
// ErrReadOnly.
func (s *library) DeleteCell(ctx context.Context, id string) error {
	return s.DeleteCellIf(ctx, id, 0)
}

// DeleteCellIf removes a user cell when its version is ifVersion (any
// when 0); a *StaleError otherwise.
func (s *library) DeleteCellIf(ctx context.Context, id string, ifVersion int64) error {
	return s.b.Write(ctx, func(tx Querier) error {
		if _, err := writable(ctx, tx, id, ifVersion); err != nil {
			return err
		}
		_, err := tx.Exec(ctx, `DELETE FROM cells WHERE id = ?`, id)
		return err
	})
}

// maxCellName is the most characters a cell's name may have (the
// validate tag of sizing.Cell's Name).
const maxCellName = 200

// DemoMark ends the name of every built-in demo cell.
const DemoMark = " (demo, invented)"

// copyName is the name of a copy of a cell named name: the name without
// the demo mark (the copy is the user's, not a demo cell), then " (copy)",
// or " (copy 2)", " (copy 3)"… when the library has that name already, so
// that no two cells in a pick list read the same.
func copyName(ctx context.Context, tx Querier, name string) (string, error) {
	base := strings.TrimSpace(strings.TrimSuffix(name, DemoMark))
	if base == "" {
		base = "cell"
	}
	for i := 1; ; i++ {
		suffix := " (copy)"
		if i > 1 {
			suffix = fmt.Sprintf(" (copy %d)", i)
		}
		// A cell name has at most maxCellName characters.
		b := []rune(base)
		n := string(b[:min(len(b), maxCellName-utf8.RuneCountInString(suffix))]) + suffix
		var taken int
		if err := tx.QueryRow(ctx, `SELECT COUNT(*) FROM cells WHERE name = ?`, n).Scan(&taken); err != nil {
			return "", err
		}
		if taken == 0 {
			return n, nil
		}
	}
}

// DuplicateCell copies cell id (a demo cell or a user cell) to a new,
// writable user cell newID; an empty newID takes id + "-copy" (or -copy2…).
// The copy's name says it is a copy and drops the demo mark (copyName);
// its source is no longer "demo".
func (s *library) DuplicateCell(ctx context.Context, id, newID string) (CellRecord, error) {
	var out CellRecord
	askedID := newID
	err := s.b.Write(ctx, func(tx Querier) error {
		newID := askedID
		r, err := scanCell(tx.QueryRow(ctx, `SELECT cell_json, read_only, created_at, updated_at, version FROM cells WHERE id = ?`, id))
		if errors.Is(err, ErrNoRows) {
			return fmt.Errorf("cell %q: %w", id, ErrNotFound)
		}
		if err != nil {
			return err
		}
		if newID == "" {
			for i := 1; ; i++ {
				newID = id + "-copy"
				if i > 1 {
					newID = fmt.Sprintf("%s-copy%d", id, i)
				}
				var n int
				if err := tx.QueryRow(ctx, `SELECT COUNT(*) FROM cells WHERE id = ?`, newID).Scan(&n); err != nil {
					return err
				}
				if n == 0 {
					break
				}
			}
		}
		c := r.Cell
		c.ID = newID
		if c.Source == "demo" {
			c.Source = ""
		}
		if c.Name, err = copyName(ctx, tx, r.Cell.Name); err != nil {
			return err
		}
		if err := validCell(&c); err != nil {
			return err
		}
		var n int
		if err := tx.QueryRow(ctx, `SELECT COUNT(*) FROM cells WHERE id = ?`, newID).Scan(&n); err != nil {
			return err
		}
		if n > 0 {
			return fmt.Errorf("cell %q: %w", newID, ErrExists)
		}
		if err := insertCell(ctx, tx, &c, false); err != nil {
			return err
		}
		out = CellRecord{Cell: c, Version: 1}
		return nil
	})
	return out, err
}
