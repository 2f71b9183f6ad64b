// Package sizing is capbank's domain: supercapacitor (EDLC) cells, load
// profiles, banks of series cells in parallel strings, the exact solution
// of each load step, and the solver that picks the fewest strings.
//
// A Design gives the voltage window at the bank terminals, a load profile
// (steps of constant power, constant current, a resistor or rest, repeated),
// the end-of-life factors and the candidate cells. Size validates it
// (Validate, with a field path on every problem) and returns a Report: for
// each cell the series count that keeps every cell within its ceiling at
// the window top, the fewest parallel strings that carry the whole profile
// at worst case (end of life, and cold when asked), and the figures an
// engineer checks: usable energy, runtime, lowest terminal voltage, peak and
// RMS current, energy lost in the ESR.
//
// The circuit is an ideal capacitor behind its ESR, with the leakage as a
// resistance across the capacitor. Each step is solved in closed form (see
// step.go); the instant the terminal voltage meets the window bottom or a
// constant-power load passes its maximum-power point comes from that closed
// form, never from time stepping. Formulas, sources and check values are
// in REFERENCES.md in this folder; a comment citing "REFERENCES.md N.M"
// means its entry N.M.
//
// Units are SI throughout: V, A, W, Ω, F, J, s, kg, L; temperatures in °C.
// The package imports only the standard library, gonum and validator.
package sizing
