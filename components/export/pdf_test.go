package export

import (
	"bytes"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"capbank/components/figures"
	"capbank/sizing"
)

// reportDate is the date passed to every test report.
var reportDate = time.Date(2026, time.March, 14, 0, 0, 0, 0, time.UTC)

// requireTool finds a poppler-utils command. Without it the test is
// skipped, except on CI (CI=true, set by .ci/run), where it must be there.
func requireTool(t *testing.T, name string) string {
	t.Helper()
	path, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("%s is missing on CI; .ci/run installs poppler-utils", name)
		}
		t.Skipf("%s not installed (apt-get install poppler-utils)", name)
	}
	return path
}

// writePDF writes the report to a file in a fresh directory.
func writePDF(t *testing.T, s sized, b *sizing.BOQ, paper Paper) string {
	t.Helper()
	var buf bytes.Buffer
	if err := ReportPDF(&buf, s.d, s.r, b, PDFOptions{Paper: paper, Date: reportDate}); err != nil {
		t.Fatal(err)
	}
	if !bytes.HasPrefix(buf.Bytes(), []byte("%PDF-")) || !bytes.HasSuffix(bytes.TrimSpace(buf.Bytes()), []byte("%%EOF")) {
		t.Fatalf("not a PDF: %.40q ... %q", buf.Bytes(), buf.Bytes()[max(0, buf.Len()-20):])
	}
	path := filepath.Join(t.TempDir(), "report.pdf")
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// pdfTextOf extracts the text of the PDF (or of pages first to last when
// given) with pdftotext, with every run of white space made one space so
// that a phrase wrapped across lines still matches.
func pdfTextOf(t *testing.T, path string, pages ...int) string {
	t.Helper()
	args := []string{"-enc", "UTF-8"}
	if len(pages) == 2 {
		args = append(args, "-f", strconv.Itoa(pages[0]), "-l", strconv.Itoa(pages[1]))
	}
	out, err := exec.Command(requireTool(t, "pdftotext"), append(args, path, "-")...).CombinedOutput()
	if err != nil {
		t.Fatalf("pdftotext: %v\n%s", err, out)
	}
	return strings.Join(strings.Fields(string(out)), " ")
}

func TestReportPDFText(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	text := pdfTextOf(t, writePDF(t, s, s.b, A4))
	c := s.c
	want := []string{
		// The design's name and the date passed in.
		s.d.Name,
		"2026-03-14",
		// The headline: the engine's bank, in the words of
		// capbank size --format text ("15 in series × 5 strings").
		fmt.Sprintf("Recommended bank: %d in series × %d strings, %d cells of %s", c.Series, c.Parallel, c.Cells, c.CellID),
		"Recommended bank: 15 in series × 5 strings, 75 cells of demo-c400-2v8",
		// Key figures, to 4 significant figures by fmt's %.4g.
		fmt.Sprintf("Worst-case runtime %.4g s", *c.RuntimeS),
		fmt.Sprintf("lowest terminal voltage %.4g V against the 21 V cut-off", c.MinTerminalV),
		fmt.Sprintf("usable energy %.4g kJ", c.UsableEnergyJ/1e3),
		// The hot spot to 0.1 K and the life to 3 figures, as the page's
		// rows (figures.Candidate) state them.
		fmt.Sprintf("%.1f °C", c.Thermal.HotSpotC),
		fmt.Sprintf("%.3g years", c.Life.ExpectedYears),
		fmt.Sprintf("%.4g kA", c.Hazards.ShortCircuitCurrentA/1e3),
		// Inputs from testdata/ups-ride-through.json.
		"42 V at the top (fully charged) to 21 V, the cut-off",
		"cold −30 °C",
		"3.5 kW",
		"2.2 Ω", // the embedded UTF-8 font has Ω
		// Every candidate of the report.
		"demo-c1200-2v7", "demo-c3000-3v0", "demo-c100-2v5",
		// The charts: titles, axes, the window marked and labelled.
		"Voltage at the bank terminals", "window top 42 V", "window bottom (cut-off) 21 V",
		"Bank current", "current (A)", "time (s)", "voltage (V)",
		"Temperature of the hottest cell", "temperature (°C)",
		// The BOQ total: the engine's, 683.50 by hand (TestBOQCSVRoundTrip).
		"Total (EUR) sum of the priced lines 683.50",
		"Bill of quantities total 683.50 EUR",
		// The safety note defers to local codes and licensed practice
		// (SAFETY.md, "Local codes and licensed practice").
		"Safety: local codes and licensed practice decide",
		"judgement of a licensed or otherwise qualified engineer",
	}
	for _, fl := range c.Flags {
		want = append(want, fl.Code)
		if fl.Caution != "" {
			// The first words of each caution, as pdfText writes them.
			words := strings.Fields(pdfTextPlain(fl.Caution))
			want = append(want, "Caution: "+strings.Join(words[:min(6, len(words))], " "))
		}
	}
	for _, w := range want {
		if !strings.Contains(text, w) {
			t.Errorf("PDF text has no %q", w)
		}
	}
	for _, fl := range c.Flags {
		if sev := strings.ToUpper(string(fl.Severity)); !strings.Contains(text, sev) {
			t.Errorf("PDF text has no severity %s; the demo's flag %s has it", sev, fl.Code)
		}
	}
	// Nothing fell out of the code page as '?'.
	if strings.Contains(text, "?") {
		i := strings.Index(text, "?")
		t.Errorf("PDF text has a '?' (a character the helper did not map): ...%s...", text[max(0, i-60):min(len(text), i+20)])
	}
}

// TestReportPDFBankFigures: the bank-figures table is the page's rows,
// figures.Candidate: every group title, label, value with its unit and
// note of the demo's recommended bank is in the PDF's text. Before the
// table rendered these rows it had its own labels ("balancing per cell",
// counted "per string"; "not within 10^7 s").
func TestReportPDFBankFigures(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	text := pdfTextOf(t, writePDF(t, s, s.b, A4))
	for _, g := range figures.Candidate(s.c, s.r) {
		want := []string{g.Title}
		for _, row := range g.Rows {
			want = append(want, row.Label+" "+rowValue(row, s.b.Currency))
			if row.Note != "" {
				want = append(want, row.Note)
			}
		}
		for _, w := range want {
			if w := pdfTextPlain(w); !strings.Contains(text, w) {
				i := strings.Index(text, g.Title)
				t.Errorf("%s: PDF text has no %q; near the title: %.300s", g.Title, w, text[max(0, i):])
			}
		}
	}
}

// pdfTextPlain is what pdftotext gives back for s: the text as it is,
// with white space made single.
func pdfTextPlain(s string) string {
	return strings.Join(strings.Fields(pdfText(s)), " ")
}

// A4 is 210 mm × 297 mm (ISO 216) = 595.28 pt × 841.89 pt; Letter is
// 8.5 in × 11 in = 612 pt × 792 pt (1 pt = 1/72 in).
func TestReportPDFPaperSizes(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	box := regexp.MustCompile(`/MediaBox \[0 0 ([0-9.]+) ([0-9.]+)\]`)
	for _, tt := range []struct {
		paper Paper
		w, h  float64
	}{{A4, 595.28, 841.89}, {Letter, 612, 792}} {
		raw, err := os.ReadFile(writePDF(t, s, s.b, tt.paper))
		if err != nil {
			t.Fatal(err)
		}
		m := box.FindSubmatch(raw)
		if m == nil {
			t.Fatalf("%s: no MediaBox", tt.paper)
		}
		w, _ := strconv.ParseFloat(string(m[1]), 64)
		h, _ := strconv.ParseFloat(string(m[2]), 64)
		if !closeTo(w, tt.w, 1e-4) || !closeTo(h, tt.h, 1e-4) {
			t.Errorf("%s: MediaBox %v × %v pt, want %v × %v", tt.paper, w, h, tt.w, tt.h)
		}
	}
}

// Page 1 and the chart page render to PNG; the chart page carries the
// terminal-voltage blue and the cut-off red, so the charts were drawn.
func TestReportPDFRenders(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	path := writePDF(t, s, s.b, A4)
	pdftoppm := requireTool(t, "pdftoppm")
	chartPage := 0
	for p := 1; p <= 10 && chartPage == 0; p++ {
		if strings.Contains(pdfTextOf(t, path, p, p), "Worst-case pass of the bank") {
			chartPage = p
		}
	}
	if chartPage == 0 {
		t.Fatal("no chart page")
	}
	dir := t.TempDir()
	for _, p := range []int{1, chartPage} {
		prefix := filepath.Join(dir, fmt.Sprintf("page%d", p))
		if out, err := exec.Command(pdftoppm, "-png", "-r", "60", "-f", strconv.Itoa(p), "-l", strconv.Itoa(p), "-singlefile", path, prefix).CombinedOutput(); err != nil {
			t.Fatalf("pdftoppm: %v\n%s", err, out)
		}
		f, err := os.Open(prefix + ".png")
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(f)
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		// A4 at 60 dpi: 210/25.4 × 60 = 496 px by 297/25.4 × 60 = 702 px.
		if b := img.Bounds(); b.Dx() < 495 || b.Dx() > 497 || b.Dy() < 701 || b.Dy() > 703 {
			t.Errorf("page %d renders %v × %v px, want 496 × 702", p, b.Dx(), b.Dy())
		}
		if p != chartPage {
			continue
		}
		has := func(c colour) bool {
			b := img.Bounds()
			for y := b.Min.Y; y < b.Max.Y; y++ {
				for x := b.Min.X; x < b.Max.X; x++ {
					r, g, bl, _ := img.At(x, y).RGBA()
					if near(r, c.r) && near(g, c.g) && near(bl, c.b) {
						return true
					}
				}
			}
			return false
		}
		if !has(blue) || !has(red) {
			t.Errorf("chart page has blue %v, red %v; want both (terminal voltage, cut-off)", has(blue), has(red))
		}
	}
}

// near compares a 16-bit colour channel with an 8-bit one, within the
// anti-aliasing of a thin line.
func near(c16 uint32, c8 int) bool {
	d := int(c16>>8) - c8
	return d >= -40 && d <= 40
}

// The bank of a cell other than the recommended: the headline says so and
// the charts are that bank's.
func TestReportPDFChosenCell(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "demo-c3000-3v0")
	text := pdfTextOf(t, writePDF(t, s, s.b, Letter))
	for _, w := range []string{
		// 15 in series × 1 string: capbank size --format text on the demo.
		"Bank in this report: 15 in series × 1 string, 15 cells of demo-c3000-3v0",
		"capbank recommends demo-c400-2v8",
		"Worst-case pass of the bank: 15 in series × 1 string of demo-c3000-3v0",
		"Voltage at the bank terminals",
	} {
		if !strings.Contains(text, w) {
			t.Errorf("PDF text has no %q", w)
		}
	}
	for _, fl := range s.c.Flags {
		if !strings.Contains(text, fl.Code) {
			t.Errorf("PDF text lacks flag %s of demo-c3000-3v0", fl.Code)
		}
	}
}

