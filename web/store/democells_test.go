package store

import (
	"encoding/json"
	"reflect"
	"sort"
	"strings"
	"testing"

	"capbank/sizing"
)

func ptr[T any](v T) *T { return &v }

// Every demo cell must size in a tiny design: the engine's one validation
// accepts it, and it gives every figure the report can use.
func TestEveryDemoCellValidates(t *testing.T) {
	t.Parallel()
	cells := DemoCells()
	if n := len(cells); n < 16 || n > 20 {
		t.Fatalf("got %d demo cells, want 16 to 20", n)
	}
	for _, c := range cells {
		t.Run(c.ID, func(t *testing.T) {
			t.Parallel()
			d := &sizing.Design{
				Name:   "demo cell check",
				Window: sizing.Window{MaxV: 2 * c.RatedV, MinV: c.RatedV},
				Load:   sizing.Load{Steps: []sizing.Step{{CurrentA: ptr(0.01), DurationS: 1}}},
				Cells:  []sizing.Cell{c},
			}
			if err := sizing.Validate(d); err != nil {
				t.Fatalf("sizing.Validate: %v", err)
			}
			if _, err := sizing.Size(d); err != nil {
				t.Fatalf("sizing.Size: %v", err)
			}
		})
	}
}

// Every key of sizing.Cell is filled in democells.json, so the demo set shows
// every figure the engine can judge; min_v only for the hybrid cell (an
// EDLC may be discharged to 0 V, so it has no floor to give), and no
// module or voltage derating (the demo cells are single cells).
func TestEveryKeyFilled(t *testing.T) {
	t.Parallel()
	var raw struct {
		Cells []map[string]any `json:"cells"`
	}
	if err := json.Unmarshal(demoCellsJSON, &raw); err != nil {
		t.Fatal(err)
	}
	ct := reflect.TypeOf(sizing.Cell{})
	for _, c := range raw.Cells {
		for i := range ct.NumField() {
			if !ct.Field(i).IsExported() {
				continue
			}
			key, _, _ := strings.Cut(ct.Field(i).Tag.Get("json"), ",")
			if key == "min_v" && c["electrolyte"] != "hybrid" {
				continue
			}
			// A module and a voltage derating describe a cell that has
			// them; the demo cells are single cells of one rated voltage.
			// The demo cells are sized as their capacitance behind their
			// ESR; a branch model is the user's own fit.
			if key == "module" || key == "voltage_derating" || key == "model" {
				continue
			}
			if _, ok := c[key]; !ok {
				t.Errorf("%v: key %q missing", c["id"], key)
			}
		}
	}
}

func TestIDsAndNames(t *testing.T) {
	t.Parallel()
	seen := map[string]bool{}
	for _, c := range DemoCells() {
		if !strings.HasPrefix(c.ID, "demo-") {
			t.Errorf("id %q does not start with demo-", c.ID)
		}
		if seen[c.ID] {
			t.Errorf("id %q repeats", c.ID)
		}
		seen[c.ID] = true
		if !strings.Contains(c.Name, "(demo, invented)") {
			t.Errorf("%s: name %q does not say it is invented", c.ID, c.Name)
		}
		if c.Source != "demo" {
			t.Errorf("%s: source %q, want demo", c.ID, c.Source)
		}
		if got, ok := DemoCell(c.ID); !ok || got.ID != c.ID {
			t.Errorf("DemoCell(%q) = %v, %v", c.ID, got.ID, ok)
		}
	}
	if _, ok := DemoCell("no-such-cell"); ok {
		t.Error("ByID found a cell that does not exist")
	}
}

// The set spans the field: the brief asks for small backup cells of a few
// farads, cells of thousands of farads, 2.5, 2.7 and 3.0 V organic cells,
// one aqueous cell near 0.9–1.0 V and one hybrid near 3.8 V.
func TestSpansTheField(t *testing.T) {
	t.Parallel()
	var minF, maxF float64 = 1e9, 0
	organicV := map[float64]bool{}
	var aqueous, hybrid int
	for _, c := range DemoCells() {
		minF, maxF = min(minF, c.CapacitanceF), max(maxF, c.CapacitanceF)
		switch c.Electrolyte {
		case "organic":
			organicV[c.RatedV] = true
		case "aqueous":
			aqueous++
			if c.RatedV < 0.9 || c.RatedV > 1.0 {
				t.Errorf("%s: aqueous cell rated %g V, want 0.9–1.0 V", c.ID, c.RatedV)
			}
		case "hybrid":
			hybrid++
			if c.RatedV < 3.6 || c.RatedV > 4.0 {
				t.Errorf("%s: hybrid cell rated %g V, want about 3.8 V", c.ID, c.RatedV)
			}
		}
	}
	if minF > 5 || maxF < 2000 {
		t.Errorf("capacitance spans %g F to %g F, want a few farads to thousands", minF, maxF)
	}
	for _, v := range []float64{2.5, 2.7, 3.0} {
		if !organicV[v] {
			t.Errorf("no organic cell rated %g V", v)
		}
	}
	if aqueous != 1 || hybrid != 1 {
		t.Errorf("got %d aqueous and %d hybrid cells, want one of each", aqueous, hybrid)
	}
}

// Within a family (electrolyte and rated voltage), a larger cell has a lower
// ESR and a higher mass, volume and leakage, as real cells do.
func TestFiguresScaleWithCapacitance(t *testing.T) {
	t.Parallel()
	type family struct {
		electrolyte string
		ratedV      float64
	}
	fams := map[family][]sizing.Cell{}
	for _, c := range DemoCells() {
		k := family{c.Electrolyte, c.RatedV}
		fams[k] = append(fams[k], c)
	}
	for k, cs := range fams {
		sort.Slice(cs, func(i, j int) bool { return cs[i].CapacitanceF < cs[j].CapacitanceF })
		for i := 1; i < len(cs); i++ {
			a, b := cs[i-1], cs[i]
			if !(b.ESROhm < a.ESROhm) {
				t.Errorf("%v: ESR %g Ω at %g F is not below %g Ω at %g F", k, b.ESROhm, b.CapacitanceF, a.ESROhm, a.CapacitanceF)
			}
			if !(*b.MassKg > *a.MassKg) || !(*b.VolumeL > *a.VolumeL) {
				t.Errorf("%v: %s is not heavier and larger than %s", k, b.ID, a.ID)
			}
			if !(*b.LeakageA > *a.LeakageA) {
				t.Errorf("%v: %s leaks no more than %s", k, b.ID, a.ID)
			}
			if !(*b.ThermalResistanceKPerW < *a.ThermalResistanceKPerW) {
				t.Errorf("%v: %s has no lower thermal resistance than %s", k, b.ID, a.ID)
			}
		}
	}
}

func TestAllReturnsFreshValues(t *testing.T) {
	t.Parallel()
	a := DemoCells()
	*a[0].MassKg = 99
	if b := DemoCells(); *b[0].MassKg == 99 {
		t.Fatal("All shares pointers between calls")
	}
}
