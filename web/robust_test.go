package web

import (
	"capbank/web/form"
	"capbank/web/store"
	"context"
	"math"
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"testing"
)

// Nothing a user types gives a 500, a panic, NaN or Inf on the page: every
// value below is either sized or reported beside its field.
func TestNothingTypedBreaksThePage(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	nasty := []string{"", " ", "NaN", "nan", "Inf", "-Inf", "+inf", "1e999", "-1e999", "1e-999", "0", "-0", "−0",
		"0x1p3", "1_000", "１２", "3..5", "--3", "1e", "e3", "k", "5kk", "2,5", "<script>", "\"", "1e308k",
		"99999999999999999999999", strings.Repeat("9", 400), "1\x00", "\xff", "-1", "1e9", "0.0000001p"}
	fields := []string{"window.max_v", "window.min_v", "cell_max_v", "load.efficiency", "load.repeat",
		"load.steps[0].value", "load.steps[0].duration_s", "load.steps[0].kind", "eol.capacitance_factor",
		"eol.esr_factor", "ambient_c", "cold_c", "life_years", "standby_h", "rank_by", "cells.pick",
		"inline.esr_ohm", "inline.capacitance_tolerance_pct[0]", "inline.id", "sort_by", "last_good"}
	for _, field := range fields {
		for _, value := range nasty {
			v := designValues()
			v.Set(field, value)
			for _, path := range []string{"/", "/results"} {
				rec := postForm(t, s, path, v, path != "/")
				if rec.Code != http.StatusOK && rec.Code != http.StatusUnprocessableEntity {
					t.Errorf("%s %s=%q: status %d", path, field, value, rec.Code)
					continue
				}
				// The typed value is shown again as typed; anything else
				// that reads NaN or Inf was computed from it.
				doc := parse(t, rec)
				shown := doc.Find("#results").Text() + doc.Find(".msg").Text() + doc.Find("#problems").Text()
				shown = strings.ReplaceAll(shown, value, "")
				for _, bad := range []string{"NaN", "Inf", "panic"} {
					if strings.Contains(shown, bad) {
						t.Errorf("%s %s=%q: page shows %q", path, field, value, bad)
					}
				}
			}
		}
	}
}

// Odd forms a hand-made request could send are reported, not trusted.
func TestOddForms(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	cases := map[string]url.Values{
		"no fields":            {},
		"step gap":             {"window.max_v": {"48"}, "window.min_v": {"24"}, "load.steps[7].kind": {"rest"}, "load.steps[7].duration_s": {"1"}, "cells.pick": {"demo-2v7-1f"}},
		"huge step index":      {"load.steps[999999999].kind": {"power"}},
		"unknown action":       {"action": {"explode"}},
		"remove without index": {"action": {"remove-step:"}},
		"move past the end":    {"action": {"step-down:99"}},
	}
	for name, v := range cases {
		t.Run(name, func(t *testing.T) {
			rec := postForm(t, s, "/", v, false)
			if rec.Code != http.StatusOK && rec.Code != http.StatusUnprocessableEntity {
				t.Fatalf("status %d", rec.Code)
			}
		})
	}
	// Too many step rows: reported, never silently cut.
	v := designValues()
	for i := range form.MaxSteps + 5 {
		p := "load.steps[" + itoa(i+1) + "]."
		v.Set(p+"kind", "rest")
		v.Set(p+"duration_s", "1")
	}
	rec := postForm(t, s, "/", v, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if got := text(parse(t, rec), "#msg-load-steps"); !strings.Contains(got, "more than 500 steps") {
		t.Errorf("message %q", got)
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// FuzzForm feeds arbitrary values to every field of the form: decoding and
// sizing never panic and never leave a non-finite number in a design that
// sized.
func FuzzForm(f *testing.F) {
	for _, s := range []string{"48", "3.5k", "NaN", "1e999", "-0", "2,5", "1e308k", "µ"} {
		f.Add(s, s)
	}
	f.Fuzz(func(t *testing.T, a, b string) {
		v := designValues()
		v.Set("window.max_v", a)
		v.Set("load.steps[0].value", b)
		v.Set("inline.esr_ohm", a)
		v.Set("inline.id", "x")
		v.Set("inline.rated_v", b)
		v.Set("inline.capacitance_f", "10")
		ev := evaluate(context.Background(), form.Read(v), store.DemoCell)
		if ev.report == nil && len(ev.problems) == 0 {
			t.Fatal("neither a report nor a problem")
		}
		if ev.report != nil && !ev.stale {
			if math.IsNaN(ev.sized.Window.MaxV) || math.IsInf(ev.sized.Window.MaxV, 0) {
				t.Fatalf("sized with window.max_v %g", ev.sized.Window.MaxV)
			}
		}
	})
}
