package components

import (
	"strconv"

	"capbank/sizing"
)

// SeverityLabel is the word shown with a flag, so its grade never rests on
// colour alone.
func SeverityLabel(s sizing.Severity) string {
	switch s {
	case sizing.Danger:
		return "Danger"
	case sizing.Warning:
		return "Warning"
	}
	return "Note"
}

// FlagCounts summarises flags for a line of text: "1 danger, 2 warnings".
func FlagCounts(flags []sizing.Flag) string {
	var d, w, n int
	for _, f := range flags {
		switch f.Severity {
		case sizing.Danger:
			d++
		case sizing.Warning:
			w++
		default:
			n++
		}
	}
	var parts []string
	add := func(k int, one, many string) {
		if k == 1 {
			parts = append(parts, "1 "+one)
		} else if k > 1 {
			parts = append(parts, strconv.Itoa(k)+" "+many)
		}
	}
	add(d, "danger", "dangers")
	add(w, "warning", "warnings")
	add(n, "note", "notes")
	if len(parts) == 0 {
		return "no findings"
	}
	s := parts[0]
	for _, p := range parts[1:] {
		s += ", " + p
	}
	return s
}

func itoa(i int) string { return strconv.Itoa(i) }
