package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"capbank/sizing"

	"github.com/xuri/excelize/v2"
)

// engineBOQ is the bill of quantities of cellID ("" for the recommended)
// of the demo design, from sizing directly.
func engineBOQ(t *testing.T, cellID string) *sizing.BOQ {
	t.Helper()
	f, err := os.Open(upsDesign)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	d, err := sizing.DecodeDesign(f)
	if err != nil {
		t.Fatal(err)
	}
	r, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	b, err := sizing.BillOfQuantities(d, r, cellID)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func TestSizeExportsToFiles(t *testing.T) {
	t.Parallel()
	want := engineBOQ(t, "")
	tests := []struct {
		format string
		check  func(t *testing.T, raw []byte)
	}{
		{"boq-csv", func(t *testing.T, raw []byte) {
			// The UTF-8 byte-order mark, then the CSV (Unicode 15 §23.8).
			rest, ok := bytes.CutPrefix(raw, []byte{0xEF, 0xBB, 0xBF})
			if !ok {
				t.Fatalf("the CSV does not start with the UTF-8 byte-order mark: %.12q", raw)
			}
			rows, err := csv.NewReader(bytes.NewReader(rest)).ReadAll()
			if err != nil {
				t.Fatal(err)
			}
			// Header, one row per engine line, total, completeness.
			if len(rows) != len(want.Lines)+3 || strings.Join(rows[0], ",") != "item,description,quantity,unit,unit_price,extended_price,currency" {
				t.Fatalf("%d rows, header %q", len(rows), rows[0])
			}
			total, err := strconv.ParseFloat(rows[len(rows)-2][5], 64)
			// The engine's total; 683.50 by hand (components/export tests).
			if err != nil || !closeTo(total, want.Total, 1e-12) || !closeTo(total, 683.5, 1e-12) {
				t.Errorf("total %q, want %v", rows[len(rows)-2][5], want.Total)
			}
		}},
		{"boq-xlsx", func(t *testing.T, raw []byte) {
			f, err := excelize.OpenReader(bytes.NewReader(raw))
			if err != nil {
				t.Fatal(err)
			}
			defer f.Close()
			if got := strings.Join(f.GetSheetList(), ","); got != "BOQ,Inputs,Results" {
				t.Errorf("sheets %s", got)
			}
			ref := "F" + strconv.Itoa(2+len(want.Lines)) // header row, then the lines, then the total
			v, err := f.CalcCellValue("BOQ", ref, excelize.Options{RawCellValue: true})
			if err != nil {
				t.Fatal(err)
			}
			if total, err := strconv.ParseFloat(v, 64); err != nil || !closeTo(total, want.Total, 1e-12) {
				t.Errorf("BOQ!%s calculates to %q, want %v", ref, v, want.Total)
			}
		}},
		{"boq-json", func(t *testing.T, raw []byte) {
			var b sizing.BOQ
			dec := json.NewDecoder(bytes.NewReader(raw))
			dec.DisallowUnknownFields()
			if err := dec.Decode(&b); err != nil {
				t.Fatal(err)
			}
			if b.CellID != want.CellID || !closeTo(b.Total, want.Total, 1e-15) || len(b.Lines) != len(want.Lines) {
				t.Errorf("BOQ %s total %v with %d lines, want %s %v with %d", b.CellID, b.Total, len(b.Lines), want.CellID, want.Total, len(want.Lines))
			}
		}},
		{"pdf", func(t *testing.T, raw []byte) {
			if !bytes.HasPrefix(raw, []byte("%PDF-1.")) || !bytes.Contains(raw, []byte("/MediaBox [0 0 595.28 841.89]")) {
				t.Errorf("not an A4 PDF (the default paper): %.20q", raw)
			}
		}},
	}
	for _, tt := range tests {
		t.Run(tt.format, func(t *testing.T) {
			t.Parallel()
			out := filepath.Join(t.TempDir(), "export")
			if stdout := sizeOK(t, "--format", tt.format, upsDesign, "-o", out); stdout != "" {
				t.Errorf("stdout %q with -o, want nothing", stdout)
			}
			raw, err := os.ReadFile(out)
			if err != nil {
				t.Fatal(err)
			}
			tt.check(t, raw)
		})
	}
}

func TestSizeExportChosenCellAndPaper(t *testing.T) {
	t.Parallel()
	// demo-c3000-3v0 is feasible, 15 s × 1 p (capbank size --format text).
	out := sizeOK(t, "--format", "boq-json", "--cell", "demo-c3000-3v0", upsDesign)
	var b sizing.BOQ
	if err := json.Unmarshal([]byte(out), &b); err != nil {
		t.Fatal(err)
	}
	want := engineBOQ(t, "demo-c3000-3v0")
	if b.CellID != "demo-c3000-3v0" || b.Series != 15 || b.Parallel != 1 || !closeTo(b.Total, want.Total, 1e-15) {
		t.Errorf("BOQ %s %d s × %d p total %v, want demo-c3000-3v0 15 s × 1 p %v", b.CellID, b.Series, b.Parallel, b.Total, want.Total)
	}

	pdf := filepath.Join(t.TempDir(), "letter.pdf")
	sizeOK(t, "--format", "pdf", "--paper", "letter", "--cell", "demo-c3000-3v0", upsDesign, "-o", pdf)
	raw, err := os.ReadFile(pdf)
	if err != nil {
		t.Fatal(err)
	}
	// Letter: 8.5 in × 11 in = 612 pt × 792 pt.
	if !bytes.Contains(raw, []byte("/MediaBox [0 0 612.00 792.00]")) {
		t.Errorf("--paper letter did not give a 612 × 792 pt page")
	}
}

func TestSizeExportMistakes(t *testing.T) {
	t.Parallel()
	const usageLine = "usage: capbank size [--format json|text] [--data DIR] [--profile LOG.csv] [-o FILE] DESIGN.json"
	tests := []struct {
		name string
		args []string
		want []string // lines stderr must contain
	}{
		{"unknown cell", []string{"--format", "boq-csv", "--cell", "no-such-cell", upsDesign},
			[]string{`capbank size: --cell "no-such-cell" is not a cell of this design; its cells are demo-c400-2v8, demo-c1200-2v7, demo-c3000-3v0, demo-c100-2v5`}},
		{"unknown cell, pdf", []string{"--format", "pdf", "--cell", "x", upsDesign, "-o", "OUT"},
			[]string{`--cell "x" is not a cell of this design`}},
		{"xlsx without -o", []string{"--format", "boq-xlsx", upsDesign},
			[]string{"capbank size: --format boq-xlsx writes a binary file: give -o FILE (or -o - for standard output)", usageLine}},
		{"pdf without -o", []string{"--format", "pdf", upsDesign},
			[]string{"capbank size: --format pdf writes a binary file: give -o FILE", usageLine}},
		{"cell with the json report", []string{"--cell", "demo-c400-2v8", upsDesign},
			[]string{"--cell chooses the bank of an export", usageLine}},
		{"empty cell", []string{"--format", "boq-csv", "--cell", "", upsDesign},
			[]string{"--cell needs a cell id"}},
		{"bad paper", []string{"--format", "pdf", "--paper", "a3", upsDesign, "-o", "OUT"},
			[]string{`capbank size: --paper must be a4 or letter (got "a3")`}},
		{"paper without pdf", []string{"--format", "boq-csv", "--paper", "letter", upsDesign},
			[]string{"--paper applies to --format pdf only"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			out := filepath.Join(t.TempDir(), "out")
			args := append([]string{"size"}, tt.args...)
			for i, a := range args {
				if a == "OUT" {
					args[i] = out
				}
			}
			status, stdout, stderr := runCapbank(t, context.Background(), args...)
			if status != 2 || stdout != "" {
				t.Errorf("exit status %d, stdout %q; want 2 and nothing", status, stdout)
			}
			for _, w := range tt.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr does not contain %q:\n%s", w, stderr)
				}
			}
			if _, err := os.Stat(out); !errors.Is(err, os.ErrNotExist) {
				t.Errorf("%s written after a mistake (stat: %v)", out, err)
			}
		})
	}
}

