package web

import (
	"bytes"
	"capbank/web/form"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"mime"
	"net/http"
	"net/url"
	"slices"
	"strconv"
	"strings"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/fault"
	"capbank/web/share"
	"capbank/web/store"
)

// openSharedDesign is GET /?d=TOKEN: the design a share link carries,
// opened in the form and sized, with no database row behind it.
func (s *Server) openSharedDesign(c echo.Context, token string) error {
	data, err := share.Decode(token)
	if err != nil {
		return badLink(err)
	}
	f, err := s.formFromJSON(c, data)
	if err != nil {
		return err
	}
	f.Notice = "Opened from a share link: the link carries the whole design. Save it to keep it here."
	ev, err := s.evaluateWithin(c, f)
	if err != nil {
		return err
	}
	return s.renderPage(c, http.StatusOK, ev)
}

// formFromJSON decodes a design file into the form that shows it.
func (s *Server) formFromJSON(c echo.Context, data []byte) (*form.Form, error) {
	d, err := decodeDesignFile(data)
	if err != nil {
		return nil, err
	}
	f, err := form.FromDesign(d, s.lookup(c))
	if err != nil {
		return nil, noFit(err.Error())
	}
	return f, nil
}

// savedID reads a saved design's id from the address.
func savedID(c echo.Context) (int64, error) {
	id, err := strconv.ParseInt(c.Param("id"), 10, 64)
	if err != nil || id <= 0 {
		return 0, fmt.Errorf("saved design %q: %w", c.Param("id"), store.ErrNotFound)
	}
	return id, nil
}

// designsPath is a saved design's address.
func designsPath(id int64) string { return "/designs/" + strconv.FormatInt(id, 10) }

// getDesigns is GET /designs: the saved designs, newest change first.
func (s *Server) getDesigns(c echo.Context) error {
	return s.renderDesigns(c, http.StatusOK, designsNotice(c.QueryParam("done"), c.QueryParam("name")), "", "")
}

func designsNotice(done, name string) string {
	switch done {
	case "renamed":
		return fmt.Sprintf("Renamed to “%s”.", name)
	case "duplicated":
		return fmt.Sprintf("Duplicated as “%s”.", name)
	case "deleted":
		return fmt.Sprintf("Deleted “%s”.", name)
	}
	return ""
}

// renderDesigns writes the saved designs page; problemID and problem put
// a message beside one design's rename field.
func (s *Server) renderDesigns(c echo.Context, status int, notice, problemID, problem string) error {
	p := components.DesignsProps{
		Shell:  s.shell("Saved designs", "Designs kept in this capbank's database", "designs"),
		Notice: notice, Writable: s.store != nil,
	}
	if s.store != nil {
		recs, err := s.store.ListDesigns(c.Request().Context())
		if err != nil {
			return err
		}
		sums := s.savedSummaries(c, recs)
		for i, r := range recs {
			path := designsPath(r.ID)
			row := components.SavedDesignProps{
				ID: strconv.FormatInt(r.ID, 10), Name: r.Name, Href: path,
				Updated: r.UpdatedAt.UTC().Format("2006-01-02 15:04 UTC"), Created: r.CreatedAt.UTC().Format("2006-01-02 15:04 UTC"),
				RenameAction: path + "/rename", DuplicateAction: path + "/duplicate", DeleteAction: path + "/delete",
				FileHref: "/api/v1/designs/" + strconv.FormatInt(r.ID, 10) + "/file",
				Version:  strconv.FormatInt(r.Version, 10),
				Summary:  sums[i],
			}
			if row.ID == problemID {
				row.RenameMessage = problem
			}
			p.Designs = append(p.Designs, row)
		}
	}
	return s.render(c, status, components.DesignsPage(p))
}

