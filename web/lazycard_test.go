package web

import (
	"net/http"
	"net/url"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/components"
	"capbank/components/figures"
	"capbank/web/form"
	"capbank/web/store"
)

// TestCandidateCardsLoadWhenOpened: the results fragment for ten cells
// folds every other candidate's card to its summary and the means to
// fetch the rest: htmx posts the export form's token to
// /results/candidate?cell=ID when the card opens, and without JavaScript
// the card's button posts the same and gets the whole page with that card
// open. Both give the same card body, whose figures are the report's.
func TestCandidateCardsLoadWhenOpened(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := designValues()
	v["cells.pick"] = tenCells
	rec := postForm(t, s, "/results", v, true)
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	token := pageToken(t, rec)
	ev := evaluate(t.Context(), form.Read(v), store.DemoCell)
	if ev.report == nil || ev.report.Recommended == nil {
		t.Fatalf("the ten-cell design does not size: %v", ev.problems)
	}
	cards := doc.Find("details.cand[data-testid=candidate-detail]")
	if got, want := cards.Length(), len(ev.report.Candidates)-1; got != want {
		t.Fatalf("%d folded cards, want %d (every candidate but the recommended)", got, want)
	}
	if n := cards.Find("table.figures, [data-testid=download-bar]").Length(); n != 0 {
		t.Errorf("the folded cards carry %d figures tables or download bars; they should load when opened", n)
	}
	for _, c := range ev.report.Candidates {
		if c.CellID == *ev.report.Recommended {
			continue
		}
		card := doc.Find(`details.cand[id="cand-` + c.CellID + `"]`)
		href := "/results/candidate?cell=" + url.QueryEscape(c.CellID)
		if got, _ := card.Attr("hx-post"); got != href {
			t.Errorf("%s: hx-post %q, want %q", c.CellID, got, href)
		}
		// htmx takes hx-include, hx-target and hx-swap from the nearest
		// element that sets them.
		for attr, want := range map[string]string{"hx-include": "#export-form", "hx-target": "find .cand-body", "hx-swap": "outerHTML"} {
			if got, _ := card.Closest("[" + attr + "]").Attr(attr); got != want {
				t.Errorf("%s: %s %q, want %q", c.CellID, attr, got, want)
			}
		}
		if got, _ := card.Find(`button[form=export-form]`).Attr("formaction"); got != href+"#cand-"+c.CellID {
			t.Errorf("%s: the button without JavaScript posts to %q", c.CellID, got)
		}

		body := postForm(t, s, href, url.Values{"d": {token}}, true)
		wantStatus(t, body, http.StatusOK)
		frag := parse(t, body)
		if strings.Contains(body.Body.String(), "<html") || frag.Find(".cand-body").Length() != 1 {
			t.Fatalf("%s: the htmx answer is not the card's body", c.CellID)
		}
		// The figures are the report's, row by row.
		want := figures.Candidate(&c, ev.report)
		rows := frag.Find("table[data-testid=figures-" + c.CellID + "] tbody tr:not(.group)")
		n := 0
		for _, g := range want {
			for _, r := range g.Rows {
				row := rows.Eq(n)
				if got := strings.Join(strings.Fields(row.Find("td").First().Text()), " "); !strings.HasPrefix(got, strings.Join(strings.Fields(r.Text()), " ")) {
					t.Errorf("%s: row %q shows %q, want %q", c.CellID, r.Label, got, r.Text())
				}
				n++
			}
		}
		if rows.Length() != n {
			t.Errorf("%s: %d figure rows, want %d", c.CellID, rows.Length(), n)
		}
		if got, want := frag.Find("[data-testid=flag]").Length(), len(c.Flags); got != want {
			t.Errorf("%s: %d findings, want %d", c.CellID, got, want)
		}
		if c.Feasible {
			if got := frag.Find(`[data-testid=download-bar][data-cell="` + c.CellID + `"] button`).Length(); got != 5 {
				t.Errorf("%s: %d download buttons, want 5", c.CellID, got)
			}
		} else if !strings.Contains(text(frag, ".reason"), c.Reason) {
			t.Errorf("%s: reason %q, want %q", c.CellID, text(frag, ".reason"), c.Reason)
		}

		// Without JavaScript: the whole page, the card open and written out
		// as the htmx answer has it.
		page := postForm(t, s, href, url.Values{"d": {token}}, false)
		wantStatus(t, page, http.StatusOK)
		pdoc := parse(t, page)
		open := pdoc.Find(`details.cand[open][id="cand-` + c.CellID + `"] .cand-body`)
		if open.Length() != 1 {
			t.Fatalf("%s: the page has no open card", c.CellID)
		}
		got, _ := open.Html()
		wantHTML, _ := frag.Find(".cand-body").Html()
		if got != wantHTML {
			t.Errorf("%s: the page's open card differs from the htmx answer", c.CellID)
		}
		if pdoc.Find("details.cand[open]").Length() != 1 {
			t.Errorf("%s: more than one card open", c.CellID)
		}
	}

	// A cell the design does not compare is refused on its field.
	rec = postForm(t, s, "/results/candidate?cell=no-such-cell", url.Values{"d": {token}}, true)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if !strings.Contains(rec.Body.String(), "no-such-cell") {
		t.Errorf("the refusal does not name the cell: %s", rec.Body.String())
	}
}

// TestLiveUpdateClearsExactlyTheMessageSlots: the live update's one
// clearing element (components.MessageSlots) selects on the page exactly
// the message slots the update used to send one by one (formSlots): none
// is left with an old message, no other element is emptied.
func TestLiveUpdateClearsExactlyTheMessageSlots(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := designValues()
	v.Set("boq.extras[0].item", "Busbar")
	page := parse(t, postForm(t, s, "/", v, false))
	ev := evaluate(t.Context(), form.Read(v), store.DemoCell)
	slots, _ := formSlots(s.pageProps(ev, nil).Form)
	want := map[string]bool{}
	for _, sl := range slots {
		want[sl.ID] = true
	}
	got := map[string]bool{}
	page.Find(components.MessageSlots).Each(func(_ int, sel *goquery.Selection) {
		id, _ := sel.Attr("id")
		got[id] = true
		if !want[id] {
			t.Errorf("the clearing element would empty %s, which is no field's message slot", id)
		}
	})
	for id := range want {
		if !got[id] {
			t.Errorf("message slot %s is not cleared by %q", id, components.MessageSlots)
		}
	}
	if len(want) < 50 {
		t.Errorf("only %d message slots: the form lost its fields?", len(want))
	}
}

// fragmentBudget bounds the results fragment for ten cells, HTML before
// gzip: 160 kB when every card carried its figures and each of the 99
// message slots came out of band; 47.1 kB measured with the cards
// loading when opened, one clearing element, compact chart paths and the
// token carried as the last design (README, Performance).
const fragmentBudget = 50_000

// TestResultsFragmentWeight: the answer to typing, for a design comparing
// ten cells, stays within fragmentBudget and still holds every cell.
func TestResultsFragmentWeight(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := designValues()
	v["cells.pick"] = tenCells
	rec := postForm(t, s, "/results", v, true)
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	if n := doc.Find("[data-testid=candidate]").Length(); n != len(tenCells) {
		t.Fatalf("%d candidates in the table, want %d", n, len(tenCells))
	}
	t.Logf("results fragment, 10 cells: %d bytes", rec.Body.Len())
	if rec.Body.Len() > fragmentBudget {
		t.Errorf("the results fragment for ten cells is %d bytes, over %d", rec.Body.Len(), fragmentBudget)
	}
}
