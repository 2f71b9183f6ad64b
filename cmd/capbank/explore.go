package main

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"capbank/components"
	"capbank/components/figures"
	"capbank/sizing"
	"capbank/sizing/explore"
	"capbank/web/store"
	"capbank/web/store/sqlite"
)

const exploreUsage = `usage: capbank explore [--format json|csv|text] [--objectives KEYS] [--data DIR] [--profile LOG.csv] [-o FILE] DESIGN.json

Lays out the design's whole space: every candidate cell at every series
count from the least the window allows to explore.extra_series more
(default 3), each with the fewest strings that carry the pass at worst
case, and marks the front: the banks no other bank beats on every
objective (default price, mass_kg and volume_l down, life_years up).
json writes explore.points and explore.front (indexes into the points);
csv one row per point; text a table of the front.

Every point can be sized on its own: set the design's "series" key to the
point's series count and run capbank size.

flags:
`

func runExplore(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank explore", flag.ContinueOnError)
	flags.SetOutput(stderr)
	format := flags.String("format", "json", "what to write, `FORMAT`: json, csv (every point) or text (the front as a table)")
	objectives := flags.String("objectives", "", "judge the front on these comma-separated `KEYS` in place of explore.objectives: price, mass_kg, volume_l, life_years, margin_pct, standing_loss_w, rise_k")
	out := flags.String("o", "", "write to `FILE` instead of standard output")
	profile := flags.String("profile", "", "explore with the logged load profile in the CSV `FILE` in place of the design's steps")
	data := flags.String("data", "capbank-data", "the data `DIR`ectory whose cell library resolves cells named by id; without a database there, the built-in demo cells")
	cl, err := parseCommand(flags, args, exploreUsage)
	if err != nil {
		return err
	}
	if *format != "json" && *format != "csv" && *format != "text" {
		return usageFailure(stderr, cl.usage, "capbank explore: --format must be json, csv or text (got %q)", *format)
	}
	switch len(cl.pos) {
	case 0:
		return usageFailure(stderr, cl.usage, "capbank explore: give the design file (or - for standard input)")
	case 1:
	default:
		return usageFailure(stderr, cl.usage, "capbank explore: give one design file, not %d", len(cl.pos))
	}
	if cl.set["profile"] && *profile == "" {
		return usageFailure(stderr, cl.usage, "capbank explore: --profile needs a CSV file")
	}
	var opts explore.Options
	if *objectives != "" {
		opts.Objectives = strings.Split(*objectives, ",")
	}
	lookup, closeLib, err := openLibrary(ctx, *data, cl.set["data"])
	if err != nil {
		return err
	}
	defer closeLib()
	d, err := readDesign(cl.pos[0], *profile, stdin, lookup)
	if err != nil {
		return err
	}
	if d.WantsLibrary() {
		cells, err := libraryCellList(ctx, *data)
		if err != nil {
			return err
		}
		d.UseLibrary(cells)
	}
	res, err := explore.Explore(ctx, d, opts)
	if *profile != "" {
		err = flagField(err)
	}
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	switch *format {
	case "csv":
		err = explore.WriteCSV(&buf, res)
	case "text":
		writeExploreText(&buf, res)
	default:
		enc := json.NewEncoder(&buf)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		err = enc.Encode(res)
	}
	if err != nil {
		return fmt.Errorf("cannot write the exploration: %w", err)
	}
	if *out == "" || *out == "-" {
		_, err = stdout.Write(buf.Bytes())
		return err
	}
	if err := os.WriteFile(*out, buf.Bytes(), 0o644); err != nil {
		return fmt.Errorf("cannot write the exploration: %w", err)
	}
	return nil
}

// writeExploreText writes the front as a table for a terminal, then how
// many points the sweep sized.
func writeExploreText(w io.Writer, r *explore.Result) {
	name := r.Design
	if name == "" {
		name = "(unnamed design)"
	}
	fmt.Fprintf(w, "Design: %s\n", name)
	feasible := 0
	for _, p := range r.Explore.Points {
		if p.Feasible {
			feasible++
		}
	}
	fmt.Fprintf(w, "%d banks sized (%d carry the pass), %d on the front of %s\n\n",
		len(r.Explore.Points), feasible, len(r.Explore.Front), strings.Join(r.Explore.Objectives, ", "))
	t := table{right: make([]bool, len(components.ExploreColumns))}
	head := make([]string, len(components.ExploreColumns))
	for i, c := range components.ExploreColumns {
		head[i] = c.Label
		t.right[i] = i > 0 && c.Key != "worst_severity"
	}
	t.rows = append(t.rows, head)
	for _, k := range r.Explore.Front {
		cells := components.ExploreCells(&r.Explore.Points[k], r.Currency)
		for i := range cells {
			cells[i] = figures.ASCII(cells[i])
		}
		t.rows = append(t.rows, cells)
	}
	writeTable(w, t)
	for _, k := range r.Explore.Front {
		p := &r.Explore.Points[k]
		fmt.Fprintf(w, "\n%s, %d in series: %s\n", p.CellID, p.Series, figures.ASCII(p.Why))
	}
}

// libraryCellList is every cell of the library openLibrary resolves ids
// in, for "cells": "library": the database's in dataDir when there is one
// (openLibrary has already refused a --data without one), else the
// built-in demo cells.
func libraryCellList(ctx context.Context, dataDir string) ([]sizing.Cell, error) {
	path := filepath.Join(dataDir, store.FileName)
	if _, err := os.Stat(path); err != nil {
		return store.DemoCells(), nil
	}
	st, err := sqlite.Open(ctx, path)
	if err != nil {
		return nil, fmt.Errorf("--data %s: %w", dataDir, err)
	}
	defer st.Close()
	recs, err := st.ListCells(ctx, store.CellFilter{})
	if err != nil {
		return nil, fmt.Errorf("--data %s: %w", dataDir, err)
	}
	cells := make([]sizing.Cell, len(recs))
	for i := range recs {
		cells[i] = recs[i].Cell
	}
	return cells, nil
}
