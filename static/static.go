// Package static holds the workbench's browser code, ES modules that run
// without a build step, and its style sheet, embedded in the binary.
//
//   - app.js: the run page's entry point; wires the controls (the
//     data-role hooks) and the keyboard.
//   - connection.js: the websocket of a run or a pair: reconnection with
//     back-off, command ids, decoding, and the pair's demultiplexing by
//     side.
//   - controls.js: what both pages do alike with their controls (message
//     line, transport, typed numbers, large type, keyboard).
//   - protocol.js: decodes the binary geometry and field frames.
//   - raster.js: MeshView, drawing a field on a mesh's polygons through a
//     pluggable projection (index raster, pointer, colours), and TiledMap,
//     the projection of flat coordinates with periodic tiles.
//   - fieldview.js: the plane (TiledMap); globe.js: the sphere, as a
//     turnable orthographic globe or a longitude–latitude map;
//     fieldcanvas.js: one canvas that shows whichever the grid needs.
//   - canvas.js: sizing canvases to their boxes.
//   - linearpanel.js, dispersion.js: the predicted stable Δt beside the Δt
//     control, its warning, and the dispersion diagram.
//   - seriesplot.js: the invariants of one run or of a pair against time,
//     with change markers; budgetplot.js: its energy and enstrophy budget
//     panels.
//   - colour.js: the colour maps and the colour bar; its tables come from
//     colourmaps.js, which the server generates from package sim/figure.
//   - theme.js: the palette of what the canvases draw (style.css holds
//     the same values as custom properties).
//   - format.js: numbers and times for people.
//   - timeline.js: saving, loading and replaying recorded timelines.
//   - structurepanel.js, structure.css: the Hodge-star choice and the
//     structure report of the current grid and scheme.
//   - pair.js, compare.css: the lockstep pair page (A, B and A − B, on
//     the sphere as globes that turn together; both runs' invariants on
//     one plot).
//   - sweep.js, sweep.css: the sweep pages (the form, the progress
//     stream, the plots when it ends).
//
// Besides the data-role attributes, every field canvas carries
// data-drawn ("plane", "globe" or "lonlat") and data-camera (the view it
// was last drawn with, as text) for tests.
package static

import "embed"

// Files are served under /static/.
//
//go:embed *.js *.css
var Files embed.FS
