// Package static holds the workbench's browser code, ES modules that run
// without a build step, and its style sheet, embedded in the binary.
//
//   - app.js: the page's entry point; connects to the run's websocket,
//     wires the controls (the data-role hooks) and the keyboard.
//   - protocol.js: decodes the binary geometry and field frames.
//   - fieldview.js: draws a field on the grid's polygons with pan and zoom.
//   - seriesplot.js: the live plot of invariants with change markers.
//   - colour.js: the colour maps and the colour bar.
//   - format.js: numbers and times for people.
package static

import "embed"

// Files are served under /static/.
//
//go:embed *.js *.css
var Files embed.FS
