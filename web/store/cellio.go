package store

import (
	"bufio"
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"capbank/sizing"
)

// MaxImportRows bounds a cell import.
const MaxImportRows = 100_000

// cellColumns are the cell CSV's columns, in order: id, name and source,
// then every number key of the design file's cell (sizing.Cell) in its
// order, units in the names, the capacitance tolerance split in two
// (capacitance_minus_pct, capacitance_plus_pct), the module's keys as
// module_series, module_parallel, module_mass_kg, module_volume_l,
// module_unit_price and module_name, the voltage derating as its JSON
// pairs in one column ([[25,2.7],[65,2.5]]), then electrolyte and notes.
// They come from sizing.Cell's JSON keys, so that a number key added to
// the cell is exported and imported back without a change here.
var cellColumns, numberColumns = cellCSVColumns()

// textFirst and textLast are the cell's text keys: the ones before the
// numbers and the ones after them.
var (
	textFirst = []string{"id", "name", "source"}
	textLast  = []string{"electrolyte", "notes"}
)

// numberColumn is a number column of the cell CSV: the index of its
// sizing.Cell field and, for the capacitance tolerance, which of its two
// values (-1 for a plain number).
type numberColumn struct {
	name  string
	field int
	part  int
}

// toleranceKey is the cell key whose two values are two CSV columns.
const toleranceKey = "capacitance_tolerance_pct"

// moduleKey is the cell key whose object is the moduleColumns;
// deratingKey the cell key whose pairs are one column, as JSON.
const (
	moduleKey   = "module"
	deratingKey = "voltage_derating"
)

// moduleColumns are the columns of a cell's module (sizing.Module).
var moduleColumns = []string{"module_series", "module_parallel", "module_mass_kg", "module_volume_l", "module_unit_price", "module_name"}

func cellCSVColumns() ([]string, map[string]numberColumn) {
	cols := slices.Clone(textFirst)
	nums := map[string]numberColumn{}
	t := reflect.TypeFor[sizing.Cell]()
	floatPtr := reflect.TypeFor[*float64]()
	for i := range t.NumField() {
		f := t.Field(i)
		key, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		switch {
		case key == toleranceKey:
			for part, name := range []string{"capacitance_minus_pct", "capacitance_plus_pct"} {
				cols = append(cols, name)
				nums[name] = numberColumn{name, i, part}
			}
		case key == moduleKey:
			cols = append(cols, moduleColumns...)
		case key == deratingKey:
			cols = append(cols, deratingKey)
		case key != "" && key != "-" && (f.Type.Kind() == reflect.Float64 || f.Type == floatPtr):
			cols = append(cols, key)
			nums[key] = numberColumn{key, i, -1}
		}
	}
	return append(cols, textLast...), nums
}

var requiredColumns = []string{"id", "rated_v", "capacitance_f", "esr_ohm"}

// ImportMode says what an import does with a cell whose id is already in
// the library.
type ImportMode string

const (
	// ImportAdd adds new cells only: a row whose id is in the library is
	// rejected. The default.
	ImportAdd ImportMode = "add"
	// ImportUpsert adds new cells and replaces the user cells of the same
	// id, so that a library exported as CSV or JSON imports back. A
	// built-in demo cell stays read-only: a row that changes one is
	// rejected; a row equal to it (as the export writes it) is left as it
	// is.
	ImportUpsert ImportMode = "upsert"
)

// ParseImportMode reads the mode of an import: "add" (or empty) or
// "upsert".
func ParseImportMode(s string) (ImportMode, error) {
	switch ImportMode(s) {
	case "", ImportAdd:
		return ImportAdd, nil
	case ImportUpsert:
		return ImportUpsert, nil
	}
	return "", fmt.Errorf("%w: import mode %q: must be add (new cells only) or upsert (add new cells, update your cells of the same id)", ErrInvalid, s)
}

// Row actions of an import report.
const (
	ActionAdded     = "added"
	ActionUpdated   = "updated"
	ActionUnchanged = "unchanged"
)

