package main

// These tests size the demo designs in testdata/ with the real
// sizing.Size, end to end through the command line.

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capbank/sizing"
)

const (
	upsDesign   = "../../testdata/ups-ride-through.json"
	checkDesign = "../../testdata/check-constant-current.json"
)

// sizeOK runs capbank size with args, requires success and no stderr, and
// returns stdout.
func sizeOK(t *testing.T, args ...string) string {
	t.Helper()
	status, stdout, stderr := runCapbank(t, context.Background(), append([]string{"size"}, args...)...)
	if status != 0 || stderr != "" {
		t.Fatalf("capbank size %s: exit status %d, stderr:\n%s", strings.Join(args, " "), status, stderr)
	}
	return stdout
}

// decodeReport decodes a JSON report strictly: every key must be a
// sizing.Report key.
func decodeReport(t *testing.T, out string) *sizing.Report {
	t.Helper()
	dec := json.NewDecoder(strings.NewReader(out))
	dec.DisallowUnknownFields()
	var r sizing.Report
	if err := dec.Decode(&r); err != nil {
		t.Fatalf("the JSON report does not decode as a sizing.Report: %v\n%s", err, out)
	}
	return &r
}

func closeTo(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)
}

// The check design is the bank of sizing/REFERENCES.md 10.1–10.3 (2500 F,
// 0.40 mΩ, 2.7 V cells, 48 V → 24 V) at 100 A with the end-of-life factors
// set to 1, so the worst case is the beginning of life and every figure has
// a closed form.
func TestSizeCheckDesignJSON(t *testing.T) {
	t.Parallel()
	out := sizeOK(t, checkDesign)
	if !strings.HasSuffix(out, "}\n") || !strings.HasPrefix(out, "{\n  \"design\": ") {
		t.Errorf("JSON report is not indented by two spaces with a trailing newline:\n%.200s", out)
	}
	r := decodeReport(t, out)
	if r.Recommended == nil || *r.Recommended != "check-2500f" || len(r.Candidates) != 1 {
		t.Fatalf("recommended %v with %d candidates, want check-2500f alone", r.Recommended, len(r.Candidates))
	}
	c := r.Candidates[0]
	if !c.Feasible {
		t.Fatalf("check-2500f infeasible: %s", c.Reason)
	}
	// Ns = ceil(48/2.7) = 18 (sizing/REFERENCES.md 10.1). One string: its
	// lowest terminal voltage, 25.68 V below, is above the 24 V cut-off.
	if c.Series != 18 || c.Parallel != 1 || c.Cells != 18 {
		t.Errorf("bank %d s × %d p = %d cells, want 18 × 1 = 18", c.Series, c.Parallel, c.Cells)
	}
	const rel = 1e-6 // closed forms, exact to floating point (sizing/REFERENCES.md, notes for test authors)
	checks := []struct {
		name      string
		got, want float64
	}{
		// ½·C·(48² − 24²) with C = 2500/18 F (sizing/REFERENCES.md 10.1).
		{"usable_energy_j", c.UsableEnergyJ, 120000},
		// 48 V − 100 A·30 s/(2500/18 F) − 100 A·7.2 mΩ = 48 − 21.6 − 0.72
		// (sizing/REFERENCES.md 3.5, own arithmetic).
		{"min_terminal_v", c.MinTerminalV, 25.68},
		// The constant 100 A step is both the peak and the RMS current.
		{"peak_current_a", c.PeakCurrentA, 100},
		{"rms_current_a", c.RMSCurrentA, 100},
	}
	if c.RuntimeS == nil {
		t.Errorf("runtime_s is null, want 32.333 s")
	} else {
		// C·(V0 − I·R − Vmin)/I = 32.333 333 s (sizing/REFERENCES.md 10.3): the
		// 30 s step repeated back to back is one 100 A discharge.
		checks = append(checks, struct {
			name      string
			got, want float64
		}{"runtime_s", *c.RuntimeS, 32.3333333333})
	}
	for _, ch := range checks {
		if !closeTo(ch.got, ch.want, rel) {
			t.Errorf("%s = %.10g, want %.10g (relative tolerance %g)", ch.name, ch.got, ch.want, rel)
		}
	}
}

func TestSizeCheckDesignText(t *testing.T) {
	t.Parallel()
	out := sizeOK(t, "--format", "text", checkDesign)
	for _, want := range []string{
		"Design: check: 100 A from one 18-cell string, 48 V to 24 V\n",
		"Recommended: check-2500f, 18 in series × 1 string, 18 cells\n",
		"usable energy (kJ)", // 120 000 J (sizing/REFERENCES.md 10.1) reads in kJ
		"peak current (A)",
		"Flags for check-2500f",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("text report has no %q:\n%s", want, out)
		}
	}
	var row string
	for line := range strings.Lines(out) {
		if strings.HasPrefix(line, "check-2500f ") {
			row = line
			break // the candidates table comes before the heat table
		}
	}
	// 32.33 s (sizing/REFERENCES.md 10.3), 25.68 V (3.5), 120 kJ (10.1), 100 A.
	if f := strings.Fields(row); len(f) < 10 || f[1] != "yes" || f[5] != "32.33" || f[6] != "25.68" || f[7] != "120" || f[8] != "100" || f[9] != "100" {
		t.Errorf("candidate row %q, want yes 18 1 18 32.33 25.68 120 100 100", row)
	}
}

