// Package display owns the drawing geometry of a mesh: the polygon of
// every cell and of every dual cell in the coordinates a picture is drawn
// in. It computes no physics and paints no pixels. The websocket geometry
// message (package server) and the server-side figures (package
// sim/figure) are both built from it, so the browser and the figures
// project a mesh the same way.
//
// Polygons are kept in flat arrays, in the style of image.RGBA: one slice
// of coordinates and one slice of offsets, no allocation per polygon.
// Three forms are offered:
//
//   - Of: one corner per mesh corner, each corner taken at the periodic
//     image nearest the polygon's centre. On the doubly periodic plane the
//     coordinates are metres and both directions are periodic; on the
//     sphere they are degrees of longitude and latitude and only the
//     longitude is periodic (360°). The offsets are the mesh's own
//     (CellEdgeStart, VertexEdgeStart). This is the layout of the
//     websocket message; the browser closes the polar polygons itself.
//   - Geometry.Map: polygons ready to fill on the map. On the plane they
//     are those of Of. On the sphere (longitude–latitude, equirectangular)
//     a polygon straddling the date line is unwrapped corner by corner so
//     that it stays in one piece (it reaches past ±180°, and a drawer adds
//     the copy shifted by 360°), a polygon winding round a pole becomes a
//     band closed along the pole's latitude, and a corner at a pole (where
//     longitude means nothing) becomes the stretch of the pole's latitude
//     between its neighbours' longitudes. The map polygons tile the
//     rectangle [−180°, 180°] × [−90°, 90°] periodically.
//   - Globe: corners as points on the unit sphere, for an orthographic
//     globe.
//
// Every polygon is anticlockwise: in the drawing plane (x east, y north)
// for Of and Map, seen from outside the sphere for Globe.
//
// Longitude is atan2(y, x) and latitude asin(z/R) with z/R clamped to
// [−1, 1], in degrees.
//
// The package also owns the catalogue of displayable fields (Fields: name,
// label, units, location, colour map) shared by the websocket frames and
// the figures; FieldScratch takes their values from a model's state and
// diagnostics, computing none itself.
package display
