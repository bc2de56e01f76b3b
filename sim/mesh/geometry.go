package mesh

import (
	"fmt"
	"math"

	"gyrebench/sim/internal/r3"
)

// This file holds the geometry of C-grids whose dual need not be
// orthogonal: the metric and coordinates follow from the topology, the cell
// centres and the vertex positions alone, with the edge point X_e at the
// crossing of the dual and the primal edge (see the package documentation).
// The regular planes and the Voronoi spheres keep their own, older
// arithmetic (midpoints of the dual edges); the tests check that this
// general path reproduces it on them.

// midpointSnap is the largest offset of the crossing point from the
// midpoint of the dual edge that is taken for the rounding of the
// positions, and the crossing then for the midpoint: midpointSnap ulps of
// the coordinates on the plane (metres up to the domain size), and
// midpointSnap·2⁻⁵² radians on the sphere (unit vectors).
const midpointSnap = 8

// planeGeometry fills the metric and the edge coordinates of a doubly
// periodic planar mesh from its topology (complete, vertex arrays
// included), CellX/Y and VertexX/Y. It fails, naming the edge, when a dual
// edge does not cross its primal edge inside both segments, and when a cell
// is not strictly convex.
func (m *Mesh) planeGeometry() error {
	t, g, c := &m.Topology, &m.Metric, &m.Coords
	lx, ly := m.Surface.Lx, m.Surface.Ly
	ne, nc := t.NumEdges, t.NumCells
	ulp := math.Nextafter(max(lx, ly), math.Inf(1)) - max(lx, ly)
	m.allocPlaneEdges()
	for e := 0; e < ne; e++ {
		c0, c1 := t.EdgeCells[2*e], t.EdgeCells[2*e+1]
		v0, v1 := t.EdgeVertices[2*e], t.EdgeVertices[2*e+1]
		dx := wrap(c.CellX[c1]-c.CellX[c0], lx)
		dy := wrap(c.CellY[c1]-c.CellY[c0], ly)
		// The primal edge relative to c0.
		px, py := wrap(c.VertexX[v0]-c.CellX[c0], lx), wrap(c.VertexY[v0]-c.CellY[c0], ly)
		qx, qy := wrap(c.VertexX[v1]-c.VertexX[v0], lx), wrap(c.VertexY[v1]-c.VertexY[v0], ly)
		// The crossing c0 + s d = v0 + u q by Cramer's rule, with s written
		// as ½ + σ about the dual edge's midpoint. An offset |σ d| of a few
		// ulp(L) is the rounding of the stored positions (metres up to the
		// domain size): the crossing is then the midpoint, as the regular
		// grids' own generators compute it.
		hx, hy := dx/2, dy/2
		den := dx*qy - dy*qx
		sigma := ((px-hx)*qy - (py-hy)*qx) / den
		u := (px*dy - py*dx) / den
		if math.Abs(sigma)*math.Max(math.Abs(dx), math.Abs(dy)) <= midpointSnap*ulp {
			sigma = 0
		}
		if !(sigma > -0.5 && sigma < 0.5 && u > 0 && u < 1) {
			return fmt.Errorf("edge %d: the dual edge from cell %d to cell %d crosses the line of its primal edge at %.3g of the primal edge (%.3g of the dual edge), outside the segments", e, c0, c1, u, 0.5+sigma)
		}
		d := math.Hypot(dx, dy)
		g.DualLength[e] = d
		c.NormalX[e], c.NormalY[e] = dx/d, dy/d
		if sigma == 0 {
			c.EdgeX[e] = math.Mod(c.CellX[c0]+hx+lx, lx)
			c.EdgeY[e] = math.Mod(c.CellY[c0]+hy+ly, ly)
		} else {
			c.EdgeX[e] = math.Mod(c.CellX[c0]+(0.5+sigma)*dx+lx, lx)
			c.EdgeY[e] = math.Mod(c.CellY[c0]+(0.5+sigma)*dy+ly, ly)
		}
		g.EdgeLength[e] = math.Hypot(qx, qy)
	}
	rel := func(i int, x, y float64) (float64, float64) {
		return wrap(x-c.CellX[i], lx), wrap(y-c.CellY[i], ly)
	}
	m.cellKites(func(i int, e, v, en int32) float64 {
		px, py := rel(i, c.EdgeX[e], c.EdgeY[e])
		vx, vy := rel(i, c.VertexX[v], c.VertexY[v])
		qx, qy := rel(i, c.EdgeX[en], c.EdgeY[en])
		return (px*vy-py*vx)/2 + (vx*qy-vy*qx)/2
	})
	for i := 0; i < nc; i++ {
		lo, hi := t.EdgesOfCell(i)
		k := hi - lo
		for j := 0; j < k; j++ {
			v := t.CellVertices[lo+j]
			vx, vy := rel(i, c.VertexX[v], c.VertexY[v])
			// Convexity: the corner at v turns left.
			w := t.CellVertices[lo+(j+1)%k]
			u := t.CellVertices[lo+(j+k-1)%k]
			ax, ay := rel(i, c.VertexX[u], c.VertexY[u])
			bx, by := rel(i, c.VertexX[w], c.VertexY[w])
			if (vx-ax)*(by-vy)-(vy-ay)*(bx-vx) <= 0 {
				return fmt.Errorf("cell %d is not convex at vertex %d", i, v)
			}
		}
	}
	m.vertexKites()
	return nil
}

