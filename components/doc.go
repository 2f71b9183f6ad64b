// Package components holds capbank's templ components: the design page,
// the form with a message slot beside every field, the results (headline,
// findings, candidates, figures) and the charts, drawn by hand as SVG.
// Every number they show is written by the package figures (SI prefixes,
// significant figures, a candidate's figures as labelled rows); components
// never size a design and never query a store.
package components
