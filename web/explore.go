package web

import (
	"cmp"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"net/url"
	"slices"
	"strconv"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/sizing"
	"capbank/sizing/explore"
	"capbank/web/fault"
	"capbank/web/form"
	"capbank/web/share"
	"capbank/web/store"
)

// apiExplore is POST /api/v1/explore: the design file in (as POST
// /api/v1/size takes it, "cells": "library" for every library cell), the
// explorer's points and front out, under the compute deadline.
func (s *Server) apiExplore(c echo.Context) error {
	d, _, err := s.designFrom(c, fromBodyOrParts)
	if err != nil {
		return err
	}
	res, err := compute(s, c, func(ctx context.Context) (*explore.Result, error) { return explore.Explore(ctx, d, explore.Options{}) })
	if err != nil {
		return partFields(d, err)
	}
	return writeJSON(c, http.StatusOK, echo.MIMEApplicationJSONCharsetUTF8, res)
}

// exploreQuery is what the explorer page's address chooses.
type exploreQuery struct {
	token      string
	library    bool
	objectives []string // nil: the design's or the defaults
	x, y       string
	sort, dir  string
}

func readExploreQuery(c echo.Context) exploreQuery {
	q := c.QueryParams()
	eq := exploreQuery{token: q.Get("d"), library: q.Get("cells") == sizing.LibraryCells,
		x: q.Get("x"), y: q.Get("y"), sort: q.Get("sort"), dir: q.Get("dir")}
	for _, o := range q["objective"] {
		if _, ok := sizing.Objectives[o]; ok && !slices.Contains(eq.objectives, o) {
			eq.objectives = append(eq.objectives, o)
		}
	}
	return eq
}

// query writes the address's parameters back, with changes.
func (q exploreQuery) query(set map[string]string) string {
	v := url.Values{}
	if q.token != "" {
		v.Set("d", q.token)
	}
	if q.library {
		v.Set("cells", sizing.LibraryCells)
	}
	for _, o := range q.objectives {
		v.Add("objective", o)
	}
	for k, x := range map[string]string{"x": q.x, "y": q.y, "sort": q.sort, "dir": q.dir} {
		if x != "" {
			v.Set(k, x)
		}
	}
	for k, x := range set {
		v.Set(k, x)
	}
	return v.Encode()
}

// exploreDesign is the design the explorer page sweeps: the one the share
// token d carries, else the example design; with cells=library every cell
// of the library in place of its cells.
func (s *Server) exploreDesign(c echo.Context, q exploreQuery) (*sizing.Design, error) {
	d, err := s.compareDesign(c)
	if err != nil {
		return nil, err
	}
	if q.library {
		recs, err := s.libraryCells(c.Request().Context(), store.CellFilter{})
		if err != nil {
			return nil, err
		}
		cells := make([]sizing.Cell, len(recs))
		for i := range recs {
			cells[i] = recs[i].Cell
		}
		d.UseLibrary(cells)
	}
	return d, nil
}

// runExplore sweeps d under the compute deadline. A design the explorer
// refuses is its message (422); a deadline or a busy server the error.
func (s *Server) runExplore(c echo.Context, d *sizing.Design, objectives []string) (*explore.Result, string, error) {
	if len(objectives) == 1 {
		return nil, "Choose two or more objectives for the front (one objective has a single best bank, not a front).", nil
	}
	res, err := compute(s, c, func(ctx context.Context) (*explore.Result, error) {
		return explore.Explore(ctx, d, explore.Options{Objectives: objectives})
	})
	if fe := fault.As(err); (fe != nil && fe.Code == fault.Unavailable) || errors.Is(err, errClientGone) {
		return nil, "", err
	}
	if err != nil {
		return nil, "The design could not be explored: " + form.OneLine(err), nil
	}
	return res, "", nil
}

