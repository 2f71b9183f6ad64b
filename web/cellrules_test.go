package web

import (
	"net/http"
	"net/url"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/sizing"
)

// An implausible leakage (a self-discharge time constant C·U_R/I under an
// hour: mA typed as A; sizing/REFERENCES.md 8.6) is refused by field
// wherever a cell enters: the library's form (beside the field), the
// cells API, the cell import, and a design posted to the sizing API. A
// hybrid cell without its floor (min_v) is refused the same way.
func TestImplausibleLeakageRefusedEverywhere(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	// 2200 F at 2.7 V leaking 4.5 A: τ = 1320 s.
	form := url.Values{"id": {"leaky"}, "rated_v": {"2.7"}, "capacitance_f": {"2200"}, "esr_ohm": {"0.3m"}, "leakage_a": {"4.5"}}
	rec := postForm(t, s, "/library", form, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if msg := text(parse(t, rec), "#msg-leakage_a"); !strings.Contains(msg, "mA") {
		t.Errorf("library form: message beside the leakage %q, want the unit slip named", msg)
	}
	// The same cell in mA is taken.
	form.Set("leakage_a", "4.5m")
	wantStatus(t, postForm(t, s, "/library", form, false), http.StatusSeeOther)

	cell := `{"id":"leaky2","rated_v":2.7,"capacitance_f":2200,"esr_ohm":0.0003,"leakage_a":4.5}`
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", cell), http.StatusUnprocessableEntity, "leakage_a")
	rec = do(t, s, http.MethodPost, "/api/v1/cells/import", "application/json", "["+cell+"]")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if !strings.Contains(rec.Body.String(), "leakage_a") || !strings.Contains(rec.Body.String(), "mA") {
		t.Errorf("import: %s, want the leakage refused by field", rec.Body)
	}
	design := `{"window":{"max_v":5.4,"min_v":2.7},"load":{"steps":[{"power_w":50,"duration_s":10}]},"cells":[` + cell + `]}`
	wantProblem(t, postJSON(t, s, []byte(design), "application/json"), http.StatusUnprocessableEntity, "cells[0].leakage_a")

	// A hybrid cell from the library form needs its floor, beside the field
	// labelled "Lowest cell voltage".
	hy := url.Values{"id": {"hy"}, "rated_v": {"3.8"}, "capacitance_f": {"250"}, "esr_ohm": {"5m"}, "electrolyte": {"hybrid"}}
	rec = postForm(t, s, "/library", hy, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if msg := text(parse(t, rec), "#msg-min_v"); !strings.Contains(msg, "hybrid") {
		t.Errorf("hybrid without min_v: message %q", msg)
	}
	hy.Set("min_v", "2.2")
	wantStatus(t, postForm(t, s, "/library", hy, false), http.StatusSeeOther)
}

// The example design opens with findings a reviewer signs: no danger on
// the recommended bank, the capacitance-spread bound of the first charge
// as a note (the string is balanced), and the worst case said in words.
func TestExampleFindingsAreSober(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	doc := parse(t, get(t, s, "/"))
	flags := doc.Find(`[data-testid=flags] [data-testid=flag]`)
	if flags.Length() == 0 {
		t.Fatal("no findings listed for the recommended bank")
	}
	flags.Each(func(_ int, f *goquery.Selection) {
		code, _ := f.Attr("data-code")
		cls, _ := f.Attr("class")
		if strings.Contains(cls, "sev-danger") {
			t.Errorf("the example's recommended bank shows a danger: %s", code)
		}
		if code == "cell-overvoltage" && !strings.Contains(cls, "sev-info") {
			t.Errorf("the first-charge spread of a balanced string is %q, want a note", cls)
		}
	})
	if wc := text(doc, "[data-testid=worst-case]"); !strings.Contains(wc, "tolerance −10 %") || !strings.Contains(wc, "−20 °C") {
		t.Errorf("worst case %q, want the tolerance and the cold temperature", wc)
	}
}

// A life past the calendar ceiling is "≥ 15 years" and never marked best;
// where none is capped the longest is.
func TestCompareLifeCeiling(t *testing.T) {
	t.Parallel()
	feasible := func(int) bool { return true }
	capped := &sizing.Candidate{Feasible: true, Life: &sizing.Life{ExpectedYears: 15, AtLeast: true, CeilingYears: 15, TemperatureC: 25, CellV: 2.4}}
	short := &sizing.Candidate{Feasible: true, Life: &sizing.Life{ExpectedYears: 8.2, CeilingYears: 15, TemperatureC: 25, CellV: 2.4}}
	longer := &sizing.Candidate{Feasible: true, Life: &sizing.Life{ExpectedYears: 12, CeilingYears: 15, TemperatureC: 25, CellV: 2.4}}
	row := lifeRow([]*sizing.Candidate{capped, short}, feasible)
	for i, c := range row.Cells {
		if c.Best {
			t.Errorf("cell %d (%q) marked best beside a capped life", i, c.Text)
		}
	}
	if !strings.HasPrefix(row.Cells[0].Text, "≥") {
		t.Errorf("capped life reads %q", row.Cells[0].Text)
	}
	row = lifeRow([]*sizing.Candidate{short, longer}, feasible)
	if row.Cells[0].Best || !row.Cells[1].Best {
		t.Errorf("uncapped lives: best marks %v, %v; want the 12 years", row.Cells[0].Best, row.Cells[1].Best)
	}
}
