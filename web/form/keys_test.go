package form

import (
	"reflect"
	"strings"
	"testing"

	"capbank/sizing"
	"capbank/sizing/cellmodel"
)

// designFileKeys lists the leaf keys of a design-file type by their
// dotted paths (a struct is walked into, a list of structs is not: its
// rows are the form's own).
func designFileKeys(t reflect.Type, prefix string) []string {
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	var out []string
	for i := range t.NumField() {
		f := t.Field(i)
		key, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		if key == "" || key == "-" || !f.IsExported() {
			continue
		}
		ft := f.Type
		for ft.Kind() == reflect.Pointer {
			ft = ft.Elem()
		}
		if ft.Kind() == reflect.Struct {
			out = append(out, designFileKeys(ft, prefix+key+".")...)
			continue
		}
		out = append(out, prefix+key)
	}
	return out
}

// TestEveryDesignKeyHasAField: every key of the design file and of a cell
// has its input in the form, so that a design opened in the page is never
// dropped a key of without a word (series_multiple, a cell's module and its
// voltage derating once were). The keys the form holds otherwise are
// listed with where they go.
func TestEveryDesignKeyHasAField(t *testing.T) {
	t.Parallel()
	otherwise := map[string]string{
		"cells":                 "the cell picker, the typed cell and the kept cells",
		"load.steps":            "the step rows",
		"load.profile_csv":      "refused by FromDesign with what to do instead",
		"load.profile_csv_text": ProfileField,
		"boq.extras":            "the own-line rows",
		"explore.extra_series":  "refused by FromDesign; the explorer page has its own settings",
		"explore.objectives":    "refused by FromDesign; the explorer page has its own settings",
	}
	for _, key := range designFileKeys(reflect.TypeFor[sizing.Design](), "") {
		if _, ok := otherwise[key]; ok {
			continue
		}
		if _, ok := FieldLabels[key]; !ok {
			t.Errorf("design key %s has no field in the form", key)
		}
	}
	for _, key := range designFileKeys(reflect.TypeFor[sizing.Cell](), "") {
		if key == "capacitance_tolerance_pct" {
			key += "[0]" // the pair is two fields
		}
		if strings.HasPrefix(key, "model.") {
			continue // a cell with a model is refused by FromDesign with what to do instead
		}
		if _, ok := cellKeys[key]; !ok {
			t.Errorf("cell key %s has no field in the cell's inputs", key)
		}
	}
}

// TestCellModelRefusedByName: a design whose cell carries a branch model
// (cells[].model) is refused by the form with the cell and what to do,
// never opened with the model dropped, which would size a different cell.
func TestCellModelRefusedByName(t *testing.T) {
	t.Parallel()
	d := &sizing.Design{Cells: []sizing.Cell{{ID: "fit-1", Model: &cellmodel.Spec{Kind: "two-branch"}}}}
	_, err := FromDesign(d, nil)
	if err == nil || !strings.Contains(err.Error(), `"fit-1"`) || !strings.Contains(err.Error(), "cells[].model") {
		t.Fatalf("FromDesign = %v, want a refusal naming the cell and cells[].model", err)
	}
}
