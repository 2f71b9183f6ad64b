package web

import (
	"capbank/web/form"
	"encoding/json"
	"fmt"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/store"
)

// pageProps lays out an evaluation for the page; picks are the library
// cells the picker offers (nil for an answer without the form).
func (s *Server) pageProps(ev *evaluation, picks []components.CellPickProps) components.PageProps {
	title := "capbank – supercapacitor bank sizing"
	if n := strings.TrimSpace(ev.form.Value("name")); n != "" {
		title = n + " – capbank"
	}
	results := resultsProps(ev)
	results.CanSave = s.store != nil
	return components.PageProps{
		Title: title, CSS: s.css, Script: s.js, APIHref: "/api/v1/openapi.json",
		Form:    formProps(ev, picks),
		Results: results,
	}
}

// lookup finds the cells a design may pick by id: the library's.
func (s *Server) lookup(c echo.Context) form.CellLookup {
	if s.store != nil {
		return s.store.Lookup(c.Request().Context())
	}
	return store.DemoCell
}

// cellPicks lists the library's cells for the picker, each marked when
// the form picked it.
func (s *Server) cellPicks(c echo.Context, f *form.Form) []components.CellPickProps {
	recs, err := s.libraryCells(c.Request().Context(), store.CellFilter{})
	if err != nil {
		s.log.Error("listing the library for the picker", "error", err.Error())
		recs = nil
		for _, cell := range store.DemoCells() {
			recs = append(recs, store.CellRecord{Cell: cell, ReadOnly: true})
		}
	}
	out := make([]components.CellPickProps, 0, len(recs))
	for _, r := range recs {
		out = append(out, cellPick(r.Cell, f.Picked[r.Cell.ID], strings.TrimSpace(f.Value("boq.currency"))))
	}
	return out
}

// cellPick is a library cell in a pick list; its price takes the
// design's currency, in which the design prices its cells ("" for none).
func cellPick(c sizing.Cell, picked bool, currency string) components.CellPickProps {
	return components.CellPickProps{
		ID: c.ID, Name: c.Name, Picked: picked, Electrolyte: c.Electrolyte,
		RatedV:      figures.SI(c.RatedV, "V", 3),
		Capacitance: figures.SI(c.CapacitanceF, "F", 4),
		ESR:         figures.SI(c.ESROhm, "Ω", 3),
		Price:       figures.Price(c.UnitPrice, currency),
	}
}

// messages gathers the problems by form field; several on one field are
// joined.
func messages(problems sizing.ValidationError) map[string]string {
	m := map[string]string{}
	for _, p := range problems {
		if prev, ok := m[p.Field]; ok {
			m[p.Field] = prev + "; " + p.Message
		} else {
			m[p.Field] = p.Message
		}
	}
	return m
}

func fieldProps(fl form.Field, value, msg string) components.FieldProps {
	id := form.DomID(fl.Name)
	fp := components.FieldProps{
		Name: fl.Name, ID: "f-" + id, MessageID: "msg-" + id,
		Label: fl.Label, Unit: fl.Units.Unit, Hint: fl.Hint, Value: value, Message: msg,
		Required: fl.Required, Text: fl.Kind == form.KindText, Full: fl.Wide,
	}
	if fl.Kind == form.KindChoice {
		fp.Select = true
		for _, c := range fl.Choices {
			fp.Choices = append(fp.Choices, components.Choice{Value: c.Value, Label: c.Label})
		}
	}
	return fp
}