// savedSummaries sizes each saved design for the list's summary column:
// its recommended bank, worst-case runtime and total price, as the design
// page's headline gives them. All are sized under one compute deadline; a
// design not sized by then, or one that does not size, says so instead.
func (s *Server) savedSummaries(c echo.Context, recs []store.DesignRecord) []components.SavedSummary {
	out := make([]components.SavedSummary, len(recs))
	designs := make([]*sizing.Design, len(recs))
	for i, r := range recs {
		out[i].Note = "not sized: open it to see why"
		full, err := s.store.GetDesign(c.Request().Context(), r.ID)
		if err != nil {
			continue
		}
		d, err := decodeDesignFile(full.JSON)
		if err != nil {
			continue
		}
		d.ResolveCells(s.lookup(c))
		designs[i] = d
	}
	_, err := compute(s, c, func(ctx context.Context) (struct{}, error) {
		for i, d := range designs {
			if d == nil || ctx.Err() != nil {
				continue
			}
			r, err := sizing.SizeContext(ctx, withoutLots(*d))
			if err != nil {
				continue
			}
			out[i] = savedSummary(d, r)
		}
		return struct{}{}, nil
	})
	if err != nil {
		for i := range out {
			if out[i].Bank == "" {
				out[i].Note = "not sized now (capbank is busy): open it to size it"
			}
		}
	}
	return out
}

// savedSummary is one sized design's line in the list.
func savedSummary(d *sizing.Design, r *sizing.Report) components.SavedSummary {
	if r.Recommended == nil {
		return components.SavedSummary{Note: "no candidate carries the load"}
	}
	c := &r.Candidates[0]
	for i := range r.Candidates {
		if r.Candidates[i].CellID == *r.Recommended {
			c = &r.Candidates[i]
		}
	}
	price := figures.Price(c.TotalPrice, r.Currency)
	if b, err := sizing.BillOfQuantities(d, r, ""); err == nil {
		price = figures.Price(&b.Total, r.Currency)
	}
	sum := components.SavedSummary{Bank: figures.BankText(*c) + " of " + c.CellID, Runtime: figures.Runtime(c), Price: price}
	if b, err := sizing.BillOfQuantities(d, r, ""); err == nil && !b.Complete {
		sum.PriceNote = "some lines have no price"
	}
	return sum
}

// postSaveDesign is POST /designs: save the design the page's results are
// of (share token d) under name, as a new saved design; "save as new"
// never overwrites.
func (s *Server) postSaveDesign(c echo.Context) error {
	d, data, err := s.designFrom(c, fromPostedToken)
	if err != nil {
		return err
	}
	name := strings.TrimSpace(c.FormValue("name"))
	if name == "" {
		name = d.Name
	}
	if name == "" {
		name = "Untitled design"
	}
	id, err := s.store.SaveDesign(c.Request().Context(), name, data)
	if err != nil {
		return err
	}
	return c.Redirect(http.StatusSeeOther, designsPath(id)+"?done=saved")
}

// getSavedDesign is GET /designs/{id}: the saved design opened in the
// design page, which then offers to save over it.
func (s *Server) getSavedDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	rec, err := s.store.GetDesign(c.Request().Context(), id)
	if err != nil {
		return err
	}
	f, err := s.formFromJSON(c, rec.JSON)
	if err != nil {
		if fe := fault.As(err); fe != nil && fe.Type == typeNoFit {
			fe.Message = fmt.Sprintf("“%s” is kept, but the page cannot show it without losing part of it: the design %s. Download its file from %s and size it with capbank size.",
				rec.Name, fe.Fields[0].Message, "/api/v1/designs/"+strconv.FormatInt(id, 10)+"/file")
		}
		return err
	}
	f.Vals.Set("saved_id", strconv.FormatInt(id, 10))
	f.Vals.Set("saved_name", rec.Name)
	f.Vals.Set("saved_version", strconv.FormatInt(rec.Version, 10))
	switch c.QueryParam("done") {
	case "saved":
		f.Notice = fmt.Sprintf("Saved as “%s”.", rec.Name)
	case "replaced":
		f.Notice = fmt.Sprintf("Saved over “%s”.", rec.Name)
	default:
		f.Notice = fmt.Sprintf("Opened “%s”, last saved %s.", rec.Name, rec.UpdatedAt.UTC().Format("2006-01-02 15:04 UTC"))
	}
	ev, err := s.evaluateWithin(c, f)
	if err != nil {
		return err
	}
	return s.renderPage(c, http.StatusOK, ev)
}

