package web

import (
	"net/http"
	"net/url"
	"strings"
	"testing"
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
