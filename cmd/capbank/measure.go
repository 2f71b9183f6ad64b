package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"slices"
	"strconv"
	"strings"

	"capbank/components/figures"
	"capbank/sizing"
	"capbank/sizing/measure"
)

const measureUsage = `usage: capbank measure --method METHOD [flags] [LOG.csv]

Works out a cell's figures from test data and prints them with their
units, the warnings about the test and the notes on how the figures were
found. LOG.csv is a log whose header names time_s and voltage_v, and
current_a when the current is logged ("-" reads standard input).

methods:
  constant-current LOG.csv --rated-v V [--current-a A] [--start-s S]
      capacitance and DC ESR by IEC 62391-1: C by a straight-line fit
      between U1 = 0.8·UR and U2 = 0.4·UR, ESR from the drop at the
      switch-on. --current-a is needed when the log has no current_a.
  resistor LOG.csv --resistor-ohm R [--start-s S]
      capacitance from a fit of ln V over a discharge into R; ESR from the
      step at the switch-on when a sample before it is logged.
  hold LOG.csv --capacitance-f C [--at S,S,...]
      leakage current C·|dV/dt| and parallel resistance V/I from an
      open-circuit hold after charging.
  timed --v0 V --v1 V --seconds S --resistor-ohm R
      capacitance from a timed discharge through R (no log): exact, and by
      the quick bench estimate with its error.

A flag that is wrong or missing, or a log that is malformed or does not
suit the method, prints a message naming the flag or the log's line and
exits with status 2.

flags:
`

// measureFlags names the flag that sets each input of measure.Run, by the
// input's field name; the problems of Run name the field, and the command
// line says the flag.
var measureFlags = map[string]string{
	"rated_v": "rated-v", "current_a": "current-a", "start_s": "start-s",
	"resistor_ohm": "resistor-ohm", "capacitance_f": "capacitance-f", "at_s": "at",
	"v0_v": "v0", "v1_v": "v1", "duration_s": "seconds",
}

// measureMessageNames rewrites the input names inside sizing's messages
// ("0.8 × rated_v 2.7 V") as flags. current_a is left alone: in messages it
// names the log's column.
var measureMessageNames = strings.NewReplacer("rated_v", "--rated-v", "resistor_ohm", "--resistor-ohm",
	"v0_v", "--v0", "v1_v", "--v1")

