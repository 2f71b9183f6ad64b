package figures

import (
	"testing"

	"capbank/sizing"
)

// Linking components/figures installs its SI formatter into sizing, so
// the figures in sizing's messages read as on the page, in plain text:
// 117 600 J is "117.6 kJ", 0.4 mΩ is "400 µΩ", −0.0123 V is "-12.3 mV"
// (an ASCII minus and space: messages reach JSON and the terminal).
func TestSizingWritesThroughFigures(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		v    float64
		unit string
		sig  int
		want string
	}{
		{117600, "J", 4, "117.6 kJ"},
		{0.0004, "Ω", 3, "400 µΩ"},
		{-0.0123, "V", 3, "-12.3 mV"},
	} {
		if got := sizing.Quantity(c.v, c.unit, c.sig); got != c.want {
			t.Errorf("sizing.Quantity(%g, %q, %d) = %q, want %q", c.v, c.unit, c.sig, got, c.want)
		}
	}
}
