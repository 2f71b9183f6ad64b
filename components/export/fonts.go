package export

import (
	_ "embed"

	"codeberg.org/go-pdf/fpdf"
)

// The PDF's typeface: DejaVu Sans Condensed (regular, bold, oblique),
// shipped with capbank under its licence (fonts/LICENSE, the Bitstream Vera
// licence; DejaVu's changes are in the public domain), copied from
// Debian's fonts-dejavu-core 2.37. It has every character capbank writes —
// Ω, →, −, ≈, √, ², ⁷, µ, ° — and its condensed widths are close to
// Helvetica's, so the tables keep their layout. fpdf embeds only the
// glyphs a report uses.
var (
	//go:embed fonts/DejaVuSansCondensed.ttf
	fontRegular []byte
	//go:embed fonts/DejaVuSansCondensed-Bold.ttf
	fontBold []byte
	//go:embed fonts/DejaVuSansCondensed-Oblique.ttf
	fontOblique []byte
)

// fontFamily is the family name the PDF's fonts are registered under.
const fontFamily = "DejaVuSansCondensed"

// addFonts registers the embedded fonts with f as UTF-8 fonts, for the
// styles the report uses: "" (regular), "B" and "I".
func addFonts(f *fpdf.Fpdf) {
	f.AddUTF8FontFromBytes(fontFamily, "", fontRegular)
	f.AddUTF8FontFromBytes(fontFamily, "B", fontBold)
	f.AddUTF8FontFromBytes(fontFamily, "I", fontOblique)
}
