package mesh

import (
	"fmt"
	"math"

	"gyrebench/sim/internal/r3"
)

// MaxCubedN is the largest cubed-sphere resolution: 6n² ≤ MaxCells.
const MaxCubedN = 836

// orthogonalTol is the largest angle (radians) between a dual edge and
// its primal edge's normal that counts as a right angle: rounding.
const orthogonalTol = 1e-12

// cubePanels are the frames (centre c, axes a, b with a × b = c) of the six
// panels of the cube.
var cubePanels = [6][3][3]int{
	{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
	{{-1, 0, 0}, {0, -1, 0}, {0, 0, 1}},
	{{0, 1, 0}, {-1, 0, 0}, {0, 0, 1}},
	{{0, -1, 0}, {1, 0, 0}, {0, 0, 1}},
	{{0, 0, 1}, {1, 0, 0}, {0, 1, 0}},
	{{0, 0, -1}, {0, 1, 0}, {1, 0, 0}},
}

// newCubed builds the equiangular gnomonic cubed sphere (Ronchi, Iacono &
// Paolucci 1996, J. Comput. Phys. 124, 93–114; Rančić, Purser & Mesinger
// 1996, Q. J. R. Meteorol. Soc. 122, 959–982) with n cells along each cube
// edge: 6n² quadrilateral cells, 12n² edges, 6n² + 2 vertices.
//
// On panel (c; a, b) the grid lines are the equiangular coordinates
// α_j = −π/4 + jπ/(2n), j = 0…n, and vertex (j, k) is the unit vector of
// c + tan α_j a + tan α_k b. With I = 2j − n ∈ [−n, n] the cube point is
// (n c + I_j a + I_k b)/n in integers, tan α_j = tan(I_j π/(4n)), and a
// vertex is computed from its integer cube point alone (with
// tan(±π/4) = ±1 exactly), so a point on a panel edge is the same point,
// bit for bit, from both panels, and the points are merged by their
// integer keys.
//
// Cell (p, j, k), index p n² + k n + j, has the corners (j, k), (j+1, k),
// (j+1, k+1), (j, k+1): anticlockwise seen from outside, since a × b = c
// points outwards. Its centre is the normalised mean of its four corners
// (not a circumcentre), so the dual edges are not orthogonal to the primal
// edges for n ≥ 3: by up to 12°, 20°, 25°, 28°, 29° at n = 4, 8, 16, 32,
// 64, approaching the 30° of the cube corners, where three cells meet at
// 120°. Lengths are great-circle arcs and areas exact spherical polygon
// areas, so Σ A_i = 4πa²; A_max/A_min grows from 1.20 (n = 4) towards √2.
func newCubed(n int, radius float64) (*Mesh, error) {
	// tanI[I+n] = tan(I π/(4n)), odd in I and ±1 at the panel edges.
	tanI := make([]float64, 2*n+1)
	for I := 1; I < n; I++ {
		t := math.Tan(float64(I) * math.Pi / float64(4*n))
		tanI[n+I], tanI[n-I] = t, -t
	}
	tanI[0], tanI[2*n] = -1, 1

	side := 2*n + 1
	index := make(map[int64]int32, 6*n*n+2)
	nv := 6*n*n + 2
	pts := make([]vec3, 0, nv)
	cellVerts := make([]int32, 0, 4*6*n*n)
	corner := make([]int32, (n+1)*(n+1)) // vertex of corner (j, k) of the current panel
	vertex := func(fr *[3][3]int, j, k int) int32 {
		var q [3]int
		for d := 0; d < 3; d++ {
			q[d] = n*fr[0][d] + (2*j-n)*fr[1][d] + (2*k-n)*fr[2][d]
		}
		key := (int64(q[0]+n)*int64(side)+int64(q[1]+n))*int64(side) + int64(q[2]+n)
		if v, ok := index[key]; ok {
			return v
		}
		v := int32(len(pts))
		index[key] = v
		pts = append(pts, vec3{tanI[q[0]+n], tanI[q[1]+n], tanI[q[2]+n]}.Unit())
		return v
	}
	for p := range cubePanels {
		fr := &cubePanels[p]
		for k := 0; k <= n; k++ {
			for j := 0; j <= n; j++ {
				corner[k*(n+1)+j] = vertex(fr, j, k)
			}
		}
		for k := 0; k < n; k++ {
			for j := 0; j < n; j++ {
				c := k*(n+1) + j
				cellVerts = append(cellVerts, corner[c], corner[c+1], corner[c+n+2], corner[c+n+1])
			}
		}
	}
	if len(pts) != nv {
		return nil, fmt.Errorf("mesh: cubed sphere n = %d has %d vertices, want %d", n, len(pts), nv)
	}

	m := &Mesh{Kind: Cubed, N: n, Surface: Surface{Sphere: true, Radius: radius}}
	t := &m.Topology
	vertexEdges := polygonTopology(t, nv, 4, cellVerts)
	x := make([]vec3, t.NumCells)
	for i := range x {
		vs := t.CellVertices[4*i : 4*i+4]
		x[i] = pts[vs[0]].Add(pts[vs[1]]).Add(pts[vs[2]]).Add(pts[vs[3]]).Unit()
	}
	// Order the edges about each vertex by the direction of the far
	// vertex in the tangent plane.
	basis := make([][2]vec3, nv)
	for v := range basis {
		basis[v][0], basis[v][1] = r3.TangentBasis(pts[v])
	}
	m.sortVertexEdges(vertexEdges, func(v int, e int32) float64 {
		w := t.EdgeVertices[2*e]
		if int(w) == v {
			w = t.EdgeVertices[2*e+1]
		}
		d := pts[w].Sub(pts[v])
		return math.Atan2(d.Dot(basis[v][1]), d.Dot(basis[v][0]))
	})
	if err := m.sphereGeometryFrom(x, pts); err != nil {
		return nil, fmt.Errorf("mesh: cubed sphere n = %d: %w", n, err)
	}
	// Only n = 2 is orthogonal: every edge lies on a mirror plane of the
	// cube, and the centres are mirror images across it.
	m.Orthogonal = m.NonOrthogonality() <= orthogonalTol
	return m, nil
}
