package display

import (
	"errors"
	"math"

	"gyrebench/sim/mesh"
)

// Polygons3 is a set of polygons on the unit sphere in flat arrays:
// polygon i has the corners Start[i] to Start[i+1]−1, and corner k is
// (XYZ[3k], XYZ[3k+1], XYZ[3k+2]).
type Polygons3 struct {
	XYZ   []float64
	Start []int32 // len Len()+1, Start[0] = 0
}

// Len returns the number of polygons.
func (p *Polygons3) Len() int { return len(p.Start) - 1 }

// Corners returns the corner coordinates of polygon i, a subslice of XYZ.
func (p *Polygons3) Corners(i int) []float64 { return p.XYZ[3*p.Start[i] : 3*p.Start[i+1]] }

// Globe returns the cell and dual polygons of a spherical mesh with their
// corners on the unit sphere, for an orthographic view. Edges between
// corners are great-circle arcs.
func Globe(m *mesh.Mesh) (cells, duals Polygons3, err error) {
	if !m.Surface.Sphere {
		return cells, duals, errors.New("display: Globe: the mesh is a plane; a globe needs a spherical mesh")
	}
	cells = unitPolygons(m.VertexX, m.VertexY, m.VertexZ, m.CellEdgeStart, m.CellVertices)
	duals = unitPolygons(m.CellX, m.CellY, m.CellZ, m.VertexEdgeStart, m.VertexCells)
	return cells, duals, nil
}

func unitPolygons(x, y, z []float64, start, ids []int32) Polygons3 {
	p := Polygons3{XYZ: make([]float64, 3*len(ids)), Start: append([]int32(nil), start...)}
	for k, id := range ids {
		a, b, c := x[id], y[id], z[id]
		r := math.Sqrt(a*a + b*b + c*c)
		p.XYZ[3*k], p.XYZ[3*k+1], p.XYZ[3*k+2] = a/r, b/r, c/r
	}
	return p
}