func formProps(ev *evaluation, picks []components.CellPickProps) components.FormProps {
	f := ev.form
	msg := messages(ev.problems)
	group := func(fields []form.Field) []components.FieldProps {
		out := make([]components.FieldProps, len(fields))
		for i, fl := range fields {
			out[i] = fieldProps(fl, f.Value(fl.Name), msg[fl.Name])
		}
		return out
	}
	p := components.FormProps{
		SavedID: f.SavedID(), SavedName: f.Value("saved_name"), SavedVersion: savedVersion(f.Value("saved_version")),
		Stale:          staleLink(f.Value("stale")),
		Name:           fieldProps(form.NameField, f.Value("name"), msg["name"]),
		Window:         group(form.WindowFields),
		Load:           group(form.LoadFields),
		StepsMessageID: "msg-load-steps", StepsMessage: msg["load.steps"],
		MaxSteps:     form.MaxSteps,
		Pulse:        group(form.PulseFields),
		CSVMessageID: "msg-profile_csv", CSVMessage: msg["profile_csv"],
		Notice:         f.Notice,
		Conditions:     group(form.ConditionFields),
		EOL:            group(form.EOLFields),
		CellsMessageID: "msg-cells-pick", CellsMessage: msg["cells.pick"],
		Inline:            group(form.InlineFigureFields),
		InlineModule:      group(form.InlineModuleFields),
		InlineToleranceID: "msg-inline-capacitance_tolerance_pct", InlineToleranceMessage: msg["inline.capacitance_tolerance_pct"],
		RankBy:          fieldProps(form.RankField, f.Value("rank_by"), msg["rank_by"]),
		Balancing:       group(form.BalancingFields),
		Statistics:      group(form.StatisticsFields),
		Charger:         group(form.ChargerFields),
		Converter:       group(form.ConverterFields),
		Wiring:          group(form.WiringFields),
		System:          group(form.SystemFields),
		Modules:         group(form.ModuleFields),
		Life:            group(form.LifeFields),
		BOQ:             group(form.BOQFields),
		ExtrasMessageID: "msg-boq-extras", ExtrasMessage: msg["boq.extras"],
		DesignFileMessageID: "msg-design_file", DesignFileMessage: msg["design_file"],
		Cells: picks,
	}
	rows := slices.Clone(f.Extras)
	if n := len(rows); n == 0 || !f.ExtraEmpty(rows[n-1]) {
		rows = append(rows, f.NextExtra())
	}
	for _, i := range rows {
		base := fmt.Sprintf("boq.extras[%d]", i)
		row := components.ExtraRowProps{Index: i, RowID: "row-" + form.DomID(base), Number: len(p.Extras) + 1}
		for _, fl := range form.ExtraFields {
			fl.Name = base + "." + fl.Name
			row.Fields = append(row.Fields, fieldProps(fl, f.Value(fl.Name), msg[fl.Name]))
		}
		p.Extras = append(p.Extras, row)
	}
	if len(f.Carried) > 0 {
		b, _ := json.Marshal(f.Carried)
		p.CarriedJSON = string(b)
		for _, c := range f.Carried {
			p.Carried = append(p.Carried, components.CarriedCellProps{ID: c.ID, Name: c.Name, Keep: f.Keep[c.ID],
				Figures: figures.SI(c.RatedV, "V", 3) + ", " + figures.SI(c.CapacitanceF, "F", 4) + ", " + figures.SI(c.ESROhm, "Ω", 3)})
		}
	}
	for _, group := range [][]components.FieldProps{p.Balancing, p.Life} {
		for _, fp := range group {
			p.MoreOpen = p.MoreOpen || fp.Value != "" || fp.Message != ""
		}
	}
	for _, fp := range p.Statistics {
		p.LotOpen = p.LotOpen || fp.Value != "" || fp.Message != ""
	}
	for _, fp := range p.InlineModule {
		p.InlineModuleOpen = p.InlineModuleOpen || fp.Value != "" || fp.Message != ""
	}
	for _, group := range [][]components.FieldProps{p.Charger, p.Converter, p.Wiring, p.System, p.Modules} {
		for _, fp := range group {
			p.SystemOpen = p.SystemOpen || fp.Value != "" || fp.Message != ""
		}
	}
	for _, fp := range p.BOQ {
		p.BOQOpen = p.BOQOpen || fp.Value != "" || fp.Message != ""
	}
	p.BOQOpen = p.BOQOpen || len(f.Extras) > 0 || p.ExtrasMessage != ""
	p.DesignFileOpen = p.DesignFileMessage != ""
	if p.Pulse[0].Value == "" {
		p.Pulse[0].Value = "power"
	}
	for _, k := range form.StepKinds {
		p.StepKinds = append(p.StepKinds, components.Choice{Value: k.Value, Label: k.Label})
	}
	for i, r := range f.Steps {
		base := fmt.Sprintf("load.steps[%d]", i)
		id := form.DomID(base)
		kind := fieldProps(form.Field{Name: base + ".kind", Label: "Kind", Kind: form.KindChoice}, r.Kind, msg[base+".kind"])
		value := fieldProps(form.Field{Name: base + ".value", Label: "Value", Units: form.StepValueUnit(r.Kind)}, r.Value, msg[base+".value"])
		if r.Kind == "rest" {
			value.Unit = "—"
		}
		dur := fieldProps(form.Field{Name: base + ".duration_s", Label: "Duration", Units: form.UnitSecond}, r.Duration, msg[base+".duration_s"])
		p.Steps = append(p.Steps, components.StepProps{
			Number: i + 1, Index: i, RowID: "row-" + id, RowMessageID: "msg-" + id, RowMessage: msg[base],
			Kind: kind, Value: value, Duration: dur, UnitID: "unit-" + id + "-value", KindNote: r.KindNote,
			First: i == 0, Last: i == len(f.Steps)-1,
		})
	}
	for _, fl := range form.InlineFields {
		if strings.TrimSpace(f.Value(fl.Name)) != "" || msg[fl.Name] != "" {
			p.InlineOpen = true
		}
	}
	p.InlineOpen = p.InlineOpen || msg["inline.capacitance_tolerance_pct"] != ""
	for _, fl := range form.PulseFields {
		p.PulseOpen = p.PulseOpen || msg[fl.Name] != ""
	}
	p.CSVOpen = msg["profile_csv"] != ""
	if f.Profile != "" {
		p.Profile = profileProps(ev)
	}
	for _, pr := range ev.problems {
		p.Problems = append(p.Problems, components.ProblemProps{Label: problemLabel(pr.Field), Message: pr.Message, Href: problemHref(pr.Field)})
	}
	return p
}

