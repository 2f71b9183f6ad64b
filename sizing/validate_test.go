package sizing

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// validDesign is a small invented design that passes Validate.
func validDesign() *Design {
	return &Design{Name: "ok", Window: Window{MaxV: 42, MinV: 21}, CellMaxV: fp(2.8),
		Load: Load{Efficiency: fp(0.94), Repeat: ip(1), Steps: []Step{
			{PowerW: fp(3500), DurationS: 11}, {CurrentA: fp(40), DurationS: 1.5},
			{ResistanceOhm: fp(2.2), DurationS: 18}, {Rest: true, DurationS: 3.5}}},
		Cells: []Cell{testCell("a")}}
}

func TestValidateAcceptsValid(t *testing.T) {
	t.Parallel()
	if err := Validate(validDesign()); err != nil {
		t.Fatalf("valid design rejected: %v", err)
	}
}

func TestValidateBadDesigns(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name   string
		break_ func(d *Design)
		field  string // the field path the error must name
		msg    string // a part of its message
	}{
		{"zero duration", func(d *Design) { d.Load.Steps[2].DurationS = 0 }, "load.steps[2].duration_s", "must be greater than 0"},
		{"negative duration", func(d *Design) { d.Load.Steps[0].DurationS = -1 }, "load.steps[0].duration_s", "must be greater than 0"},
		{"NaN duration", func(d *Design) { d.Load.Steps[1].DurationS = math.NaN() }, "load.steps[1].duration_s", "finite"},
		{"infinite power", func(d *Design) { d.Load.Steps[0].PowerW = fp(math.Inf(1)) }, "load.steps[0].power_w", "finite"},
		{"two kinds in a step", func(d *Design) { d.Load.Steps[0].CurrentA = fp(3) }, "load.steps[0]", "exactly one of"},
		{"no kind in a step", func(d *Design) { d.Load.Steps[3].Rest = false }, "load.steps[3]", "exactly one of"},
		{"negative resistance", func(d *Design) { d.Load.Steps[2].ResistanceOhm = fp(-2) }, "load.steps[2].resistance_ohm", "greater than 0"},
		{"no steps", func(d *Design) { d.Load.Steps = nil }, "load.steps", "at least 1 item"},
		{"window upside down", func(d *Design) { d.Window.MinV = 50 }, "window.min_v", "must be below window.max_v (50 V ≥ 42 V)"},
		{"window equal", func(d *Design) { d.Window.MinV = 42 }, "window.min_v", "below window.max_v"},
		{"window top zero", func(d *Design) { d.Window.MaxV = 0 }, "window.max_v", "greater than 0"},
		{"efficiency zero", func(d *Design) { d.Load.Efficiency = fp(0) }, "load.efficiency", "greater than 0"},
		{"efficiency above one", func(d *Design) { d.Load.Efficiency = fp(1.2) }, "load.efficiency", "at most 1"},
		{"repeat zero", func(d *Design) { d.Load.Repeat = ip(0) }, "load.repeat", "at least 1"},
		{"pass too long", func(d *Design) { d.Load.Repeat = ip(3_000_000) }, "load.repeat", "at most"},
		{"pass steps limit", func(d *Design) {
			d.Load.Repeat = ip(1_000_000)
			d.Load.Steps = append(d.Load.Steps, d.Load.Steps...)
			d.Load.Steps = append(d.Load.Steps, d.Load.Steps...)
		},
			"load.repeat", "more than 10000000"},
		{"EOL capacitance factor", func(d *Design) { d.EOL = &EOL{CapacitanceFactor: fp(1.3)} }, "eol.capacitance_factor", "at most 1"},
		{"EOL ESR factor", func(d *Design) { d.EOL = &EOL{ESRFactor: fp(0.5)} }, "eol.esr_factor", "at least 1"},
		{"rank by", func(d *Design) { d.RankBy = "colour" }, "rank_by", "one of: price, cells, mass, volume"},
		{"no cells", func(d *Design) { d.Cells = nil }, "cells", "at least 1 item"},
		{"cell without id", func(d *Design) { d.Cells[0].ID = "" }, "cells[0].id", "is required"},
		{"duplicate id", func(d *Design) { d.Cells = append(d.Cells, d.Cells[0]) }, "cells[1].id", "repeats the id of cells[0]"},
		{"zero capacitance", func(d *Design) { d.Cells[0].CapacitanceF = 0 }, "cells[0].capacitance_f", "greater than 0"},
		{"zero ESR", func(d *Design) { d.Cells[0].ESROhm = 0 }, "cells[0].esr_ohm", "greater than 0"},
		{"surge below rated", func(d *Design) { d.Cells[0].SurgeV = fp(2.5) }, "cells[0].surge_v", "at least rated_v (2.5 V < 2.7 V)"},
		{"tolerance minus positive", func(d *Design) { d.Cells[0].CapacitanceTolerancePct = []float64{5, 20} }, "cells[0].capacitance_tolerance_pct[0]", "minus tolerance"},
		{"tolerance plus huge", func(d *Design) { d.Cells[0].CapacitanceTolerancePct = []float64{-10, 500} }, "cells[0].capacitance_tolerance_pct[1]", "plus tolerance"},
		{"tolerance one number", func(d *Design) { d.Cells[0].CapacitanceTolerancePct = []float64{-10} }, "cells[0].capacitance_tolerance_pct", "exactly 2"},
		{"cold factor alone", func(d *Design) { d.Cells[0].ColdESRFactor = fp(2) }, "cells[0].cold_esr_temp_c", "give both or neither"},
		{"cold point warm", func(d *Design) { d.Cells[0].ColdESRFactor = fp(2); d.Cells[0].ColdESRTempC = fp(30) }, "cells[0].cold_esr_temp_c", "less than 25"},
		{"cold factor below one", func(d *Design) { d.Cells[0].ColdESRFactor = fp(0.5); d.Cells[0].ColdESRTempC = fp(-40) }, "cells[0].cold_esr_factor", "at least 1"},
		{"temperature range", func(d *Design) { d.Cells[0].MinTempC = fp(70); d.Cells[0].MaxTempC = fp(65) }, "cells[0].min_temp_c", "below max_temp_c"},
		{"peak below continuous", func(d *Design) { d.Cells[0].MaxCurrentA = fp(100); d.Cells[0].PeakCurrentA = fp(50) }, "cells[0].peak_current_a", "at least max_current_a"},
		{"leakage in mA by mistake", func(d *Design) { d.Cells[0].LeakageA = fp(1000) }, "cells[0].leakage_a", "check the unit"},
		{"negative price", func(d *Design) { d.Cells[0].UnitPrice = fp(-1) }, "cells[0].unit_price", "at least 0"},
		{"ceiling zero", func(d *Design) { d.CellMaxV = fp(0) }, "cell_max_v", "greater than 0"},
		{"cold far off", func(d *Design) { d.ColdC = fp(-300) }, "cold_c", "at least -100"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			d := validDesign()
			c.break_(d)
			err := Validate(d)
			var ve ValidationError
			if !errors.As(err, &ve) {
				t.Fatalf("Validate = %v, want a ValidationError", err)
			}
			for _, fe := range ve {
				if fe.Field == c.field && strings.Contains(fe.Message, c.msg) {
					return
				}
			}
			t.Errorf("no error on %s containing %q; got:\n%v", c.field, c.msg, err)
		})
	}
}

