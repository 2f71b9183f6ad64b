// Package static holds the files capbank's web server serves as they are:
// the stylesheet, the vendored htmx file with its licence, and the icon.
package static

import "embed"

// Files are the static files, at their names in this folder.
//
//go:embed capbank.css htmx.min.js htmx.LICENSE icon.svg
var Files embed.FS

// HTMXVersion is the version of the vendored htmx.min.js (see README.md).
const HTMXVersion = "2.0.11"