// A cell that cannot carry the load has no bank to export.
func TestSizeExportInfeasibleCell(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile(upsDesign)
	if err != nil {
		t.Fatal(err)
	}
	// 1 mA ratings: no string count carries the demo's 100+ A.
	design := strings.NewReplacer(`"max_current_a": 190,`, `"max_current_a": 0.001,`,
		`"peak_current_a": 2000,`, `"peak_current_a": 0.001,`).Replace(string(raw))
	if !strings.Contains(design, `"max_current_a": 0.001,`) || !strings.Contains(design, `"peak_current_a": 0.001,`) {
		t.Fatal("the demo design no longer has the ratings this test edits")
	}
	path := writeFile(t, "design.json", design)
	status, stdout, stderr := runCapbank(t, context.Background(), "size", "--format", "boq-csv", "--cell", "demo-c3000-3v0", path)
	if status != 2 || stdout != "" {
		t.Errorf("exit status %d, stdout %q; want 2 and nothing", status, stdout)
	}
	if !strings.Contains(stderr, `capbank size: --cell "demo-c3000-3v0" cannot carry the load (`) || !strings.Contains(stderr, "feasible cells: demo-c400-2v8") {
		t.Errorf("stderr does not say the cell cannot carry the load and which can:\n%s", stderr)
	}
}

// With nothing feasible, the BOQ formats have nothing to list (status 1),
// while the PDF is still written and says why (status 0).
func TestSizeExportNothingFeasible(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile(checkDesign)
	if err != nil {
		t.Fatal(err)
	}
	design := strings.Replace(string(raw), `"esr_ohm": 0.0004`, `"esr_ohm": 0.0004, "peak_current_a": 0.001`, 1)
	if design == string(raw) {
		t.Fatal("check design no longer has the esr_ohm this test edits")
	}
	path := writeFile(t, "infeasible.json", design)
	status, stdout, stderr := runCapbank(t, context.Background(), "size", "--format", "boq-json", path)
	if status != 1 || stdout != "" || !strings.Contains(stderr, "no candidate carries the load at worst case, so there is no bank to list") {
		t.Errorf("boq-json: exit status %d, stdout %q, stderr %q; want 1 and the reason", status, stdout, stderr)
	}
	out := filepath.Join(t.TempDir(), "report.pdf")
	sizeOK(t, "--format", "pdf", path, "-o", out)
	if raw, err := os.ReadFile(out); err != nil || !bytes.HasPrefix(raw, []byte("%PDF-")) {
		t.Errorf("no PDF written with nothing feasible (%v)", err)
	}
}

// -o - writes a binary export to standard output when asked to.
func TestSizeBinaryToStdoutOnRequest(t *testing.T) {
	t.Parallel()
	out := sizeOK(t, "--format", "pdf", upsDesign, "-o", "-")
	if !strings.HasPrefix(out, "%PDF-") {
		t.Errorf("stdout %.20q, want a PDF", out)
	}
}
