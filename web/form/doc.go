// Package form is capbank's design form as data: url.Values ↔
// sizing.Design. Read collects the posted values (every one as typed, so
// the page can show it again), Form.Apply carries out the form's actions
// (step list, pulse train, a logged profile, opening a design file),
// Form.Decode turns the form into the design the command line would read,
// with every problem named by its input, and FromDesign is the way back.
// The field labels and units (Field), the SI-number parser (ParseSI) and
// the one reader of a form's numbers (FieldReader) live here too, used by
// the cell and measurement forms as well.
//
// form knows no HTTP: the web package reads the request and renders.
package form
