// Package web is capbank's web server: the echo server and its handlers,
// the design form (its fields are the design file's JSON paths, its numbers
// take SI prefixes), live results for htmx, the JSON API with its OpenAPI
// document, and the one table that maps errors to HTTP status and RFC 9457
// problem documents (problemFor).
//
// web decodes and translates; it never judges a design itself. Every rule
// is sizing.Validate's, and every figure comes from sizing.Size. The cell
// library (web/store) and share links (web/share) live in subpackages, the
// built-in demo cells in web/democells; the exports are components/export's.
package web