// getExplore is GET /explore: the design explorer page.
func (s *Server) getExplore(c echo.Context) error {
	q := readExploreQuery(c)
	d, err := s.exploreDesign(c, q)
	if err != nil {
		return err
	}
	shell := s.shell("Design explorer", "Every cell at several series counts, and the banks no other beats", "explore")
	shell.Script = s.js // the choices form is boosted, with its "Sizing every bank…" status
	p := components.ExploreProps{
		Shell:  shell,
		Design: cmp.Or(d.Name, "the unnamed design"), Token: q.token, Library: q.library, DesignHref: "/",
	}
	if q.token != "" {
		p.DesignHref = "/?d=" + url.QueryEscape(q.token)
	}
	res, msg, err := s.runExplore(c, d, q.objectives)
	if err != nil {
		return err
	}
	objectives := q.objectives
	if res != nil {
		objectives = res.Explore.Objectives
	}
	if len(objectives) == 0 {
		objectives = sizing.DefaultObjectives
	}
	if _, ok := sizing.Objectives[q.x]; !ok {
		q.x = objectives[0]
	}
	if _, ok := sizing.Objectives[q.y]; !ok || q.y == q.x {
		q.y = objectives[len(objectives)-1]
		if q.y == q.x {
			q.y = objectives[0]
		}
	}
	p.X, p.Y = q.x, q.y
	for _, k := range sizing.ObjectiveKeys {
		label := components.ExploreObjectiveLabel(k)
		p.Axes = append(p.Axes, components.ExploreChoice{Key: k, Label: label})
		p.Objectives = append(p.Objectives, components.ExploreChoice{Key: k, Label: label, On: slices.Contains(objectives, k)})
	}
	if res == nil {
		p.Message = msg
		return s.render(c, http.StatusUnprocessableEntity, components.ExplorePage(p))
	}
	q.objectives = objectives
	fillExplore(&p, d, res, q)
	return s.render(c, http.StatusOK, components.ExplorePage(p))
}

// fillExplore lays out the chart, the front's table sorted as the query
// asks, and the links.
func fillExplore(p *components.ExploreProps, d *sizing.Design, res *explore.Result, q exploreQuery) {
	pts := res.Explore.Points
	feasible := 0
	for i := range pts {
		if pts[i].Feasible {
			feasible++
		}
	}
	p.Summary = fmt.Sprintf("%d banks sized: %d cells at up to %d more in series than the window needs; %d %s the pass, %d %s on the front.",
		len(pts), len(d.Cells), res.Explore.ExtraSeries, feasible, plural(feasible, "carries", "carry"), len(res.Explore.Front), plural(len(res.Explore.Front), "is", "are"))
	open, file := pointLinks(d, res, q.token)
	p.Scatter = components.ExploreScatter(res, q.x, q.y, file)
	for i := range open {
		if open[i] != "" && p.Scatter != nil {
			for k := range p.Scatter.Dots {
				if p.Scatter.Dots[k].Href == file[i] {
					p.Scatter.Dots[k].Href = open[i]
				}
			}
		}
	}
	col := slices.IndexFunc(components.ExploreColumns, func(c components.ExploreColumn) bool { return c.Key == q.sort })
	if col < 0 {
		q.sort, col = "", -1
	}
	front := slices.Clone(res.Explore.Front)
	if col >= 0 {
		key := q.sort
		slices.SortStableFunc(front, func(a, b int) int {
			r := comparePoints(&pts[a], &pts[b], key)
			if q.dir == "desc" {
				return -r
			}
			return r
		})
	}
	for k, c := range components.ExploreColumns {
		h := components.ExploreHead{Label: c.Label}
		dir := "asc"
		if k == col && q.dir != "desc" {
			dir = "desc"
		}
		if k == col {
			h.Sorted = "ascending"
			if q.dir == "desc" {
				h.Sorted = "descending"
			}
		}
		h.Href = "/explore?" + q.query(map[string]string{"sort": c.Key, "dir": dir}) + "#front-title"
		p.Head = append(p.Head, h)
	}
	for _, i := range front {
		p.Rows = append(p.Rows, components.ExploreRow{Cells: components.ExploreCells(&pts[i], res.Currency),
			OpenHref: open[i], FileHref: file[i], Why: pts[i].Why})
	}
	p.CSVHref = "/explore.csv?" + q.query(map[string]string{"sort": "", "dir": "", "x": "", "y": ""})
}

// comparePoints orders two points by the figure key; a point without the
// figure goes last.
func comparePoints(a, b *explore.Point, key string) int {
	switch key {
	case "cell_id":
		return cmp.Compare(a.CellID, b.CellID)
	case "series":
		return cmp.Compare(a.Series, b.Series)
	case "parallel":
		return cmp.Compare(a.Parallel, b.Parallel)
	case "cell_v":
		return cmp.Compare(a.CellV, b.CellV)
	case "worst_severity":
		return cmp.Compare(severityRank(a.WorstSeverity), severityRank(b.WorstSeverity))
	}
	va, oka := explore.Value(a, key)
	vb, okb := explore.Value(b, key)
	if oka != okb {
		if oka {
			return -1
		}
		return 1
	}
	if sizing.Objectives[key] {
		va, vb = -va, -vb // the figure itself, not its orientation
	}
	return cmp.Compare(va, vb)
}

func severityRank(s string) int {
	return slices.Index([]string{"", "info", "warning", "danger"}, s)
}

