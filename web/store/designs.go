package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"strings"
	"time"
)

// DesignRecord is a saved design. JSON is the design file exactly as saved
// (byte for byte), so it opens, sizes and exports the same every time.
type DesignRecord struct {
	ID        int64     `json:"id"`
	Name      string    `json:"name"`
	JSON      []byte    `json:"-"`
	CreatedAt time.Time `json:"created_at"`
	UpdatedAt time.Time `json:"updated_at"`
}

func designName(name string) (string, error) {
	name = strings.TrimSpace(name)
	if name == "" {
		return "", fmt.Errorf("%w: a saved design needs a name", ErrInvalid)
	}
	if len(name) > 200 {
		return "", fmt.Errorf("%w: a design name has at most 200 characters", ErrInvalid)
	}
	return name, nil
}

// SaveDesign stores a new design and returns its id. It never overwrites:
// saving again under the same name makes a second design.
func (s *Store) SaveDesign(ctx context.Context, name string, designJSON []byte) (int64, error) {
	name, err := designName(name)
	if err != nil {
		return 0, err
	}
	var id int64
	err = s.tx(ctx, func(tx *sql.Tx) error {
		t := now()
		res, err := tx.ExecContext(ctx, `INSERT INTO designs (name, design_json, created_at, updated_at) VALUES (?, ?, ?, ?)`,
			name, string(designJSON), t, t)
		if err != nil {
			return err
		}
		id, err = res.LastInsertId()
		return err
	})
	return id, err
}

// UpdateDesign replaces the JSON of saved design id.
func (s *Store) UpdateDesign(ctx context.Context, id int64, designJSON []byte) error {
	return s.exec1(ctx, id, `UPDATE designs SET design_json = ?, updated_at = ? WHERE id = ?`, string(designJSON), now(), id)
}

// ReplaceDesign gives saved design id a new JSON and, when name is not
// empty, a new name, in one transaction.
func (s *Store) ReplaceDesign(ctx context.Context, id int64, name string, designJSON []byte) error {
	if strings.TrimSpace(name) == "" {
		return s.UpdateDesign(ctx, id, designJSON)
	}
	name, err := designName(name)
	if err != nil {
		return err
	}
	return s.exec1(ctx, id, `UPDATE designs SET name = ?, design_json = ?, updated_at = ? WHERE id = ?`, name, string(designJSON), now(), id)
}

// RenameDesign renames saved design id.
func (s *Store) RenameDesign(ctx context.Context, id int64, name string) error {
	name, err := designName(name)
	if err != nil {
		return err
	}
	return s.exec1(ctx, id, `UPDATE designs SET name = ?, updated_at = ? WHERE id = ?`, name, now(), id)
}

// DeleteDesign removes saved design id.
func (s *Store) DeleteDesign(ctx context.Context, id int64) error {
	return s.exec1(ctx, id, `DELETE FROM designs WHERE id = ?`, id)
}

// exec1 runs a statement that must touch exactly one design.
func (s *Store) exec1(ctx context.Context, id int64, q string, args ...any) error {
	return s.tx(ctx, func(tx *sql.Tx) error {
		res, err := tx.ExecContext(ctx, q, args...)
		if err != nil {
			return err
		}
		if n, _ := res.RowsAffected(); n == 0 {
			return fmt.Errorf("design %d: %w", id, ErrNotFound)
		}
		return nil
	})
}

// DuplicateDesign copies saved design id under a new name (empty: the old
// name + " (copy)") and returns the new id.
func (s *Store) DuplicateDesign(ctx context.Context, id int64, name string) (int64, error) {
	d, err := s.GetDesign(ctx, id)
	if err != nil {
		return 0, err
	}
	if name == "" {
		name = d.Name + " (copy)"
	}
	return s.SaveDesign(ctx, name, d.JSON)
}

// GetDesign returns saved design id, or ErrNotFound.
func (s *Store) GetDesign(ctx context.Context, id int64) (DesignRecord, error) {
	var r DesignRecord
	var js, created, updated string
	err := s.db.QueryRowContext(ctx, `SELECT id, name, design_json, created_at, updated_at FROM designs WHERE id = ?`, id).
		Scan(&r.ID, &r.Name, &js, &created, &updated)
	if errors.Is(err, sql.ErrNoRows) {
		return r, fmt.Errorf("design %d: %w", id, ErrNotFound)
	}
	r.JSON = []byte(js)
	r.CreatedAt, r.UpdatedAt = parseTime(created), parseTime(updated)
	return r, err
}

// ListDesigns returns the saved designs, newest change first, without their
// JSON.
func (s *Store) ListDesigns(ctx context.Context) ([]DesignRecord, error) {
	rows, err := s.db.QueryContext(ctx, `SELECT id, name, created_at, updated_at FROM designs ORDER BY updated_at DESC, id DESC`)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []DesignRecord
	for rows.Next() {
		var r DesignRecord
		var created, updated string
		if err := rows.Scan(&r.ID, &r.Name, &created, &updated); err != nil {
			return nil, err
		}
		r.CreatedAt, r.UpdatedAt = parseTime(created), parseTime(updated)
		out = append(out, r)
	}
	return out, rows.Err()
}