// The curve of a chosen cell comes from sizing it alone; it must be the
// same bank as in the full report.
func TestCurveForChosenCell(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "demo-c3000-3v0")
	cv, note := curveFor(s.d, s.r, s.c)
	if cv == nil {
		t.Fatalf("no curve: %s", note)
	}
	lowest := cv.TerminalV[0]
	for _, v := range cv.TerminalV {
		lowest = min(lowest, v)
	}
	// The lowest point of the curve is the candidate's min_terminal_v
	// (Curve keeps every extreme of the pass).
	if !closeTo(lowest, s.c.MinTerminalV, 1e-9) {
		t.Errorf("curve minimum %v V, want the candidate's %v V", lowest, s.c.MinTerminalV)
	}
	if rec, _ := curveFor(s.d, s.r, candidateByID(s.r, *s.r.Recommended)); rec != s.r.Curve {
		t.Error("the recommended bank's curve is not the report's")
	}
}

// Names a user typed — PDF string delimiters, backslashes, characters
// beyond the code page, control characters, very long words — print and
// never break the file.
func TestReportPDFHostileText(t *testing.T) {
	t.Parallel()
	name := `Bank (rev. 2) \ "a)b(" Ω µ² √ → ≥ × − 漢字 🙂 ` + "bell\x07 tab\t nul\x00 end " + strings.Repeat("W", 120)
	s := mustSize(t, upsDesign, func(d *sizing.Design) {
		d.Name = name
		d.BOQ.Currency = `"\€`
		d.BOQ.Extras = append(d.BOQ.Extras, sizing.BOQExtra{Item: "=cmd|' /C calc'!A0", Description: strings.Repeat("z", 480), Quantity: 1, Unit: `\`})
	}, "")
	text := pdfTextOf(t, writePDF(t, s, s.b, A4))
	for _, w := range []string{
		`Bank (rev. 2) \ "a)b(" Ω µ² √ → ≥ × − 漢字 � bell tab nul end`,
		`=cmd|' /C calc'!A0`,
		`unit price ("\€)`, // the currency, in the BOQ headers
		"Recommended bank: 15 in series × 5 strings",
	} {
		if !strings.Contains(text, w) {
			t.Errorf("PDF text has no %q", w)
		}
	}
}

// With no feasible candidate the report still comes out and says why.
func TestReportPDFNothingFeasible(t *testing.T) {
	t.Parallel()
	f, err := os.Open(upsDesign)
	if err != nil {
		t.Fatal(err)
	}
	d, err := sizing.DecodeDesign(f)
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	for i := range d.Cells {
		d.Cells[i].PeakCurrentA = price(0.001) // far below the 100+ A the load draws
		d.Cells[i].MaxCurrentA = price(0.001)
	}
	r, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	if r.Recommended != nil {
		t.Fatalf("recommended %s with 1 mA ratings", *r.Recommended)
	}
	text := pdfTextOf(t, writePDF(t, sized{d: d, r: r}, nil, A4))
	for _, w := range []string{"No bank: no candidate cell carries the load at worst case.", r.Candidates[0].Reason, "Safety: local codes"} {
		if !strings.Contains(text, pdfTextPlain(w)) {
			t.Errorf("PDF text has no %q", w)
		}
	}
	if strings.Contains(text, "Bill of quantities total") {
		t.Error("a report with no bank shows a bill of quantities")
	}
}

func TestReportPDFRefusals(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	var buf bytes.Buffer
	tests := []struct {
		name string
		opt  PDFOptions
		b    *sizing.BOQ
		want string
	}{
		{"no date", PDFOptions{Paper: A4}, s.b, "date"},
		{"bad paper", PDFOptions{Paper: "a3", Date: reportDate}, s.b, "a4 or letter"},
		{"unknown cell", PDFOptions{Date: reportDate}, &sizing.BOQ{CellID: "x"}, `"x"`},
	}
	for _, tt := range tests {
		err := ReportPDF(&buf, s.d, s.r, tt.b, tt.opt)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: error %v, want one saying %q", tt.name, err, tt.want)
		}
	}
	if buf.Len() != 0 {
		t.Errorf("refused reports wrote %d bytes", buf.Len())
	}
}

func TestPDFText(t *testing.T) {
	t.Parallel()
	tests := []struct{ in, want string }{
		// The UTF-8 font writes every character as it is.
		{"15 s × 5 p", "15 s × 5 p"},
		{"2.8 mΩ, 42 V → 2 V, −30 °C, 10⁷ s, 2·√(P·R) ≈ 3", "2.8 mΩ, 42 V → 2 V, −30 °C, 10⁷ s, 2·√(P·R) ≈ 3"},
		// Beyond the Basic Multilingual Plane fpdf's UTF-8 fonts hold
		// nothing: the replacement character.
		{"漢🙂", "漢\uFFFD"},
		// Control characters become spaces; bytes that are not UTF-8 the
		// replacement character.
		{"a\tb\nc\x00d", "a b c d"},
		{"bad \xff byte", "bad \uFFFD byte"},
		// PDF delimiters pass through: fpdf escapes them when it writes.
		{`(a) \ b`, `(a) \ b`},
	}
	for _, tt := range tests {
		if got := pdfText(tt.in); got != tt.want {
			t.Errorf("pdfText(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

func TestFormatsAndNames(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"boq-csv", "boq-xlsx", "boq-json", "pdf"} {
		if _, ok := LookupFormat(name); !ok {
			t.Errorf("no format %s", name)
		}
	}
	if _, ok := LookupFormat("json"); ok {
		t.Error("json is the sizing report, not an export")
	}
	x, _ := LookupFormat("boq-xlsx")
	tests := []struct{ got, want string }{
		{FileName("Demo: 42 V ride-through (invented)", "boq", x), "demo-42-v-ride-through-invented-boq.xlsx"},
		{FileName(`../../etc/passwd`, "", x), "etc-passwd.xlsx"},
		{FileName("Ω", "", x), "capbank.xlsx"},
	}
	for _, tt := range tests {
		if tt.got != tt.want {
			t.Errorf("FileName = %q, want %q", tt.got, tt.want)
		}
	}
	for in, want := range map[string]Paper{"": A4, "A4": A4, "letter": Letter, " Letter ": Letter} {
		if got, err := ParsePaper(in); err != nil || got != want {
			t.Errorf("ParsePaper(%q) = %q, %v; want %q", in, got, err, want)
		}
	}
	if _, err := ParsePaper("legal"); err == nil {
		t.Error("ParsePaper(legal) succeeded")
	}
}

// TestReportPDFUnicodeAndLastPage: every demo design's report, on A4 and
// Letter, prints Ω and → in the embedded UTF-8 font (not the "mOhm" and
// "->" of the core fonts' code page), cites no file of capbank's
// repository, numbers its pages "page n of N" with N its page count, and
// fills at least minLastPageFill of its last page's text area, rather
// than ending on a page with little more than the safety note.
func TestReportPDFUnicodeAndLastPage(t *testing.T) {
	t.Parallel()
	pdftotext := requireTool(t, "pdftotext")
	pdfinfo := requireTool(t, "pdfinfo")
	words := regexp.MustCompile(`<word xMin="[0-9.]+" yMin="[0-9.]+" xMax="[0-9.]+" yMax="([0-9.]+)">([^<]*)</word>`)
	pageBox := regexp.MustCompile(`<page width="[0-9.]+" height="([0-9.]+)">`)
	pagesRe := regexp.MustCompile(`(?m)^Pages:\s+(\d+)$`)
	const ptPerMM = 72 / 25.4 // 1 in = 25.4 mm = 72 pt
	for _, design := range []string{"ups-ride-through", "actuator-pulses", "logger-hold-up", "check-constant-current"} {
		for _, paper := range []Paper{A4, Letter} {
			t.Run(design+"/"+string(paper), func(t *testing.T) {
				t.Parallel()
				s := mustSize(t, "../../testdata/"+design+".json", nil, "")
				path := writePDF(t, s, s.b, paper)
				text := pdfTextOf(t, path)
				for _, w := range []string{"Ω", "→"} {
					if !strings.Contains(text, w) {
						t.Errorf("the report has no %s", w)
					}
				}
				for _, w := range []string{"mOhm", "->", " Ohm", "kOhm", ".md", "README", "REFERENCES", "sizing/", "testdata/", ".go "} {
					if i := strings.Index(text, w); i >= 0 {
						t.Errorf("the report has %q: ...%s...", w, text[max(0, i-50):min(len(text), i+30)])
					}
				}
				info, err := exec.Command(pdfinfo, path).Output()
				if err != nil {
					t.Fatal(err)
				}
				m := pagesRe.FindSubmatch(info)
				if m == nil {
					t.Fatalf("pdfinfo gives no page count:\n%s", info)
				}
				n, _ := strconv.Atoi(string(m[1]))
				if !strings.Contains(text, fmt.Sprintf("page %d of %d", n, n)) || strings.Contains(text, "{nb}") {
					t.Errorf("the last page is not numbered \"page %d of %d\"", n, n)
				}
				// The lowest word above the footer on the last page.
				out, err := exec.Command(pdftotext, "-bbox", "-f", strconv.Itoa(n), "-l", strconv.Itoa(n), path, "-").Output()
				if err != nil {
					t.Fatal(err)
				}
				pm := pageBox.FindSubmatch(out)
				if pm == nil {
					t.Fatal("pdftotext -bbox gives no page box")
				}
				pageH, _ := strconv.ParseFloat(string(pm[1]), 64)
				bottom := pageH - bottomMM*ptPerMM // the footer is below it
				lowest := 0.0
				for _, w := range words.FindAllSubmatch(out, -1) {
					if y, _ := strconv.ParseFloat(string(w[1]), 64); y <= bottom {
						lowest = max(lowest, y)
					}
				}
				fill := (lowest - marginMM*ptPerMM) / (bottom - marginMM*ptPerMM)
				if fill < minLastPageFill {
					t.Errorf("the last page (%d of %d) is %.0f %% full, less than %.0f %%", n, n, 100*fill, 100*minLastPageFill)
				}
			})
		}
	}
}
