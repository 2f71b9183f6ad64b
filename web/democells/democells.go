// Package democells holds capbank's built-in demonstration cells: invented
// EDLC, aqueous and hybrid cells whose figures are plausible for the field
// (ESR falling and mass rising with capacitance) but belong to no product,
// maker or measurement. Their names say so. The web page offers them as
// candidates; the cell library will load them into its store.
package democells

import (
	"bytes"
	_ "embed"
	"encoding/json"

	"capbank/sizing"
)

//go:embed cells.json
var cellsJSON []byte

// file is the layout of cells.json.
type file struct {
	Note  string        `json:"note"`
	Cells []sizing.Cell `json:"cells"`
}

// All returns the demo cells in display order: by electrolyte family and
// rated voltage, then by capacitance. Each call returns fresh values, so a
// caller may change them (their pointers are not shared).
func All() []sizing.Cell {
	dec := json.NewDecoder(bytes.NewReader(cellsJSON))
	dec.DisallowUnknownFields()
	var f file
	if err := dec.Decode(&f); err != nil {
		panic("democells: cells.json: " + err.Error()) // embedded at build time and checked by the tests
	}
	return f.Cells
}

// ByID returns the demo cell with the given id.
func ByID(id string) (sizing.Cell, bool) {
	for _, c := range All() {
		if c.ID == id {
			return c, true
		}
	}
	return sizing.Cell{}, false
}
