package web

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"html"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"
	"github.com/xuri/excelize/v2"

	"capbank/sizing"
)

// Markup in what a user types or uploads (names, ids, notes, file names)
// must come back as text: never as an element, an attribute or a script.
// Each payload carries a short key of its field, so a leak says where it
// came from; the longest stays within a cell id's 100 characters. They
// are the usual breakouts from text, from a quoted attribute and from the
// title (OWASP Cheat Sheet Series, XSS Filter Evasion Cheat Sheet: "End
// Title Tag", "On Error Alert"; sizing/REFERENCES.md 12.6).
func payload(field string) string {
	return `"'></title><b data-injected=` + field + `>` + field + `<img src=x onerror=alert(1)><script>alert(1)</script>`
}

// filePayload is payload for an upload's file name, which multipart cuts
// to the part after the last '/'.
func filePayload(field string) string { return strings.ReplaceAll(payload(field), "/", "") }

// wantInert checks an HTML answer for anything a payload could have
// become (inertProblems).
func wantInert(t *testing.T, s *Server, body []byte) {
	t.Helper()
	for _, p := range inertProblems(s, body) {
		t.Error(p)
	}
}

// inertProblems lists an element with data-injected, an element with an
// on* handler, a script that is not the page's own htmx file, and a
// javascript: URL.
func inertProblems(s *Server, body []byte) []string {
	doc, err := goquery.NewDocumentFromReader(bytes.NewReader(body))
	if err != nil {
		return []string{err.Error()}
	}
	var out []string
	doc.Find("*").Each(func(_ int, sel *goquery.Selection) {
		n := sel.Nodes[0]
		for _, a := range n.Attr {
			switch {
			case a.Key == "data-injected":
				out = append(out, fmt.Sprintf("an injected <%s> from field %q", n.Data, a.Val))
			case strings.HasPrefix(a.Key, "on"):
				out = append(out, fmt.Sprintf("<%s> has an event handler %s=%q", n.Data, a.Key, a.Val))
			case (a.Key == "href" || a.Key == "src" || a.Key == "action" || a.Key == "formaction") &&
				strings.HasPrefix(strings.ToLower(strings.TrimSpace(a.Val)), "javascript:"):
				out = append(out, fmt.Sprintf("<%s %s=%q>", n.Data, a.Key, a.Val))
			}
		}
		if n.Data == "script" {
			if src, _ := sel.Attr("src"); src != s.js || n.FirstChild != nil {
				out = append(out, fmt.Sprintf("a script that is not the page's htmx: src %q", src))
			}
		}
	})
	return out
}

// The checks find the payloads when they are not escaped, in text and in
// an attribute, and nothing when they are.
func TestInertProblemsFindsMarkup(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	p := payload("x")
	raw := `<html><head><title>` + p + `</title></head><body><p>` + p + `</p><input value="` + p + `"><a href="javascript:alert(1)">a</a></body></html>`
	// data-injected twice (title breakout, text), onerror twice, two
	// scripts, and the javascript: link; the attribute breakout adds more.
	if got := inertProblems(s, []byte(raw)); len(got) < 7 {
		t.Errorf("unescaped payloads: %d problems found, want at least 7: %q", len(got), got)
	}
	escaped := `<html><head><title>` + html.EscapeString(p) + `</title></head><body><p>` + html.EscapeString(p) +
		`</p><input value="` + html.EscapeString(p) + `"><script src="` + s.js + `"></script></body></html>`
	if got := inertProblems(s, []byte(escaped)); len(got) != 0 {
		t.Errorf("escaped payloads: %q, want none", got)
	}
}

// wantShown checks that each payload is on the page as text or as an
// attribute's value: escaped, not dropped.
func wantShown(t *testing.T, body []byte, payloads ...string) {
	t.Helper()
	doc, err := goquery.NewDocumentFromReader(bytes.NewReader(body))
	if err != nil {
		t.Fatal(err)
	}
	shown := doc.Text()
	doc.Find("*").Each(func(_ int, sel *goquery.Selection) {
		for _, a := range sel.Nodes[0].Attr {
			shown += "\n" + a.Val
		}
	})
	for _, p := range payloads {
		if !strings.Contains(shown, p) {
			t.Errorf("the payload %q is not shown as text", p)
		}
	}
}

