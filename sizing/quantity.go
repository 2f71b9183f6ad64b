package sizing

import (
	"strconv"
	"sync/atomic"
)

// A Formatter writes a figure v in unit (its base unit: "J", "Ω", "V")
// with sig significant figures, for a message.
type Formatter func(v float64, unit string, sig int) string

var formatter atomic.Pointer[Formatter]

// SetFormatter installs the formatter of the figures that sizing writes
// into its words: flag messages, bill-of-quantities descriptions and
// measurement warnings. sizing has no SI formatter of its own; the
// program's one (components/figures) installs itself when it is linked
// in, so the page, the PDF, the command line and these messages write a
// figure the same way. Safe to call at any time from any goroutine.
func SetFormatter(f Formatter) { formatter.Store(&f) }

// Quantity writes v in unit with sig significant figures through the
// installed Formatter; with none installed (sizing on its own, as in its
// tests), the number in its base unit with strconv's %g: "1.176e+05 J".
func Quantity(v float64, unit string, sig int) string {
	if f := formatter.Load(); f != nil {
		return (*f)(v, unit, sig)
	}
	return strconv.FormatFloat(v, 'g', sig, 64) + " " + unit
}
