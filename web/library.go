package web

import (
	"capbank/web/form"
	"context"
	"errors"
	"fmt"
	"net/http"
	"net/url"
	"path/filepath"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/store"
	"capbank/web/store/postgres"
	"capbank/web/store/sqlite"
)

// OpenStore opens (creating on first start) the SQLite database in
// dataDir and writes the built-in demo cells into it, so a fresh data
// directory needs no set-up step.
func OpenStore(ctx context.Context, dataDir string) (store.Store, error) {
	return OpenDatabase(ctx, dataDir, "")
}

// OpenDatabase opens the PostgreSQL database at databaseURL (postgres://…)
// or, when it is empty, the SQLite database in dataDir, migrates it and
// writes the built-in demo cells into it.
func OpenDatabase(ctx context.Context, dataDir, databaseURL string) (store.Store, error) {
	var st store.Store
	var err error
	if databaseURL != "" {
		st, err = postgres.Open(ctx, databaseURL)
	} else {
		st, err = sqlite.Open(ctx, filepath.Join(dataDir, store.FileName))
	}
	if err != nil {
		return nil, err
	}
	if err := st.SeedDemo(ctx, store.DemoCells()); err != nil {
		st.Close()
		return nil, fmt.Errorf("writing the demo cells: %w", err)
	}
	return st, nil
}

// errNoStore is a write to the library or the saved designs on a server
// run without a store.
var errNoStore = errors.New("this capbank runs without a database, so it cannot keep cells or designs")

// needStore answers errNoStore, before the handler runs, on a server run
// without a store.
func (s *Server) needStore(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		if s.store == nil {
			return errNoStore
		}
		return next(c)
	}
}

// libraryRoutes are the cell library's, the comparison's and the saved
// designs' pages and API.
func (s *Server) libraryRoutes(e *echo.Echo) {
	// needStore guards the routes that need the store: without one they
	// answer 503 (errNoStore); the rest read the built-in demo cells then.
	// (Route middleware rather than a Group: echo's group with an empty
	// prefix would answer every unknown address itself.)
	needStore := s.needStore
	e.GET("/library", s.getLibrary)
	e.POST("/library", s.postNewCell, needStore)
	e.GET("/library/new", s.getNewCell, needStore)
	e.POST("/library/new", s.postNewCellDraft, needStore)
	e.GET("/library.csv", s.getLibraryExport)
	e.GET("/library.json", s.getLibraryExport)
	e.POST("/library/import", s.postLibraryImport, needStore)
	e.GET("/library/:id", s.getCellPage)
	e.POST("/library/:id", s.postCellPage, needStore)
	e.POST("/library/:id/duplicate", s.postDuplicateCell, needStore)
	e.POST("/library/:id/delete", s.postDeleteCell, needStore)

	e.GET("/api/v1/cells", s.apiListCells)
	e.POST("/api/v1/cells", s.apiCreateCell, needStore)
	e.POST("/api/v1/cells/import", s.apiImportCells, needStore)
	e.GET("/api/v1/cells/:id", s.apiGetCell)
	e.PUT("/api/v1/cells/:id", s.apiUpdateCell, needStore)
	e.DELETE("/api/v1/cells/:id", s.apiDeleteCell, needStore)

	e.GET("/compare", s.getCompare)

	e.GET("/designs", s.getDesigns)
	e.POST("/designs", s.postSaveDesign, needStore)
	e.GET("/designs/:id", s.getSavedDesign, needStore)
	e.POST("/designs/:id", s.postReplaceDesign, needStore)
	e.POST("/designs/:id/rename", s.postRenameDesign, needStore)
	e.POST("/designs/:id/duplicate", s.postDuplicateDesign, needStore)
	e.POST("/designs/:id/delete", s.postDeleteDesign, needStore)

	e.GET("/api/v1/designs", s.apiListDesigns, needStore)
	e.POST("/api/v1/designs", s.apiSaveDesign, needStore)
	e.GET("/api/v1/designs/:id", s.apiGetDesign, needStore)
	e.GET("/api/v1/designs/:id/file", s.apiDesignFile, needStore)
	e.PUT("/api/v1/designs/:id", s.apiReplaceDesign, needStore)
	e.PATCH("/api/v1/designs/:id", s.apiRenameDesign, needStore)
	e.DELETE("/api/v1/designs/:id", s.apiDeleteDesign, needStore)
}

