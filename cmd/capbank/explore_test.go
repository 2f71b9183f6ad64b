package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"capbank/sizing/explore"
	"capbank/web/store"
)

// TestExploreCommand: capbank explore writes the points and the front as
// JSON, every point as CSV, and the front as a text table; a point sized
// on its own with capbank size and the series key gets the same strings.
func TestExploreCommand(t *testing.T) {
	t.Parallel()
	status, out, stderr := runCapbank(t, context.Background(), "explore", upsDesign)
	if status != 0 || stderr != "" {
		t.Fatalf("capbank explore: status %d, stderr %s", status, stderr)
	}
	var r explore.Result
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if len(r.Explore.Points) == 0 || len(r.Explore.Front) == 0 {
		t.Fatalf("%d points, %d on the front", len(r.Explore.Points), len(r.Explore.Front))
	}
	// Size one point of each cell that is not at its least series count,
	// with the design's series key, through capbank size.
	data, err := os.ReadFile(upsDesign)
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, p := range r.Explore.Points {
		if seen[p.CellID] || !p.Feasible {
			seen[p.CellID] = true // skip each cell's least count
			continue
		}
		seen[p.CellID] = true
		var d map[string]any
		if err := json.Unmarshal(data, &d); err != nil {
			t.Fatal(err)
		}
		for _, c := range d["cells"].([]any) {
			if c.(map[string]any)["id"] == p.CellID {
				d["cells"] = []any{c}
			}
		}
		d["series"] = p.Series
		file := filepath.Join(t.TempDir(), "one.json")
		b, _ := json.Marshal(d)
		if err := os.WriteFile(file, b, 0o644); err != nil {
			t.Fatal(err)
		}
		rep := decodeReport(t, sizeOK(t, file))
		if c := rep.Candidates[0]; c.Series != p.Series || c.Parallel != p.Parallel {
			t.Errorf("%s: explored %d × %d, capbank size with series: %d × %d", p.CellID, p.Series, p.Parallel, c.Series, c.Parallel)
		}
	}

	status, out, _ = runCapbank(t, context.Background(), "explore", "--format", "csv", upsDesign)
	if status != 0 {
		t.Fatalf("--format csv: status %d", status)
	}
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil || len(rows) != 1+len(r.Explore.Points) || rows[0][0] != "cell_id" {
		t.Errorf("CSV: %d rows (%v), want a header and %d points", len(rows), err, len(r.Explore.Points))
	}

	status, out, _ = runCapbank(t, context.Background(), "explore", "--format", "text", upsDesign)
	if status != 0 || !strings.Contains(out, "on the front") {
		t.Errorf("--format text: status %d:\n%s", status, out)
	}
	for _, k := range r.Explore.Front {
		p := r.Explore.Points[k]
		if !strings.Contains(out, "\n"+p.CellID+", "+strconv.Itoa(p.Series)+" in series: ") {
			t.Errorf("--format text lacks the why line of front point %s × %d", p.CellID, p.Series)
		}
	}

	// "cells": "library" explores every cell of the library (here the demo
	// cells: the test's folder has no database).
	lib := filepath.Join(t.TempDir(), "lib.json")
	if err := os.WriteFile(lib, []byte(`{"window": {"max_v": 24, "min_v": 12}, "load": {"steps": [{"power_w": 200, "duration_s": 10}]}, "cells": "library", "explore": {"extra_series": 0}}`), 0o644); err != nil {
		t.Fatal(err)
	}
	status, out, stderr = runCapbank(t, context.Background(), "explore", lib)
	var lr explore.Result
	if status != 0 || json.Unmarshal([]byte(out), &lr) != nil || len(lr.Explore.Points) != len(store.DemoCells()) {
		t.Errorf("cells library: status %d, %d points, want one per demo cell (%d); stderr %s", status, len(lr.Explore.Points), len(store.DemoCells()), stderr)
	}

	// A bad objective is a design problem: status 2, the field named.
	status, _, stderr = runCapbank(t, context.Background(), "explore", "--objectives", "price,colour", upsDesign)
	if status != 2 || !strings.Contains(stderr, "explore.objectives[1]") {
		t.Errorf("--objectives price,colour: status %d, stderr %q; want 2 naming explore.objectives[1]", status, stderr)
	}
}
