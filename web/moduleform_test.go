package web

import (
	"encoding/json"
	"net/http"
	"net/url"
	"os"
	"reflect"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/components"
	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/form"
	"capbank/web/share"
	"capbank/web/store"
)

// moduleDesign is designValues' design with modules and a voltage
// derating (issue 19): the design's series multiple, a typed cell with its
// own module and derating table, and a kept cell with a module of its own.
// Invented figures.
const moduleDesign = `{
  "window": {"max_v": 48, "min_v": 24},
  "load": {"steps": [{"power_w": 1500, "duration_s": 10}]},
  "series_multiple": 4,
  "cells": ["demo-2v7-650f",
    {"id": "own-mod", "rated_v": 2.7, "capacitance_f": 650, "esr_ohm": 0.0008, "mass_kg": 0.16, "unit_price": 9,
     "module": {"name": "Own 6S module", "series": 6, "parallel": 1, "mass_kg": 1.2, "volume_l": 0.9, "unit_price": 70},
     "voltage_derating": [[25, 2.7], [65, 2.5], [70.5, 2.35]]},
    {"id": "own-kept", "rated_v": 3, "capacitance_f": 500, "esr_ohm": 0.001, "module": {"series": 3}, "voltage_derating": [[60, 2.8]]}]
}`

// moduleTyped is what the typed cell's and the design's new fields show.
var moduleTyped = map[string]string{
	"series_multiple":          "4",
	"inline.voltage_derating":  "25 °C: 2.7 V, 65 °C: 2.5 V, 70.5 °C: 2.35 V",
	"inline.module.series":     "6",
	"inline.module.parallel":   "1",
	"inline.module.name":       "Own 6S module",
	"inline.module.mass_kg":    "1.2",
	"inline.module.volume_l":   "0.9",
	"inline.module.unit_price": "70",
}

// TestModuleKeysRoundTrip: a design file with series_multiple, a cell's
// module and its voltage derating opens in the form with each in its
// field, and the page's inputs decode back into the very same design.
// Before, the page dropped all three without a word.
func TestModuleKeysRoundTrip(t *testing.T) {
	t.Parallel()
	d := decodeFile(t, moduleDesign)
	f, err := form.FromDesign(d, store.DemoCell)
	if err != nil {
		t.Fatal(err)
	}
	vals := unsizedValues(t, f)
	for name, want := range moduleTyped {
		if got := vals.Get(name); got != want {
			t.Errorf("%s shows %q, want %q", name, got, want)
		}
	}
	dec := form.Read(vals).Decode(store.DemoCell)
	if len(dec.Problems) > 0 {
		t.Fatalf("problems: %v", dec.Problems)
	}
	if !reflect.DeepEqual(dec.Design, d) {
		got, _ := json.Marshal(dec.Design)
		want, _ := json.Marshal(d)
		t.Errorf("decoded\n%s\nwant\n%s", got, want)
	}
	// A derating point that is not a pair cannot be shown: refused by the
	// cell and the point, not dropped.
	bad := strings.Replace(moduleDesign, "[65, 2.5]", "[65, 2.5, 2.4]", 1)
	if _, err := form.FromDesign(decodeFile(t, bad), store.DemoCell); err == nil ||
		!strings.Contains(err.Error(), `cell "own-mod" has a voltage derating point, voltage_derating[1], of 3 numbers`) {
		t.Errorf("a derating point of three numbers: %v, want it refused", err)
	}
}

// ownCellValues is designValues with a typed cell of its own.
func ownCellValues() map[string]string {
	return map[string]string{"inline.id": "own", "inline.rated_v": "2.7", "inline.capacitance_f": "650", "inline.esr_ohm": "0.8m"}
}

