// Package components holds capbank's templ components and their display
// formatting: the design page, the form with a message slot beside every
// field, the results (headline, findings, candidates, figures) and the
// charts, drawn by hand as SVG. Numbers are formatted here with SI prefixes
// and significant figures (Quantity, Duration); components never size a
// design and never query a store.
package components