func TestSizeUPSDesign(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile(upsDesign)
	if err != nil {
		t.Fatal(err)
	}
	d, err := sizing.DecodeDesign(bytes.NewReader(raw))
	if err != nil {
		t.Fatal(err)
	}
	r := decodeReport(t, sizeOK(t, upsDesign))

	if r.Design != d.Name {
		t.Errorf("report design %q, want the design's name %q", r.Design, d.Name)
	}
	if len(r.Candidates) != len(d.Cells) {
		t.Fatalf("%d candidates, want one per cell (%d)", len(r.Candidates), len(d.Cells))
	}
	if r.Recommended == nil {
		t.Fatal("nothing recommended for the demo design")
	}
	rec := r.Candidates[0]
	if rec.CellID != *r.Recommended || !rec.Feasible {
		t.Errorf("first candidate %s (feasible %v), want the recommended %s, feasible", rec.CellID, rec.Feasible, *r.Recommended)
	}
	for _, c := range r.Candidates {
		if c.Series < 1 || c.Parallel < 1 || c.Cells != c.Series*c.Parallel {
			t.Errorf("%s: %d s × %d p = %d cells", c.CellID, c.Series, c.Parallel, c.Cells)
		}
	}

	// The text headline says the same bank as the JSON report.
	text := sizeOK(t, "--format", "text", upsDesign)
	head := fmt.Sprintf("%d in series × %d string", rec.Series, rec.Parallel)
	if !strings.Contains(text, "Recommended: "+rec.CellID) || !strings.Contains(text, head) {
		t.Errorf("text headline does not name %s, %q:\n%s", rec.CellID, head, text)
	}
	for _, c := range r.Candidates {
		if !strings.Contains(text, "\n"+c.CellID+" ") {
			t.Errorf("text report has no row for %s:\n%s", c.CellID, text)
		}
	}
	for _, f := range rec.Flags {
		if !strings.Contains(text, f.Code) || !strings.Contains(text, string(f.Severity)) {
			t.Errorf("text report lacks flag %s (%s) of %s", f.Code, f.Severity, rec.CellID)
		}
	}
	// The heat, balancing and life table shows the JSON report's figures
	// for the recommended cell, to the significant figures it prints.
	_, heat, ok := strings.Cut(text, "Heat, balancing and life")
	if !ok || rec.Thermal == nil || rec.Balancing == nil || rec.Balancing.ResistorOhm == nil || rec.Life == nil {
		t.Fatalf("no heat table, or the demo's recommended cell lacks thermal, balancing or life figures:\n%s", text)
	}
	var row string
	for line := range strings.Lines(heat) {
		if strings.HasPrefix(line, rec.CellID+" ") {
			row = line
		}
	}
	for _, want := range []string{number(rec.Thermal.HotSpotC, 3), quantity(*rec.Balancing.ResistorOhm, "Ω"),
		number(*rec.Balancing.ShelfHoldH, sigFigs), number(rec.Life.ExpectedYears, 3)} {
		if !strings.Contains(row, want) {
			t.Errorf("heat row %q has no %q", row, want)
		}
	}
}

// Not parallel: replaces the package's stdin.
func TestSizeFromStdinAndToFile(t *testing.T) {
	raw, err := os.ReadFile(upsDesign)
	if err != nil {
		t.Fatal(err)
	}
	want := sizeOK(t, "--format", "text", upsDesign)

	defer func(r io.Reader) { stdin = r }(stdin)
	stdin = bytes.NewReader(raw)
	if got := sizeOK(t, "--format", "text", "-"); got != want {
		t.Errorf("report from stdin differs from the report from the file:\n%s\nwant\n%s", got, want)
	}

	out := filepath.Join(t.TempDir(), "report.txt")
	if got := sizeOK(t, upsDesign, "--format", "text", "-o", out); got != "" {
		t.Errorf("stdout %q with -o, want nothing", got)
	}
	written, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if string(written) != want {
		t.Errorf("-o wrote\n%s\nwant the stdout report\n%s", written, want)
	}
}

func TestSizeUnwritableOutput(t *testing.T) {
	t.Parallel()
	out := filepath.Join(t.TempDir(), "no-such-dir", "report.json")
	status, stdout, stderr := runCapbank(t, context.Background(), "size", "-o", out, checkDesign)
	if status != 1 || stdout != "" {
		t.Errorf("exit status %d, stdout %q; want 1 and nothing", status, stdout)
	}
	if !strings.HasPrefix(stderr, "capbank: cannot write the report: open "+out+": no such file or directory") {
		t.Errorf("stderr %q does not say the report could not be written", stderr)
	}
}

// A design no candidate can carry is still a sized design: status 0, and the
// report says why.
func TestSizeNothingFeasible(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile(checkDesign)
	if err != nil {
		t.Fatal(err)
	}
	// 100 A through at most sizing.MaxParallel strings is far above a
	// 1 mA peak rating per cell.
	design := strings.Replace(string(raw), `"esr_ohm": 0.0004`, `"esr_ohm": 0.0004, "peak_current_a": 0.001`, 1)
	if design == string(raw) {
		t.Fatal("check design no longer has the esr_ohm this test edits")
	}
	path := writeFile(t, "infeasible.json", design)

	r := decodeReport(t, sizeOK(t, path))
	if r.Recommended != nil || len(r.Candidates) != 1 || r.Candidates[0].Feasible || r.Candidates[0].Reason == "" {
		t.Fatalf("recommended %v, candidates %+v; want nothing recommended and one infeasible candidate with a reason", r.Recommended, r.Candidates)
	}
	text := sizeOK(t, "--format", "text", path)
	for _, want := range []string{"Recommended: none;", r.Candidates[0].Reason + "\n"} {
		if !strings.Contains(text, want) {
			t.Errorf("text report has no %q:\n%s", want, text)
		}
	}
	if strings.Contains(text, "Flags for") {
		t.Errorf("text report lists flags with nothing recommended:\n%s", text)
	}
}
