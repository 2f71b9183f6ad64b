package export

import (
	"strings"
	"sync"
	"unicode"

	"codeberg.org/go-pdf/fpdf"
)

// beyondCP1252 maps characters capbank's messages use that the core fonts'
// code page (Windows-1252) lacks to plain text. ×, ², ³, ½, µ, °, ±, ·, §,
// – and — are in the code page and stay as they are.
var beyondCP1252 = strings.NewReplacer(
	"Ω", "Ohm", "√", "sqrt", "→", "->", "←", "<-", "≥", ">=", "≤", "<=", "−", "-",
	"≈", "~", "∞", "inf", "∫", "integral ", "Δ", "delta ", "Σ", "sum ", "τ", "tau",
	"α", "alpha", "β", "beta", "η", "eta", "θ", "theta", "φ", "phi", "ψ", "psi",
	"′", "'", "″", "\"", "⌈", "ceil(", "⌉", ")", "⌊", "floor(", "⌋", ")",
	"\u2009", " ", "\u202f", " ", "\u00a0", " ", "\u2011", "-", "≠", "!=",
)

// superscripts the code page lacks (it has ¹, ² and ³), written after a
// caret: 10⁷ is "10^7".
var superscripts = map[rune]rune{
	'⁰': '0', '⁴': '4', '⁵': '5', '⁶': '6', '⁷': '7', '⁸': '8', '⁹': '9', '⁻': '-', '⁺': '+',
}

var (
	cp1252Once sync.Once
	// cp1252Mu guards translate: fpdf's translator reuses one buffer, so
	// two PDFs written at once (two web requests, parallel tests) would
	// corrupt each other's text.
	cp1252Mu  sync.Mutex
	translate func(string) string
)

// toCP1252 is fpdf's Unicode-to-Windows-1252 translator, safe for
// concurrent use.
func toCP1252(s string) string {
	cp1252Mu.Lock()
	defer cp1252Mu.Unlock()
	return translate(s)
}

// pdfText turns any string — capbank's messages or whatever a user typed —
// into text for the core fonts: characters beyond Windows-1252 are spelt
// out (beyondCP1252, superscripts) or become '?', control characters
// become spaces, and the rest is translated to the code page's bytes.
// fpdf escapes the PDF string delimiters itself. This is the one place
// text enters the PDF.
func pdfText(s string) string {
	cp1252Once.Do(func() {
		translate = fpdf.New("P", "mm", "A4", "").UnicodeTranslatorFromDescriptor("")
	})
	s = beyondCP1252.Replace(s)
	var b strings.Builder
	inSup := false
	for _, r := range s {
		if d, ok := superscripts[r]; ok {
			if !inSup {
				b.WriteByte('^')
				inSup = true
			}
			b.WriteRune(d)
			continue
		}
		inSup = false
		switch {
		case r == '\uFFFD':
			b.WriteByte('?')
		case unicode.IsControl(r):
			b.WriteByte(' ')
		case r < 0x80:
			b.WriteRune(r)
		case toCP1252(string(r)) == ".":
			b.WriteByte('?')
		default:
			b.WriteRune(r)
		}
	}
	return toCP1252(b.String())
}