var (
	stepPart  = regexp.MustCompile(`^load\.steps\[(\d+)\](?:\.(kind|value|duration_s))?$`)
	extraPart = regexp.MustCompile(`^boq\.extras\[(\d+)\](?:\.(item|description|quantity|unit|unit_price))?$`)
)

// problemLabel names a field for the problem summary.
func problemLabel(name string) string {
	if m := stepPart.FindStringSubmatch(name); m != nil {
		i, _ := strconv.Atoi(m[1])
		part := map[string]string{"kind": " kind", "value": " value", "duration_s": " duration", "": ""}[m[2]]
		return fmt.Sprintf("Step %d%s", i+1, part)
	}
	if m := extraPart.FindStringSubmatch(name); m != nil {
		part := map[string]string{"item": " item", "description": " description", "quantity": " quantity", "unit": " unit", "unit_price": " unit price", "": ""}[m[2]]
		return "Own BOQ line" + part
	}
	if l, ok := form.FieldLabels[name]; ok {
		if strings.HasPrefix(name, "inline.") {
			return "Own cell, " + strings.ToLower(l[:1]) + l[1:]
		}
		return l
	}
	return name
}

// problemHref links a problem to its input, or to its group.
func problemHref(name string) string {
	switch {
	case name == "cells.pick":
		return "#cells"
	case name == "load.steps":
		return "#steps"
	case name == "inline.capacitance_tolerance_pct":
		return "#f-inline-capacitance_tolerance_pct-0"
	case name == "profile_csv":
		return "#f-profile_csv"
	case name == "design":
		return "#design-form"
	case name == "design_file":
		return "#f-design_file"
	case name == "boq.extras":
		return "#boq"
	}
	if m := extraPart.FindStringSubmatch(name); m != nil {
		if m[2] == "" {
			return "#row-" + form.DomID(name)
		}
		return "#f-" + form.DomID(name)
	}
	if m := stepPart.FindStringSubmatch(name); m != nil && m[2] == "" {
		return "#row-" + form.DomID(name)
	}
	if _, ok := form.FieldLabels[name]; ok || stepPart.MatchString(name) {
		return "#f-" + form.DomID(name)
	}
	return "#design-form"
}

