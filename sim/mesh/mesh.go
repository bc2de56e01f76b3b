// Package mesh holds the C-grid meshes of gyrebench: their topology, their
// metric and the generators that build them.
//
// A Mesh is three separate objects.
//
//   - Topology: cells, edges and vertices and their oriented incidence, in
//     integers only. The discrete exterior derivatives (gradient, curl,
//     divergence) are the signed incidence relations, so curl·grad = 0 and
//     div·curlᵀ = 0 hold exactly, whatever the metric.
//   - Metric: primal and dual edge lengths, cell, vertex and kite areas, and
//     the TRiSK tangential-flux weights (Thuburn, Ringler, Skamarock & Klemp
//     2009, J. Comput. Phys. 228, 8321–8335). Schemes see the topology and the
//     metric, never coordinates.
//   - Coords: positions and edge normal vectors, used by initial conditions,
//     output, drawing and the construction of metric operators (Hodge stars)
//     only.
//
// # Conventions
//
// Edge e joins cells c0 = EdgeCells[2e] and c1 = EdgeCells[2e+1]; its
// unit normal n_e points from c0 to c1. It joins vertices
// v0 = EdgeVertices[2e] and v1 = EdgeVertices[2e+1]; its tangent
// t_e = k × n_e points from v0 to v1. The normal velocity u_e is the
// component along n_e.
//
// # Dual edges that are not orthogonal
//
// The dual edge of e is the segment (on the sphere the great-circle arc)
// from the centre of c0 to the centre of c1; it crosses the primal edge
// v0–v1 at the edge point X_e (EdgeX/Y/Z). On the regular planes and the
// Voronoi spheres it does so at a right angle (Mesh.Orthogonal). On the
// distorted planes and the cubed sphere it does not, and then:
//
//   - n_e (NormalX/Y/Z) is the unit direction of the dual edge at X_e,
//     from c0 to c1, not the normal of the primal edge; the two differ by
//     the angle NonOrthogonality measures. t_e = k × n_e still has a
//     positive component along v1 − v0 but is not parallel to the primal
//     edge.
//   - The prognostic u_e is the velocity component along the dual edge:
//     the circulation along the dual edge per unit dual length, so that
//     u_e d_e is the circulation (Thuburn & Cotter 2012, SIAM J. Sci.
//     Comput. 34(3), B203–B225). The flux across the primal edge follows
//     from it through a Hodge star, which is diagonal (l_e/d_e) only on
//     orthogonal grids.
//   - d_e (DualLength) is |c1 − c0| and l_e (EdgeLength) is |v1 − v0|
//     (great-circle arcs on the sphere), and X_e lies strictly inside both.
//   - The kite of (cell i, vertex v) is the quadrilateral (x_i, X_e, v,
//     X_e′), with e, e′ the two edges of i at v; its area is exact (a
//     planar polygon, or two spherical triangles). Kites tile the cells and
//     the dual cells alike: Σ kites of a cell = CellArea, Σ kites of a
//     vertex = VertexArea.
//
// The generators: quad, hex and tri planes (New), optionally distorted
// smoothly (Spec.Distort) or at random (Spec.Jitter, Spec.Seed), with the
// cell centres at the centroids of the moved cells (distort.go); the
// icosahedral Voronoi sphere (icosa.go); and the equiangular gnomonic cubed
// sphere (cubed.go), with its centres at the normalised means of the cell
// corners. The regular planes and the Voronoi spheres compute their metric
// in their own generators; the distorted planes and the cubed sphere take
// it from the topology and the positions alone (geometry.go), a path that
// reproduces the former on the regular grids (a test checks it).
//
// Everything a Hodge-star construction needs around a vertex v is in
// Coords: the vertex (VertexX/Y/Z), the centres of the cells around it
// (CellX/Y/Z of VertexCells) and the crossing points of its edges
// (EdgeX/Y/Z of VertexEdges), all in the same frame (periodic metres on the
// plane, to be unwrapped about the vertex; Cartesian metres on the sphere,
// to be projected on the tangent plane at the vertex).
//
// Cell i lists its edges anticlockwise in
// CellEdges[CellEdgeStart[i]:CellEdgeStart[i+1]]; CellEdgeSign is +1 where
// n_e points out of the cell. CellVertices, in the same index range, holds
// the vertex that follows each edge anticlockwise (between edge k and edge
// k+1), and CellKiteArea the area of that vertex's kite inside the cell.
//
// Vertex v lists its edges anticlockwise in
// VertexEdges[VertexEdgeStart[v]:VertexEdgeStart[v+1]]; VertexEdgeSign is +1
// where n_e points anticlockwise about v (that is, where v = v1 of the
// edge). VertexCells, in the same range, holds the cell that follows each
// edge anticlockwise, and VertexKiteArea its kite area.
//
// The TRiSK weights W_{e,e'} follow from the kite areas (TRiSKPairs gives
// them explicitly; the schemes evaluate them cell by cell), so that the
// tangential mass flux per unit length is
//
//	F⊥_e = (1/d_e) Σ_{e'} W_{e,e'} l_{e'} F_{e'},
//
// with W antisymmetric (W_{e,e'} = −W_{e',e}), which is what makes the
// Coriolis term energy-neutral.
package mesh