// pointLinks are each point's links: open, the design page with the
// design of exactly that bank (the cell, and the series key, the form's
// "Cells in series, forced", where it is above the least; "" where the
// design does not fit a link), and file, the design file of that bank.
func pointLinks(d *sizing.Design, res *explore.Result, token string) (open, file []string) {
	pts := res.Explore.Points
	open, file = make([]string, len(pts)), make([]string, len(pts))
	least := map[string]int{}
	for i := range pts {
		if _, ok := least[pts[i].CellID]; !ok {
			least[pts[i].CellID] = pts[i].Series
		}
	}
	for i := range pts {
		v := url.Values{}
		if token != "" {
			v.Set("d", token)
		}
		v.Set("cell", pts[i].CellID)
		v.Set("series", strconv.Itoa(pts[i].Series))
		file[i] = "/explore/design.json?" + v.Encode()
		series := pts[i].Series
		if series == least[pts[i].CellID] {
			series = 0 // the least needs no key
		}
		if data, err := pointDesign(d, pts[i].CellID, series); err == nil {
			if tok, err := share.Encode(data); err == nil {
				open[i] = "/?d=" + url.QueryEscape(tok)
			}
		}
	}
	return open, file
}

// pointDesign is the design file of one explored bank: d with only the
// cell id and, when series is not 0, the series key.
func pointDesign(d *sizing.Design, id string, series int) ([]byte, error) {
	dc := *d
	dc.Explore = nil
	dc.Series = nil
	if series > 0 {
		dc.Series = &series
	}
	k := slices.IndexFunc(d.Cells, func(c sizing.Cell) bool { return c.ID == id })
	if k < 0 {
		return nil, fmt.Errorf("cell %q is not in the design", id)
	}
	dc.Cells = []sizing.Cell{d.Cells[k]}
	return json.MarshalIndent(&dc, "", "  ")
}

// getExploreDesign is GET /explore/design.json: the design file of one
// explored bank (cell=ID, series=N) of the design d carries (the example
// without it), with the series key where N is above the least, ready for
// capbank size or POST /api/v1/size.
func (s *Server) getExploreDesign(c echo.Context) error {
	q := readExploreQuery(c)
	d, err := s.exploreDesign(c, q)
	if err != nil {
		return err
	}
	id := c.QueryParam("cell")
	n, err := strconv.Atoi(c.QueryParam("series"))
	if err != nil || n < 1 || n > sizing.MaxSeries {
		return malformed(sizing.ValidationError{{Field: "series", Rule: "integer", Message: fmt.Sprintf("must be a whole number of cells in series from 1 to %d (got %q)", sizing.MaxSeries, c.QueryParam("series"))}})
	}
	if !slices.ContainsFunc(d.Cells, func(c sizing.Cell) bool { return c.ID == id }) {
		return malformed(sizing.ValidationError{{Field: "cell", Rule: "cell", Message: fmt.Sprintf("%q is not a cell of the design; give the id of one of its cells", id)}})
	}
	dd := *d
	dd.Series = &n
	dd.Cells = []sizing.Cell{d.Cells[slices.IndexFunc(d.Cells, func(c sizing.Cell) bool { return c.ID == id })]}
	if err := sizing.Validate(&dd); err != nil {
		return err
	}
	z, err := sizing.NewSeriesSizer(&dd)
	if err != nil {
		return err
	}
	series := n
	if least, _ := z.LeastSeries(0); n == least {
		series = 0 // the least needs no key, and the design page can open it
	}
	data, err := pointDesign(d, id, series)
	if err != nil {
		return err
	}
	c.Response().Header().Set(echo.HeaderContentDisposition, fmt.Sprintf(`attachment; filename="%s-%d-series.json"`, safeName(id), n))
	return c.Blob(http.StatusOK, echo.MIMEApplicationJSONCharsetUTF8, append(data, '\n'))
}

// safeName keeps the letters, digits, - and _ of a cell id for a file name.
func safeName(id string) string {
	b := []byte{}
	for _, r := range []byte(id) {
		if r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '-' || r == '_' {
			b = append(b, r)
		}
	}
	return cmp.Or(string(b), "cell")
}

// getExploreCSV is GET /explore.csv: every point of the explorer page's
// sweep as CSV.
func (s *Server) getExploreCSV(c echo.Context) error {
	q := readExploreQuery(c)
	d, err := s.exploreDesign(c, q)
	if err != nil {
		return err
	}
	res, msg, err := s.runExplore(c, d, q.objectives)
	if err != nil {
		return err
	}
	if res == nil {
		return &fault.Error{Code: fault.Invalid, Title: "The design could not be explored", Message: msg}
	}
	c.Response().Header().Set(echo.HeaderContentType, "text/csv; charset=utf-8")
	c.Response().Header().Set(echo.HeaderContentDisposition, `attachment; filename="explore.csv"`)
	c.Response().WriteHeader(http.StatusOK)
	return explore.WriteCSV(c.Response(), res)
}
