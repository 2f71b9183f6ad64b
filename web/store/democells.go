package store

// The built-in demonstration cells: invented EDLC, aqueous and hybrid
// cells whose figures are plausible for the field (ESR falling and mass
// rising with capacitance) but belong to no product, maker or
// measurement. Their names say so. A new database is seeded with them
// (SeedDemo); without a database the web page offers them as they are.

import (
	_ "embed"

	"capbank/sizing"
)

//go:embed democells.json
var demoCellsJSON []byte

// demoFile is the layout of democells.json.
type demoFile struct {
	Note  string        `json:"note"`
	Cells []sizing.Cell `json:"cells"`
}

// DemoCells returns the demo cells in display order: by electrolyte family and
// rated voltage, then by capacitance. Each call returns fresh values, so a
// caller may change them (their pointers are not shared).
func DemoCells() []sizing.Cell {
	var f demoFile
	if err := sizing.DecodeStrict(demoCellsJSON, &f, "democells.json"); err != nil {
		panic("store: democells.json: " + err.Error()) // embedded at build time and checked by the tests
	}
	return f.Cells
}

// DemoCell returns the demo cell with the given id.
func DemoCell(id string) (sizing.Cell, bool) {
	for _, c := range DemoCells() {
		if c.ID == id {
			return c, true
		}
	}
	return sizing.Cell{}, false
}