// shortPayload fits the currency's 12 characters.
const shortPayload = "<a onblur=1>"

// injectedForm is the test design with markup in every free-text field:
// the design name, a typed-in cell's id, name and notes, the currency and
// an own BOQ line.
func injectedForm() url.Values {
	v := designValues()
	for k, val := range map[string]string{
		"name": payload("name"), "inline.id": payload("id"), "inline.name": payload("cname"),
		"inline.notes": payload("notes"), "inline.rated_v": "2.7", "inline.capacitance_f": "600",
		"inline.esr_ohm": "1.5m", "boq.currency": shortPayload,
		"boq.extras[0].item": payload("item"), "boq.extras[0].description": payload("desc"),
		"boq.extras[0].quantity": "1", "boq.extras[0].unit": "pc",
	} {
		v.Set(k, val)
	}
	return v
}

// The design page, the workspace and the results fragment show every
// payload as text (templ escapes text and attributes).
func TestMarkupIsEscapedOnTheDesignPage(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := injectedForm()
	for _, c := range []struct {
		path string
		htmx bool
	}{{"/", false}, {"/workspace", true}, {"/results", true}} {
		t.Run(c.path, func(t *testing.T) {
			rec := postForm(t, s, c.path, v, c.htmx)
			wantStatus(t, rec, http.StatusOK)
			wantInert(t, s, rec.Body.Bytes())
			if c.path != "/results" {
				wantShown(t, rec.Body.Bytes(), payload("name"), payload("id"), payload("cname"), payload("notes"), shortPayload, payload("item"))
			}
			// The results name the typed-in cell, a candidate.
			if !strings.Contains(text(parse(t, rec), "#results"), payload("id")) {
				t.Errorf("the results do not show the cell id as text")
			}
		})
	}

	// An invalid design echoes what was typed in its messages: a picked
	// cell that does not exist, a number that is not one.
	bad := designValues()
	bad.Add("cells.pick", payload("pick"))
	bad.Set("window.max_v", payload("maxv"))
	rec := postForm(t, s, "/", bad, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	wantInert(t, s, rec.Body.Bytes())
	wantShown(t, rec.Body.Bytes(), payload("maxv"), strconv.Quote(payload("pick")))
	rec = postForm(t, s, "/results", bad, true)
	wantInert(t, s, rec.Body.Bytes())
}

// Upload file names are echoed in messages and notices; a design file's
// names come into the form.
func TestMarkupIsEscapedFromUploads(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	profile, err := os.ReadFile("../testdata/profiles/pump_start_power.csv")
	if err != nil {
		t.Fatal(err)
	}
	v := designValues()
	v.Set("action", "load-csv")
	rec := postMultipart(t, s, "/", v, "profile_csv", filePayload("pfile")+".csv", string(profile))
	wantInert(t, s, rec.Body.Bytes())
	wantShown(t, rec.Body.Bytes(), filePayload("pfile"))
	// A file that does not parse: the name in the error message.
	rec = postMultipart(t, s, "/", v, "profile_csv", filePayload("pfile")+".csv", "not,a\nprofile")
	wantInert(t, s, rec.Body.Bytes())
	wantShown(t, rec.Body.Bytes(), filePayload("pfile"))

	d := loadDesign(t, "../testdata/ups-ride-through.json")
	d.Name = payload("dname")
	d.Cells[0].ID, d.Cells[0].Name, d.Cells[0].Notes = payload("did"), payload("dcname"), payload("dnotes")
	data, err := json.Marshal(d)
	if err != nil {
		t.Fatal(err)
	}
	v = url.Values{"action": {"open-design"}}
	rec = postMultipart(t, s, "/", v, "design_file", filePayload("dfile")+".json", string(data))
	wantStatus(t, rec, http.StatusOK)
	wantInert(t, s, rec.Body.Bytes())
	wantShown(t, rec.Body.Bytes(), payload("dname"), filePayload("dfile"), payload("did"))
}

// The measurement page shows what was typed, and its messages quote it.
func TestMarkupIsEscapedOnTheMeasurePage(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := url.Values{"method": {"timed"}, "v0_v": {payload("v0")}, "v1_v": {"2.2"}, "duration_s": {"60"},
		"resistor_ohm": {"10"}, "compare_id": {payload("cmp")}}
	rec := postMultipart(t, s, "/measure", v, "log_csv", filePayload("lfile")+".csv", "time_s,voltage_v\n0,2.7\n1,2.6\n")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	wantInert(t, s, rec.Body.Bytes())
	wantShown(t, rec.Body.Bytes(), payload("v0"))

	v.Set("v0_v", "2.7")
	rec = postMultipart(t, s, "/measure", v, "", "", "")
	wantStatus(t, rec, http.StatusUnprocessableEntity) // compare_id names no demo cell
	wantInert(t, s, rec.Body.Bytes())
	if !strings.Contains(text(parse(t, rec), "[data-testid=measure-problems]"), strconv.Quote(payload("cmp"))) {
		t.Errorf("the message does not quote the unknown cell id as text:\n%s", text(parse(t, rec), "[data-testid=measure-problems]"))
	}
}

// The unlock page's return address is a hidden field and a link.
func TestMarkupIsEscapedOnTheUnlockPage(t *testing.T) {
	t.Parallel()
	s, _ := newServerWith(t, Config{Token: testToken})
	next := "/" + payload("next")
	rec := get(t, s, "/unlock?next="+url.QueryEscape(next))
	wantStatus(t, rec, http.StatusOK)
	wantInert(t, s, rec.Body.Bytes())
	wantShown(t, rec.Body.Bytes(), next)
}

func loadDesign(t *testing.T, path string) *sizing.Design {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	d, err := sizing.DecodeDesign(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// exportOf posts d as JSON to /export/format and returns the body.
func exportOf(t *testing.T, s *Server, format string, d *sizing.Design) []byte {
	t.Helper()
	data, err := json.Marshal(d)
	if err != nil {
		t.Fatal(err)
	}
	req := httptest.NewRequest(http.MethodPost, "/export/"+format, bytes.NewReader(data))
	req.Header.Set("Content-Type", "application/json")
	rec := serve(s, req)
	wantStatus(t, rec, http.StatusOK)
	return rec.Body.Bytes()
}

// pdfPayload has what a PDF string must escape (parentheses, a
// backslash, PDF operators) beside markup, in ASCII so that the PDF's
// code page holds every character.
func pdfPayload(field string) string {
	return `<script>alert(1)</script> (` + field + `) Tj ET \ ) BT <b onclick=x>`
}

// The PDF report writes names as text: pdftotext gives each payload back
// character for character, so none ended a PDF string or ran as an
// operator.
func TestMarkupIsTextInThePDF(t *testing.T) {
	t.Parallel()
	pdftotext, err := exec.LookPath("pdftotext")
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatal("pdftotext is missing on CI; .ci/run installs poppler-utils")
		}
		t.Skip("pdftotext not installed (apt-get install poppler-utils)")
	}
	s, _ := newTestServer(t)
	d := loadDesign(t, "../testdata/ups-ride-through.json")
	d.Name = pdfPayload("design.name")
	for i := range d.Cells {
		d.Cells[i].Name = pdfPayload("cell.name")
	}
	path := filepath.Join(t.TempDir(), "report.pdf")
	if err := os.WriteFile(path, exportOf(t, s, "pdf", d), 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(pdftotext, "-enc", "UTF-8", path, "-").CombinedOutput()
	if err != nil {
		t.Fatalf("pdftotext: %v\n%s", err, out)
	}
	got := strings.Join(strings.Fields(string(out)), " ")
	for _, f := range []string{"design.name", "cell.name"} {
		if !strings.Contains(got, pdfPayload(f)) {
			t.Errorf("the PDF's text lacks the %s payload %q", f, pdfPayload(f))
		}
	}
}

// formulaLeads are the first characters a spreadsheet may take as the
// start of a formula (OWASP "CSV injection": =, +, -, @, tab, carriage
// return), one case each.
var formulaLeads = []struct{ name, lead string }{
	{"equals", "="}, {"plus", "+"}, {"minus", "-"}, {"at", "@"}, {"tab", "\t"}, {"carriage return", "\r"},
}

// formulaDesign is the demo design with text starting with lead in every
// text field the exports write: the design name, cell ids and names, the
// currency, an own BOQ line's item, description and unit.
func formulaDesign(t *testing.T, lead string) *sizing.Design {
	t.Helper()
	d := loadDesign(t, "../testdata/ups-ride-through.json")
	f := lead + `HYPERLINK("http://example.invalid","x")`
	d.Name = f
	for i := range d.Cells {
		d.Cells[i].Name = f
		d.Cells[i].Notes = f
	}
	price := 2.5
	if d.BOQ == nil {
		d.BOQ = &sizing.BOQOptions{}
	}
	d.BOQ.Currency = lead + "EUR"
	d.BOQ.Extras = append(d.BOQ.Extras, sizing.BOQExtra{Item: f, Description: f, Quantity: 3, Unit: lead + "pc", UnitPrice: &price})
	return d
}

// triggers reports whether a spreadsheet would read s as a formula.
func triggers(s string) bool { return s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) }

// The BOQ as CSV, downloaded from the page's export route: no field starts
// with a formula lead, and the text is there with a quote in front.
func TestCSVExportNeutralisesFormulas(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for _, c := range formulaLeads {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			body := exportOf(t, s, "boq-csv", formulaDesign(t, c.lead))
			rows, err := csv.NewReader(bytes.NewReader(body)).ReadAll()
			if err != nil {
				t.Fatal(err)
			}
			quoted := 0
			for i, row := range rows {
				for j, cell := range row {
					if triggers(cell) {
						t.Errorf("row %d column %d starts a formula: %q", i+1, j+1, cell)
					}
					if strings.HasPrefix(cell, "'"+strings.TrimPrefix(c.lead, "\r")) {
						quoted++
					}
				}
			}
			// The extra's item, description and unit, and the currency on
			// every priced row: at least four neutralised cells.
			if quoted < 4 {
				t.Errorf("%d neutralised cells, want the extra's item, description, unit and the currency", quoted)
			}
		})
	}
}