// formSlots lists every message slot and every step unit in the form, for
// the out-of-band update of a live answer.
func formSlots(p components.FormProps) (slots, units []components.Slot) {
	add := func(id, text string) { slots = append(slots, components.Slot{ID: id, Text: text}) }
	fields := func(fs []components.FieldProps) {
		for _, f := range fs {
			add(f.MessageID, f.Message)
		}
	}
	fields([]components.FieldProps{p.Name, p.RankBy})
	fields(p.Window)
	fields(p.Load)
	fields(p.Pulse)
	fields(p.Conditions)
	fields(p.EOL)
	fields(p.Inline)
	fields(p.InlineModule)
	fields(p.Balancing)
	fields(p.Life)
	fields(p.Statistics)
	fields(p.Charger)
	fields(p.Converter)
	fields(p.Wiring)
	fields(p.System)
	fields(p.Modules)
	fields(p.BOQ)
	for _, r := range p.Extras {
		fields(r.Fields)
	}
	add(p.ExtrasMessageID, p.ExtrasMessage)
	add(p.DesignFileMessageID, p.DesignFileMessage)
	add(p.StepsMessageID, p.StepsMessage)
	add(p.CSVMessageID, p.CSVMessage)
	add(p.CellsMessageID, p.CellsMessage)
	add(p.InlineToleranceID, p.InlineToleranceMessage)
	for _, s := range p.Steps {
		add(s.RowMessageID, s.RowMessage)
		fields([]components.FieldProps{s.Kind, s.Value, s.Duration})
		units = append(units, components.Slot{ID: s.UnitID, Text: s.Value.Unit})
	}
	return slots, units
}

func resultsProps(ev *evaluation) components.ResultsProps {
	p := components.ResultsProps{Sort: ev.form.Sort, LastGood: ev.form.LastGood,
		SavedID: ev.form.SavedID(), SavedName: ev.form.Value("saved_name"), SavedVersion: savedVersion(ev.form.Value("saved_version")), DesignName: strings.TrimSpace(ev.form.Value("name"))}
	n := len(ev.problems)
	switch {
	case ev.pristine:
		p.Empty = "Give the window and the load, pick one or more cells, and the bank appears here."
	case ev.keptLast:
		p.Status = staleStatus(n)
	case ev.report == nil:
		p.Empty = "Fix the problems marked in the form to see the bank."
		p.Status = fmt.Sprintf("The design has %d %s, marked beside %s.", n, plural(n, "problem", "problems"), plural(n, "its field", "their fields"))
	}
	if ev.report == nil {
		return p
	}
	r := ev.report
	p.Token, p.TokenNote, p.LinkNote = designToken(ev.sized)
	if !ev.stale {
		// The form carries the design back as its token, a tenth of its
		// design file written into an attribute.
		p.LastGood = p.Token
		if p.LastGood == "" {
			p.LastGood = lastGoodJSON(ev.sized)
		}
	}
	if ev.stale {
		p.Stale = true
		p.Status = staleStatus(n)
	}
	p.Report = r
	if r.Recommended != nil {
		for i := range r.Candidates {
			if r.Candidates[i].CellID == *r.Recommended {
				p.Recommended = &r.Candidates[i]
			}
		}
	}
	if p.Recommended != nil && ev.sized != nil {
		// The headline's total price is the bill of quantities'; without
		// one it falls back to the cells' price.
		if b, err := sizing.BillOfQuantities(ev.sized, r, ""); err == nil {
			p.BOQ = b
		}
	}
	p.Candidates = sortCandidates(r.Candidates, ev.form.Sort)
	p.Summary = designSummary(r, len(ev.sized.Load.StepList()))
	return p
}

// staleStatus is the status line of a design with n problems whose
// results are those of the last design that sized.
func staleStatus(n int) string {
	return fmt.Sprintf("The design has %d %s, marked beside %s. These results are for the last design that sized.",
		n, plural(n, "problem", "problems"), plural(n, "its field", "their fields"))
}