func runMeasure(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank measure", flag.ContinueOnError)
	flags.SetOutput(stderr)
	method := flags.String("method", "", "the test: constant-current, resistor, hold or timed")
	format := flags.String("format", "text", "output format: text (a table for a terminal) or json (the full result)")
	ratedV := flags.Float64("rated-v", 0, "rated cell voltage UR in `V` (constant-current)")
	currentA := flags.Float64("current-a", 0, "discharge current in `A`, for a log without current_a (constant-current)")
	startS := flags.Float64("start-s", 0, "discharge start (switch-on) time in `S` on the log's axis; default: found from the log")
	resistorOhm := flags.Float64("resistor-ohm", 0, "discharge resistor in `OHM` (resistor, timed)")
	capacitanceF := flags.Float64("capacitance-f", 0, "cell capacitance in `F` (hold)")
	at := flags.String("at", "", "times in `S,S,...` on the log's axis to work out the leakage at (hold); default: 10 %, 50 % and 90 % of the hold")
	v0 := flags.Float64("v0", 0, "start voltage in `V` (timed)")
	v1 := flags.Float64("v1", 0, "end voltage in `V` (timed)")
	seconds := flags.Float64("seconds", 0, "time from --v0 to --v1 in `S` (timed)")
	cl, err := parseCommand(flags, args, measureUsage)
	if err != nil {
		return err
	}
	pos, set, usage := cl.pos, cl.set, cl.usage

	m, known := measure.MethodNamed(*method)
	switch {
	case *method == "":
		return usageFailure(stderr, usage, "capbank measure: give --method: constant-current, resistor, hold or timed")
	case !known:
		return usageFailure(stderr, usage, "capbank measure: --method must be constant-current, resistor, hold or timed (got %q)", *method)
	case *format != "text" && *format != "json":
		return usageFailure(stderr, usage, "capbank measure: --format must be text or json (got %q)", *format)
	}
	var own []string // the method's flags, the required ones first
	for _, field := range append(slices.Clone(m.Required), m.Optional...) {
		own = append(own, measureFlags[field])
	}
	var names []string
	flags.Visit(func(f *flag.Flag) { names = append(names, f.Name) })
	for _, name := range names {
		if name != "method" && name != "format" && !slices.Contains(own, name) {
			return usageFailure(stderr, usage, "capbank measure: --%s does not apply to --method %s (its flags: --%s)",
				name, *method, strings.Join(own, ", --"))
		}
	}
	for _, name := range own[:len(m.Required)] {
		if !set[name] {
			return usageFailure(stderr, usage, "capbank measure: --method %s needs --%s", *method, name)
		}
	}
	given := func(name string, x *float64) *float64 {
		if set[name] {
			return x
		}
		return nil
	}
	in := measure.Input{Method: *method, RatedV: given("rated-v", ratedV), CurrentA: given("current-a", currentA),
		StartS: given("start-s", startS), ResistorOhm: given("resistor-ohm", resistorOhm),
		CapacitanceF: given("capacitance-f", capacitanceF), V0V: given("v0", v0), V1V: given("v1", v1),
		DurationS: given("seconds", seconds)}
	if set["at"] {
		for i, item := range strings.Split(*at, ",") {
			x, err := strconv.ParseFloat(strings.TrimSpace(item), 64)
			if err != nil {
				return usageFailure(stderr, usage, "capbank measure: --at: item %d (%q) is not a number of seconds; give times as S,S,...", i+1, strings.TrimSpace(item))
			}
			in.AtS = append(in.AtS, x)
		}
	}

	// The log.
	logName := ""
	if !m.Log {
		if len(pos) > 0 {
			return usageFailure(stderr, usage, "capbank measure: --method timed takes no log (got %q); give --v0, --v1, --seconds and --resistor-ohm", pos[0])
		}
	} else {
		switch len(pos) {
		case 0:
			return usageFailure(stderr, usage, "capbank measure: give the log file (or - for standard input)")
		case 1:
		default:
			return usageFailure(stderr, usage, "capbank measure: give one log file, not %d", len(pos))
		}
		logName = pos[0]
		if logName == "-" {
			logName = "standard input"
		}
		in.Log, err = readMeasurementLog(ctx, pos[0])
		if err != nil {
			return measureProblem(err, logName)
		}
	}

	r, err := measure.Run(in)
	if err != nil {
		return measureProblem(err, logName)
	}
	var buf bytes.Buffer
	if *format == "text" {
		switch {
		case r.ConstantCurrent != nil:
			writeConstantCurrentText(&buf, logName, *r.ConstantCurrent)
		case r.Resistor != nil:
			writeResistorText(&buf, logName, *r.Resistor)
		case r.Hold != nil:
			writeHoldText(&buf, logName, *r.Hold)
		case r.Timed != nil:
			writeTimedText(&buf, *r.Timed)
		}
	} else {
		enc := json.NewEncoder(&buf)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		if err := enc.Encode(r.Details()); err != nil {
			return fmt.Errorf("cannot encode the result as JSON: %w", err)
		}
	}
	_, err = stdout.Write(buf.Bytes())
	return err
}

// readMeasurementLog reads and parses the named log ("-" for stdin). It
// gives up when ctx is done, so an interrupt ends a command left waiting on
// a terminal's standard input.
func readMeasurementLog(ctx context.Context, name string) (*measure.Log, error) {
	type outcome struct {
		log *measure.Log
		err error
	}
	done := make(chan outcome, 1)
	in := stdin // read here: the goroutine may outlive this call
	go func() {
		r := in
		if name != "-" {
			f, err := os.Open(name)
			if err != nil {
				done <- outcome{nil, fmt.Errorf("cannot read the log %q: %w", name, pathReason(err))}
				return
			}
			defer f.Close()
			if st, err := f.Stat(); err == nil && st.IsDir() {
				done <- outcome{nil, fmt.Errorf("cannot read the log %q: it is a directory", name)}
				return
			}
			r = f
		}
		log, err := measure.ParseCSV(r)
		done <- outcome{log, err}
	}()
	select {
	case <-ctx.Done():
		return nil, fmt.Errorf("interrupted before the log was read (%w)", context.Cause(ctx))
	case o := <-done:
		return o.log, o.err
	}
}

// measureProblem turns the errors of reading the log and of measure.Run
// into the command line's terms: a ValidationError whose fields are the
// flags (--rated-v) or the log file, so that main reports each on its own
// line and exits with status 2. Other errors (a file that cannot be opened)
// pass through.
func measureProblem(err error, logName string) error {
	var ce *measure.CSVError
	if errors.As(err, &ce) {
		return sizing.ValidationError{{Field: logName, Rule: "csv", Message: ce.Error()}}
	}
	var ve sizing.ValidationError
	if !errors.As(err, &ve) {
		return err
	}
	out := make(sizing.ValidationError, len(ve))
	for i, fe := range ve {
		out[i] = fe
		out[i].Message = measureMessageNames.Replace(fe.Message)
		switch field := fe.Field; {
		case measureFlags[field] != "":
			out[i].Field = "--" + measureFlags[field]
		case field == "inputs":
			out[i].Field = "capbank measure"
		case strings.HasPrefix(field, "at_s["):
			n, _ := strconv.Atoi(strings.TrimSuffix(strings.TrimPrefix(field, "at_s["), "]"))
			out[i].Field = fmt.Sprintf("--at (item %d)", n+1)
		case field == "log":
			out[i].Field = logName
		case strings.HasPrefix(field, "log."):
			out[i].Field = logName + ", " + strings.TrimPrefix(field, "log.")
		}
	}
	return out
}

