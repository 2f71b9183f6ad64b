// Package figures is capbank's one presentation source: it turns what
// sizing reports into text a person reads, and every output (the design
// page, the PDF report, the XLSX Results sheet and capbank size --format
// text) formats its numbers here.
//
// One SI formatter, SI, writes a quantity with the prefix that keeps its
// number between 1 and 1000 and a stated number of significant figures:
//
//	figures.SI(117600, "J", 4)   // "117.6 kJ"
//	figures.SI(0.0028, "Ω", 3)   // "2.8 mΩ"
//	figures.SI(1200, "F", 4)     // "1200 F": capacitance stays in F from 1 F up
//
// Number, Duration, Money, Celsius and Kelvin write the other figures the
// same way, and Candidate lays a candidate bank out as labelled rows
// (label, value, unit, note) in titled groups. A figure a report does not
// have reads "—"; an estimated figure has "≈" before it (Estimated).
//
// Text comes out typeset for a page: a no-break space between number and
// unit and the minus sign U+2212. ASCII turns it into plain text for a
// terminal or a spreadsheet note. Nothing here computes: the package only
// formats what sizing reports.
package figures