import (
	"fmt"
	"math"
)

// Kind names a grid family.
type Kind string

// Grid families.
const (
	Quad        Kind = "quad"
	Hex         Kind = "hex"
	Tri         Kind = "tri"
	Icosahedral Kind = "icosahedral"
	Cubed       Kind = "cubed"
)

// Kinds lists the grid families, in the order a user meets them.
var Kinds = []Kind{Quad, Hex, Tri, Icosahedral, Cubed}

// OnSphere reports whether the family covers the sphere.
func (k Kind) OnSphere() bool { return k == Icosahedral || k == Cubed }

// Surface describes the manifold a mesh covers.
type Surface struct {
	// Sphere is true for a sphere of radius Radius; otherwise the mesh is a
	// doubly periodic plane of size Lx × Ly.
	Sphere bool
	Lx, Ly float64
	Radius float64
}

// Area returns the total area of the surface.
func (s Surface) Area() float64 {
	if s.Sphere {
		return 4 * math.Pi * s.Radius * s.Radius
	}
	return s.Lx * s.Ly
}

// Topology is the oriented incidence of a mesh, in integers only.
// See the package documentation for the layout.
type Topology struct {
	NumCells, NumEdges, NumVertices int

	EdgeCells    []int32 // 2 per edge: c0, c1
	EdgeVertices []int32 // 2 per edge: v0, v1

	CellEdgeStart []int32 // NumCells+1
	CellEdges     []int32
	CellEdgeSign  []int8
	CellVertices  []int32

	VertexEdgeStart []int32 // NumVertices+1
	VertexEdges     []int32
	VertexEdgeSign  []int8
	VertexCells     []int32
}

// Metric holds lengths, areas and weights: everything a scheme needs that
// is not incidence. See the package documentation for the layout.
type Metric struct {
	CellArea   []float64 // A_i
	VertexArea []float64 // A_v, the dual cell area (sum of its kites)
	EdgeLength []float64 // l_e, primal edge (between vertices)
	DualLength []float64 // d_e, dual edge (between cell centres)

	CellKiteArea   []float64 // parallel to CellVertices
	VertexKiteArea []float64 // parallel to VertexCells

	// Hodge is the general edge Hodge star (ConsistentHodge) on a grid
	// whose dual is not orthogonal; nil where H = diag(l_e/d_e), which the
	// schemes apply without a matrix (EnsureHodge).
	Hodge *Hodge
}

// Coords holds positions, for initial conditions, output and drawing.
// On the plane Z is nil and X, Y are metres in [0, Lx) × [0, Ly). On the
// sphere X, Y, Z are Cartesian metres on the sphere of radius Radius.
type Coords struct {
	CellX, CellY, CellZ       []float64
	VertexX, VertexY, VertexZ []float64
	EdgeX, EdgeY, EdgeZ       []float64 // X_e, where the dual edge crosses the primal edge
	NormalX, NormalY, NormalZ []float64 // unit n_e, along the dual edge at X_e
}

