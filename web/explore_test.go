package web

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/sizing"
	"capbank/sizing/explore"
	"capbank/web/share"
	"capbank/web/store"
)

func postExplore(t testing.TB, s http.Handler, body []byte) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(http.MethodPost, "/api/v1/explore", bytes.NewReader(body))
	req.Header.Set("Content-Type", "application/json")
	return serve(s, req)
}

// TestAPIExplore: POST /api/v1/explore answers the points and the front
// with the keys of the issue, the same as the explore package; re-sizing
// a front point's design with its series through POST /api/v1/size gives
// the same strings.
func TestAPIExplore(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	data, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	rec := postExplore(t, s, data)
	wantStatus(t, rec, http.StatusOK)
	var raw map[string]any
	if err := json.Unmarshal(rec.Body.Bytes(), &raw); err != nil {
		t.Fatal(err)
	}
	ex := raw["explore"].(map[string]any)
	pts := ex["points"].([]any)
	if len(pts) == 0 || len(ex["front"].([]any)) == 0 {
		t.Fatalf("no points or no front: %s", rec.Body.String()[:200])
	}
	for _, key := range []string{"cell_id", "series", "parallel", "cell_v", "feasible", "price", "mass_kg", "volume_l", "life_years", "margin_pct", "standing_loss_w", "rise_k", "worst_severity", "pareto"} {
		if _, ok := pts[0].(map[string]any)[key]; !ok {
			t.Errorf("point lacks key %q", key)
		}
	}
	d, err := sizing.DecodeDesign(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	want, err := explore.Explore(t.Context(), d, explore.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var got explore.Result
	if err := json.Unmarshal(rec.Body.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	if len(got.Explore.Points) != len(want.Explore.Points) || len(got.Explore.Front) != len(want.Explore.Front) {
		t.Fatalf("API %d points %d on the front, explore package %d and %d", len(got.Explore.Points), len(got.Explore.Front), len(want.Explore.Points), len(want.Explore.Front))
	}
	// Re-size the front's points on their own with the series key.
	for _, k := range got.Explore.Front {
		p := got.Explore.Points[k]
		var one map[string]any
		if err := json.Unmarshal(data, &one); err != nil {
			t.Fatal(err)
		}
		for _, c := range one["cells"].([]any) {
			if c.(map[string]any)["id"] == p.CellID {
				one["cells"] = []any{c}
			}
		}
		one["series"] = p.Series
		body, _ := json.Marshal(one)
		req := httptest.NewRequest(http.MethodPost, "/api/v1/size", bytes.NewReader(body))
		req.Header.Set("Content-Type", "application/json")
		r := serve(s, req)
		wantStatus(t, r, http.StatusOK)
		var rep sizing.Report
		if err := json.Unmarshal(r.Body.Bytes(), &rep); err != nil {
			t.Fatal(err)
		}
		if c := rep.Candidates[0]; c.Series != p.Series || c.Parallel != p.Parallel {
			t.Errorf("%s: explored %d × %d, sized with series %d: %d × %d", p.CellID, p.Series, p.Parallel, p.Series, c.Series, c.Parallel)
		}
	}
}

// TestAPIExploreRefusals: a forced series past a cell's ceiling and an
// unknown objective are refused with 422 naming the field.
func TestAPIExploreRefusals(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	data, err := os.ReadFile("../testdata/actuator-pulses.json")
	if err != nil {
		t.Fatal(err)
	}
	var d map[string]any
	if err := json.Unmarshal(data, &d); err != nil {
		t.Fatal(err)
	}
	d["explore"] = map[string]any{"objectives": []string{"price", "weight"}}
	body, _ := json.Marshal(d)
	rec := postExplore(t, s, body)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if p := decodeProblem(t, rec); len(p.Errors) != 1 || p.Errors[0].Field != "explore.objectives[1]" {
		t.Errorf("problem %+v, want one on explore.objectives[1]", p)
	}
	delete(d, "explore")
	d["series"] = 2
	body, _ = json.Marshal(d)
	req := httptest.NewRequest(http.MethodPost, "/api/v1/size", bytes.NewReader(body))
	req.Header.Set("Content-Type", "application/json")
	rec = serve(s, req)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if p := decodeProblem(t, rec); len(p.Errors) != 1 || p.Errors[0].Field != "series" || !strings.Contains(p.Errors[0].Message, "give at least") {
		t.Errorf("problem %+v, want one on series giving the least count", p)
	}
}

// TestAPIExploreLibrary: "cells": "library" explores every library cell.
func TestAPIExploreLibrary(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	body := []byte(`{"window": {"max_v": 24, "min_v": 12}, "load": {"steps": [{"power_w": 200, "duration_s": 10}]}, "cells": "library", "explore": {"extra_series": 1}}`)
	rec := postExplore(t, s, body)
	wantStatus(t, rec, http.StatusOK)
	var got explore.Result
	if err := json.Unmarshal(rec.Body.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	ids := map[string]int{}
	for _, p := range got.Explore.Points {
		ids[p.CellID]++
	}
	lib := store.DemoCells()
	if len(ids) != len(lib) {
		t.Errorf("%d cells explored, the library has %d", len(ids), len(lib))
	}
	for _, c := range lib {
		if ids[c.ID] != 2 {
			t.Errorf("cell %s: %d points, want 2 (the least series count and one more)", c.ID, ids[c.ID])
		}
	}
	rec = postExplore(t, s, []byte(`{"window": {"max_v": 24, "min_v": 12}, "load": {"steps": [{"power_w": 200, "duration_s": 10}]}, "cells": "all"}`))
	wantStatus(t, rec, http.StatusBadRequest)
	if p := decodeProblem(t, rec); len(p.Errors) != 1 || p.Errors[0].Field != "cells" {
		t.Errorf("problem %+v, want one on cells", p)
	}
}

// TestExplorePage: the page draws one dot per feasible point with a
// tooltip and a link, the front's rows sorted by the query without
// JavaScript, and the CSV of every point; a front point's design file
// sizes to the same bank.
func TestExplorePage(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	data, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	tok, err := share.Encode(data)
	if err != nil {
		t.Fatal(err)
	}
	base := "/explore?d=" + url.QueryEscape(tok)
	rec := get(t, s, base+"&x=price&y=life_years&sort=price&dir=desc")
	wantStatus(t, rec, http.StatusOK)
	doc, err := goquery.NewDocumentFromReader(rec.Body)
	if err != nil {
		t.Fatal(err)
	}
	d, err := sizing.DecodeDesign(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	res, err := explore.Explore(t.Context(), d, explore.Options{})
	if err != nil {
		t.Fatal(err)
	}
	feasible := 0
	for _, p := range res.Explore.Points {
		if p.Feasible && p.Price != nil && p.LifeYears != nil {
			feasible++
		}
	}
	if n := doc.Find("[data-testid=chart-explore] svg[role=img] circle.dot").Length(); n != feasible {
		t.Errorf("%d dots, want %d (the feasible points with a price and a life)", n, feasible)
	}
	if n := doc.Find("svg[role=img] circle.dot.front").Length(); n != len(res.Explore.Front) {
		t.Errorf("%d front dots, want %d", n, len(res.Explore.Front))
	}
	doc.Find("[data-testid=chart-explore] svg[role=img] circle.dot").Each(func(_ int, c *goquery.Selection) {
		if c.Find("title").Text() == "" {
			t.Error("a dot without a tooltip")
		}
		if href, _ := c.Parent().Attr("href"); href == "" {
			t.Error("a dot without a link")
		}
	})
	// Every dot opens its exact bank in the design page; above a cell's
	// least series count through the form's "Cells in series, forced".
	forced := 0
	doc.Find("[data-testid=chart-explore] svg[role=img] circle.dot").Each(func(_ int, c *goquery.Selection) {
		href, _ := c.Parent().Attr("href")
		if !strings.HasPrefix(href, "/?d=") {
			t.Errorf("dot link %q does not open the design page", href)
			return
		}
		page := parse(t, get(t, s, href))
		if n, ok := page.Find("input[name=series]").Attr("value"); ok && n != "" {
			forced++
			if !strings.Contains(page.Find("body").Text(), n+" in series ×") {
				t.Errorf("the design page opened with series %s does not recommend a bank of %s in series", n, n)
			}
		}
	})
	if forced == 0 {
		t.Error("no dot opened a bank above its cell's least series count")
	}
	rows := doc.Find("[data-testid=front-row]")
	if rows.Length() != len(res.Explore.Front) {
		t.Fatalf("%d front rows, want %d", rows.Length(), len(res.Explore.Front))
	}
	// Sorted by price, dearest first: the prices in the rows never rise.
	var prices []float64
	rows.Each(func(_ int, r *goquery.Selection) {
		txt := strings.Fields(r.Find("td").Eq(3).Text())[0]
		v, err := strconv.ParseFloat(strings.ReplaceAll(txt, ",", ""), 64)
		if err != nil {
			t.Fatalf("price %q: %v", txt, err)
		}
		prices = append(prices, v)
	})
	for i := 1; i < len(prices); i++ {
		if prices[i] > prices[i-1] {
			t.Errorf("prices %v not sorted dearest first", prices)
		}
	}
	if s, _ := doc.Find("th[aria-sort]").Attr("aria-sort"); s != "descending" {
		t.Errorf("aria-sort %q, want descending", s)
	}
	// A front point's design file: re-sized, the same bank.
	href, ok := rows.First().Find("a[download]").Attr("href")
	if !ok {
		t.Fatal("no design file link")
	}
	rec = get(t, s, href)
	wantStatus(t, rec, http.StatusOK)
	one, err := sizing.DecodeDesign(bytes.NewReader(rec.Body.Bytes()))
	if err != nil {
		t.Fatalf("the design file does not decode: %v", err)
	}
	rep, err := sizing.Size(one)
	if err != nil {
		t.Fatal(err)
	}
	cellID := strings.TrimSpace(rows.First().Find("th").Text())
	series, _ := strconv.Atoi(strings.TrimSpace(rows.First().Find("td").Eq(0).Text()))
	parallel, _ := strconv.Atoi(strings.TrimSpace(rows.First().Find("td").Eq(1).Text()))
	if c := rep.Candidates[0]; c.CellID != cellID || c.Series != series || c.Parallel != parallel {
		t.Errorf("design file sizes to %s %d × %d, the row shows %s %d × %d", c.CellID, c.Series, c.Parallel, cellID, series, parallel)
	}
	// The CSV of every point.
	csvHref, _ := doc.Find("[data-testid=explore-csv]").Attr("href")
	rec = get(t, s, csvHref)
	wantStatus(t, rec, http.StatusOK)
	recs, err := csv.NewReader(rec.Body).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 1+len(res.Explore.Points) {
		t.Errorf("CSV has %d rows, want a header and %d points", len(recs), len(res.Explore.Points))
	}
	// One objective is no front: a message, 422.
	rec = get(t, s, base+"&objective=price")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
}