// ImportRow is the fate of one row (CSV line, or JSON list item) of an import.
type ImportRow struct {
	Line     int    `json:"line"`
	ID       string `json:"id"`
	Accepted bool   `json:"accepted"`
	// Action is what an accepted row did: ActionAdded, ActionUpdated
	// (upsert, a user cell of that id replaced) or ActionUnchanged (upsert,
	// a demo cell's row equal to it).
	Action string `json:"action,omitempty"`
	Reason string `json:"reason,omitempty"`
}

// ImportReport tells row by row what an import did. Imported is true only
// when every row was accepted: a file with any bad row leaves the library
// as it was.
type ImportReport struct {
	Imported bool `json:"imported"`
	Accepted int  `json:"accepted"`
	Rejected int  `json:"rejected"`
	// Added and Updated count the accepted rows by what they did
	// (Updated only in ImportUpsert mode).
	Added   int         `json:"added"`
	Updated int         `json:"updated"`
	Rows    []ImportRow `json:"rows"`
	// Error is a problem with the file as a whole (header, encoding).
	Error string `json:"error,omitempty"`
}

type parsedCell struct {
	line   int
	cell   sizing.Cell
	err    string
	action string
	// parseErr is err before the library was consulted.
	parseErr string
}

// ImportCellsCSV reads cells from CSV (RFC 4180, a header row of the
// cellColumns names; id, rated_v, capacitance_f and esr_ohm required, the
// others optional; numbers plain, in the unit the column names) and adds
// them to the library — all of them, or, if any row is bad, none. mode
// says what a row whose id is already in the library does (ImportMode).
func (s *library) ImportCellsCSV(ctx context.Context, r io.Reader, mode ImportMode) (ImportReport, error) {
	rows, fileErr := parseCellsCSV(r)
	if fileErr != "" {
		return ImportReport{Error: fileErr}, nil
	}
	return s.importRows(ctx, rows, mode)
}

// ImportCellsJSON reads cells as a JSON list of design-file cells (or an
// object {"cells": [...]}) and imports them as ImportCellsCSV does; the
// report's Line is the item's position in the list, from 1.
func (s *library) ImportCellsJSON(ctx context.Context, r io.Reader, mode ImportMode) (ImportReport, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return ImportReport{Error: "could not read the file: " + err.Error()}, nil
	}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	items, fileErr := cellItems(data)
	if fileErr != "" {
		return ImportReport{Error: fileErr}, nil
	}
	if len(items) > MaxImportRows {
		return ImportReport{Error: fmt.Sprintf("holds %d cells, more than %d", len(items), MaxImportRows)}, nil
	}
	rows := make([]parsedCell, len(items))
	for i, it := range items {
		rows[i].line = i + 1
		var err error
		if rows[i].cell, err = DecodeCell(it); err != nil {
			rows[i].err = err.Error()
		}
	}
	return s.importRows(ctx, rows, mode)
}

