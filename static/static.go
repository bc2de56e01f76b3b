// Package static holds the workbench's browser code, ES modules that run
// without a build step, and its style sheet, embedded in the binary.
//
//   - app.js: the page's entry point; connects to the run's websocket,
//     wires the controls (the data-role hooks) and the keyboard.
//   - protocol.js: decodes the binary geometry and field frames.
//   - fieldview.js: draws a field on the grid's polygons with pan and zoom.
//   - globe.js: draws a field on the sphere, as a rotatable globe or a
//     longitude–latitude map.
//   - linearpanel.js, dispersion.js: the predicted stable Δt beside the Δt
//     control, its warning, and the dispersion diagram.
//   - seriesplot.js: the live plot of invariants with change markers.
//   - colour.js: the colour maps and the colour bar; its tables come from
//     colourmaps.js, which the server generates from package sim/figure.
//   - theme.js: the palette of what the canvases draw (style.css holds
//     the same values as custom properties).
//   - format.js: numbers and times for people.
//   - timeline.js: saving, loading and replaying recorded timelines.
//   - structurepanel.js, structure.css: the Hodge-star choice and the
//     structure report of the current grid and scheme.
//   - pair.js, pairplot.js, compare.css: the lockstep pair page (A, B and
//     A − B on one view, both runs' invariants on one plot).
//   - sweep.js, sweep.css: the sweep pages (the form, the progress
//     stream, the plots when it ends).
package static

import "embed"

// Files are served under /static/.
//
//go:embed *.js *.css
var Files embed.FS
