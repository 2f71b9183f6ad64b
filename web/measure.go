package web

import (
	"bytes"
	"capbank/web/form"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"mime/multipart"
	"net/http"
	"slices"
	"strconv"
	"strings"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/components/figures"
	"capbank/sizing"
	"capbank/sizing/measure"
	"capbank/web/store"
)

// The measurement page and API: a cell's capacitance, ESR and leakage from
// bench data, by the methods of sizing/measure. Field names are the
// flags of `capbank measure` with underscores: method, rated_v,
// resistor_ohm, current_a, capacitance_f, start_s, at_s, v0_v, v1_v,
// duration_s, compare_id, and the log file in log_csv.

// measureMethods are the methods, in the order the page offers them.
var measureMethods = []components.Option{
	{Value: "constant-current", Label: "Constant-current discharge (IEC 62391-1 log)"},
	{Value: "resistor", Label: "Discharge into a resistor (log)"},
	{Value: "hold", Label: "Open-circuit hold (self-discharge log)"},
	{Value: "timed", Label: "Timed resistor discharge (two readings)"},
}

// measureOutcome is what a measurement gives: the result struct of the
// method, and the comparison with a datasheet cell if asked.
type measureOutcome struct {
	Method      string               `json:"method"`
	Result      any                  `json:"result"`
	Comparison  []measure.Comparison `json:"comparison,omitempty"`
	CompareWith string               `json:"compare_with,omitempty"`
	Cell        *sizing.Cell         `json:"measured_cell,omitempty"`
	// labelled are the result's figures as the page lists them (the API
	// gives Result instead).
	labelled []measure.LabelledFigure
	hold     *measure.HoldResult
}

// measureInput is the form (or API multipart body) of a measurement.
type measureInput struct {
	values map[string]string
	log    []byte // the uploaded log, nil when none
}

func (in measureInput) get(k string) string { return strings.TrimSpace(in.values[k]) }

// runMeasurement reads the form into a measure.Input and runs it; lookup
// finds the library cell compare_id names. Bad input comes back as a
// sizing.ValidationError naming the form's field (or the log's line).
func runMeasurement(in measureInput, lookup form.CellLookup) (*measureOutcome, error) {
	r := form.FieldReader{Get: in.get}
	mi := measure.Input{Method: in.get("method")}
	// A log is read for a method that takes one, or for none known (Run
	// then asks for it anyway).
	if m, known := measure.MethodNamed(mi.Method); len(in.log) > 0 && (m.Log || !known) {
		log, err := measure.ParseCSV(bytes.NewReader(in.log))
		if err != nil {
			r.Bad("log", "csv", err.Error())
		}
		mi.Log = log
	}
	mi.RatedV = r.Optional("rated_v", form.UnitVolt)
	mi.CurrentA = r.Optional("current_a", form.UnitAmp)
	mi.StartS = r.Optional("start_s", form.UnitSecond)
	mi.ResistorOhm = r.Optional("resistor_ohm", form.UnitOhm)
	mi.CapacitanceF = r.Optional("capacitance_f", form.UnitFarad)
	mi.V0V = r.Optional("v0_v", form.UnitVolt)
	mi.V1V = r.Optional("v1_v", form.UnitVolt)
	mi.DurationS = r.Optional("duration_s", form.UnitSecond)
	if v := in.get("at_s"); v != "" {
		for i, part := range strings.Split(v, ",") {
			x, err := form.ParseSI(strings.TrimSpace(part), form.UnitSecond)
			if err != nil {
				r.Bad(fmt.Sprintf("at_s[%d]", i), "number", err.Error())
				continue
			}
			mi.AtS = append(mi.AtS, x)
		}
	}
	mi.Unread = r.Problems
	// An unknown cell is named only when the measurement itself is sound.
	var unknownCell error
	id := in.get("compare_id")
	if id != "" {
		if c, ok := lookup(id); ok {
			mi.Datasheet = &c
		} else {
			unknownCell = sizing.ValidationError{{Field: "compare_id", Rule: "cell", Message: fmt.Sprintf("%q is not in the cell library", id)}}
		}
	}
	res, err := measure.Run(mi)
	if err != nil {
		return nil, measureFormProblems(err)
	}
	if unknownCell != nil {
		return nil, unknownCell
	}
	out := &measureOutcome{Method: res.Method, Result: res.Details(), Comparison: res.Comparison, Cell: res.Cell,
		labelled: res.Labelled(), hold: res.Hold}
	if mi.Datasheet != nil {
		out.CompareWith = id
	}
	return out, nil
}

// measureFormProblems names Run's problems by the form's fields: the log's
// own (missing, not a CSV log) belong to the upload, log_csv; every other
// field is named on the form as in Run.
func measureFormProblems(err error) error {
	var ve sizing.ValidationError
	if !errors.As(err, &ve) {
		return err
	}
	out := slices.Clone(ve)
	for i, fe := range out {
		switch {
		case fe.Field == "log" && fe.Rule == "required":
			out[i] = sizing.FieldError{Field: "log_csv", Rule: "required",
				Message: "is required: upload the logged test (CSV with time_s, voltage_v and, when logged, current_a)"}
		case fe.Field == "log" && fe.Rule == "csv":
			out[i].Field = "log_csv"
		}
	}
	return out
}