// allocSphereCoords sets the cell centres and vertices of a spherical mesh
// from their unit vectors x and p, scaled by the radius, and allocates the
// per-edge coordinates and metric.
func (m *Mesh) allocSphereCoords(x, p []vec3) {
	c, r := &m.Coords, m.Surface.Radius
	nc, ne, nv := m.NumCells, m.NumEdges, m.NumVertices
	c.CellX, c.CellY, c.CellZ = make([]float64, nc), make([]float64, nc), make([]float64, nc)
	for i, q := range x {
		c.CellX[i], c.CellY[i], c.CellZ[i] = r*q[0], r*q[1], r*q[2]
	}
	c.VertexX, c.VertexY, c.VertexZ = make([]float64, nv), make([]float64, nv), make([]float64, nv)
	for v, q := range p {
		c.VertexX[v], c.VertexY[v], c.VertexZ[v] = r*q[0], r*q[1], r*q[2]
	}
	c.EdgeX, c.EdgeY, c.EdgeZ = make([]float64, ne), make([]float64, ne), make([]float64, ne)
	c.NormalX, c.NormalY, c.NormalZ = make([]float64, ne), make([]float64, ne), make([]float64, ne)
	m.EdgeLength, m.DualLength = make([]float64, ne), make([]float64, ne)
}

