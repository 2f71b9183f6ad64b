package components

import (
	"strings"

	"capbank/sizing"
)

// PageProps is everything the design page shows.
type PageProps struct {
	// Title is the document title.
	Title string
	// CSS and Script are the URLs of the stylesheet and the htmx file.
	CSS, Script string
	// APIHref is the OpenAPI document's URL, linked from the footer.
	APIHref string
	Form    FormProps
	Results ResultsProps
}

// Choice is one option of a select.
type Choice struct{ Value, Label string }

// FieldProps is one labelled input with its unit, hint and message.
type FieldProps struct {
	// Name is the form name (the design file's JSON path); ID the element
	// id of the input, and MessageID of its message beside it.
	Name, ID, MessageID string
	Label, Unit, Hint   string
	// Value is what the user typed, shown again as typed.
	Value string
	// Message is the problem with the value, or "".
	Message string
	// Select is true for a choice among Choices.
	Select   bool
	Choices  []Choice
	Required bool
	// Text is true for free text (no number keyboard).
	Text bool
	// Full spans the field across its grid, for a long value.
	Full bool
}

// StepProps is one row of the load steps.
type StepProps struct {
	// Number is the 1-based step number shown; Index the 0-based one the
	// form names use.
	Number, Index int
	// RowID and RowMessageID name the row and its own message slot (a
	// problem with the step as a whole).
	RowID, RowMessageID   string
	RowMessage            string
	Kind, Value, Duration FieldProps
	// UnitID names the unit beside the value, which follows the kind.
	UnitID string
	// KindNote says why the value was cleared (its kind changed); "" for
	// none.
	KindNote    string
	First, Last bool
}

// CellPickProps is one demo cell offered as a candidate.
type CellPickProps struct {
	ID, Name    string
	Picked      bool
	Electrolyte string
	// Display-ready figures.
	RatedV, Capacitance, ESR, Price string
}

// ProblemProps is one entry of the problem summary: the field's label, the
// message and a link to the input.
type ProblemProps struct{ Label, Message, Href string }

// Slot is a message or unit slot for an out-of-band update: its element id
// and its text.
type Slot struct{ ID, Text string }

// FormProps is the design form.
type FormProps struct {
	// SavedID and SavedName are the saved design the form holds, carried
	// so that its results offer to save over it; SavedVersion is the
	// version it was opened at.
	SavedID, SavedName, SavedVersion string
	// Stale is the saved design's address when saving over it was refused
	// because someone else changed it since it was opened ("" otherwise).
	Stale  string
	Name   FieldProps
	Window []FieldProps
	Load   []FieldProps
	Steps  []StepProps
	// StepsID and StepsMessage are the slot for a problem with the list of
	// steps as a whole; MaxSteps is how many rows the form edits.
	StepsMessageID, StepsMessage string
	MaxSteps                     int
	StepKinds                    []Choice
	Pulse                        []FieldProps
	// PulseOpen and CSVOpen unfold the pulse-train and profile-file tools
	// when they have something to show.
	PulseOpen, CSVOpen bool
	// CSVMessageID and CSVMessage are the slot for the profile file.
	CSVMessageID, CSVMessage string
	// Profile is the logged profile the load gives in place of steps; nil
	// when it gives steps.
	Profile *ProfileProps
	// Notice says what the last action did (a profile loaded, pulses added).
	Notice     string
	Conditions []FieldProps
	EOL        []FieldProps
	Cells      []CellPickProps
	// CellsMessageID and CellsMessage are the slot for the candidates.
	CellsMessageID, CellsMessage string
	Inline                       []FieldProps
	// InlineModule are the typed cell's module inputs, folded in their own
	// part; InlineModuleOpen unfolds them when one is set or has a problem.
	InlineModule     []FieldProps
	InlineModuleOpen bool
	// InlineTolerance is the slot for the tolerance pair as a whole.
	InlineToleranceID, InlineToleranceMessage string
	InlineOpen                                bool
	RankBy                                    FieldProps
	Problems                                  []ProblemProps
	// Balancing and Life are the balancing and life-model settings;
	// MoreOpen unfolds them when one is set or has a problem.
	Balancing, Life []FieldProps
	MoreOpen        bool
	// Statistics are the lot analysis's settings; LotOpen unfolds them
	// when one is set or has a problem.
	Statistics []FieldProps
	LotOpen    bool
	// Charger, Converter, Wiring, System and Modules are the bank in its
	// system; SystemOpen unfolds them when one is set or has a problem.
	Charger, Converter, Wiring, System, Modules []FieldProps
	SystemOpen                                  bool
	// BOQ are the purchasing inputs of the bill of quantities, Extras the
	// user's own lines (the last one blank, to type into); BOQOpen unfolds
	// them when one is set.
	BOQ                            []FieldProps
	Extras                         []ExtraRowProps
	ExtrasMessageID, ExtrasMessage string
	BOQOpen                        bool
	// Carried are cells of an opened design file kept as the file gave
	// them, and CarriedJSON the cells themselves for the form to carry.
	Carried     []CarriedCellProps
	CarriedJSON string
	// DesignFileMessageID and DesignFileMessage are the slot of the design
	// file upload; DesignFileOpen unfolds it.
	DesignFileMessageID, DesignFileMessage string
	DesignFileOpen                         bool
}