// measureRow is one figure of the text output: what it is, its number and
// its unit.
type measureRow struct{ label, value, unit string }

// quantityRow shows x in unit with an SI prefix and sigFigs figures.
func quantityRow(label string, x float64, unit string) measureRow {
	scale, prefixed := figures.Prefix(x, unit, sigFigs)
	return measureRow{label, number(x/scale, sigFigs), prefixed}
}

// plainRow shows x with n significant figures and no prefix (times in s,
// percentages, R²).
func plainRow(label string, x float64, n int, unit string) measureRow {
	return measureRow{label, number(x, n), unit}
}

// labelledRows are a result's labelled figures (measure's Labelled, the
// rows the web page lists too) as text rows.
func labelledRows(fs []measure.LabelledFigure) []measureRow {
	rows := make([]measureRow, len(fs))
	for i, f := range fs {
		switch {
		case f.Value == nil:
			rows[i] = measureRow{f.Label, none, ""}
		case f.Plain:
			rows[i] = plainRow(f.Label, *f.Value, f.Digits, f.Unit)
		default:
			rows[i] = quantityRow(f.Label, *f.Value, f.Unit)
		}
	}
	return rows
}

// writeMeasureText writes a titled table of figures, then the warnings and
// the notes.
func writeMeasureText(w io.Writer, title string, rows []measureRow, warnings []measure.Warning, notes []string, after func(io.Writer)) {
	fmt.Fprintln(w, title)
	fmt.Fprintln(w)
	t := table{right: []bool{false, true, false}}
	for _, r := range rows {
		t.rows = append(t.rows, []string{"  " + r.label, r.value, r.unit})
	}
	writeTable(w, t)
	if after != nil {
		fmt.Fprintln(w)
		after(w)
	}
	fmt.Fprintln(w)
	if len(warnings) == 0 {
		fmt.Fprintln(w, "Warnings: none")
	} else {
		fmt.Fprintln(w, "Warnings:")
		for _, x := range warnings {
			fmt.Fprintf(w, "  %s: %s\n", x.Code, x.Message)
		}
	}
	if len(notes) > 0 {
		fmt.Fprintln(w, "Notes:")
		for _, n := range notes {
			fmt.Fprintf(w, "  - %s\n", n)
		}
	}
}

func writeConstantCurrentText(w io.Writer, logName string, r measure.ConstantCurrentResult) {
	rows := labelledRows(r.Labelled())
	writeMeasureText(w, "Constant-current discharge (IEC 62391-1), "+logName+", UR "+quantity(r.RatedV, "V"), rows, r.Warnings, r.Notes, nil)
}

func writeResistorText(w io.Writer, logName string, r measure.ResistorDischargeResult) {
	rows := labelledRows(r.Labelled())
	writeMeasureText(w, "Resistor discharge, "+logName, rows, r.Warnings, r.Notes, nil)
}

func writeHoldText(w io.Writer, logName string, r measure.HoldResult) {
	rows := labelledRows(r.Labelled())
	points := func(w io.Writer) {
		leak := make([]float64, len(r.Points))
		rp := make([]float64, len(r.Points))
		for i, p := range r.Points {
			leak[i] = p.LeakageA
			if p.ParallelResistanceOhm != nil {
				rp[i] = *p.ParallelResistanceOhm
			}
		}
		lScale, lUnit := figures.Column(leak, "A", sigFigs)
		rScale, rUnit := figures.Column(rp, "Ω", sigFigs)
		t := table{right: []bool{true, true, true, true, true, true},
			rows: [][]string{{"  at (s)", "voltage (V)", "dV/dt (V/s)", "leakage (" + lUnit + ")", "parallel R (" + rUnit + ")", "samples"}}}
		for _, p := range r.Points {
			par := none
			if p.ParallelResistanceOhm != nil {
				par = number(*p.ParallelResistanceOhm/rScale, sigFigs)
			}
			t.rows = append(t.rows, []string{number(p.AtS, 6), number(p.VoltageV, 5),
				strconv.FormatFloat(p.SlopeVPerS, 'e', 3, 64), number(p.LeakageA/lScale, sigFigs), par, strconv.Itoa(p.Points)})
		}
		writeTable(w, t)
	}
	writeMeasureText(w, "Open-circuit hold, "+logName, rows, r.Warnings, r.Notes, points)
}

func writeTimedText(w io.Writer, r measure.TimedDischarge) {
	rows := labelledRows(r.Labelled())
	writeMeasureText(w, "Timed resistor discharge", rows, r.Warnings, r.Notes, nil)
}