// TestModuleFieldsProblems: what does not read, and sizing.Validate's rules
// on the new keys, land beside their fields in the page's words (a table
// point by its number), named by their labels in the summary, and nothing
// is sized from them.
func TestModuleFieldsProblems(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for _, c := range []struct {
		name, field, value, want, label string
	}{
		{"derating unsorted", "inline.voltage_derating", "65 °C: 2.5 V, 25 °C: 2.7 V",
			"point 2 has temperature 25 °C, not above the point before it (65 °C); sort the points by rising temperature", "Own cell, voltage derating"},
		{"derating three numbers", "inline.voltage_derating", "25 °C: 2.7 V: 2.6 V",
			"point 1, “25 °C: 2.7 V: 2.6 V”, has 3 numbers: write each point as temperature: cell voltage", "Own cell, voltage derating"},
		{"derating swapped units", "inline.voltage_derating", "2.7 V: 25 °C",
			"point 1, “2.7 V: 25 °C”: the temperature is not a number", "Own cell, voltage derating"},
		{"derating NaN", "inline.voltage_derating", "25 °C: NaN",
			"point 1, “25 °C: NaN”: the cell voltage is not a number", "Own cell, voltage derating"},
		{"derating no voltage", "inline.voltage_derating", "25 °C:, 65 °C: 2.5 V",
			"point 1, “25 °C:”: the cell voltage is required", "Own cell, voltage derating"},
		{"derating millivolts as volts", "inline.voltage_derating", "25 °C: 2700",
			"point 1 has cell voltage 2700; give one between 0.1 and 1000 V", "Own cell, voltage derating"},
		{"module series zero", "inline.module.series", "0", "must be at least 1", "Own cell, cells in series per module"},
		{"module series fraction", "inline.module.series", "2.5", "must be a whole number", "Own cell, cells in series per module"},
		{"series multiple zero", "series_multiple", "0", "must be at least 1", "Series count in multiples of"},
		{"series multiple text", "series_multiple", "six", "not a number", "Series count in multiples of"},
	} {
		t.Run(c.name, func(t *testing.T) {
			v := designValues()
			for k, val := range ownCellValues() {
				v.Set(k, val)
			}
			v.Set(c.field, c.value)
			if strings.HasPrefix(c.field, "inline.module.") && c.field != "inline.module.series" {
				v.Set("inline.module.series", "6")
			}
			rec := postForm(t, s, "/", v, false)
			wantStatus(t, rec, http.StatusUnprocessableEntity)
			doc := parse(t, rec)
			if got := text(doc, "#msg-"+form.DomID(c.field)); !strings.Contains(got, c.want) {
				t.Errorf("%s says %q, want %q", c.field, got, c.want)
			}
			if n := doc.Find("#problems li").Length(); n != 1 {
				t.Errorf("%d problems, want 1:\n%s", n, text(doc, "#problems"))
			}
			if got := text(doc, "#problems"); !strings.Contains(got, c.label+": ") {
				t.Errorf("the summary %q does not name %q", got, c.label)
			}
			if href := "#f-" + form.DomID(c.field); doc.Find(`#problems a[href="`+href+`"]`).Length() != 1 || doc.Find(href).Length() != 1 {
				t.Errorf("the summary does not link %s to its input", c.field)
			}
			if got, _ := doc.Find(`[name="` + c.field + `"]`).Attr("value"); got != c.value {
				t.Errorf("%s shows %q, want %q as typed", c.field, got, c.value)
			}
			if doc.Find("[data-testid=bank]").Length() != 0 {
				t.Error("a bank was sized from bad values")
			}
		})
	}
}

