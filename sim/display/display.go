package display

import (
	"math"

	"gyrebench/sim/mesh"
)

// Polygons is a set of polygons in flat arrays. Polygon i has the corners
// Start[i] to Start[i+1]−1; corner k is (XY[2k], XY[2k+1]). Centre holds
// the drawing centre of each polygon, x and y interleaved: the point its
// corners were unwrapped around.
type Polygons struct {
	XY     []float64
	Start  []int32 // len Len()+1, Start[0] = 0
	Centre []float64
}

// Len returns the number of polygons.
func (p *Polygons) Len() int { return len(p.Start) - 1 }

// Corners returns the interleaved corner coordinates of polygon i, a
// subslice of XY.
func (p *Polygons) Corners(i int) []float64 { return p.XY[2*p.Start[i] : 2*p.Start[i+1]] }

// Geometry is the drawing geometry of one mesh.
type Geometry struct {
	// Sphere says whether the coordinates are longitude and latitude in
	// degrees (true) or metres on the plane.
	Sphere bool
	// PeriodX and PeriodY are the periods of the drawing plane: Lx and Ly
	// on the plane, 360 and 0 (none) on the sphere.
	PeriodX, PeriodY float64
	// Cells has one polygon per cell (its vertices), Duals one per vertex
	// (the centres of the cells around it), each in the mesh's
	// anticlockwise order.
	Cells, Duals Polygons
}

// Of returns the drawing geometry of m, every corner at its periodic image
// nearest the centre of its polygon.
func Of(m *mesh.Mesh) *Geometry {
	g := &Geometry{Sphere: m.Surface.Sphere}
	if g.Sphere {
		g.PeriodX = 360
	} else {
		g.PeriodX, g.PeriodY = m.Surface.Lx, m.Surface.Ly
	}
	p := project{m: m}
	g.Cells = g.unwrapped(p, m.CellX, m.CellY, m.CellZ, m.VertexX, m.VertexY, m.VertexZ, m.CellEdgeStart, m.CellVertices)
	g.Duals = g.unwrapped(p, m.VertexX, m.VertexY, m.VertexZ, m.CellX, m.CellY, m.CellZ, m.VertexEdgeStart, m.VertexCells)
	return g
}

// unwrapped builds the polygons whose centres are (cx, cy, cz)[i] and
// whose corners are (x, y, z)[ids[start[i]:start[i+1]]].
func (g *Geometry) unwrapped(p project, cx, cy, cz, x, y, z []float64, start, ids []int32) Polygons {
	n := len(start) - 1
	out := Polygons{
		XY:     make([]float64, 2*len(ids)),
		Start:  append([]int32(nil), start...),
		Centre: make([]float64, 2*n),
	}
	for i := range n {
		ox, oy := p.point(cx, cy, cz, i)
		out.Centre[2*i], out.Centre[2*i+1] = ox, oy
		for k := start[i]; k < start[i+1]; k++ {
			px, py := p.point(x, y, z, int(ids[k]))
			out.XY[2*k] = unwrap(ox, px, g.PeriodX)
			out.XY[2*k+1] = unwrap(oy, py, g.PeriodY)
		}
	}
	return out
}

// unwrap returns the periodic image of x (period l, 0 for none) nearest c,
// computed as c plus the wrapped difference: the browser's geometry
// message has always been built this way, and it must not change by a bit.
func unwrap(c, x, l float64) float64 {
	d := x - c
	if l != 0 {
		d -= l * math.Round(d/l)
	}
	return c + d
}

// project maps mesh coordinates to drawing coordinates.
type project struct{ m *mesh.Mesh }

func (p project) point(x, y, z []float64, i int) (float64, float64) {
	if !p.m.Surface.Sphere {
		return x[i], y[i]
	}
	return LonLat(x[i], y[i], z[i], p.m.Surface.Radius)
}

// LonLat returns the longitude and latitude in degrees of the point (x, y,
// z) on the sphere of radius r.
func LonLat(x, y, z, r float64) (lon, lat float64) {
	lon = math.Atan2(y, x) * 180 / math.Pi
	lat = math.Asin(math.Max(-1, math.Min(1, z/r))) * 180 / math.Pi
	return lon, lat
}

// CellCentre returns the centre of cell i of m in drawing coordinates
// (metres on the plane, longitude and latitude in degrees on the sphere).
func CellCentre(m *mesh.Mesh, i int) (x, y float64) {
	return project{m}.point(m.CellX, m.CellY, m.CellZ, i)
}

// EdgePoint returns the point of edge i of m (where the dual edge crosses
// it) in drawing coordinates.
func EdgePoint(m *mesh.Mesh, i int) (x, y float64) {
	return project{m}.point(m.EdgeX, m.EdgeY, m.EdgeZ, i)
}