func (s *Server) shell(title, tagline, current string) components.ShellProps {
	return components.ShellProps{Title: title, Tagline: tagline, CSS: s.css, Current: current}
}

// libraryCells lists the library's cells that pass the filter: the store's,
// or the demo cells when there is no store.
func (s *Server) libraryCells(ctx context.Context, f store.CellFilter) ([]store.CellRecord, error) {
	if s.store != nil {
		return s.store.ListCells(ctx, f)
	}
	var out []store.CellRecord
	for _, c := range store.DemoCells() {
		if cellPasses(c, f) {
			out = append(out, store.CellRecord{Cell: c, ReadOnly: true})
		}
	}
	return out, nil
}

func cellPasses(c sizing.Cell, f store.CellFilter) bool {
	if q := strings.ToLower(f.Search); q != "" && !strings.Contains(strings.ToLower(c.ID), q) && !strings.Contains(strings.ToLower(c.Name), q) {
		return false
	}
	in := func(v, lo, hi float64) bool { return (lo <= 0 || v >= lo) && (hi <= 0 || v <= hi) }
	return in(c.RatedV, f.MinRatedV, f.MaxRatedV) && in(c.CapacitanceF, f.MinCapacitanceF, f.MaxCapacitanceF)
}

// libraryCell finds one cell of the library.
func (s *Server) libraryCell(ctx context.Context, id string) (store.CellRecord, error) {
	if s.store != nil {
		return s.store.GetCell(ctx, id)
	}
	if c, ok := store.DemoCell(id); ok {
		return store.CellRecord{Cell: c, ReadOnly: true}, nil
	}
	return store.CellRecord{}, fmt.Errorf("cell %q: %w", id, store.ErrNotFound)
}

// filterFields are the library filter's inputs.
var filterFields = []form.Field{
	{Name: "q", Label: "Search", Kind: form.KindText, Hint: "in the id and the name"},
	{Name: "min_v", Label: "Rated voltage from", Units: form.UnitVolt},
	{Name: "max_v", Label: "Rated voltage to", Units: form.UnitVolt},
	{Name: "min_f", Label: "Capacitance from", Units: form.UnitFarad},
	{Name: "max_f", Label: "Capacitance to", Units: form.UnitFarad},
}

// readFilter reads the library filter from a query; a bad number is a
// problem named by its field, never a guess.
func readFilter(q url.Values) (store.CellFilter, map[string]string) {
	f := store.CellFilter{Search: strings.TrimSpace(q.Get("q"))}
	msgs := map[string]string{}
	if n := utf8.RuneCountInString(f.Search); n > store.MaxSearchLen {
		msgs["q"] = fmt.Sprintf("is %d characters long; a search has at most %d: search for part of an id or a name", n, store.MaxSearchLen)
		f.Search = ""
	}
	num := func(name string, u form.UnitSpec, dst *float64) {
		v, err := form.ParseSI(q.Get(name), u)
		switch {
		case err == form.ErrEmpty:
		case err != nil:
			msgs[name] = err.Error()
		case v <= 0:
			msgs[name] = "must be more than 0 (leave it empty for no limit)"
		default:
			*dst = v
		}
	}
	num("min_v", form.UnitVolt, &f.MinRatedV)
	num("max_v", form.UnitVolt, &f.MaxRatedV)
	num("min_f", form.UnitFarad, &f.MinCapacitanceF)
	num("max_f", form.UnitFarad, &f.MaxCapacitanceF)
	if f.MinRatedV > 0 && f.MaxRatedV > 0 && f.MinRatedV > f.MaxRatedV {
		msgs["max_v"] = "is below the lower limit; swap them"
	}
	if f.MinCapacitanceF > 0 && f.MaxCapacitanceF > 0 && f.MinCapacitanceF > f.MaxCapacitanceF {
		msgs["max_f"] = "is below the lower limit; swap them"
	}
	return f, msgs
}

// libraryPath is the library page of a cell.
func libraryPath(id string) string { return "/library/" + url.PathEscape(id) }

// getLibrary is GET /library: the cells, filtered.
func (s *Server) getLibrary(c echo.Context) error {
	return s.renderLibrary(c, http.StatusOK, noticeFor(c.QueryParam("done"), c.QueryParam("id")), nil)
}

