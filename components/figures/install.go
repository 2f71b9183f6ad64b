package figures

import "capbank/sizing"

// The figures sizing writes into its words (flag messages, bill-of-
// quantities descriptions, measurement warnings) go through the one SI
// formatter too, in plain text (they reach JSON and the terminal as well
// as the page).
func init() {
	sizing.SetFormatter(func(v float64, unit string, sig int) string { return ASCII(SI(v, unit, sig)) })
}