// Mesh is one C-grid: topology, metric and coordinates, and the
// parameters it was built from.
type Mesh struct {
	Kind    Kind
	N       int // cells per side on the plane; refinement level (icosahedral) or cells per cube edge (cubed) on the sphere
	Surface Surface
	// Orthogonal is true when every dual edge crosses its primal edge at a
	// right angle, so that the diagonal Hodge star l_e/d_e is consistent.
	// The generator sets it: true for the regular planes and the Voronoi
	// spheres, false for the distorted planes and the cubed sphere.
	Orthogonal bool
	Topology
	Metric
	Coords
}

// MaxCells bounds the size of a mesh so that a mistyped resolution fails
// with a message instead of exhausting memory. About 700 bytes per cell are
// held by a running model on hexagons (480 of them by the mesh), so this is
// a few GB.
const MaxCells = 4 << 20

// Spec says which mesh to build.
type Spec struct {
	Kind   Kind
	N      int
	Length float64 // plane: side length in x (m)
	// Height is the plane's side in y (m); 0 means the family's natural
	// height (NaturalHeight). A mid-run change of grid family keeps the
	// domain by passing the old mesh's height.
	Height float64
	Radius float64 // sphere radius (m)
	// Optimize: icosahedral only; "" or OptimizeNone, or OptimizeLloyd.
	Optimize string
	// Distort, planes only: a smooth doubly periodic vertex displacement
	// under which neighbouring vertices move relative to each other by up
	// to about Distort × spacing, at every resolution; 0 ≤ Distort <
	// MaxDistort (see distort.go).
	Distort float64
	// Jitter, planes only: the radius of a random vertex displacement as a
	// fraction of the edge length, 0 ≤ Jitter < JitterLimit(Distort),
	// drawn from a PCG generator seeded by Seed.
	Jitter float64
	Seed   uint64
}

// Cells returns the number of cells the spec would build, or an error
// naming the field when the spec is invalid.
func (s Spec) Cells() (int, error) {
	switch s.Kind {
	case Quad, Hex, Tri:
		if err := s.checkDistortion(); err != nil {
			return 0, err
		}
		if s.Optimize != "" && s.Optimize != OptimizeNone {
			return 0, fmt.Errorf("grid.optimize = %q: only the icosahedral grid can be optimised; allowed here: none", s.Optimize)
		}
		if s.N < 4 {
			return 0, fmt.Errorf("grid.n = %d: the %s grid needs n ≥ 4", s.N, s.Kind)
		}
		if s.Kind != Quad && s.N%2 != 0 {
			return 0, fmt.Errorf("grid.n = %d: the %s grid needs an even n (periodic rows)", s.N, s.Kind)
		}
		if s.N > 1<<12 {
			return 0, fmt.Errorf("grid.n = %d: too large, at most %d cells are allowed", s.N, MaxCells)
		}
		if !(s.Length > 0) || math.IsInf(s.Length, 0) {
			return 0, fmt.Errorf("grid.length = %g: must be a positive number of metres", s.Length)
		}
		if s.Height < 0 || math.IsInf(s.Height, 0) || math.IsNaN(s.Height) {
			return 0, fmt.Errorf("grid.height = %g: must be a positive number of metres, or 0 for the natural height", s.Height)
		}
		if h := s.height(); h < 0.5*s.Length || h > 2*s.Length {
			return 0, fmt.Errorf("grid.height = %g: must be within a factor 2 of grid.length = %g", h, s.Length)
		}
		c := s.N * planeRows(s.Kind, s.N, s.Length, s.height())
		if s.Kind == Tri {
			c *= 2
		}
		if c > MaxCells {
			return 0, fmt.Errorf("grid.n = %d: %d cells is too large, at most %d are allowed", s.N, c, MaxCells)
		}
		return c, nil
	case Icosahedral:
		if err := s.planeOnly(); err != nil {
			return 0, err
		}
		if s.N < 0 || s.N > 9 {
			return 0, fmt.Errorf("grid.n = %d: the icosahedral level must be 0 to 9", s.N)
		}
		c := 10<<(2*s.N) + 2
		if c > MaxCells {
			return 0, fmt.Errorf("grid.n = %d: %d cells is too large, at most %d are allowed", s.N, c, MaxCells)
		}
		if !(s.Radius > 0) || math.IsInf(s.Radius, 0) {
			return 0, fmt.Errorf("physics.radius = %g: must be a positive number of metres", s.Radius)
		}
		if s.Optimize != "" && s.Optimize != OptimizeNone && s.Optimize != OptimizeLloyd {
			return 0, fmt.Errorf("grid.optimize = %q: unknown; allowed: none, lloyd", s.Optimize)
		}
		return c, nil
	case Cubed:
		if err := s.planeOnly(); err != nil {
			return 0, err
		}
		if s.Optimize != "" && s.Optimize != OptimizeNone {
			return 0, fmt.Errorf("grid.optimize = %q: only the icosahedral grid can be optimised; allowed here: none", s.Optimize)
		}
		if s.N < 2 || s.N > MaxCubedN {
			return 0, fmt.Errorf("grid.n = %d: the cubed sphere needs 2 ≤ n ≤ %d cells along a cube edge (6n² ≤ %d cells)", s.N, MaxCubedN, MaxCells)
		}
		if !(s.Radius > 0) || math.IsInf(s.Radius, 0) {
			return 0, fmt.Errorf("physics.radius = %g: must be a positive number of metres", s.Radius)
		}
		return 6 * s.N * s.N, nil
	}
	return 0, fmt.Errorf("grid.kind = %q: unknown; allowed: %s", s.Kind, kindList())
}

