package web

import (
	"bytes"
	"capbank/web/form"
	"capbank/web/share"
	"capbank/web/store"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/components/figures"
	"capbank/sizing"
)

// richDesign sets every key the form has: balancing, the lot analysis, life, the bill of
// quantities with own lines, modules (the design's series multiple and a
// cell's own module), a voltage derating, a library cell, two cells of its
// own (one typed, one kept) and a demo cell changed from the library's copy.
const richDesign = `{
  "name": "Rich design",
  "window": {"max_v": 48, "min_v": 21.5},
  "cell_max_v": 2.6,
  "load": {"efficiency": 0.93, "repeat": 4, "steps": [
    {"power_w": 1200, "duration_s": 3.5}, {"current_a": -2, "duration_s": 0.25},
    {"resistance_ohm": 4.7, "duration_s": 1}, {"rest": true, "duration_s": 60}]},
  "eol": {"capacitance_factor": 0.75, "esr_factor": 2.5},
  "ambient_c": 35, "cold_c": -25, "rank_by": "mass", "life_years": 12, "standby_h": 48,
  "balancing": {"kind": "active", "quiescent_a": 0.00002, "series": "E96", "current_multiple": 12, "leakage_spread_a": 0.000004},
  "life": {"temp_step_k": 9, "voltage_step_v": 0.15},
  "statistics": {"samples": 2500, "seed": 7, "target_yield": 0.995, "candidates": "all"},
  "series_multiple": 4,
  "boq": {"currency": "EUR", "link_unit_price": 0.3, "balancer_unit_price": 1.1, "bleeder_unit_price": 4, "bleeder_time_s": 600,
    "extras": [{"item": "enclosure", "description": "vented box", "quantity": 1, "unit": "pc", "unit_price": 80},
               {"item": "cable", "quantity": 2.5, "unit": "m"}]},
  "cells": [
    "demo-2v7-650f",
    {"id": "own-a", "name": "Own cell A", "source": "measured", "notes": "bench 2026-02", "rated_v": 2.7, "surge_v": 2.85,
     "capacitance_f": 360, "capacitance_tolerance_pct": [-10, 20], "esr_ohm": 0.0032, "cold_esr_factor": 2, "cold_esr_temp_c": -30,
     "leakage_a": 0.0008, "max_current_a": 40, "peak_current_a": 300, "thermal_resistance_k_per_w": 9, "min_temp_c": -40,
     "max_temp_c": 65, "mass_kg": 0.07, "volume_l": 0.05, "unit_price": 7, "rated_life_h": 1500, "rated_life_temp_c": 65,
     "specific_heat_j_per_kg_k": 1050, "capacitance_sigma_pct": 1.5, "esr_sigma_pct": 4, "leakage_sigma_pct": 25, "electrolyte": "organic",
     "module": {"name": "Own 6S2P module", "series": 6, "parallel": 2, "mass_kg": 0.95, "volume_l": 0.72, "unit_price": 99.5},
     "voltage_derating": [[-40, 2.7], [25, 2.7], [65, 2.5], [70.5, 2.35]]},
    {"id": "own-b", "rated_v": 3, "capacitance_f": 100, "esr_ohm": 0.01, "module": {"series": 3}, "voltage_derating": [[60, 2.8]]},
    {"id": "demo-3v0-500f", "rated_v": 3, "capacitance_f": 480, "esr_ohm": 0.0025}
  ]
}`

// A design file becomes a form that decodes back into the very same
// design, for every demo design and for one that sets every key.
func TestFormFromDesignRoundTrip(t *testing.T) {
	t.Parallel()
	files, _ := filepath.Glob("../testdata/*.json")
	designs := map[string][]byte{"rich": []byte(richDesign)}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		designs[filepath.Base(f)] = b
	}
	for name, data := range designs {
		t.Run(name, func(t *testing.T) {
			d, err := sizing.DecodeDesign(bytes.NewReader(data))
			if err != nil {
				t.Fatal(err)
			}
			d.ResolveCells(store.DemoCell)
			f, err := form.FromDesign(d, store.DemoCell)
			if err != nil {
				t.Fatal(err)
			}
			// Through the page and back: the values as a browser posts them.
			vals := url.Values{}
			for _, fp := range formValues(t, f) {
				vals.Add(fp[0], fp[1])
			}
			dec := form.Read(vals).Decode(store.DemoCell)
			if len(dec.Problems) > 0 {
				t.Fatalf("problems: %v", dec.Problems)
			}
			got, _ := json.Marshal(dec.Design)
			if d.RankBy == "price" {
				d.RankBy = "" // the default, said outright in the file; the form's default choice
			}
			want, _ := json.Marshal(d)
			if !sameJSON(t, got, want) {
				t.Errorf("decoded\n%s\nwant\n%s", got, want)
			}
		})
	}
	// The rich design's cells land where they belong.
	d, _ := sizing.DecodeDesign(strings.NewReader(richDesign))
	d.ResolveCells(store.DemoCell)
	f, _ := form.FromDesign(d, store.DemoCell)
	if got := f.Vals["cells.pick"]; len(got) != 1 || got[0] != "demo-2v7-650f" {
		t.Errorf("picked %q, want only the unchanged demo cell", got)
	}
	if f.Value("inline.id") != "own-a" || len(f.Carried) != 2 || f.Carried[0].ID != "own-b" || f.Carried[1].ID != "demo-3v0-500f" {
		t.Errorf("typed %q, kept %+v", f.Value("inline.id"), f.Carried)
	}
}

