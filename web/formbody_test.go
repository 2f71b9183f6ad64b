package web

import (
	"capbank/web/form"
	"net/http"
	"strings"
	"testing"
)

// The design form posts multipart/form-data (it carries file inputs), and
// net/http's own reader stops at 1 000 parts: a form of ~310 steps was
// refused as "The form could not be read". The README promises 500 steps;
// here the form at 500 steps sizes as a page and as the results fragment,
// and "Add pulses" with 200 pulses (400 steps) works.
func TestFormOfFiveHundredStepsPosts(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := heavyForm() // maxFormSteps steps, about 1 600 fields
	v.Set("load.repeat", "1")
	if n := len(v); n < 1500 {
		t.Fatalf("the form has %d fields; the case must pass the 1 000 parts net/http reads", n)
	}
	rec := postMultipart(t, s, "/", v, "", "", "")
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	if n := doc.Find("[data-testid=step-row]").Length(); n != form.MaxSteps {
		t.Errorf("%d step rows on the page, want %d", n, form.MaxSteps)
	}
	if text(doc, "[data-testid=bank]") == "" {
		t.Errorf("no bank sized:\n%.2000s", rec.Body)
	}

	rec = postMultipart(t, s, "/results", v, "", "", "")
	wantStatus(t, rec, http.StatusOK)
	if !strings.Contains(rec.Body.String(), `data-testid="bank"`) {
		t.Errorf("the results fragment sizes no bank:\n%.500s", rec.Body)
	}

	p := designValues()
	p.Set("action", "add-pulses")
	p.Set("pulse.kind", "power")
	p.Set("pulse.value", "300")
	p.Set("pulse.duration_s", "1")
	p.Set("pulse.rest_s", "4")
	p.Set("pulse.count", "200")
	rec = postMultipart(t, s, "/", p, "", "", "")
	wantStatus(t, rec, http.StatusOK)
	before := 0
	for k := range designValues() {
		if strings.HasSuffix(k, "].kind") {
			before++
		}
	}
	if n := parse(t, rec).Find("[data-testid=step-row]").Length(); n != before+400 {
		t.Fatalf("%d step rows after adding 200 pulses to %d, want %d", n, before, before+400)
	}
	// ... and the form of 400 steps it shows posts back.
	rec = postMultipart(t, s, "/", heavyForm(), "", "", "")
	wantStatus(t, rec, http.StatusOK)
}