// designSummary describes the design as it was sized, in one line.
func designSummary(r *sizing.Report, steps int) string {
	parts := []string{}
	if r.Design != "" {
		parts = append(parts, r.Design)
	}
	parts = append(parts, "window "+figures.SI(r.MaxV, "V", 4)+" → "+figures.SI(r.MinV, "V", 4))
	pass := fmt.Sprintf("%d %s, %s per pass", steps, plural(steps, "step", "steps"), figures.Duration(r.ProfileDurationS, 3))
	if r.Repeat > 1 {
		pass += fmt.Sprintf(", run %d times (%s)", r.Repeat, figures.Duration(r.PassDurationS, 3))
	}
	parts = append(parts, pass)
	worst := "worst case: capacitance ×" + figures.Number(r.EOLCapacitanceFactor, 3) + ", ESR ×" + figures.Number(r.EOLESRFactor, 3)
	for _, c := range r.Candidates {
		if c.ToleranceFactor < 1 {
			worst += ", each cell's minus tolerance"
			break
		}
	}
	if r.ColdC != nil {
		worst += ", at " + figures.SI(*r.ColdC, "°C", 3)
	}
	if r.PeriodS != nil {
		parts = append(parts, "one event every "+figures.Duration(*r.PeriodS, 3))
	}
	parts = append(parts, worst)
	by := map[string]string{"price": "lowest price", "cells": "fewest cells", "mass": "least mass", "volume": "least volume"}[r.RankBy]
	if by == "" {
		by = r.RankBy
	}
	parts = append(parts, "recommended by "+by)
	return strings.Join(parts, " · ")
}

// sortCandidates orders the candidates for the table: feasible ones first,
// then by the chosen figure (runtime longest first, the others least
// first), a missing figure last, ties in the report's rank order. "" keeps
// the report's rank.
func sortCandidates(cs []sizing.Candidate, by string) []sizing.Candidate {
	out := slices.Clone(cs)
	if by == "" {
		return out
	}
	key := func(c *sizing.Candidate) (float64, bool) {
		switch by {
		case "price":
			if c.TotalPrice != nil {
				return *c.TotalPrice, true
			}
		case "cells":
			return float64(c.Cells), true
		case "mass":
			if c.MassKg != nil {
				return *c.MassKg, true
			}
		case "volume":
			if c.VolumeL != nil {
				return *c.VolumeL, true
			}
		case "runtime":
			if c.RuntimeS == nil {
				return -sizing.RuntimeLimitS * 10, true // beyond the limit: longest of all
			}
			return -*c.RuntimeS, true
		}
		return 0, false
	}
	sort.SliceStable(out, func(i, j int) bool {
		a, b := &out[i], &out[j]
		if a.Feasible != b.Feasible {
			return a.Feasible
		}
		ka, oka := key(a)
		kb, okb := key(b)
		if oka != okb {
			return oka
		}
		return ka < kb
	})
	return out
}

// profileProps is the logged profile of the form's load as the page shows
// it: the figures of its summary by the one SI formatter, and its chart.
// The profile is the one sizing read (sizing.Load.Profile), so a bad row
// is reported once, by sizing, beside the file input.
func profileProps(ev *evaluation) *components.ProfileProps {
	f := ev.form
	pp := &components.ProfileProps{Field: form.ProfileField, Text: f.Profile, Name: f.Value(form.ProfileNameField)}
	load := ev.dec.Design.Load
	prof, err := load.Profile()
	if err != nil || prof == nil {
		return pp
	}
	t := prof.Totals()
	pp.Rows, pp.Column = strconv.Itoa(prof.Rows), prof.Column
	pp.Duration = figures.Duration(prof.DurationS, 4)
	if prof.Column == "current_a" {
		pp.DrawnLabel, pp.PeakLabel = "Charge drawn", "Peak current"
		pp.Drawn = figures.SI(t.Drawn, "C", 4) + " (" + figures.SI(t.Drawn/3600, "Ah", 4) + ")"
		pp.Peak = figures.SI(t.Peak, "A", 4)
		if t.Returned > 0 {
			pp.Returned = figures.SI(t.Returned, "C", 4)
		}
	} else {
		pp.DrawnLabel, pp.PeakLabel = "Energy drawn", "Peak power"
		pp.Drawn = figures.SI(t.Drawn, "J", 4) + " (" + figures.SI(t.Drawn/3600, "Wh", 4) + ")"
		pp.Peak = figures.SI(t.Peak, "W", 4)
		if t.Returned > 0 {
			pp.Returned = figures.SI(t.Returned, "J", 4)
		}
	}
	ch := components.ProfileChart(prof)
	pp.Chart = &ch
	return pp
}