// importRows checks every row and inserts them all, or none if any row is
// bad. Whether an id is already in the library is checked in the write
// transaction itself, so a cell added by someone else meanwhile is a
// rejected row, never a failed insert.
func (s *library) importRows(ctx context.Context, rows []parsedCell, mode ImportMode) (ImportReport, error) {
	if mode == "" {
		mode = ImportAdd
	}
	if len(rows) == 0 {
		return ImportReport{Rows: []ImportRow{}, Error: "holds no cells"}, nil
	}
	seen := map[string]int{}
	for i := range rows {
		p := &rows[i]
		if p.err == "" {
			if err := sizing.ValidateCell(&p.cell); err != nil {
				p.err = strings.ReplaceAll(err.Error(), "\n", "; ")
			}
		}
		if p.err == "" {
			if j, dup := seen[p.cell.ID]; dup {
				p.err = fmt.Sprintf("repeats the id %q of line %d", p.cell.ID, j)
			} else {
				seen[p.cell.ID] = p.line
			}
		}
	}
	for i := range rows {
		rows[i].parseErr = rows[i].err
	}
	rejected := false
	err := s.b.Write(ctx, func(tx Querier) error {
		// A backend may run this again after a conflict: start afresh.
		rejected = false
		for i := range rows {
			rows[i].err, rows[i].action = rows[i].parseErr, ""
		}
		for i := range rows {
			p := &rows[i]
			if p.err != "" {
				rejected = true
				continue
			}
			old, err := scanCell(tx.QueryRow(ctx, `SELECT cell_json, read_only, created_at, updated_at, version FROM cells WHERE id = ?`, p.cell.ID))
			switch {
			case errors.Is(err, ErrNoRows):
				p.action = ActionAdded
			case err != nil:
				return err
			case mode != ImportUpsert:
				p.err = fmt.Sprintf("id %q is already in the library; give the cell another id, edit the existing one, or import in the mode that updates your cells (upsert)", p.cell.ID)
			case old.ReadOnly && sameCell(old.Cell, p.cell):
				p.action = ActionUnchanged
			case old.ReadOnly:
				p.err = fmt.Sprintf("id %q is a built-in demo cell, which is read-only and is not updated by an import; give the cell another id (duplicate the demo cell in the library to get a copy you can edit)", p.cell.ID)
			default:
				p.action = ActionUpdated
			}
			if p.err != "" {
				rejected = true
			}
		}
		if rejected {
			return errNotImported
		}
		for i := range rows {
			var err error
			switch rows[i].action {
			case ActionAdded:
				err = insertCell(ctx, tx, &rows[i].cell, false)
			case ActionUpdated:
				err = updateCell(ctx, tx, &rows[i].cell)
			}
			if err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil && !errors.Is(err, errNotImported) {
		return ImportReport{}, err
	}
	rep := ImportReport{Imported: !rejected, Rows: make([]ImportRow, len(rows))}
	for i, p := range rows {
		rep.Rows[i] = ImportRow{Line: p.line, ID: p.cell.ID, Accepted: p.err == "", Reason: p.err}
		if p.err == "" {
			rep.Rows[i].Action = p.action
			rep.Accepted++
			switch p.action {
			case ActionAdded:
				rep.Added++
			case ActionUpdated:
				rep.Updated++
			}
		} else {
			rep.Rejected++
		}
	}
	return rep, nil
}

// sameCell reports whether a and b are the same cell, figure for figure.
func sameCell(a, b sizing.Cell) bool {
	ja, errA := json.Marshal(a)
	jb, errB := json.Marshal(b)
	return errA == nil && errB == nil && bytes.Equal(ja, jb)
}

// errNotImported rolls back an import with a rejected row.
var errNotImported = errors.New("store: import has rejected rows")

// parseCellsCSV reads the CSV into rows; a file-level problem comes back as
// a message.
func parseCellsCSV(r io.Reader) ([]parsedCell, string) {
	br := bufio.NewReader(r)
	if b, err := br.Peek(3); err == nil && string(b) == "\ufeff" {
		br.Discard(3)
	}
	cr := csv.NewReader(br)
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err == io.EOF {
		return nil, "is empty; the first row must name the columns (id, rated_v, capacitance_f, esr_ohm, …)"
	}
	if err != nil {
		return nil, "line 1: " + csvMessage(err)
	}
	col := map[string]int{}
	known := map[string]bool{}
	for _, c := range cellColumns {
		known[c] = true
	}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(h))
		if h == "" {
			continue
		}
		if !known[h] {
			for _, c := range cellColumns {
				if strings.HasPrefix(c, h+"_") {
					return nil, fmt.Sprintf("line 1: column %q has no unit; name it %q (capbank's columns carry their SI unit)", h, c)
				}
			}
			return nil, fmt.Sprintf("line 1: unknown column %q; the columns are: %s", h, strings.Join(cellColumns, ", "))
		}
		if _, dup := col[h]; dup {
			return nil, fmt.Sprintf("line 1: column %q appears twice", h)
		}
		col[h] = i
	}
	for _, c := range requiredColumns {
		if _, ok := col[c]; !ok {
			return nil, fmt.Sprintf("line 1: the required column %q is missing (required: %s)", c, strings.Join(requiredColumns, ", "))
		}
	}
	var rows []parsedCell
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			// FieldPos is only defined after a record was read.
			line := 0
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				line = pe.Line
			}
			return nil, fmt.Sprintf("line %d: %s", line, csvMessage(err))
		}
		line, _ := cr.FieldPos(0)
		if len(rows) >= MaxImportRows {
			return nil, fmt.Sprintf("line %d: more than %d cells in one import", line, MaxImportRows)
		}
		rows = append(rows, cellFromRecord(rec, col, line))
	}
	return rows, ""
}