// TestValidateRefusesAbsurdValues: issue 14, items 3 and 4. Each value was
// accepted and sized to a wrong or non-finite figure (a series count of
// −9223372036854775808, a short-circuit current of +Inf A); each is now
// refused by its field. The floors are in design.go with their reasons.
func TestValidateRefusesAbsurdValues(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name   string
		break_ func(d *Design)
		field  string
		msg    string
	}{
		{"rated voltage 1e-20 V", func(d *Design) { d.Cells[0].RatedV = 1e-20; d.Cells[0].SurgeV = nil }, "cells[0].rated_v", "must be at least 0.1"},
		{"rated voltage 1e-15 V", func(d *Design) { d.Cells[0].RatedV = 1e-15; d.Cells[0].SurgeV = nil }, "cells[0].rated_v", "must be at least 0.1"},
		{"denormal ceiling", func(d *Design) { d.CellMaxV = fp(5e-324) }, "cell_max_v", "must be at least 0.1"},
		// Own arithmetic: 42 000 V / 2.7 V = 15 555.6 → 15 556 cells.
		{"window top in millivolts", func(d *Design) { d.Window.MaxV = 42000 }, "cells[0].rated_v",
			"needs 15556 cells in series to hold window.max_v (42000 V) at 2.7 V per cell, more than 10000; check window.max_v and rated_v"},
		// Own arithmetic: 42 000 V / 2.5 V = 16 800 cells.
		{"ceiling and window top", func(d *Design) { d.Window.MaxV = 42000; d.CellMaxV = fp(2.5) }, "cell_max_v",
			"needs 16800 cells in series to hold window.max_v (42000 V) at 2.5 V per cell, more than 10000; check window.max_v and cell_max_v"},
		{"denormal ESR", func(d *Design) { d.Cells[0].ESROhm = 1e-310 }, "cells[0].esr_ohm", "must be at least 1e-6"},
		{"smallest ESR", func(d *Design) { d.Cells[0].ESROhm = 5e-324 }, "cells[0].esr_ohm", "must be at least 1e-6"},
		{"denormal capacitance", func(d *Design) { d.Cells[0].CapacitanceF = 1e-310 }, "cells[0].capacitance_f", "must be at least 1e-6"},
		{"picosecond step", func(d *Design) { d.Load.Steps[1].DurationS = 1e-12 }, "load.steps[1].duration_s", "must be at least 1e-9"},
		{"tiny efficiency", func(d *Design) { d.Load.Efficiency = fp(1e-300) }, "load.efficiency", "must be at least 0.01"},
		{"tiny end-of-life capacitance", func(d *Design) { d.EOL = &EOL{CapacitanceFactor: fp(1e-300)} }, "eol.capacitance_factor", "must be at least 0.1"},
		{"tiny window bottom", func(d *Design) { d.Window.MinV = 1e-300 }, "window.min_v", "must be at least 0.001"},
		{"attowatt load", func(d *Design) { d.Load.Steps[0].PowerW = fp(1e-18) }, "load.steps[0].power_w", "below 1e-15 W"},
		{"denormal charge", func(d *Design) { d.Load.Steps[0].PowerW = fp(-5e-324) }, "load.steps[0].power_w", "below 1e-15 W"},
		{"denormal leakage", func(d *Design) { d.Cells[0].LeakageA = fp(1e-310) }, "cells[0].leakage_a", "below 1e-12 A"},
		{"denormal quiescent draw", func(d *Design) { d.Balancing = &Balancing{Kind: "active", QuiescentA: fp(1e-310)} },
			"balancing.quiescent_a", "below 1e-12 A"},
		{"denormal leakage spread", func(d *Design) { d.Balancing = &Balancing{LeakageSpreadA: fp(1e-310)} },
			"balancing.leakage_spread_a", "must be at least 1e-12"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			d := validDesign()
			d.Cells = append(d.Cells, testCell("b"))
			c.break_(d)
			var ve ValidationError
			if err := Validate(d); !errors.As(err, &ve) {
				t.Fatalf("Validate = %v, want a ValidationError", err)
			}
			n := 0
			for _, fe := range ve {
				if fe.Field == c.field && strings.Contains(fe.Message, c.msg) {
					n++
				}
			}
			if n != 1 {
				t.Errorf("%d errors on %s containing %q, want 1; got:\n%v", n, c.field, c.msg, ve)
			}
		})
	}
	// Zero stays allowed where it means "none".
	d := validDesign()
	d.Load.Steps[0].PowerW = fp(0)
	d.Cells[0].LeakageA = fp(0)
	d.Balancing = &Balancing{Kind: "active", QuiescentA: fp(0)}
	if err := Validate(d); err != nil {
		t.Errorf("zero power, leakage and quiescent draw: %v", err)
	}
}