func kindList() string {
	var b []byte
	for i, k := range Kinds {
		if i > 0 {
			b = append(b, ", "...)
		}
		b = append(b, k...)
	}
	return string(b)
}

// planeOnly refuses the plane's distortion keys on a sphere grid.
func (s Spec) planeOnly() error {
	switch {
	case s.Distort != 0:
		return fmt.Errorf("grid.distort = %g: distortion applies to the planar grids (quad, hex, tri) only; on grid.kind = %q it must be 0", s.Distort, s.Kind)
	case s.Jitter != 0:
		return fmt.Errorf("grid.jitter = %g: jitter applies to the planar grids (quad, hex, tri) only; on grid.kind = %q it must be 0", s.Jitter, s.Kind)
	}
	return nil
}

func (s Spec) height() float64 {
	if s.Height > 0 {
		return s.Height
	}
	return NaturalHeight(s.Kind, s.N, s.Length)
}

// New builds the mesh described by spec.
func New(spec Spec) (*Mesh, error) {
	if _, err := spec.Cells(); err != nil {
		return nil, err
	}
	switch spec.Kind {
	case Quad, Hex, Tri:
		var m *Mesh
		switch spec.Kind {
		case Quad:
			m = newQuad(spec.N, spec.Length, spec.height())
		case Hex:
			m = newHex(spec.N, spec.Length, spec.height())
		default:
			m = newHex(spec.N, spec.Length, spec.height()).Dual(Tri)
		}
		if spec.Distort == 0 && spec.Jitter == 0 {
			return m, nil
		}
		if err := m.distort(spec); err != nil {
			return nil, err
		}
		return m, nil
	case Icosahedral:
		return newIcosahedral(spec.N, spec.Radius, spec.Optimize), nil
	case Cubed:
		return newCubed(spec.N, spec.Radius)
	}
	return nil, fmt.Errorf("grid.kind = %q: unknown; allowed: %s", spec.Kind, kindList())
}

// EdgesOfCell returns the index range of cell i in the cell CSR arrays.
func (t *Topology) EdgesOfCell(i int) (lo, hi int) {
	return int(t.CellEdgeStart[i]), int(t.CellEdgeStart[i+1])
}

// EdgesOfVertex returns the index range of vertex v in the vertex CSR arrays.
func (t *Topology) EdgesOfVertex(v int) (lo, hi int) {
	return int(t.VertexEdgeStart[v]), int(t.VertexEdgeStart[v+1])
}

// MaxCellEdges returns the largest number of edges of any cell.
func (t *Topology) MaxCellEdges() int {
	m := 0
	for i := 0; i < t.NumCells; i++ {
		lo, hi := t.EdgesOfCell(i)
		m = max(m, hi-lo)
	}
	return m
}

// Spacing returns the mean distance between neighbouring cell centres.
func (m *Metric) Spacing() float64 {
	s := 0.0
	for _, d := range m.DualLength {
		s += d
	}
	return s / float64(len(m.DualLength))
}