// readMeasureInput reads a multipart or url-encoded form.
func readMeasureInput(c echo.Context) (measureInput, error) {
	in := measureInput{values: map[string]string{}}
	r := c.Request()
	if strings.HasPrefix(r.Header.Get(echo.HeaderContentType), echo.MIMEMultipartForm) {
		if err := r.ParseMultipartForm(MaxBodyBytes); err != nil {
			var mbe *http.MaxBytesError
			if errors.As(err, &mbe) {
				return in, err
			}
			return in, formUnreadable(err)
		}
		if f, _, err := r.FormFile("log_csv"); err == nil {
			in.log, err = readAll(f)
			if err != nil {
				return in, err
			}
		}
	} else if err := r.ParseForm(); err != nil {
		return in, formUnreadable(err)
	}
	for k, v := range r.Form {
		if len(v) > 0 {
			in.values[k] = v[0]
		}
	}
	if len(in.log) == 0 && in.values["log_text"] != "" {
		in.log = []byte(in.values["log_text"])
	}
	return in, nil
}

func readAll(f multipart.File) ([]byte, error) {
	defer f.Close()
	return io.ReadAll(f)
}

// apiMeasure is POST /api/v1/measure: the form fields as multipart (with
// the log in log_csv) or url-encoded (with the log's text in log_text);
// the answer is the measurement as JSON, or a problem document.
func (s *Server) apiMeasure(c echo.Context) error {
	in, err := readMeasureInput(c)
	if err != nil {
		return err
	}
	out, err := s.measureWithin(c, in)
	if err != nil {
		return err
	}
	return writeJSON(c, http.StatusOK, echo.MIMEApplicationJSONCharsetUTF8, out)
}

// getMeasure and postMeasure are the measurement page.
func (s *Server) getMeasure(c echo.Context) error {
	return s.renderMeasure(c, http.StatusOK, measureInput{values: map[string]string{"method": "constant-current"}}, nil, nil)
}

func (s *Server) postMeasure(c echo.Context) error {
	in, err := readMeasureInput(c)
	if err != nil {
		return err
	}
	out, err := s.measureWithin(c, in)
	var ve sizing.ValidationError
	if errors.As(err, &ve) {
		return s.renderMeasure(c, http.StatusUnprocessableEntity, in, nil, ve)
	}
	if err != nil {
		return err
	}
	return s.renderMeasure(c, http.StatusOK, in, out, nil)
}

func (s *Server) renderMeasure(c echo.Context, status int, in measureInput, out *measureOutcome, errs sizing.ValidationError) error {
	p := components.MeasureProps{CSS: s.css, Methods: measureMethods, Values: in.values, Messages: map[string]string{}}
	for _, e := range errs {
		p.Messages[e.Field] = e.Message
		p.Problems = append(p.Problems, e.Error())
	}
	recs, err := s.libraryCells(c.Request().Context(), store.CellFilter{})
	if err != nil {
		return err
	}
	for _, r := range recs {
		p.Cells = append(p.Cells, components.Option{Value: r.Cell.ID, Label: r.Cell.Name})
	}
	p.CanSave = s.store != nil
	if out != nil {
		p.Done = true
		p.Rows = figureRows(out.labelled)
		if out.hold != nil {
			p.HoldPoints = holdPointRows(out.hold.Points)
		}
		if w, ok := warningsOf(out.Result); ok {
			p.Warnings = w
		}
		for _, cmp := range out.Comparison {
			p.Comparison = append(p.Comparison, components.CompareRow{
				Quantity: cmp.Quantity, Unit: cmp.Unit, Measured: fmtPtr(&cmp.Measured), Stated: fmtPtr(&cmp.Stated),
				Deviation: fmtPtr(cmp.DeviationPct), Within: cmp.Within, Note: cmp.Note})
		}
		if out.Cell != nil {
			b, _ := json.MarshalIndent([]sizing.Cell{*out.Cell}, "", "  ")
			p.CellJSON = string(b)
			one, _ := json.Marshal(out.Cell)
			p.SaveJSON = string(one)
		}
	}
	return s.render(c, status, components.MeasurePage(p))
}

func fmtPtr(p *float64) string {
	if p == nil {
		return "—"
	}
	return strconv.FormatFloat(*p, 'g', 5, 64)
}

// figureRows writes a result's labelled figures (measure's Labelled, in
// its reading order, the rows capbank measure prints) with their units:
// quantities with an SI prefix to 4 significant figures, times on the
// log's axis, percentages, counts and R² plain.
func figureRows(fs []measure.LabelledFigure) []components.MeasureRow {
	rows := make([]components.MeasureRow, len(fs))
	for i, f := range fs {
		v := "—"
		switch {
		case f.Value == nil:
		case f.Plain:
			v = strings.TrimSpace(figures.Number(*f.Value, f.Digits) + " " + f.Unit)
		default:
			v = figures.SI(*f.Value, f.Unit, 4)
		}
		rows[i] = components.MeasureRow{Name: f.Label, Value: v}
	}
	return rows
}

// holdPointRows are a hold's points, one row each, with their units.
func holdPointRows(ps []measure.HoldPoint) [][]string {
	rows := make([][]string, len(ps))
	for i, p := range ps {
		par := "—"
		if p.ParallelResistanceOhm != nil {
			par = figures.SI(*p.ParallelResistanceOhm, "Ω", 4)
		}
		rows[i] = []string{figures.Number(p.AtS, 6) + " s", figures.SI(p.VoltageV, "V", 5),
			figures.SI(p.SlopeVPerS, "V/s", 3), figures.SI(p.LeakageA, "A", 4), par, strconv.Itoa(p.Points)}
	}
	return rows
}

func warningsOf(res any) ([]string, bool) {
	b, _ := json.Marshal(res)
	var m struct {
		Warnings []struct{ Code, Message string } `json:"warnings"`
		Notes    []string                         `json:"notes"`
	}
	if json.Unmarshal(b, &m) != nil {
		return nil, false
	}
	var out []string
	for _, w := range m.Warnings {
		out = append(out, "Warning: "+w.Message)
	}
	for _, n := range m.Notes {
		out = append(out, "Note: "+n)
	}
	return out, true
}