// formValues renders the form and reads back what a browser would post:
// every input's name and value, checked boxes only, selected options.
func formValues(t *testing.T, f *form.Form) [][2]string {
	t.Helper()
	s, _ := newTestServer(t)
	rec := postForm(t, s, "/", f.Vals, false)
	if rec.Code != http.StatusOK && rec.Code != http.StatusUnprocessableEntity {
		t.Fatalf("status %d", rec.Code)
	}
	return postedValues(parse(t, rec))
}

// postedValues reads what a browser would post from a page holding the
// design form.
func postedValues(doc *goquery.Document) [][2]string {
	var out [][2]string
	doc.Find(`#design-form input, #design-form select, input[form=design-form]`).Each(func(_ int, e *goquery.Selection) {
		name, _ := e.Attr("name")
		if name == "" || name == "action" {
			return
		}
		typ, _ := e.Attr("type")
		switch {
		case goquery.NodeName(e) == "select":
			v, _ := e.Find("option[selected]").Attr("value")
			out = append(out, [2]string{name, v})
		case typ == "checkbox":
			if _, on := e.Attr("checked"); on {
				v, _ := e.Attr("value")
				out = append(out, [2]string{name, v})
			}
		case typ == "file":
		default:
			v, _ := e.Attr("value")
			out = append(out, [2]string{name, v})
		}
	})
	return out
}

func sameJSON(t *testing.T, a, b []byte) bool {
	t.Helper()
	var x, y any
	if json.Unmarshal(a, &x) != nil || json.Unmarshal(b, &y) != nil {
		t.Fatal("not JSON")
	}
	ja, _ := json.Marshal(x)
	jb, _ := json.Marshal(y)
	return bytes.Equal(ja, jb)
}

// A design file the form cannot take is refused beside the file input;
// the form stays as it was.
func TestOpenDesignFileProblems(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	twoKinds := strings.Replace(richDesign, `{"power_w": 1200, "duration_s": 3.5}`, `{"power_w": 1200, "current_a": 3, "duration_s": 3.5}`, 1)
	cases := []struct{ name, file, content, want string }{
		{"no file", "", "", "choose a design file first"},
		{"not JSON", "x.json", "window: 48", "x.json: "},
		{"unknown key", "y.json", `{"window": {"max_v": 48, "min_v": 24}, "colour": "red"}`, `colour: is not a design key`},
		{"two kinds in a step", "z.json", twoKinds, "load.steps[0], that gives 2 of"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			v := designValues()
			v.Set("action", "open-design")
			rec := postMultipart(t, s, "/", v, "design_file", c.file, c.content)
			wantStatus(t, rec, http.StatusUnprocessableEntity)
			doc := parse(t, rec)
			if got := text(doc, "#msg-design_file"); !strings.Contains(got, c.want) {
				t.Errorf("message %q, want %q", got, c.want)
			}
			if got, _ := doc.Find("#f-window-max_v").Attr("value"); got != "48" {
				t.Errorf("the form changed: window.max_v %q", got)
			}
			if got := text(doc, "[data-testid=bank]"); got != wantBank(t) {
				t.Errorf("bank %q, want the unchanged design's %q", got, wantBank(t))
			}
		})
	}
	// An opened file's own cells can be left out; they stay offered.
	d, _ := sizing.DecodeDesign(strings.NewReader(richDesign))
	d.ResolveCells(store.DemoCell)
	f, _ := form.FromDesign(d, store.DemoCell)
	f.Vals.Del("carried.keep")
	f = form.Read(f.Vals)
	dec := f.Decode(store.DemoCell)
	if len(dec.Design.Cells) != 2 {
		t.Errorf("%d cells with the kept ones cleared, want the picked and the typed", len(dec.Design.Cells))
	}
	rec := postForm(t, s, "/", f.Vals, false)
	if n := parse(t, rec).Find(`input[name="carried.keep"]`).Length(); n != 2 {
		t.Errorf("%d kept cells offered, want 2", n)
	}
}

// A number from a design file is shown as an engineer types it, and reads
// back as exactly the same number.
func TestFieldNumber(t *testing.T) {
	t.Parallel()
	cases := []struct {
		x    float64
		want string
	}{
		{48, "48"}, {0, "0"}, {-20, "-20"}, {0.0032, "0.0032"}, {2.5e-5, "25µ"}, {4e-6, "4µ"}, {1e-12, "1p"},
		{1.5e4, "15k"}, {2.2e6, "2.2M"}, {123456789, "123.456789M"}, {1.0000000000000003e-5, "10.000000000000003µ"}, {-4.7e-9, "-4.7n"}, {1e15, "1e+15"},
	}
	for _, c := range cases {
		got := figures.Field(c.x)
		if got != c.want {
			t.Errorf("figures.Field(%v) = %q, want %q", c.x, got, c.want)
		}
		if back, err := form.ParseSI(got, form.UnitNone); err != nil || back != c.x {
			t.Errorf("%q reads back as %v (%v), want exactly %v", got, back, err, c.x)
		}
	}
}