// postReplaceDesign is POST /designs/{id}: save the page's design over
// saved design id (the page's "Save" when a saved design is open).
func (s *Server) postReplaceDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	_, data, err := s.designFrom(c, fromPostedToken)
	if err != nil {
		return err
	}
	// The version the page opened the design at; a form without one
	// (older than versions) saves over whatever is there.
	version, _ := strconv.ParseInt(savedVersion(c.FormValue("saved_version")), 10, 64)
	_, err = s.store.ReplaceDesignIf(c.Request().Context(), id, "", data, version)
	var stale *store.StaleError
	if errors.As(err, &stale) {
		return s.staleDesignPage(c, id, data)
	}
	if err != nil {
		return err
	}
	return c.Redirect(http.StatusSeeOther, designsPath(id)+"?done=replaced")
}

// staleDesignPage answers a "Save over" refused because someone else
// changed the saved design since the page opened it (409): the page again
// with the engineer's own design, saying so, with a link to reload the
// saved one and the "Save as new" form under the results.
func (s *Server) staleDesignPage(c echo.Context, id int64, data []byte) error {
	rec, err := s.store.GetDesign(c.Request().Context(), id)
	if err != nil {
		return err
	}
	f, err := s.formFromJSON(c, data)
	if err != nil {
		return err
	}
	f.Vals.Set("saved_id", strconv.FormatInt(id, 10))
	f.Vals.Set("saved_name", rec.Name)
	f.Vals.Set("stale", designsPath(id))
	// Saving over it again is refused again until it is reloaded.
	f.Vals.Set("saved_version", savedVersion(c.FormValue("saved_version")))
	ev, err := s.evaluateWithin(c, f)
	if err != nil {
		return err
	}
	return s.renderPage(c, http.StatusConflict, ev)
}

// staleLink is v when it is the address of a saved design (the form's
// "stale" value, which a request could set to anything), else "".
func staleLink(v string) string {
	id, ok := strings.CutPrefix(v, "/designs/")
	if !ok || savedVersion(id) == "" {
		return ""
	}
	return v
}

// savedVersion is v when it is a version number, else "".
func savedVersion(v string) string {
	if n, err := strconv.ParseInt(v, 10, 64); err != nil || n < 1 {
		return ""
	}
	return v
}

// postRenameDesign is POST /designs/{id}/rename.
func (s *Server) postRenameDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	name := strings.TrimSpace(c.FormValue("name"))
	version, _ := strconv.ParseInt(savedVersion(c.FormValue("version")), 10, 64)
	if _, err := s.store.RenameDesignIf(c.Request().Context(), id, name, version); err != nil {
		if errors.Is(err, store.ErrInvalid) {
			return s.renderDesigns(c, http.StatusUnprocessableEntity, "", strconv.FormatInt(id, 10),
				strings.TrimPrefix(err.Error(), store.ErrInvalid.Error()+": "))
		}
		return err
	}
	return c.Redirect(http.StatusSeeOther, "/designs?done=renamed&name="+url.QueryEscape(name))
}

// postDuplicateDesign is POST /designs/{id}/duplicate: a copy named
// "… (copy)".
func (s *Server) postDuplicateDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	rec, err := s.store.GetDesign(c.Request().Context(), id)
	if err != nil {
		return err
	}
	name := copyName(rec.Name)
	if _, err := s.store.DuplicateDesign(c.Request().Context(), id, name); err != nil {
		return err
	}
	return c.Redirect(http.StatusSeeOther, "/designs?done=duplicated&name="+url.QueryEscape(name))
}

