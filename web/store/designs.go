package store

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"time"
)

// DesignRecord is a saved design. JSON is the design file exactly as saved
// (byte for byte), so it opens, sizes and exports the same every time.
type DesignRecord struct {
	ID   int64  `json:"id"`
	Name string `json:"name"`
	JSON []byte `json:"-"`
	// Version is 1 when the design was saved first and one more at each
	// change (the API's ETag).
	Version   int64     `json:"version"`
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
func (s *library) SaveDesign(ctx context.Context, name string, designJSON []byte) (int64, error) {
	name, err := designName(name)
	if err != nil {
		return 0, err
	}
	var id int64
	err = s.b.Write(ctx, func(tx Querier) error {
		t := now()
		return tx.QueryRow(ctx, `INSERT INTO designs (name, design_json, created_at, updated_at, version) VALUES (?, ?, ?, ?, 1) RETURNING id`,
			name, string(designJSON), t, t).Scan(&id)
	})
	return id, err
}

// UpdateDesign replaces the JSON of saved design id, whatever its version.
func (s *library) UpdateDesign(ctx context.Context, id int64, designJSON []byte) error {
	_, err := s.ReplaceDesignIf(ctx, id, "", designJSON, 0)
	return err
}

// ReplaceDesign gives saved design id a new JSON and, when name is not
// empty, a new name, in one transaction, whatever its version.
func (s *library) ReplaceDesign(ctx context.Context, id int64, name string, designJSON []byte) error {
	_, err := s.ReplaceDesignIf(ctx, id, name, designJSON, 0)
	return err
}

// ReplaceDesignIf is ReplaceDesign when the design's version is ifVersion
// (any when 0); it returns the new version, or a *StaleError.
func (s *library) ReplaceDesignIf(ctx context.Context, id int64, name string, designJSON []byte, ifVersion int64) (int64, error) {
	if strings.TrimSpace(name) == "" {
		return s.exec1(ctx, id, ifVersion, `UPDATE designs SET design_json = ?, updated_at = ?, version = version + 1 WHERE id = ?`, string(designJSON), now(), id)
	}
	name, err := designName(name)
	if err != nil {
		return 0, err
	}
	return s.exec1(ctx, id, ifVersion, `UPDATE designs SET name = ?, design_json = ?, updated_at = ?, version = version + 1 WHERE id = ?`, name, string(designJSON), now(), id)
}

// RenameDesign renames saved design id, whatever its version.
func (s *library) RenameDesign(ctx context.Context, id int64, name string) error {
	_, err := s.RenameDesignIf(ctx, id, name, 0)
	return err
}

// RenameDesignIf renames saved design id when its version is ifVersion
// (any when 0); it returns the new version, or a *StaleError.
func (s *library) RenameDesignIf(ctx context.Context, id int64, name string, ifVersion int64) (int64, error) {
	name, err := designName(name)
	if err != nil {
		return 0, err
	}
	return s.exec1(ctx, id, ifVersion, `UPDATE designs SET name = ?, updated_at = ?, version = version + 1 WHERE id = ?`, name, now(), id)
}

// DeleteDesign removes saved design id, whatever its version.
func (s *library) DeleteDesign(ctx context.Context, id int64) error {
	return s.DeleteDesignIf(ctx, id, 0)
}

// DeleteDesignIf removes saved design id when its version is ifVersion
// (any when 0), or gives a *StaleError.
func (s *library) DeleteDesignIf(ctx context.Context, id int64, ifVersion int64) error {
	_, err := s.exec1(ctx, id, ifVersion, `DELETE FROM designs WHERE id = ?`, id)
	return err
}

// exec1 runs a statement that must touch exactly design id, after checking
// its version is ifVersion (any when 0), and returns the version after it
// (one more than before; for a delete, meaningless).
func (s *library) exec1(ctx context.Context, id, ifVersion int64, q string, args ...any) (int64, error) {
	var version int64
	err := s.b.Write(ctx, func(tx Querier) error {
		err := tx.QueryRow(ctx, `SELECT version FROM designs WHERE id = ?`, id).Scan(&version)
		if errors.Is(err, ErrNoRows) {
			return fmt.Errorf("design %d: %w", id, ErrNotFound)
		}
		if err != nil {
			return err
		}
		if ifVersion > 0 && version != ifVersion {
			return &StaleError{What: fmt.Sprintf("design %d", id), Current: version}
		}
		n, err := tx.Exec(ctx, q, args...)
		if err != nil {
			return err
		}
		if n == 0 {
			return fmt.Errorf("design %d: %w", id, ErrNotFound)
		}
		version++
		return nil
	})
	return version, err
}

// DuplicateDesign copies saved design id under a new name (empty: the old
// name + " (copy)") and returns the new id.
func (s *library) DuplicateDesign(ctx context.Context, id int64, name string) (int64, error) {
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
func (s *library) GetDesign(ctx context.Context, id int64) (DesignRecord, error) {
	var r DesignRecord
	var js, created, updated string
	err := s.b.Reader().QueryRow(ctx, `SELECT id, name, design_json, created_at, updated_at, version FROM designs WHERE id = ?`, id).
		Scan(&r.ID, &r.Name, &js, &created, &updated, &r.Version)
	if errors.Is(err, ErrNoRows) {
		return r, fmt.Errorf("design %d: %w", id, ErrNotFound)
	}
	r.JSON = []byte(js)
	r.CreatedAt, r.UpdatedAt = parseTime(created), parseTime(updated)
	return r, err
}

// ListDesigns returns the saved designs, newest change first, without their
// JSON.
func (s *library) ListDesigns(ctx context.Context) ([]DesignRecord, error) {
	rows, err := s.b.Reader().Query(ctx, `SELECT id, name, created_at, updated_at, version FROM designs ORDER BY updated_at DESC, id DESC`)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []DesignRecord
	for rows.Next() {
		var r DesignRecord
		var created, updated string
		if err := rows.Scan(&r.ID, &r.Name, &created, &updated, &r.Version); err != nil {
			return nil, err
		}
		r.CreatedAt, r.UpdatedAt = parseTime(created), parseTime(updated)
		out = append(out, r)
	}
	return out, rows.Err()
}