// The BOQ workbook: no text cell on any sheet starts with a formula lead,
// and no cell holds a formula but capbank's own (the extended prices and
// the total).
func TestXLSXExportNeutralisesFormulas(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for _, c := range formulaLeads {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			body := exportOf(t, s, "boq-xlsx", formulaDesign(t, c.lead))
			f, err := excelize.OpenReader(bytes.NewReader(body))
			if err != nil {
				t.Fatal(err)
			}
			defer f.Close()
			quoted := 0
			for _, sheet := range f.GetSheetList() {
				rows, err := f.GetRows(sheet, excelize.Options{RawCellValue: true})
				if err != nil {
					t.Fatal(err)
				}
				for i, row := range rows {
					for j, v := range row {
						ref, _ := excelize.CoordinatesToCellName(j+1, i+1)
						formula, _ := f.GetCellFormula(sheet, ref)
						if formula != "" && !strings.HasPrefix(formula, "IF(ISNUMBER(") && !strings.HasPrefix(formula, "SUM(") {
							t.Errorf("%s!%s holds the formula %q", sheet, ref, formula)
						}
						typ, _ := f.GetCellType(sheet, ref)
						isText := typ == excelize.CellTypeSharedString || typ == excelize.CellTypeInlineString
						if isText && triggers(v) {
							t.Errorf("%s!%s text starts a formula: %q", sheet, ref, v)
						}
						if isText && strings.HasPrefix(v, "'"+c.lead) {
							quoted++
						}
					}
				}
			}
			if quoted < 4 {
				t.Errorf("%d neutralised cells, want at least the design name and the extra's item, description and unit", quoted)
			}
		})
	}
}