// copyName is a duplicate's name, within the 200 characters a name has.
func copyName(name string) string {
	const suffix = " (copy)"
	if r := []rune(name); len(r)+len(suffix) > 200 {
		name = string(r[:200-len(suffix)])
	}
	return name + suffix
}

// postDeleteDesign is POST /designs/{id}/delete.
func (s *Server) postDeleteDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	rec, err := s.store.GetDesign(c.Request().Context(), id)
	if err != nil {
		return err
	}
	version, _ := strconv.ParseInt(savedVersion(c.FormValue("version")), 10, 64)
	if err := s.store.DeleteDesignIf(c.Request().Context(), id, version); err != nil {
		return err
	}
	return c.Redirect(http.StatusSeeOther, "/designs?done=deleted&name="+url.QueryEscape(rec.Name))
}

// savedDesign is a saved design as the API gives it: its bookkeeping and,
// for one design, the design file.
type savedDesign struct {
	store.DesignRecord
	Design json.RawMessage `json:"design,omitempty"`
}

// designList is the answer of GET /api/v1/designs.
type designList struct {
	Count   int                  `json:"count"`
	Designs []store.DesignRecord `json:"designs"`
}

func (s *Server) apiListDesigns(c echo.Context) error {
	recs, err := s.store.ListDesigns(c.Request().Context())
	if err != nil {
		return err
	}
	if recs == nil {
		recs = []store.DesignRecord{}
	}
	return c.JSON(http.StatusOK, designList{Count: len(recs), Designs: recs})
}

// designBody is the body of POST and PUT /api/v1/designs.
type designBody struct {
	Name   string          `json:"name"`
	Design json.RawMessage `json:"design"`
}

// readDesignBody reads {"name": …, "design": {…}}. The design must decode
// and validate; library references ("cells": ["id"]) are written out in
// full, so that the saved design does not change when the library does.
// A design without references is kept byte for byte as sent.
func (s *Server) readDesignBody(c echo.Context, needName bool) (designBody, error) {
	var b designBody
	if mt, _, _ := mime.ParseMediaType(c.Request().Header.Get(echo.HeaderContentType)); mt != "application/json" {
		return b, unsupportedMedia(c.Request(), "application/json")
	}
	data, err := readBody(c.Request(), "design", "body")
	if err != nil {
		return b, err
	}
	if err := sizing.DecodeStrict(data, &b, "body"); err != nil {
		return b, malformed(withHint(validationErrors(err), `send {"name": "…", "design": {…the design file…}}`))
	}
	if needName && strings.TrimSpace(b.Name) == "" {
		return b, badParams(sizing.ValidationError{{Field: "name", Rule: "required", Message: "is needed: a saved design has a name"}})
	}
	if len(b.Design) == 0 {
		return b, badParams(sizing.ValidationError{{Field: "design", Rule: "required", Message: "is needed: the design file, as capbank size reads it"}})
	}
	d, err := sizing.DecodeDesign(bytes.NewReader(b.Design))
	if err != nil {
		var ve sizing.ValidationError
		if errors.As(err, &ve) {
			return b, malformed(prefixed("design.", ve))
		}
		return b, err
	}
	refs := false
	for i := range d.Cells {
		refs = refs || d.Cells[i].IsReference()
	}
	if refs {
		d.ResolveCells(s.lookup(c))
	}
	if err := sizing.Validate(d); err != nil {
		return b, prefixed("design.", validationErrors(err))
	}
	if refs {
		if b.Design, err = json.Marshal(d); err != nil {
			return b, err
		}
	}
	return b, nil
}

// withHint adds what to send to the message of each problem.
func withHint(ve sizing.ValidationError, hint string) sizing.ValidationError {
	out := slices.Clone(ve)
	for i := range out {
		out[i].Message += "; " + hint
	}
	return out
}

