package web

import (
	"capbank/web/form"
	"errors"
	"fmt"
	"io"
	"mime"
	"net/http"
	"net/url"
	"strings"

	"github.com/labstack/echo/v4"

	"capbank/sizing"
	"capbank/web/store"
)

// cellList is the answer of GET /api/v1/cells.
type cellList struct {
	Count int                `json:"count"`
	Cells []store.CellRecord `json:"cells"`
}

// apiListCells is GET /api/v1/cells: the library, filtered by q (in the
// id and name), min_v, max_v (rated voltage, V), min_f, max_f
// (capacitance, F). A bad filter value is a 422 naming the parameter.
func (s *Server) apiListCells(c echo.Context) error {
	filter, msgs := readFilter(c.QueryParams())
	if len(msgs) > 0 {
		var ve sizing.ValidationError
		for _, fl := range filterFields {
			if m, ok := msgs[fl.Name]; ok {
				rule := "number"
				if fl.Kind == form.KindText {
					rule = "length"
				}
				ve = append(ve, sizing.FieldError{Field: fl.Name, Rule: rule, Message: m})
			}
		}
		return badParams(ve)
	}
	recs, err := s.libraryCells(c.Request().Context(), filter)
	if err != nil {
		return err
	}
	if recs == nil {
		recs = []store.CellRecord{}
	}
	return c.JSON(http.StatusOK, cellList{Count: len(recs), Cells: recs})
}

// apiGetCell is GET /api/v1/cells/{id}.
func (s *Server) apiGetCell(c echo.Context) error {
	rec, err := s.libraryCell(c.Request().Context(), cellIDParam(c))
	if err != nil {
		return err
	}
	setETag(c, rec.Version)
	return c.JSON(http.StatusOK, rec)
}

// readCellJSON reads one design-file cell from a JSON body, strictly: an
// unknown key or a value of the wrong type is a 400 naming it.
func readCellJSON(c echo.Context) (sizing.Cell, error) {
	var cell sizing.Cell
	if mt, _, _ := mime.ParseMediaType(c.Request().Header.Get(echo.HeaderContentType)); mt != "application/json" {
		return cell, unsupportedMedia(c.Request(), "application/json (one cell)")
	}
	data, err := io.ReadAll(c.Request().Body)
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return cell, err
		}
		return cell, badCellJSON("could not be read; send the whole body")
	}
	if cell, err = store.DecodeCell(data); err != nil {
		return cell, badCellJSON(err.Error())
	}
	return cell, nil
}

// apiCreateCell is POST /api/v1/cells: add a user cell (201, with its
// address in Location); 409 when the id is taken, 422 when invalid.
func (s *Server) apiCreateCell(c echo.Context) error {
	cell, err := readCellJSON(c)
	if err != nil {
		return err
	}
	if err := s.store.CreateCell(c.Request().Context(), cell); err != nil {
		return err
	}
	rec, err := s.store.GetCell(c.Request().Context(), cell.ID)
	if err != nil {
		return err
	}
	c.Response().Header().Set(echo.HeaderLocation, "/api/v1/cells/"+url.PathEscape(cell.ID))
	setETag(c, rec.Version)
	return c.JSON(http.StatusCreated, rec)
}

// apiUpdateCell is PUT /api/v1/cells/{id}: replace a user cell. The body's
// id must be the address's; demo cells are read-only (409); If-Match
// names the version the change was made on (412 when stale, 428 when
// missing).
func (s *Server) apiUpdateCell(c echo.Context) error {
	version, err := ifMatch(c, "cell")
	if err != nil {
		return err
	}
	cell, err := readCellJSON(c)
	if err != nil {
		return err
	}
	id := cellIDParam(c)
	if cell.ID == "" {
		cell.ID = id
	}
	if cell.ID != id {
		return badParams(sizing.ValidationError{{Field: "id", Rule: "fixed",
			Message: fmt.Sprintf("is %q but the address names %q; to rename a cell, create it under the new id and delete the old one", cell.ID, id)}})
	}
	if _, err := s.store.UpdateCellIf(c.Request().Context(), cell, version); err != nil {
		return staleAnswer(c, err)
	}
	rec, err := s.store.GetCell(c.Request().Context(), id)
	if err != nil {
		return err
	}
	setETag(c, rec.Version)
	return c.JSON(http.StatusOK, rec)
}

// apiDeleteCell is DELETE /api/v1/cells/{id}: 204; saved designs keep
// their own copy of the cell.
func (s *Server) apiDeleteCell(c echo.Context) error {
	version, err := ifMatch(c, "cell")
	if err != nil {
		return err
	}
	if err := s.store.DeleteCellIf(c.Request().Context(), cellIDParam(c), version); err != nil {
		return staleAnswer(c, err)
	}
	return c.NoContent(http.StatusNoContent)
}

// apiImportCells is POST /api/v1/cells/import: a CSV (text/csv) or JSON
// (application/json) body of cells, imported all or nothing. ?mode=add
// (the default) adds new cells only; ?mode=upsert also replaces the user
// cells of the same id (demo cells stay read-only). The answer is the
// row-by-row report: 200 when imported, 422 when any row (or the file) was
// rejected and nothing changed, or a problem naming mode.
func (s *Server) apiImportCells(c echo.Context) error {
	r := c.Request()
	mode, err := store.ParseImportMode(c.QueryParam("mode"))
	if err != nil {
		return badParams(sizing.ValidationError{{Field: "mode", Rule: "oneof",
			Message: "must be add (new cells only) or upsert (add new cells and update your cells of the same id)"}})
	}
	mt, _, _ := mime.ParseMediaType(r.Header.Get(echo.HeaderContentType))
	var rep store.ImportReport
	switch mt {
	case "text/csv", "application/csv":
		rep, err = s.store.ImportCellsCSV(r.Context(), r.Body, mode)
	case "application/json":
		rep, err = s.store.ImportCellsJSON(r.Context(), r.Body, mode)
	default:
		return unsupportedMedia(c.Request(), "text/csv or application/json")
	}
	if err != nil {
		return err
	}
	if strings.Contains(rep.Error, "request body too large") {
		return &http.MaxBytesError{Limit: MaxBodyBytes}
	}
	status := http.StatusOK
	if !rep.Imported {
		status = http.StatusUnprocessableEntity
	}
	if rep.Rows == nil {
		rep.Rows = []store.ImportRow{}
	}
	return c.JSON(status, rep)
}