// noticeFor is the line the library shows after a redirect from an action.
func noticeFor(done, id string) string {
	switch done {
	case "deleted":
		return fmt.Sprintf("Deleted %s.", id)
	}
	return ""
}

func (s *Server) renderLibrary(c echo.Context, status int, notice string, rep *store.ImportReport) error {
	ctx := c.Request().Context()
	q := c.Request().URL.Query()
	filter, msgs := readFilter(q)
	if len(msgs) > 0 {
		// A bad limit lists by the search alone; a bad search lists all.
		filter = store.CellFilter{Search: filter.Search}
		status = http.StatusUnprocessableEntity
	}
	recs, err := s.libraryCells(ctx, filter)
	if err != nil {
		return err
	}
	all, err := s.libraryCells(ctx, store.CellFilter{})
	if err != nil {
		return err
	}
	p := components.LibraryProps{
		Shell: s.shell("Cell library", "The cells you size with: demo cells and your own", "library"),
		Total: len(all), Writable: s.store != nil, Notice: notice,
	}
	for _, fl := range filterFields {
		p.Filter = append(p.Filter, fieldProps(fl, q.Get(fl.Name), msgs[fl.Name]))
	}
	eq := url.Values{}
	for _, fl := range filterFields {
		if v := q.Get(fl.Name); v != "" && msgs[fl.Name] == "" {
			eq.Set(fl.Name, v)
		}
	}
	if len(eq) > 0 {
		p.ExportQuery = "?" + eq.Encode()
	}
	for _, r := range recs {
		p.Rows = append(p.Rows, libraryRow(r, p.Writable))
	}
	if rep != nil {
		p.Import = importProps(*rep)
	}
	return s.render(c, status, components.LibraryPage(p))
}

func libraryRow(r store.CellRecord, writable bool) components.LibraryRowProps {
	cell := r.Cell
	row := components.LibraryRowProps{
		ID: cell.ID, Href: libraryPath(cell.ID), Name: cell.Name, Source: sourceLabel(cell.Source), ReadOnly: r.ReadOnly,
		RatedV:      figures.SI(cell.RatedV, "V", 3),
		Capacitance: figures.SI(cell.CapacitanceF, "F", 4),
		ESR:         figures.SI(cell.ESROhm, "Ω", 3),
		Mass:        figures.Opt(cell.MassKg, func(v float64) string { return figures.SI(v, "kg", 3) }),
		Price:       figures.Opt(cell.UnitPrice, figures.Money),
	}
	if writable {
		row.DuplicateAction = libraryPath(cell.ID) + "/duplicate"
		if !r.ReadOnly {
			row.DeleteAction = libraryPath(cell.ID) + "/delete"
		}
	}
	return row
}

func sourceLabel(src string) string {
	switch src {
	case "demo":
		return "demo (invented)"
	case "":
		return "not said"
	}
	return src
}

func importProps(r store.ImportReport) *components.ImportReportProps {
	p := &components.ImportReportProps{Imported: r.Imported, Accepted: r.Accepted, Rejected: r.Rejected, Error: r.Error,
		Added: r.Added, Updated: r.Updated}
	for _, row := range r.Rows {
		p.Rows = append(p.Rows, components.ImportRowProps{Line: row.Line, ID: row.ID, Accepted: row.Accepted, Action: row.Action, Reason: row.Reason})
	}
	return p
}

// getLibraryExport is GET /library.csv and /library.json: the cells that
// pass the filter, as a download.
func (s *Server) getLibraryExport(c echo.Context) error {
	filter, msgs := readFilter(c.QueryParams())
	for name, m := range msgs {
		return exportRefused(name, m)
	}
	recs, err := s.libraryCells(c.Request().Context(), filter)
	if err != nil {
		return err
	}
	cells := make([]sizing.Cell, len(recs))
	for i, r := range recs {
		cells[i] = r.Cell
	}
	res := c.Response()
	if strings.HasSuffix(c.Request().URL.Path, ".csv") {
		res.Header().Set(echo.HeaderContentType, "text/csv; charset=utf-8")
		res.Header().Set(echo.HeaderContentDisposition, `attachment; filename="capbank-cells.csv"`)
		res.WriteHeader(http.StatusOK)
		return store.ExportCellsCSV(res, cells)
	}
	res.Header().Set(echo.HeaderContentType, echo.MIMEApplicationJSONCharsetUTF8)
	res.Header().Set(echo.HeaderContentDisposition, `attachment; filename="capbank-cells.json"`)
	res.WriteHeader(http.StatusOK)
	return store.ExportCellsJSON(res, cells)
}