// sphereGeometryFrom fills the metric and the coordinates of a spherical mesh
// from its topology (complete, vertex arrays included) and the unit
// vectors of its cell centres x and vertices p. X_e is the crossing of the
// great-circle arcs c0–c1 and v0–v1; n_e is the tangent of the first at
// X_e, towards c1. It fails, naming the edge, when the arcs do not cross
// inside both.
func (m *Mesh) sphereGeometryFrom(x, p []vec3) error {
	t, g, c := &m.Topology, &m.Metric, &m.Coords
	r := m.Surface.Radius
	r2 := r * r
	ne := t.NumEdges
	m.allocSphereCoords(x, p)
	mid := make([]vec3, ne)
	for e := 0; e < ne; e++ {
		a, b := x[t.EdgeCells[2*e]], x[t.EdgeCells[2*e+1]]
		v0, v1 := p[t.EdgeVertices[2*e]], p[t.EdgeVertices[2*e+1]]
		// The midpoint of the arc a–b, made exactly perpendicular to the
		// chord (as on the Voronoi sphere), and the unit tangent there.
		d := b.Sub(a)
		mp := a.Add(b)
		mp = mp.Sub(d.Scale(mp.Dot(d) / d.Dot(d))).Unit()
		n0 := d.Sub(mp.Scale(d.Dot(mp))).Unit()
		// X_e = mp cos θ + n0 sin θ lies on the great circle of v0–v1, of
		// pole pv (from differences, so that short arcs keep full relative
		// precision): tan θ = −(mp·pv)/(n0·pv). |θ| ≤ midpointSnap·2⁻⁵²
		// is rounding, and X_e is then the midpoint, as on the Voronoi
		// sphere.
		pv := v0.Cross(v1.Sub(v0))
		th := math.Atan(-mp.Dot(pv) / n0.Dot(pv))
		if math.Abs(th) <= midpointSnap*0x1p-52 {
			th = 0
		}
		xe := mp
		if th != 0 {
			xe = mp.Scale(math.Cos(th)).Add(n0.Scale(math.Sin(th)))
		}
		// Inside both arcs: |θ| below half the arc a–b, and X_e turned from
		// each end of the primal arc towards the other about its pole.
		if !(math.Abs(th) < arc(a, b)/2 && v0.Cross(xe.Sub(v0)).Dot(pv) > 0 && xe.Cross(v1.Sub(xe)).Dot(pv) > 0) {
			return fmt.Errorf("edge %d: the arc between the centres of cells %d and %d does not cross its primal edge inside both arcs",
				e, t.EdgeCells[2*e], t.EdgeCells[2*e+1])
		}
		mid[e] = xe
		n := d.Sub(xe.Scale(d.Dot(xe))).Unit() // tangent at X_e, towards b
		c.EdgeX[e], c.EdgeY[e], c.EdgeZ[e] = r*xe[0], r*xe[1], r*xe[2]
		c.NormalX[e], c.NormalY[e], c.NormalZ[e] = n[0], n[1], n[2]
		g.DualLength[e] = r * arc(a, b)
		g.EdgeLength[e] = r * arc(v0, v1)
	}
	// Kite (cell i, vertex v between edges e and e′): the spherical
	// quadrilateral centre, X_e, v, X_e′, as two triangles.
	m.cellKites(func(i int, e, v, en int32) float64 {
		return r2 * (r3.TriArea(x[i], mid[e], p[v]) + r3.TriArea(x[i], p[v], mid[en]))
	})
	m.vertexKites()
	return nil
}

// NonOrthogonality returns the largest angle, in radians, between a dual
// edge and the normal of its primal edge at their crossing point: 0 on an
// orthogonal grid.
func (m *Mesh) NonOrthogonality() float64 {
	c := &m.Coords
	worst := 0.0
	for e := 0; e < m.NumEdges; e++ {
		v0, v1 := m.EdgeVertices[2*e], m.EdgeVertices[2*e+1]
		n := vec3{c.NormalX[e], c.NormalY[e], 0}
		var l vec3
		if m.Surface.Sphere {
			n[2] = c.NormalZ[e]
			p0 := vec3{c.VertexX[v0], c.VertexY[v0], c.VertexZ[v0]}.Unit()
			p1 := vec3{c.VertexX[v1], c.VertexY[v1], c.VertexZ[v1]}.Unit()
			xe := vec3{c.EdgeX[e], c.EdgeY[e], c.EdgeZ[e]}.Unit()
			l = p0.Cross(p1.Sub(p0)).Cross(xe) // tangent of the primal arc at X_e
		} else {
			l = vec3{wrap(c.VertexX[v1]-c.VertexX[v0], m.Surface.Lx), wrap(c.VertexY[v1]-c.VertexY[v0], m.Surface.Ly), 0}
		}
		// n · l̂ = sin(deviation).
		worst = max(worst, math.Abs(math.Asin(min(1, math.Abs(n.Dot(l.Unit()))))))
	}
	return worst
}