func prefixed(p string, ve sizing.ValidationError) sizing.ValidationError {
	out := make(sizing.ValidationError, len(ve))
	for i, e := range ve {
		e.Field = p + e.Field
		out[i] = e
	}
	return out
}

// apiSaveDesign is POST /api/v1/designs: 201 with the new id.
func (s *Server) apiSaveDesign(c echo.Context) error {
	b, err := s.readDesignBody(c, true)
	if err != nil {
		return err
	}
	id, err := s.store.SaveDesign(c.Request().Context(), b.Name, b.Design)
	if err != nil {
		return err
	}
	return s.answerDesign(c, http.StatusCreated, id)
}

func (s *Server) answerDesign(c echo.Context, status int, id int64) error {
	rec, err := s.store.GetDesign(c.Request().Context(), id)
	if err != nil {
		return err
	}
	c.Response().Header().Set(echo.HeaderLocation, "/api/v1/designs/"+strconv.FormatInt(id, 10))
	setETag(c, rec.Version)
	return c.JSON(status, savedDesign{DesignRecord: rec, Design: rec.JSON})
}

// apiGetDesign is GET /api/v1/designs/{id}: the record with its design.
// GET /api/v1/designs/{id}/file gives the design file itself, byte for
// byte as saved.
func (s *Server) apiGetDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	return s.answerDesign(c, http.StatusOK, id)
}

func (s *Server) apiDesignFile(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	rec, err := s.store.GetDesign(c.Request().Context(), id)
	if err != nil {
		return err
	}
	c.Response().Header().Set(echo.HeaderContentDisposition, `attachment; filename="`+fileWord(rec.Name)+`.json"`)
	return c.Blob(http.StatusOK, echo.MIMEApplicationJSON, rec.JSON)
}

// apiReplaceDesign is PUT /api/v1/designs/{id}: a new design file (and,
// if given, a new name) for a saved design.
func (s *Server) apiReplaceDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	version, err := ifMatch(c, "saved design")
	if err != nil {
		return err
	}
	b, err := s.readDesignBody(c, false)
	if err != nil {
		return err
	}
	if _, err := s.store.ReplaceDesignIf(c.Request().Context(), id, b.Name, b.Design, version); err != nil {
		return staleAnswer(c, err)
	}
	return s.answerDesign(c, http.StatusOK, id)
}

// apiRenameDesign is PATCH /api/v1/designs/{id} with {"name": …}.
func (s *Server) apiRenameDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	version, err := ifMatch(c, "saved design")
	if err != nil {
		return err
	}
	var b struct {
		Name string `json:"name"`
	}
	if mt, _, _ := mime.ParseMediaType(c.Request().Header.Get(echo.HeaderContentType)); mt != "application/json" {
		return unsupportedMedia(c.Request(), "application/json")
	}
	data, err := readBody(c.Request(), "body", "body")
	if err != nil {
		return err
	}
	if err := sizing.DecodeStrict(data, &b, "body"); err != nil {
		return malformed(withHint(validationErrors(err), `send {"name": "…"}`))
	}
	if _, err := s.store.RenameDesignIf(c.Request().Context(), id, b.Name, version); err != nil {
		return staleAnswer(c, err)
	}
	return s.answerDesign(c, http.StatusOK, id)
}

// apiDeleteDesign is DELETE /api/v1/designs/{id}: 204.
func (s *Server) apiDeleteDesign(c echo.Context) error {
	id, err := savedID(c)
	if err != nil {
		return err
	}
	version, err := ifMatch(c, "saved design")
	if err != nil {
		return err
	}
	if err := s.store.DeleteDesignIf(c.Request().Context(), id, version); err != nil {
		return staleAnswer(c, err)
	}
	return c.NoContent(http.StatusNoContent)
}