func csvMessage(err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// cellFromRecord builds a cell from one CSV row.
func cellFromRecord(rec []string, col map[string]int, line int) parsedCell {
	p := parsedCell{line: line}
	get := func(name string) string {
		i, ok := col[name]
		if !ok || i >= len(rec) {
			return ""
		}
		return unneutralise(strings.TrimSpace(rec[i]))
	}
	var problems []string
	num := func(name string) *float64 {
		v := get(name)
		if v == "" {
			return nil
		}
		x, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) || strings.ContainsAny(v, "xXpP_") {
			problems = append(problems, fmt.Sprintf("%s: %q is not a plain number; write it in the column's unit with a decimal point (e.g. 0.0028 in esr_ohm for 2.8 mΩ)", name, v))
			return nil
		}
		return &x
	}
	req := func(name string) float64 {
		x := num(name)
		if x == nil {
			if get(name) == "" {
				problems = append(problems, name+": is required")
			}
			return 0
		}
		return *x
	}
	c := sizing.Cell{ID: get("id"), Name: get("name"), Source: get("source"), Notes: get("notes"), Electrolyte: get("electrolyte")}
	if c.ID == "" {
		problems = append(problems, "id: is required")
	}
	cv := reflect.ValueOf(&c).Elem()
	var tolerance [2]*float64
	for _, name := range cellColumns {
		nc, ok := numberColumns[name]
		if !ok {
			continue
		}
		field := cv.Field(nc.field)
		switch {
		case nc.part >= 0:
			tolerance[nc.part] = num(name)
		case field.Kind() == reflect.Float64:
			field.SetFloat(req(name))
		default:
			if x := num(name); x != nil {
				field.Set(reflect.ValueOf(x))
			}
		}
	}
	switch minus, plus := tolerance[0], tolerance[1]; {
	case minus != nil && plus != nil:
		c.CapacitanceTolerancePct = []float64{*minus, *plus}
	case minus != nil || plus != nil:
		problems = append(problems, "capacitance_minus_pct and capacitance_plus_pct go together: give both or neither")
	}
	c.Module = moduleFromRecord(get, num, &problems)
	if v := get(deratingKey); v != "" {
		var pts [][]float64
		if err := json.Unmarshal([]byte(v), &pts); err != nil {
			problems = append(problems, fmt.Sprintf("%s: %q is not a list of [temp_c, max_cell_v] pairs; write it as the design file does, e.g. [[25,2.7],[65,2.5]]", deratingKey, v))
		} else {
			c.VoltageDerating = pts // its pairs, order and ranges are ValidateCell's
		}
	}
	p.cell = c
	if len(problems) > 0 {
		p.err = strings.Join(problems, "; ")
	}
	return p
}