// postLibraryImport is POST /library/import: a CSV or JSON cell file from
// the page's upload, with the row-by-row report.
func (s *Server) postLibraryImport(c echo.Context) error {
	r := c.Request()
	if err := r.ParseMultipartForm(maxFormMemory); err != nil {
		return formReadError(err)
	}
	fhs := r.MultipartForm.File["cells_file"]
	if len(fhs) == 0 || fhs[0].Size == 0 {
		return s.renderLibrary(c, http.StatusUnprocessableEntity, "", &store.ImportReport{Error: "no file was chosen; choose a CSV or JSON cell file"})
	}
	f, err := fhs[0].Open()
	if err != nil {
		return s.renderLibrary(c, http.StatusUnprocessableEntity, "", &store.ImportReport{Error: "the file could not be read; choose it again"})
	}
	defer f.Close()
	mode, err := store.ParseImportMode(r.FormValue("mode"))
	if err != nil {
		return s.renderLibrary(c, http.StatusUnprocessableEntity, "", &store.ImportReport{Error: "If an id is already in the library: choose one of the two choices"})
	}
	var rep store.ImportReport
	if isJSONName(fhs[0].Filename, fhs[0].Header.Get(echo.HeaderContentType)) {
		rep, err = s.store.ImportCellsJSON(r.Context(), f, mode)
	} else {
		rep, err = s.store.ImportCellsCSV(r.Context(), f, mode)
	}
	if err != nil {
		return err
	}
	status := http.StatusOK
	if !rep.Imported {
		status = http.StatusUnprocessableEntity
	}
	return s.renderLibrary(c, status, "", &rep)
}

func isJSONName(name, ctype string) bool {
	return strings.HasSuffix(strings.ToLower(name), ".json") || strings.Contains(ctype, "json")
}

// cellFormFields are the library cell form's inputs: the cell's keys.
var cellFormFields = form.CellFields("")

// readCellForm reads the posted cell form into a cell, with every
// problem named by its field: numbers that do not parse, then the
// library's validation of the cell.
func readCellForm(vals url.Values) (sizing.Cell, sizing.ValidationError) {
	r := &form.FieldReader{Get: vals.Get}
	cell, _ := form.TypedCell(r, "")
	if len(r.Problems) == 0 {
		if err := sizing.ValidateCell(&cell); err != nil {
			values := form.ValuesOf(cell)
			for _, p := range validationErrors(err) {
				p.Message = form.PageMessage(p.Field, p.Message, values)
				p.Field, p.Message = form.PointField(p.Field, p.Message)
				r.Problems = append(r.Problems, p)
			}
		}
	}
	return cell, r.Problems
}

// cellPageProps lays out a cell's page: the form with vals and problems.
func (s *Server) cellPageProps(rec *store.CellRecord, vals url.Values, problems sizing.ValidationError, isNew bool) components.CellPageProps {
	msg := messages(problems)
	p := components.CellPageProps{
		Shell: s.shell("New cell", "A cell of your own, from its datasheet or your measurement", "library"),
		New:   isNew, Writable: s.store != nil, Heading: "Add a cell", Action: "/library",
		ToleranceMessageID: "msg-capacitance_tolerance_pct", ToleranceMessage: msg["capacitance_tolerance_pct"],
	}
	if rec != nil {
		id := rec.Cell.ID
		p.ID, p.ReadOnly, p.Action = id, rec.ReadOnly, libraryPath(id)
		p.Heading = id
		if rec.Cell.Name != "" {
			p.Heading = id + " — " + rec.Cell.Name
		}
		p.Shell.Title = id
		p.Shell.Tagline = "A cell of the library"
		p.DesignHref = "/?cell=" + url.QueryEscape(id)
		if p.Writable {
			p.DuplicateAction = libraryPath(id) + "/duplicate"
			if !rec.ReadOnly {
				p.DeleteAction = libraryPath(id) + "/delete"
			}
		}
		p.Merit = meritRows(rec.Cell)
		p.Version = rec.Version
	}
	for _, fl := range cellFormFields {
		fp := fieldProps(fl, vals.Get(fl.Name), msg[fl.Name])
		if fl.Name == "id" || fl.Name == "rated_v" || fl.Name == "capacitance_f" || fl.Name == "esr_ohm" {
			fp.Required = true
		}
		if strings.HasPrefix(fl.Name, "module.") {
			p.ModuleFields = append(p.ModuleFields, fp)
			p.ModuleOpen = p.ModuleOpen || fp.Value != "" || fp.Message != ""
			continue
		}
		p.Fields = append(p.Fields, fp)
	}
	for _, pr := range problems {
		p.Problems = append(p.Problems, components.ProblemProps{Label: cellFieldLabel(pr.Field), Message: pr.Message, Href: "#f-" + form.DomID(pr.Field)})
	}
	return p
}

