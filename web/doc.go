// Package web is capbank's web server: the echo server and its handlers,
// the design page (its form read by web/form), live results for htmx, the
// compute deadline and slots, the JSON API with its OpenAPI
// document, and problemFor, which writes any error as an RFC 9457 problem
// document with the status of its code in the one error table (web/fault).
//
// web decodes and translates; it never judges a design itself. Every rule
// is sizing.Validate's, and every figure comes from sizing.Size. The cell
// library (web/store, with the built-in demo cells), the design form
// (web/form), share links (web/share) and the error table (web/fault) live
// in subpackages; the exports are components/export's.
package web