func TestValidateReportsEveryProblem(t *testing.T) {
	t.Parallel()
	d := validDesign()
	d.Load.Steps[0].DurationS = 0
	d.Load.Steps[2].DurationS = -3
	d.Window.MinV = 99
	err := Validate(d)
	lines := strings.Split(err.Error(), "\n")
	want := []string{
		"load.steps[0].duration_s: must be greater than 0",
		"load.steps[2].duration_s: must be greater than 0",
		"window.min_v: must be below window.max_v (99 V ≥ 42 V)",
	}
	if strings.Join(lines, "\n") != strings.Join(want, "\n") {
		t.Errorf("errors:\n%s\nwant:\n%s", err, strings.Join(want, "\n"))
	}
	if _, err := Size(d); err == nil {
		t.Errorf("Size sized an invalid design")
	}
}

func TestDecodeDesignErrors(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name, in, field, msg string
	}{
		{"string for a number", `{"window":{"max_v":"42","min_v":21}}`, "window.max_v", "must be a number, not a JSON string"},
		{"unknown key", `{"window":{"max_v":42,"min_v":21},"windw":{}}`, "windw", "not a design key"},
		{"nested unknown key", `{"load":{"steps":[{"power":5,"duration_s":1}]}}`, "load.steps[0].power", "not a design key"},
		{"truncated", `{"window":{"max_v":42,`, "design", "truncated"},
		{"syntax", `{"window":{"max_v":42,,}}`, "design", "line 1, column"},
		{"empty", ``, "design", "is empty"},
		{"trailing data", `{} {}`, "design", "after the closing brace"},
		{"NaN spelled", `{"window":{"max_v":NaN}}`, "design", "not valid JSON"},
		{"list for an object", `{"window":[42,21]}`, "window", "must be an object"},
		{"fraction for a count", `{"load":{"repeat":1.5}}`, "load.repeat", "a whole number"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			_, err := DecodeDesign(strings.NewReader(c.in))
			var ve ValidationError
			if !errors.As(err, &ve) || len(ve) != 1 || ve[0].Field != c.field || !strings.Contains(ve[0].Message, c.msg) {
				t.Errorf("DecodeDesign(%q) = %v; want %s: …%s…", c.in, err, c.field, c.msg)
			}
		})
	}
	for _, c := range []struct{ name, in, msg string }{
		{"UTF-16", "\xff\xfe{\x00}\x00", "is UTF-16 text"},
		{"Latin-1", "{\"name\": \"caf\xe9\"}", "not valid UTF-8 at line 1, column 14"},
	} {
		_, err := DecodeDesign(strings.NewReader(c.in))
		if err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%s: %v, want …%s…", c.name, err, c.msg)
		}
	}
	// A byte-order mark is accepted (some editors write one).
	if _, err := DecodeDesign(strings.NewReader("\ufeff{}")); err != nil {
		t.Errorf("BOM: %v", err)
	}
}