func cellFieldLabel(name string) string {
	for _, fl := range cellFormFields {
		if fl.Name == name {
			return fl.Label
		}
	}
	if name == "capacitance_tolerance_pct" {
		return "Capacitance tolerance"
	}
	return name
}

// meritRows are a cell's figures of merit, display-ready.
func meritRows(c sizing.Cell) [][2]string {
	m := sizing.Merit(c)
	na := "needs the cell's mass"
	rows := [][2]string{
		{"Stored energy ½·C·V²", figures.SI(m.StoredEnergyJ, "J", 4) + " (" + figures.SI(m.StoredEnergyJ/3600, "Wh", 3) + ")"},
		{"Energy per mass", optOr(m.EnergyWhPerKg, "Wh/kg", na)},
		{"Energy per volume", optOr(m.EnergyWhPerL, "Wh/L", "needs the cell's volume")},
		{"Matched-load power V²/(4·ESR)", figures.SI(m.MatchedPowerW, "W", 4)},
		{"Matched-load power per mass", optOr(m.MatchedPowerWPerKg, "W/kg", na)},
		{"Time constant ESR·C", figures.SI(m.TimeConstantS, "s", 3)},
		{"Price per stored Wh", figures.Opt(m.PricePerWh, figures.Money)},
	}
	if m.PricePerWh == nil {
		rows[len(rows)-1][1] = "needs the unit price"
	}
	return rows
}

func optOr(v *float64, unit, none string) string {
	if v == nil {
		return none
	}
	return figures.Number(*v, 4) + " " + unit
}

// getNewCell is GET /library/new: the empty cell form.
func (s *Server) getNewCell(c echo.Context) error {
	return s.render(c, http.StatusOK, components.CellPage(s.cellPageProps(nil, url.Values{"source": {"datasheet"}}, nil, true)))
}

// postNewCellDraft is POST /library/new with cell_json, one cell's JSON
// (as the measurement page posts its measured cell): the add form filled
// with it, to check before adding. Nothing is stored yet.
func (s *Server) postNewCellDraft(c echo.Context) error {
	cell, err := store.DecodeCell([]byte(c.FormValue("cell_json")))
	if err != nil {
		return badCellJSON("cell_json: " + err.Error())
	}
	vals := url.Values{}
	if err := form.CellValues(vals, "", cell); err != nil {
		return badCellJSON("cell_json: the cell " + err.Error())
	}
	var problems sizing.ValidationError
	if err := sizing.ValidateCell(&cell); err != nil {
		problems = validationErrors(err)
	}
	if _, err := s.store.GetCell(c.Request().Context(), cell.ID); err == nil {
		problems = append(problems, sizing.FieldError{Field: "id", Rule: "unique", Message: fmt.Sprintf("%q is already in the library; give this cell another id", cell.ID)})
	}
	p := s.cellPageProps(nil, vals, problems, true)
	p.Notice = "From your measurement: check the id, the name and the figures, then add the cell to the library."
	return s.render(c, http.StatusOK, components.CellPage(p))
}

// postNewCell is POST /library: add the posted cell, then show it; with
// problems, the form again with each beside its field (422).
func (s *Server) postNewCell(c echo.Context) error {
	vals, err := c.FormParams()
	if err != nil {
		return formReadError(err)
	}
	cell, problems := readCellForm(vals)
	if len(problems) == 0 {
		err := s.store.CreateCell(c.Request().Context(), cell)
		switch {
		case errors.Is(err, store.ErrExists):
			problems = sizing.ValidationError{{Field: "id", Rule: "unique", Message: fmt.Sprintf("%q is already in the library; choose another id, or edit that cell", cell.ID)}}
		case err != nil:
			return err
		default:
			return c.Redirect(http.StatusSeeOther, libraryPath(cell.ID)+"?done=created")
		}
	}
	return s.render(c, http.StatusUnprocessableEntity, components.CellPage(s.cellPageProps(nil, vals, problems, true)))
}