// moduleFromRecord reads a row's module columns; nil when all are empty.
// A module given without module_series is a problem, never dropped.
func moduleFromRecord(get func(string) string, num func(string) *float64, problems *[]string) *sizing.Module {
	given := false
	for _, name := range moduleColumns {
		given = given || get(name) != ""
	}
	if !given {
		return nil
	}
	whole := func(name string) *int {
		x := num(name)
		if x == nil {
			return nil
		}
		if *x != math.Trunc(*x) || math.Abs(*x) > 1e6 {
			*problems = append(*problems, fmt.Sprintf("%s: %q is not a whole number of cells", name, get(name)))
			return nil
		}
		n := int(*x)
		return &n
	}
	m := &sizing.Module{Name: get("module_name"), Parallel: whole("module_parallel"),
		MassKg: num("module_mass_kg"), VolumeL: num("module_volume_l"), UnitPrice: num("module_unit_price")}
	switch series := whole("module_series"); {
	case series != nil:
		m.Series = *series
	case get("module_series") == "":
		*problems = append(*problems, "module_series: is required when any module column is given (the module's cells in series)")
	}
	return m
}

// moduleRecord writes cell c's module into its columns of rec.
func moduleRecord(rec []string, c *sizing.Cell, f func(*float64) string) {
	m := c.Module
	if m == nil {
		return
	}
	for j, name := range cellColumns {
		switch name {
		case "module_series":
			rec[j] = strconv.Itoa(m.Series)
		case "module_parallel":
			if m.Parallel != nil {
				rec[j] = strconv.Itoa(*m.Parallel)
			}
		case "module_mass_kg":
			rec[j] = f(m.MassKg)
		case "module_volume_l":
			rec[j] = f(m.VolumeL)
		case "module_unit_price":
			rec[j] = f(m.UnitPrice)
		case "module_name":
			rec[j] = Neutralise(m.Name)
		}
	}
}

// ExportCellsCSV writes cells as CSV with the cellColumns header. Text
// that a spreadsheet would run as a formula (leading =, +, -, @, tab, CR)
// is written with a leading single quote; ImportCellsCSV removes it again.
func ExportCellsCSV(w io.Writer, cells []sizing.Cell) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(cellColumns); err != nil {
		return err
	}
	f := func(p *float64) string {
		if p == nil {
			return ""
		}
		return strconv.FormatFloat(*p, 'g', -1, 64)
	}
	for i := range cells {
		cv := reflect.ValueOf(&cells[i]).Elem()
		rec := make([]string, len(cellColumns))
		for j, name := range cellColumns {
			nc, isNumber := numberColumns[name]
			if !isNumber {
				continue
			}
			field := cv.Field(nc.field)
			switch {
			case nc.part >= 0:
				if field.Len() == 2 {
					rec[j] = f(new(field.Index(nc.part).Float()))
				}
			case field.Kind() == reflect.Float64:
				rec[j] = f(new(field.Float()))
			default:
				rec[j] = f(field.Interface().(*float64))
			}
		}
		c := &cells[i]
		for j, name := range cellColumns {
			switch name {
			case "id":
				rec[j] = Neutralise(c.ID)
			case "name":
				rec[j] = Neutralise(c.Name)
			case "source":
				rec[j] = Neutralise(c.Source)
			case "electrolyte":
				rec[j] = Neutralise(c.Electrolyte)
			case "notes":
				rec[j] = Neutralise(c.Notes)
			case deratingKey:
				if len(c.VoltageDerating) > 0 {
					b, err := json.Marshal(c.VoltageDerating)
					if err != nil {
						return fmt.Errorf("cell %q: voltage_derating: %w", c.ID, err)
					}
					rec[j] = string(b)
				}
			}
		}
		moduleRecord(rec, c, f)
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// ExportCellsJSON writes cells as an indented JSON list of design-file cells.
func ExportCellsJSON(w io.Writer, cells []sizing.Cell) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	if cells == nil {
		cells = []sizing.Cell{}
	}
	return enc.Encode(cells)
}

// Neutralise prefixes a single quote to text a spreadsheet would run as a
// formula: a leading =, +, -, @, tab or carriage return.
func Neutralise(s string) string {
	if s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return "'" + s
	}
	return s
}

func unneutralise(s string) string {
	if len(s) > 1 && s[0] == '\'' && strings.ContainsRune("=+-@\t\r", rune(s[1])) {
		return s[1:]
	}
	return s
}