func TestValidateCell(t *testing.T) {
	t.Parallel()
	c := testCell("lib")
	if err := ValidateCell(&c); err != nil {
		t.Fatalf("valid cell: %v", err)
	}
	c.ESROhm = 0
	c.SurgeV = fp(2.0)
	err := ValidateCell(&c)
	want := "esr_ohm: must be greater than 0\nsurge_v: must be at least rated_v (2 V < 2.7 V)"
	if err == nil || err.Error() != want {
		t.Errorf("ValidateCell = %v, want\n%s", err, want)
	}
}

// TestValidateCellIDs: issue 14, item 9. Ids that are blank or hold an
// invisible character were accepted; each is refused, in a cell on its own
// (a library) and in a design, by the id's field.
func TestValidateCellIDs(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name, id, rule, msg string
	}{
		{"spaces", "   ", "blank", `is blank ("   ")`},
		{"tab and newline", "\t\n", "blank", `is blank ("\t\n")`},
		{"no-break space", "\u00a0", "blank", "is blank"},
		{"a bell", "demo\abell", "control", `holds the invisible character U+0007 at byte 4 ("demo\abell")`},
		{"a NUL", "a\x00", "control", "U+0000 at byte 1"},
		{"a newline inside", "cell\n2", "control", "U+000A at byte 4"},
		{"a right-to-left override", "abc\u202edef", "control", "U+202E at byte 3"},
		{"a zero-width space", "a\u200bb", "control", "U+200B"},
		{"not UTF-8", "caf\xe9", "utf8", "is not valid UTF-8"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			c := testCell(tc.id)
			p := strictProblem(t, ValidateCell(&c))
			if p.Field != "id" || p.Rule != tc.rule || !strings.Contains(p.Message, tc.msg) {
				t.Errorf("ValidateCell: %s (%s): %s; want id (%s): …%s…", p.Field, p.Rule, p.Message, tc.rule, tc.msg)
			}
			d := validDesign()
			d.Cells = append(d.Cells, c)
			p = strictProblem(t, Validate(d))
			if p.Field != "cells[1].id" || p.Rule != tc.rule {
				t.Errorf("Validate: %s (%s): %s; want cells[1].id (%s)", p.Field, p.Rule, p.Message, tc.rule)
			}
		})
	}
	// Ids a user would write stay valid: spaces inside, accents, symbols.
	for _, id := range []string{"demo 400 F", "Zellé-3000/2,7V", "a", "x_y.z#1"} {
		c := testCell(id)
		if err := ValidateCell(&c); err != nil {
			t.Errorf("id %q: %v", id, err)
		}
	}
}

func TestLibraryCellReferences(t *testing.T) {
	t.Parallel()
	in := `{"window":{"max_v":27,"min_v":13.5},"load":{"steps":[{"current_a":5,"duration_s":10}]},
		"cells":["lib-a",{"id":"inline","rated_v":2.7,"capacitance_f":300,"esr_ohm":0.004},"lib-missing"]}`
	d, err := DecodeDesign(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	if !d.Cells[0].IsReference() || d.Cells[1].IsReference() || !d.Cells[2].IsReference() {
		t.Fatalf("references: %v %v %v", d.Cells[0].IsReference(), d.Cells[1].IsReference(), d.Cells[2].IsReference())
	}
	lib := map[string]Cell{"lib-a": testCell("lib-a")}
	d.ResolveCells(func(id string) (Cell, bool) { c, ok := lib[id]; return c, ok })
	err = Validate(d)
	want := `cells[2]: names library cell "lib-missing", which is not in the cell library; add it to the library or give the cell inline`
	if err == nil || err.Error() != want {
		t.Errorf("Validate = %v, want %s", err, want)
	}
	d.Cells = d.Cells[:2]
	if r := mustSize(t, d); r.Candidates[0].CellID != "lib-a" && r.Candidates[1].CellID != "lib-a" {
		t.Errorf("resolved library cell not sized")
	}
}