// getCellPage is GET /library/{id}: the cell's figures and form.
func (s *Server) getCellPage(c echo.Context) error {
	rec, err := s.libraryCell(c.Request().Context(), cellIDParam(c))
	if err != nil {
		return err
	}
	vals := url.Values{}
	if err := form.CellValues(vals, "", rec.Cell); err != nil {
		// The library validated the cell when it was stored: a point that
		// is not a pair cannot be in it.
		return fmt.Errorf("library cell %q: %w", rec.Cell.ID, err)
	}
	p := s.cellPageProps(&rec, vals, nil, false)
	switch c.QueryParam("done") {
	case "created":
		p.Notice = "Added to the library."
	case "saved":
		p.Notice = "Saved."
	case "duplicated":
		p.Notice = "Duplicated: this is the copy, yours to edit."
	}
	return s.render(c, http.StatusOK, components.CellPage(p))
}

// postCellPage is POST /library/{id}: save the edited cell. The id in the
// form may differ from the address only if it is new: renaming is a
// duplicate and a delete, so that nothing is silently lost.
func (s *Server) postCellPage(c echo.Context) error {
	ctx := c.Request().Context()
	id := cellIDParam(c)
	rec, err := s.store.GetCell(ctx, id)
	if err != nil {
		return err
	}
	vals, err := c.FormParams()
	if err != nil {
		return formReadError(err)
	}
	if rec.ReadOnly {
		return fmt.Errorf("cell %q is a demo cell; duplicate it to edit: %w", id, store.ErrReadOnly)
	}
	cell, problems := readCellForm(vals)
	if len(problems) == 0 && cell.ID != id {
		problems = sizing.ValidationError{{Field: "id", Rule: "fixed", Message: fmt.Sprintf("stays %q when editing; to change it, duplicate the cell under the new id and delete this one", id)}}
	}
	if len(problems) == 0 {
		// The version the form was opened at; a form without one (older
		// than versions) saves over whatever is there.
		version, _ := strconv.ParseInt(savedVersion(vals.Get("version")), 10, 64)
		_, err := s.store.UpdateCellIf(ctx, cell, version)
		var stale *store.StaleError
		if errors.As(err, &stale) {
			// The engineer's figures stay in the form, at the version
			// they opened, so that saving again is refused again.
			p := s.cellPageProps(&rec, vals, nil, false)
			p.Version, p.Stale = version, libraryPath(id)
			return s.render(c, http.StatusConflict, components.CellPage(p))
		}
		if err != nil {
			return err
		}
		return c.Redirect(http.StatusSeeOther, libraryPath(id)+"?done=saved")
	}
	return s.render(c, http.StatusUnprocessableEntity, components.CellPage(s.cellPageProps(&rec, vals, problems, false)))
}

// postDuplicateCell is POST /library/{id}/duplicate: a writable copy.
func (s *Server) postDuplicateCell(c echo.Context) error {
	rec, err := s.store.DuplicateCell(c.Request().Context(), cellIDParam(c), "")
	if err != nil {
		return err
	}
	return c.Redirect(http.StatusSeeOther, libraryPath(rec.Cell.ID)+"?done=duplicated")
}

// postDeleteCell is POST /library/{id}/delete.
func (s *Server) postDeleteCell(c echo.Context) error {
	id := cellIDParam(c)
	version, _ := strconv.ParseInt(savedVersion(c.FormValue("version")), 10, 64)
	if err := s.store.DeleteCellIf(c.Request().Context(), id, version); err != nil {
		return err
	}
	return c.Redirect(http.StatusSeeOther, "/library?done=deleted&id="+url.QueryEscape(id))
}

// cellIDParam is the cell id in the address. echo routes on the escaped
// path when it has one (an id with "/" or "?" in it), so the parameter is
// then still escaped; otherwise it is the id as it is.
func cellIDParam(c echo.Context) string {
	id := c.Param("id")
	if c.Request().URL.RawPath == "" {
		return id
	}
	if u, err := url.PathUnescape(id); err == nil {
		return u
	}
	return id
}
