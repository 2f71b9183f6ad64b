package web

import (
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capbank/web/store"
)

// A library search longer than store.MaxSearchLen characters is refused
// by name — q in the API, the Search box on the page — never a 500 from
// SQLite's LIKE pattern limit (50 000 bytes); one of the most characters,
// every one of them escaped for LIKE, is searched.
func TestLibrarySearchLength(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	long := url.QueryEscape(strings.Repeat("a", 50_000))
	escapes := url.QueryEscape(strings.Repeat(`%_\`, 20_000))

	for _, q := range []string{long, escapes, url.QueryEscape(strings.Repeat("é", store.MaxSearchLen+1))} {
		p := wantProblem(t, do(t, s, http.MethodGet, "/api/v1/cells?q="+q, "", ""), http.StatusUnprocessableEntity, "q")
		if len(p.Errors) != 1 || !strings.Contains(p.Errors[0].Message, "at most 200") {
			t.Errorf("API: %+v, want q's length and its limit", p.Errors)
		}
		wantProblem(t, do(t, s, http.MethodGet, "/library.csv?q="+q, "", ""), http.StatusUnprocessableEntity, "q")
	}

	rec := get(t, s, "/library?q="+long)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	doc := parse(t, rec)
	if label := text(doc, `[data-testid=field-q] label`); label != "Search" {
		t.Errorf("the search box is labelled %q", label)
	}
	if msg := text(doc, "#msg-q"); !strings.Contains(msg, "50000 characters") || !strings.Contains(msg, "at most 200") {
		t.Errorf("beside the search box: %q, want its length and the limit", msg)
	}
	if n := doc.Find(`[data-testid=library-row]`).Length(); n != len(store.DemoCells()) {
		t.Errorf("a refused search lists %d cells, want all %d", n, len(store.DemoCells()))
	}

	atLimit := url.QueryEscape(strings.Repeat(`%_\`, store.MaxSearchLen/3) + "ab")
	rec = do(t, s, http.MethodGet, "/api/v1/cells?q="+atLimit, "", "")
	wantStatus(t, rec, http.StatusOK)
	var list cellList
	decodeJSON(t, rec, &list)
	if list.Count != 0 {
		t.Errorf("a search of LIKE's wildcards matched %d cells; they must match themselves", list.Count)
	}
	wantStatus(t, get(t, s, "/library?q="+atLimit), http.StatusOK)
}

// Every query string in testdata/bad/queries is refused as 422 with the
// parameter named, by the API and by the library page, never a 500.
func TestBadQueryCorpus(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	files, _ := filepath.Glob("../testdata/bad/queries/*.txt")
	if len(files) < 4 {
		t.Fatalf("%d bad queries", len(files))
	}
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			b, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			q := strings.TrimSpace(string(b))
			rec := do(t, s, http.MethodGet, "/api/v1/cells?"+q, "", "")
			wantStatus(t, rec, http.StatusUnprocessableEntity)
			var p problem
			decodeJSON(t, rec, &p)
			if len(p.Errors) == 0 || p.Errors[0].Field == "" {
				t.Errorf("API problem %+v names no parameter", p)
			}
			rec = get(t, s, "/library?"+q)
			wantStatus(t, rec, http.StatusUnprocessableEntity)
			if parse(t, rec).Find(`[id^="msg-"]:not(:empty)`).Length() == 0 {
				t.Errorf("the library page shows no message beside a box:\n%.1500s", rec.Body)
			}
		})
	}
}
