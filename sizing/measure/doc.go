// Package measure characterises one supercapacitor cell from bench tests:
// its capacitance, ESR and leakage worked out from a logged test, compared
// with a datasheet, and made into a draft library cell.
//
// The four methods are a constant-current discharge by IEC 62391-1
// (ConstantCurrentDischarge), a discharge into a resistor
// (ResistorDischargeLog), an open-circuit hold after charging (HoldLog) and
// a timed discharge through a resistor read at two voltages
// (TimedResistorDischarge). ParseCSV reads the log the first three take.
// Run is the one entry the command line and the web call: it picks the
// method, checks the inputs it needs, reads the log, works out the figures
// and, when given a datasheet cell, compares them and drafts the measured
// cell.
//
// Every function checks its inputs and returns a sizing.ValidationError
// whose field names the input (resistor_ohm, rated_v, at_s[1],
// log.time_s[3], or log for a log that does not suit the method), so the
// command line and the web report them like a design's problems, each by
// its own name for the field. No result holds a NaN or an infinity: a
// figure the test cannot give is a nil pointer, with a warning or a note
// saying why.
//
// Like sizing, the package imports only the standard library, gonum and
// sizing itself: no web, files or logging.
package measure
