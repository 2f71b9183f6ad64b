package measure

// LabelledFigure is one figure of a measurement as a reader sees it: what
// it is in words (with the symbol or formula it is known by), its value in
// Unit without prefix, and how to write it. The command line's text and
// the web page both list a result's Labelled figures, in this order.
type LabelledFigure struct {
	Label string
	// Value is nil when the test does not give the figure (an ESR with no
	// sample before the switch-on).
	Value *float64
	// Unit is the SI unit of Value ("F", "Ω", "s", "%"; "" for a count or a
	// ratio).
	Unit string
	// Plain figures (times on the log's axis, percentages, counts, R²)
	// are written without an SI prefix, to Digits significant digits;
	// the others with a prefix, to the writer's own digits.
	Plain  bool
	Digits int
}

func quantityFigure(label string, x float64, unit string) LabelledFigure {
	return LabelledFigure{Label: label, Value: ptr(x), Unit: unit}
}

func optFigure(label string, x *float64, unit string) LabelledFigure {
	return LabelledFigure{Label: label, Value: clone(x), Unit: unit}
}

func plainFigure(label string, x float64, digits int, unit string) LabelledFigure {
	return LabelledFigure{Label: label, Value: ptr(x), Unit: unit, Plain: true, Digits: digits}
}

// Labelled are the figures of the result of whichever method ran, most
// wanted first: what the test measures (capacitance, ESR, leakage), then
// what it was worked out from, then the quality of the fit.
func (r Result) Labelled() []LabelledFigure {
	switch {
	case r.ConstantCurrent != nil:
		return r.ConstantCurrent.Labelled()
	case r.Resistor != nil:
		return r.Resistor.Labelled()
	case r.Hold != nil:
		return r.Hold.Labelled()
	case r.Timed != nil:
		return r.Timed.Labelled()
	}
	return nil
}

// Labelled are the constant-current discharge's figures in reading order.
func (r ConstantCurrentResult) Labelled() []LabelledFigure {
	current := "discharge current I (given)"
	if r.CurrentSource == "log" {
		current = "discharge current I (logged mean, t1–t2)"
	}
	return []LabelledFigure{
		quantityFigure("capacitance C = I/|slope| (fit t1–t2)", r.CapacitanceF, "F"),
		quantityFigure("capacitance, two-point I·(t2 − t1)/(U1 − U2)", r.TwoPointCapacitanceF, "F"),
		optFigure("ESR = ΔU3/I", r.ESROhm, "Ω"),
		optFigure("time constant ESR·C", r.TimeConstantS, "s"),
		quantityFigure(current, r.CurrentA, "A"),
		quantityFigure("U1 = 0.8·UR", r.U1V, "V"),
		plainFigure("t1, when the voltage reaches U1", r.T1S, 6, "s"),
		quantityFigure("U2 = 0.4·UR", r.U2V, "V"),
		plainFigure("t2, when the voltage reaches U2", r.T2S, 6, "s"),
		plainFigure("discharge start t0 (by "+r.StartRule+")", r.StartS, 6, "s"),
		quantityFigure("voltage before t0", r.VoltageBeforeV, "V"),
		quantityFigure("fitted line at t0", r.LineAtStartV, "V"),
		quantityFigure("drop ΔU3", r.DropV, "V"),
		plainFigure("ΔU3 / UR", r.DropPct, 3, "%"),
		plainFigure("fit points", float64(r.FitPoints), 7, ""),
		plainFigure("R²", r.RSquared, 6, ""),
		quantityFigure("residual RMS", r.ResidualRMSV, "V"),
	}
}

// Labelled are the resistor discharge's figures in reading order.
func (r ResistorDischargeResult) Labelled() []LabelledFigure {
	return []LabelledFigure{
		quantityFigure("capacitance C = τ/(R + ESR)", r.CapacitanceF, "F"),
		optFigure("ESR from the step at switch-on", r.ESROhm, "Ω"),
		quantityFigure("time constant τ = −1/slope", r.TimeConstantS, "s"),
		quantityFigure("resistor R", r.ResistorOhm, "Ω"),
		plainFigure("switch-on t0 (by "+r.StartRule+")", r.StartS, 6, "s"),
		optFigure("voltage before t0", r.VoltageBeforeV, "V"),
		quantityFigure("fitted decay at t0", r.LineAtStartV, "V"),
		quantityFigure("fit floor", r.FloorV, "V"),
		plainFigure("fit from", r.FitFromS, 6, "s"),
		plainFigure("fit to", r.FitToS, 6, "s"),
		plainFigure("fit points", float64(r.FitPoints), 7, ""),
		plainFigure("R² (ln V)", r.RSquared, 6, ""),
		plainFigure("residual RMS (ln V)", 100*r.ResidualRMSLn, 3, "%"),
	}
}

// Labelled are the open-circuit hold's summary figures in reading order;
// its points are a table of their own.
func (r HoldResult) Labelled() []LabelledFigure {
	return []LabelledFigure{
		quantityFigure("leakage current (latest point)", r.LeakageA, "A"),
		optFigure("parallel resistance (latest point)", r.ParallelResistanceOhm, "Ω"),
		quantityFigure("capacitance used", r.CapacitanceF, "F"),
		quantityFigure("start voltage", r.StartV, "V"),
		quantityFigure("end voltage", r.EndV, "V"),
		plainFigure("hold", r.EndS-r.StartS, 6, "s"),
		plainFigure("total drop", r.DropPct, 3, "%"),
		plainFigure("fit window", r.WindowS, 6, "s"),
	}
}

// Labelled are the timed discharge's figures in reading order.
func (r TimedDischarge) Labelled() []LabelledFigure {
	return []LabelledFigure{
		quantityFigure("capacitance, exact t/(R·ln(V0/V1))", r.CapacitanceF, "F"),
		quantityFigure("capacitance, quick t·I/ΔV", r.QuickCapacitanceF, "F"),
		plainFigure("quick estimate's error", r.QuickErrorPct, 3, "%"),
		quantityFigure("mean current I = (V0 + V1)/(2R)", r.MeanCurrentA, "A"),
		quantityFigure("time constant R·C", r.TimeConstantS, "s"),
		quantityFigure("start voltage V0", r.V0V, "V"),
		quantityFigure("end voltage V1", r.V1V, "V"),
		plainFigure("time from V0 to V1", r.DurationS, 6, "s"),
		quantityFigure("resistor R", r.ResistorOhm, "Ω"),
	}
}
