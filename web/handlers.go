package web

import (
	"bytes"
	"capbank/web/form"
	"capbank/web/share"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"net/url"
	"slices"
	"strings"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/sizing"
)

// maxLastGood is the largest design the page carries back for showing
// stale results; a larger one is simply not carried.
const maxLastGood = 512 << 10

// evaluation is a form read, decoded and sized.
type evaluation struct {
	form     *form.Form
	dec      form.Decoded
	problems sizing.ValidationError
	// report is the design's report, or, when the design has problems and
	// stale is set, the report of the last design that sized.
	report *sizing.Report
	// sized is the design the report is of.
	sized *sizing.Design
	stale bool
	// keptLast: the design has problems and the client keeps its last
	// results (designForm.keepsLast); no report was made.
	keptLast bool
	// pristine is a new, empty form: nothing is reported missing yet.
	pristine bool
}

// evaluate decodes the form and sizes it. Problems from decoding and from
// sizing.Validate are reported together, each beside its field; when there
// are any and the form carries the last design that sized, that design's
// report comes back marked stale.
func evaluate(ctx context.Context, f *form.Form, lib form.CellLookup) *evaluation {
	ev := evaluateDesign(ctx, f, lib)
	ev.problems = append(slices.Clone(f.ActionProblems), ev.problems...)
	return ev
}

func evaluateDesign(ctx context.Context, f *form.Form, lib form.CellLookup) *evaluation {
	ev := &evaluation{form: f, dec: f.Decode(lib)}
	if len(ev.dec.Problems) > 0 {
		ev.problems = form.MergeProblems(ev.dec, validationErrors(sizing.Validate(ev.dec.Design)))
	} else {
		rep, err := sizing.SizeContext(ctx, ev.dec.Design)
		switch {
		case err == nil:
			ev.report, ev.sized = rep, ev.dec.Design
			return ev
		case errors.As(err, new(sizing.ValidationError)):
			ev.problems = form.MergeProblems(ev.dec, validationErrors(err))
		default:
			p := problemFor(err)
			ev.problems = sizing.ValidationError{{Field: "design", Rule: "size", Message: p.Title + ": " + p.Detail}}
		}
	}
	if f.LastGood != "" && f.KeepsLast {
		ev.keptLast = true
		return ev
	}
	if f.LastGood != "" && len(f.LastGood) <= maxLastGood {
		if d, err := lastGoodDesign(f.LastGood); err == nil {
			if rep, err := sizing.SizeContext(ctx, d); err == nil {
				ev.report, ev.sized, ev.stale = rep, d, true
			}
		}
	}
	return ev
}

func validationErrors(err error) sizing.ValidationError {
	var ve sizing.ValidationError
	errors.As(err, &ve)
	return ve
}

// readPosted reads the posted form and carries out its action.
func (s *Server) readPosted(c echo.Context) (*form.Form, error) {
	r := c.Request()
	got, err := readFormBody(r)
	if err != nil {
		return nil, err
	}
	files := form.Uploads{Profile: got["profile_csv"], Design: got["design_file"]}
	vals := r.PostForm
	if vals == nil {
		vals = url.Values{}
	}
	f := form.Read(vals)
	return f.Apply(vals.Get("action"), files, s.lookup(c)), nil
}

func formReadError(err error) error {
	var mbe *http.MaxBytesError
	if errors.As(err, &mbe) {
		return mbe
	}
	return formUnreadable(err)
}

// getPage is GET /: the example design with its results; with ?new an
// empty form; with ?d=TOKEN the design a share link carries; with
// ?cell=ID (repeatable) the example sized with those library cells.
func (s *Server) getPage(c echo.Context) error {
	q := c.QueryParams()
	switch {
	case q.Has("d"):
		return s.openSharedDesign(c, q.Get("d"))
	case q.Has("new"):
		ev := &evaluation{form: blankForm(), pristine: true}
		return s.renderPage(c, http.StatusOK, ev)
	case q.Has("cell"):
		v := exampleValues()
		v["cells.pick"] = q["cell"]
		v.Set("name", "Example with "+strings.Join(q["cell"], ", ")+" (invented load)")
		ev, err := s.evaluateWithin(c, form.Read(v))
		if err != nil {
			return err
		}
		return s.renderPage(c, http.StatusOK, ev)
	}
	if isExamplePage(c.Request()) {
		return s.getExamplePage(c)
	}
	return s.renderPage(c, http.StatusOK, evaluate(c.Request().Context(), exampleForm(), s.lookup(c)))
}

// renderPage writes the whole design page for an evaluation.
func (s *Server) renderPage(c echo.Context, status int, ev *evaluation) error {
	return s.render(c, status, components.Page(s.pageProps(ev, s.cellPicks(c, ev.form))))
}

// postPage is POST / without JavaScript: the whole page again, with the
// results or with every problem beside its field (422).
func (s *Server) postPage(c echo.Context) error {
	f, err := s.readPosted(c)
	if err != nil {
		return err
	}
	ev, err := s.evaluateWithin(c, f)
	if err != nil {
		return err
	}
	status := http.StatusOK
	if len(ev.problems) > 0 {
		status = http.StatusUnprocessableEntity
	}
	return s.renderPage(c, status, ev)
}

