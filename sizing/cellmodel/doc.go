// Package cellmodel holds EDLC cell models beyond the ideal RC: the
// two-branch model after Faranda (2007) and the three-branch model after
// Zubieta and Bonert (IEEE Trans. Ind. Appl. 36(1), 2000), both parallel
// RC branches between the terminals with a voltage-dependent capacitance
// in the fastest branch and a leakage across the terminals, and an
// adaptive Dormand–Prince 5(4) integrator with dense output and event
// location that runs them through a load profile.
//
// A step's figures (how long it ran, the lowest terminal voltage, the
// charge and energy delivered) come from the integrator with a local error
// per step of at most DefaultAbsTol + DefaultRelTol·|v| on every branch
// voltage; the window bottom and a constant-power collapse are located as
// zeros on the dense output, so they do not depend on the step size.
//
// The package is pure: no files, no I/O.
package cellmodel
