package web

import (
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"net/url"
	"os"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func readDemoLog(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile("../testdata/measure/" + name)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func TestAPIMeasureConstantCurrent(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	rec := postMultipart(t, s, "/api/v1/measure", url.Values{"method": {"constant-current"}, "rated_v": {"2.7"}},
		"log_csv", "cc.csv", readDemoLog(t, "cc-discharge.csv"))
	wantStatus(t, rec, http.StatusOK)
	var out struct {
		Result struct {
			CapacitanceF float64  `json:"capacitance_f"`
			ESROhm       *float64 `json:"esr_ohm"`
		} `json:"result"`
		Cell *struct {
			Source string `json:"source"`
		} `json:"measured_cell"`
	}
	if err := json.Unmarshal(rec.Body.Bytes(), &out); err != nil {
		t.Fatal(err)
	}
	// The invented demo log is of a 100 F, 25 mΩ cell at 1 A (its comment
	// line); `capbank measure` on it gives 100.01 F and 25.03 mΩ.
	if !scalar.EqualWithinRel(out.Result.CapacitanceF, 100, 0.01) || out.Result.ESROhm == nil ||
		!scalar.EqualWithinRel(*out.Result.ESROhm, 0.025, 0.05) {
		t.Errorf("C = %v F, ESR = %v Ω; want about 100 F and 25 mΩ", out.Result.CapacitanceF, out.Result.ESROhm)
	}
	if out.Cell == nil || out.Cell.Source != "measured" {
		t.Errorf("measured cell %+v, want one marked measured", out.Cell)
	}
}

func TestAPIMeasureBadInput(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	cases := []struct {
		name  string
		vals  url.Values
		log   string
		field string
	}{
		{"no log", url.Values{"method": {"resistor"}, "resistor_ohm": {"2"}}, "", "log_csv"},
		{"bad method", url.Values{"method": {"guess"}}, "time_s,voltage_v\n0,1\n1,0.9\n", "method"},
		{"missing rated", url.Values{"method": {"constant-current"}}, readDemoLog(t, "cc-discharge.csv"), "rated_v"},
		{"not a number", url.Values{"method": {"timed"}, "v0_v": {"abc"}, "v1_v": {"1"}, "duration_s": {"1"}, "resistor_ohm": {"1"}}, "", "v0_v"},
		{"bad log line", url.Values{"method": {"hold"}, "capacitance_f": {"10"}}, "time_s,voltage_v\n0,2.7\n1,high\n", "log_csv"},
	}
	for _, c := range cases {
		rec := postMultipart(t, s, "/api/v1/measure", c.vals, "log_csv", "log.csv", c.log)
		wantStatus(t, rec, http.StatusUnprocessableEntity)
		if !strings.Contains(rec.Body.String(), `"field":"`+c.field+`"`) {
			t.Errorf("%s: problem %s does not name %s", c.name, rec.Body.String(), c.field)
		}
	}
}

func TestMeasurePage(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	rec := get(t, s, "/measure")
	wantStatus(t, rec, http.StatusOK)
	// Timed discharge: 1 kΩ, 1.5 V → 0.5 V in 68 s: C = 68/(1000·ln 3) =
	// 61.9 mF exact (issue 7's bench example).
	vals := url.Values{"method": {"timed"}, "v0_v": {"1.5"}, "v1_v": {"0.5"}, "duration_s": {"68"}, "resistor_ohm": {"1k"}}
	rec = postMultipart(t, s, "/measure", vals, "log_csv", "", "")
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	if got := text(doc, "[data-testid=measure-figures]"); !strings.Contains(got, "61.9") || !strings.Contains(got, "mF") {
		t.Errorf("figures %q do not show 61.9 mF", got)
	}
	// A bad value keeps what was typed and says which field.
	vals.Set("v1_v", "2")
	rec = postMultipart(t, s, "/measure", vals, "log_csv", "", "")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	doc = parse(t, rec)
	if text(doc, "[data-testid=msg-v1_v]") == "" {
		t.Errorf("no message beside the end voltage: %s", text(doc, "[data-testid=measure-problems]"))
	}
	if v, _ := doc.Find("#v1_v").Attr("value"); v != "2" {
		t.Errorf("end voltage field holds %q, want what was typed", v)
	}
}

// The page lists a hold's summary by name and its points as a table: the
// demo log is a 10 F cell leaking through 200 kΩ (its header says so), so
// the leakage at 2.58 V late in the hold is 2.58 V / 200 kΩ ≈ 12.9 µA
// (Ohm's law; the log's early redistribution has died away by then).
func TestMeasurePageHoldPoints(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	vals := url.Values{"method": {"hold"}, "capacitance_f": {"10"}}
	rec := postMultipart(t, s, "/measure", vals, "log_csv", "hold.csv", readDemoLog(t, "hold.csv"))
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	first := doc.Find("[data-testid=measure-figure]").First()
	if got := strings.TrimSpace(first.Find("th").Text()); got != "leakage current (latest point)" {
		t.Errorf("first figure %q, want the leakage current", got)
	}
	rows := doc.Find("[data-testid=measure-points] tbody tr")
	if rows.Length() != 3 {
		t.Fatalf("%d points, want 3 (10, 50 and 90 %% of the hold)", rows.Length())
	}
	last := strings.ReplaceAll(rows.Last().Text(), "\u00a0", " ")
	if !strings.Contains(last, "µA") || !strings.Contains(last, "kΩ") {
		t.Errorf("the last point %q has no leakage in µA or resistance in kΩ", last)
	}
	var leak float64
	if _, err := fmt.Sscanf(strings.Fields(strings.ReplaceAll(rows.Last().Find("td").Eq(3).Text(), "\u00a0", " "))[0], "%g", &leak); err != nil || math.Abs(leak-12.9) > 0.05*12.9 {
		t.Errorf("late leakage %g µA, want 12.9 µA within 5 %%", leak)
	}
}
