package export

import (
	"fmt"
	"slices"
	"strings"
)

// Format describes one export for a download or a file name.
type Format struct {
	// Name is the value of capbank size --format and of the web's format
	// parameter.
	Name string
	// ContentType is the media type to serve it with; Ext the file
	// extension, with its dot.
	ContentType string
	Ext         string
	// Binary formats are not written to a terminal.
	Binary bool
}

// Formats are the exports of this package, in the order the page lists
// them.
var Formats = []Format{
	{Name: "boq-csv", ContentType: "text/csv; charset=utf-8", Ext: ".csv"},
	{Name: "boq-xlsx", ContentType: "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet", Ext: ".xlsx", Binary: true},
	{Name: "boq-json", ContentType: "application/json", Ext: ".json"},
	{Name: "pdf", ContentType: "application/pdf", Ext: ".pdf", Binary: true},
}

// LookupFormat returns the Format of that name.
func LookupFormat(name string) (Format, bool) {
	i := slices.IndexFunc(Formats, func(f Format) bool { return f.Name == name })
	if i < 0 {
		return Format{}, false
	}
	return Formats[i], true
}

// Paper is the page size of the PDF report.
type Paper string

const (
	// A4 is 210 mm × 297 mm (ISO 216), the default.
	A4 Paper = "a4"
	// Letter is 8.5 in × 11 in (215.9 mm × 279.4 mm).
	Letter Paper = "letter"
)

// ParsePaper reads a paper name, case-insensitively: "a4" or "letter"; an
// empty string is A4.
func ParsePaper(s string) (Paper, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "a4":
		return A4, nil
	case "letter":
		return Letter, nil
	}
	return "", fmt.Errorf("paper must be a4 or letter (got %q)", s)
}

// FileName is a safe download name for the design's export in format f:
// the design name reduced to letters, digits, '-' and '_', or "capbank"
// when nothing is left, plus the suffix and the extension.
func FileName(design, suffix string, f Format) string {
	var b strings.Builder
	dash := false
	for _, r := range strings.ToLower(design) {
		ok := r >= 'a' && r <= 'z' || r >= '0' && r <= '9' || r == '_'
		switch {
		case ok:
			b.WriteRune(r)
			dash = false
		case !dash && b.Len() > 0:
			b.WriteByte('-')
			dash = true
		}
		if b.Len() >= 60 {
			break
		}
	}
	name := strings.Trim(b.String(), "-")
	if name == "" {
		name = "capbank"
	}
	if suffix != "" {
		name += "-" + suffix
	}
	return name + f.Ext
}