// TestModulePartAskedFor: a module given in part without its cells in
// series is asked for beside that field, never dropped; the folded Module
// part opens with it.
func TestModulePartAskedFor(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := designValues()
	for k, val := range ownCellValues() {
		v.Set(k, val)
	}
	v.Set("inline.module.unit_price", "70")
	rec := postForm(t, s, "/", v, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	doc := parse(t, rec)
	if got := text(doc, "#msg-inline-module-series"); !strings.Contains(got, "is required when any module field is given") {
		t.Errorf("cells in series per module says %q", got)
	}
	if _, open := doc.Find("details#own-cell-module").Attr("open"); !open {
		t.Error("the Module part with the problem stays folded")
	}
	// Without a module, the part stays folded.
	v.Del("inline.module.unit_price")
	rec = postForm(t, s, "/", v, false)
	wantStatus(t, rec, http.StatusOK)
	if _, open := parse(t, rec).Find("details#own-cell-module").Attr("open"); open {
		t.Error("the Module part is open with no module given")
	}
}

// TestModuleFieldsSize: the typed series multiple and derating table reach
// sizing: the page shows the bank sizing.Size gives for the same design,
// in whole modules, with the temperature that set the ceiling.
func TestModuleFieldsSize(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := designValues()
	v.Del("cells.pick")
	for k, val := range ownCellValues() {
		v.Set(k, val)
	}
	v.Set("inline.voltage_derating", "25 °C: 2.7 V, 40 °C: 2.4 V")
	v.Set("ambient_c", "40")
	v.Set("series_multiple", "4")
	d := form.Read(v).Decode(store.DemoCell).Design
	rep, err := sizing.Size(d)
	if err != nil || rep.Recommended == nil {
		t.Fatalf("sizing: %v", err)
	}
	c := rep.Candidates[0]
	// 48 V / 2.4 V = 20 cells, a multiple of 4 (sizing.SeriesCount; the
	// derating table read at 40 °C or hotter gives 2.4 V).
	if c.Series != 20 || c.CeilingTempC == nil || *c.CeilingTempC < 40 {
		t.Fatalf("sized %d in series with the ceiling at %v °C, want 20 at 40 °C or above", c.Series, c.CeilingTempC)
	}
	rec := postForm(t, s, "/", v, false)
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	if got, want := text(doc, "[data-testid=bank]"), figures.BankText(c); got != want {
		t.Errorf("headline %q, want %q", got, want)
	}
	found := false
	doc.Find("td, dd").Each(func(_ int, e *goquery.Selection) {
		found = found || strings.Contains(e.Text(), "the hottest cell (voltage derating)")
	})
	if !found {
		t.Error("the page does not say which temperature set the ceiling")
	}
}

// TestLiveUpdateReachesModuleFields: the answer to typing carries the
// message slots of the new fields, so a problem typed in the folded
// Module part or the derating table shows beside its field.
func TestLiveUpdateReachesModuleFields(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := designValues()
	for k, val := range ownCellValues() {
		v.Set(k, val)
	}
	v.Set("inline.voltage_derating", "25 °C 2.7 V")
	v.Set("inline.module.parallel", "2")
	v.Set("series_multiple", "4.5")
	rec := postForm(t, s, "/results", v, true)
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	for id, want := range map[string]string{
		"#msg-inline-voltage_derating": "point 1, “25 °C 2.7 V”, has no colon",
		"#msg-inline-module-series":    "is required when any module field is given",
		"#msg-series_multiple":         "must be a whole number",
	} {
		if got := text(doc, id+"[hx-swap-oob]"); !strings.Contains(got, want) {
			t.Errorf("out-of-band %s %q, want %q", id, got, want)
		}
	}
	// Every other slot is cleared by the one clearing element, whose
	// selector takes in each module field's message on the page.
	cleared := parse(t, get(t, s, "/")).Find(components.MessageSlots)
	for _, fl := range append(form.CellModuleFields("inline."), form.ModuleFields...) {
		if cleared.Filter("#msg-"+form.DomID(fl.Name)).Length() != 1 {
			t.Errorf("no message slot cleared for %s", fl.Name)
		}
	}
}

// TestLibraryCellFormKeepsModule: the library's cell form shows a cell's
// module (folded, opened when set) and derating, saves what is typed, and
// puts a problem on a derating point beside the derating field. Before,
// saving a library cell from its form dropped both.
func TestLibraryCellFormKeepsModule(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	vals := url.Values{"id": {"mod-lib"}, "rated_v": {"2.7"}, "capacitance_f": {"650"}, "esr_ohm": {"0.8m"},
		"voltage_derating": {"25 °C: 2.7 V, 65 °C: 2.5 V"}, "module.series": {"6"}, "module.parallel": {"2"},
		"module.name": {"Lib 6S2P"}, "module.mass_kg": {"1900 g"}, "module.unit_price": {"120"}}
	wantStatus(t, postForm(t, s, "/library", vals, false), http.StatusSeeOther)
	rec := get(t, s, "/library/mod-lib")
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	for name, want := range map[string]string{
		"voltage_derating": "25 °C: 2.7 V, 65 °C: 2.5 V", "module.series": "6", "module.parallel": "2",
		"module.name": "Lib 6S2P", "module.mass_kg": "1.9", "module.unit_price": "120", "module.volume_l": "",
	} {
		if got, _ := doc.Find(`[data-testid=cell-form] input[name="` + name + `"]`).Attr("value"); got != want {
			t.Errorf("%s shows %q, want %q", name, got, want)
		}
	}
	if _, open := doc.Find("details#cell-module").Attr("open"); !open {
		t.Error("the Module part of a cell with a module is folded")
	}
	rec = get(t, s, "/api/v1/cells/mod-lib")
	wantStatus(t, rec, http.StatusOK)
	for _, want := range []string{`"voltage_derating":[[25,2.7],[65,2.5]]`, `"module":{"name":"Lib 6S2P","series":6,"parallel":2,"mass_kg":1.9,"unit_price":120}`} {
		if !strings.Contains(rec.Body.String(), want) {
			t.Errorf("the stored cell %s lacks %s", rec.Body, want)
		}
	}

	vals.Set("id", "mod-lib-2")
	vals.Set("voltage_derating", "65 °C: 2.5 V, 25 °C: 2.7 V")
	rec = postForm(t, s, "/library", vals, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	doc = parse(t, rec)
	if got := text(doc, "#msg-voltage_derating"); !strings.Contains(got, "point 2 has temperature 25 °C, not above the point before it (65 °C)") {
		t.Errorf("the derating says %q", got)
	}
	if got := text(doc, "#problems"); !strings.Contains(got, "Voltage derating: point 2") {
		t.Errorf("the summary %q does not name the field by its label", got)
	}
}

// TestDemoWithModulesOnThePage: the invented demo with modules and a
// derating table, opened as a share link, shows on the page the bank in
// whole modules and the temperature its derating table was read at, and
// its bill of quantities (CSV) orders the modules, the cells in them not
// apart: 18 in series of 6-cell modules is 3 modules, × 5 strings = 15
// (sizing.moduleCount).
func TestDemoWithModulesOnThePage(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	data, err := os.ReadFile("../testdata/agv-regen-buffer.json")
	if err != nil {
		t.Fatal(err)
	}
	tok, err := share.Encode(data)
	if err != nil {
		t.Fatal(err)
	}
	rec := get(t, s, "/?d="+tok)
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	figs := strings.ReplaceAll(text(doc, "[data-testid=figures]"), "\u00a0", " ")
	for _, want := range []string{"Modules 15 × Demo 6-cell module", "3 in series × 5 strings", "at 35.4 °C, the hottest cell (voltage derating)"} {
		if !strings.Contains(figs, want) {
			t.Errorf("the page's figures lack %q:\n%s", want, figs)
		}
	}
	for name, want := range map[string]string{"series_multiple": "4", "inline.module.series": "6", "inline.voltage_derating": "40 °C: 2.7 V, 65 °C: 2.5 V"} {
		if got, _ := doc.Find(`input[name="` + name + `"]`).Attr("value"); got != want {
			t.Errorf("%s shows %q, want %q", name, got, want)
		}
	}
	rec = postExport(t, s, "/export/boq-csv", tok, "")
	wantStatus(t, rec, http.StatusOK)
	body := rec.Body.String()
	if !strings.Contains(body, "module,\"Demo 6-cell module, 6 × 650 F in series (invented): 6 in series × 1 in parallel of Demo cell 650 F 2.7 V (invented); 3 modules in series × 5 strings of modules\",15,pc,56") {
		t.Errorf("the BOQ CSV orders no 15 modules at 56:\n%s", body)
	}
}