// A share link whose design the form cannot show (testdata/bad/form) gets
// the same 422 and reason as opening the same file with "Open a design
// file": an HTML page for a browser, a problem document for any other
// client. Before, both answered 500.
func TestShareLinkTheFormCannotShow(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	want := map[string]string{
		"two-kinds-step.json":        "has a step, load.steps[0], that gives 2 of",
		"501-steps.json":             "has 501 load steps, more than the 500 this form edits",
		"derating-triple-point.json": `cell "demo-c650-2v7" has a voltage derating point, voltage_derating[0], of 3 numbers instead of a pair [temp_c, max_cell_v]`,
	}
	files, _ := filepath.Glob("../testdata/bad/form/*.json")
	if len(files) != len(want)+len(badFormShown) {
		t.Fatalf("%d files in testdata/bad/form, want %d", len(files), len(want)+len(badFormShown))
	}
	for _, f := range files {
		name := filepath.Base(f)
		if _, shown := badFormShown[name]; shown {
			continue
		}
		t.Run(name, func(t *testing.T) {
			data, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			tok, err := share.Encode(data)
			if err != nil {
				t.Fatal(err)
			}
			// The same file through "Open a design file".
			v := designValues()
			v.Set("action", "open-design")
			rec := postMultipart(t, s, "/", v, "design_file", name, string(data))
			wantStatus(t, rec, http.StatusUnprocessableEntity)
			if got := text(parse(t, rec), "#msg-design_file"); !strings.Contains(got, want[name]) {
				t.Fatalf("open-design message %q, want %q", got, want[name])
			}

			rec = serve(s, request("GET", "/?d="+tok, "", "", map[string]string{"Accept": "text/html"}))
			wantStatus(t, rec, http.StatusUnprocessableEntity)
			if got := text(parse(t, rec), "[data-testid=error-page]"); !strings.Contains(got, want[name]) || !strings.Contains(got, "does not fit the form") {
				t.Errorf("page %q, want %q", got, want[name])
			}
			rec = serve(s, request("GET", "/?d="+tok, "", "", nil))
			wantStatus(t, rec, http.StatusUnprocessableEntity)
			p := decodeProblem(t, rec)
			if p.Type != typeNoFit || len(p.Errors) != 1 || !strings.Contains(p.Errors[0].Message, want[name]) {
				t.Errorf("problem %+v, want %s naming %q", p, typeNoFit, want[name])
			}
		})
	}
}

// badFormShown are the files of testdata/bad/form that the form can show
// whole but whose design is bad in a way the form reports: the field and
// its message.
var badFormShown = map[string][2]string{
	"derating-unsorted.json":  {"inline.voltage_derating", "point 2 has temperature 40 °C, not above the point before it (65 °C); sort the points by rising temperature"},
	"module-series-zero.json": {"inline.module.series", "must be at least 1"},
}

// A design file the form can show but whose design is bad (testdata/bad/
// form) opens, as a file (422) and as a share link (200), with every value in its
// field and the problem beside the field it is about, named by its label
// in the summary; nothing is sized from it.
func TestBadFormFilesShowTheirProblem(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for name, w := range badFormShown {
		t.Run(name, func(t *testing.T) {
			data, err := os.ReadFile("../testdata/bad/form/" + name)
			if err != nil {
				t.Fatal(err)
			}
			tok, err := share.Encode(data)
			if err != nil {
				t.Fatal(err)
			}
			v := designValues()
			v.Set("action", "open-design")
			for i, rec := range []*httptest.ResponseRecorder{
				postMultipart(t, s, "/", v, "design_file", name, string(data)),
				get(t, s, "/?d="+tok),
			} {
				// The file posted with the form is a 422, as any design
				// with problems; the link opens the page (200) with them.
				wantStatus(t, rec, []int{http.StatusUnprocessableEntity, http.StatusOK}[i])
				doc := parse(t, rec)
				if got := text(doc, "#msg-"+form.DomID(w[0])); !strings.Contains(got, w[1]) {
					t.Errorf("%s says %q, want %q", w[0], got, w[1])
				}
				label := "Own cell, " + strings.ToLower(form.FieldLabels[w[0]][:1]) + form.FieldLabels[w[0]][1:]
				if got := text(doc, "#problems"); !strings.Contains(got, label+": "+w[1]) {
					t.Errorf("the summary %q does not name %q", got, label)
				}
				if doc.Find("[data-testid=bank]").Length() != 0 {
					t.Error("a bank was sized from a bad design")
				}
			}
		})
	}
}