// ExtraRowProps is one own line of the bill of quantities: item,
// description, quantity, unit and unit price.
type ExtraRowProps struct {
	// Index is the line's index in the form names, Number the 1-based
	// number shown.
	Index, Number int
	RowID         string
	Fields        []FieldProps
}

// CarriedCellProps is a cell of an opened design file that is not a
// library cell, kept as the file gave it while Keep is set.
type CarriedCellProps struct {
	ID, Name, Figures string
	Keep              bool
}

// ResultsProps is the results panel.
type ResultsProps struct {
	// Report is nil before the design first sizes.
	Report *sizing.Report
	// Recommended is the recommended candidate, nil when none is feasible.
	Recommended *sizing.Candidate
	// BOQ is the recommended bank's bill of quantities, whose total the
	// headline gives; nil when there is none.
	BOQ *sizing.BOQ
	// Candidates are the report's candidates in the order to show.
	Candidates []sizing.Candidate
	// Sort is the candidates table's order: "" (rank), "price", "cells",
	// "mass", "volume" or "runtime".
	Sort string
	// Stale is true when the design has changed into one with problems and
	// these results are from the last design that sized.
	Stale bool
	// Status is the line at the top of the panel ("" for none).
	Status string
	// Empty is what the panel says when there is no report.
	Empty string
	// LastGood is the design file of these results, carried by the form so
	// they can be shown again, marked stale, while the design has problems.
	LastGood string
	// Summary describes the design as sized, for print.
	Summary string
	// Token is the share token of the design these results are of, which
	// the downloads post; TokenNote says why there is none.
	Token, TokenNote string
	// LinkNote says why the results offer no link to the design (too
	// large for a URL); "" when they do.
	LinkNote string
	// DesignName is the design's name, the saved name it is offered under.
	DesignName string
	// SavedID and SavedName are the saved design open in the form ("" for
	// none); CanSave is false when this capbank keeps no designs.
	// SavedVersion is the version it was opened at.
	SavedID, SavedName, SavedVersion string
	CanSave                          bool
	// OpenCell is the candidate whose card is shown open, its figures
	// written out; the other cards fetch theirs when opened (see
	// CandidateDetails). "" for none.
	OpenCell string
}

// ProfileProps is a logged load profile as the form shows it: a summary
// and a chart, with the CSV text carried in the form (Field) so that
// every post sizes it again.
type ProfileProps struct {
	// Field is the form field that carries Text.
	Field, Text string
	// Name is the file it was loaded from ("" when not known).
	Name string
	// Rows to Returned are display text; Rows is "" when the text does
	// not read as a profile (CSVMessage says why).
	Rows, Column, Duration, Drawn, Returned, Peak string
	// DrawnLabel and PeakLabel name Drawn and Peak: energy and power for a
	// power_w log, charge and current for a current_a log.
	DrawnLabel, PeakLabel string
	Chart                 *Chart
}

// KindWasName is the hidden input that carries the kind the row was shown
// with, so that the server can tell when the kind changes.
func (s StepProps) KindWasName() string { return strings.TrimSuffix(s.Kind.Name, "kind") + "kind_was" }
