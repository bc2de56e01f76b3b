// Package figure draws a field of a run as a figure for slides — the
// field on the mesh's own polygons, a colour bar with units, axes and a
// title with the run's choices and time — as PNG or SVG, on the server, so
// that it does not depend on a browser.
//
// Face fields (one value per cell, such as depth) fill the cells; node
// fields (one value per vertex, such as vorticity) fill the dual cells,
// the polygons joining the centres of the cells around each vertex. The
// polygons are package display's map polygons: on the doubly periodic
// plane every polygon is unwrapped round its own centre, on the sphere the
// map is the longitude–latitude (equirectangular) projection with the
// polygons unwrapped across the date line and the cells round a pole
// closed into bands. A polygon that crosses the edge of the domain is
// drawn again, shifted by a period, so the map is covered exactly.
//
// Colour maps are this package's own: SequentialMap (navy to pale sand,
// lightness rising) for positive fields over [min, max], and DivergingMap
// (blue through a warm white to brick) for signed fields, centred on zero.
// Both are interpolated in the Oklab space.
//
// The PNG is painted without anti-aliasing inside the map (each pixel
// takes the colour of the polygon holding its centre), so a cell's pixels
// carry exactly its colour; text is drawn with gonum/plot's image canvas
// and its Liberation Sans face. The SVG holds one <polygon> per cell (or
// dual cell) and <use> elements for the periodic copies.
//
//	var buf bytes.Buffer
//	err := figure.Render(&buf, "png", model.Mesh(), model.Depth(), figure.Face, figure.Options{
//		Title: figure.Title(model.Config(), model.Time()), Label: "fluid depth h", Units: "m",
//		Width: 1600, Height: 900,
//	})
package figure
