package export

import (
	"strings"
	"unicode"
	"unicode/utf8"
)

// pdfText turns any string — capbank's messages or whatever a user typed —
// into text for the report's UTF-8 font (fonts.go): it stays as it is, Ω,
// → and − included, except that control characters become spaces, and
// bytes that are not UTF-8 and characters beyond the Basic Multilingual
// Plane (which fpdf's UTF-8 fonts cannot hold: an emoji) become U+FFFD.
// fpdf escapes the PDF string delimiters itself. This is the one place
// text enters the PDF.
func pdfText(s string) string {
	odd := func(r rune) bool { return unicode.IsControl(r) || r > 0xFFFF }
	if utf8.ValidString(s) && !strings.ContainsFunc(s, odd) {
		return s
	}
	var b strings.Builder
	for _, r := range strings.ToValidUTF8(s, "\uFFFD") {
		switch {
		case unicode.IsControl(r):
			r = ' '
		case r > 0xFFFF:
			r = '\uFFFD'
		}
		b.WriteRune(r)
	}
	return b.String()
}