// postWorkspace is the htmx answer to an edit of the step list, a pulse
// train or a profile upload: the form and the results together.
func (s *Server) postWorkspace(c echo.Context) error {
	f, err := s.readPosted(c)
	if err != nil {
		return err
	}
	ev, err := s.evaluateWithin(c, f)
	if err != nil {
		return err
	}
	return s.render(c, http.StatusOK, components.Workspace(s.pageProps(ev, s.cellPicks(c, f))))
}

// postResults is the htmx answer to typing: the results panel and every
// field's message. With problems, only the status line changes, so the
// last results stay in view, marked stale.
func (s *Server) postResults(c echo.Context) error {
	f, err := s.readPosted(c)
	if err != nil {
		return err
	}
	f.KeepsLast = true // with problems only the status line is sent
	ev, err := s.evaluateWithin(c, f)
	if err != nil {
		return err
	}
	p := s.pageProps(ev, nil)
	slots, units := formSlots(p.Form)
	if ev.keptLast {
		h := c.Response().Header()
		h.Set("HX-Retarget", "#results-status")
		h.Set("HX-Reswap", "outerHTML")
		return s.render(c, http.StatusOK, components.StaleUpdate(p.Results.Status, slots, units, p.Form.Problems))
	}
	return s.render(c, http.StatusOK, components.ResultsUpdate(p.Results, slots, units, p.Form.Problems))
}

// postCandidate is POST /results/candidate?cell=ID: the card of one
// candidate of the results, sized from the share token d they carry (the
// export form's). htmx asks for it when a folded card opens and swaps in
// its body; without JavaScript the card's button posts the same and gets
// the whole page with that card open.
func (s *Server) postCandidate(c echo.Context) error {
	data, err := postedToken(c)
	if err != nil {
		return err
	}
	f, err := s.formFromJSON(c, data)
	if err != nil {
		return err
	}
	ev, err := s.evaluateWithin(c, f)
	if err != nil {
		return err
	}
	id := c.QueryParam("cell")
	var cand *sizing.Candidate
	if ev.report != nil {
		for i := range ev.report.Candidates {
			if ev.report.Candidates[i].CellID == id {
				cand = &ev.report.Candidates[i]
			}
		}
	}
	if cand == nil {
		return exportRefused("cell", fmt.Sprintf("%q is not a candidate of this design: pick it among the cells first", id))
	}
	if c.Request().Header.Get("HX-Request") == "true" {
		return s.render(c, http.StatusOK, components.CandidateBody(resultsProps(ev), *cand))
	}
	p := s.pageProps(ev, s.cellPicks(c, ev.form))
	p.Results.OpenCell = id
	return s.render(c, http.StatusOK, components.Page(p))
}

// lastGoodDesign decodes the last design that sized as the form carries
// it back (see resultsProps): the share token of its results, or its
// design file where it had no token.
func lastGoodDesign(carried string) (*sizing.Design, error) {
	data := []byte(carried)
	if !strings.HasPrefix(strings.TrimSpace(carried), "{") {
		var err error
		if data, err = share.DecodePosted(carried); err != nil {
			return nil, err
		}
	}
	return sizing.DecodeDesign(bytes.NewReader(data))
}

// lastGoodJSON is the design file of a design that sized, for the form to
// carry where it has no share token; "" when it is too large to carry.
func lastGoodJSON(d *sizing.Design) string {
	data, err := json.Marshal(d)
	if err != nil || len(data) > maxLastGood {
		return ""
	}
	return string(data)
}

// blankForm is a new design: one empty power step, nothing picked.
func blankForm() *form.Form {
	return form.Read(url.Values{"load.steps[0].kind": {"power"}})
}

// exampleForm is the design the page opens with: invented, and named so.
func exampleForm() *form.Form { return form.Read(exampleValues()) }

// exampleValues are the example design's form values.
func exampleValues() url.Values {
	v := url.Values{
		"name":            {"Example: 48 V controller hold-up (invented)"},
		"window.max_v":    {"48"},
		"window.min_v":    {"24"},
		"cell_max_v":      {"2.5"},
		"load.efficiency": {"92%"},
		"ambient_c":       {"30"},
		"cold_c":          {"-20"},
		"life_years":      {"10"},
		"cells.pick":      {"demo-2v7-650f", "demo-2v7-1200f", "demo-3v0-500f", "demo-hy-3v8-250f"},
	}
	steps := []form.StepRow{{Kind: "power", Value: "350", Duration: "15"}, {Kind: "power", Value: "1.5k", Duration: "2"}, {Kind: "power", Value: "350", Duration: "10"}}
	for i, s := range steps {
		p := fmt.Sprintf("load.steps[%d].", i)
		v.Set(p+"kind", s.Kind)
		v.Set(p+"value", s.Value)
		v.Set(p+"duration_s", s.Duration)
	}
	return v
}
