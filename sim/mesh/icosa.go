package mesh

import (
	"fmt"
	"math"

	"gyrebench/sim/internal/r3"
)

// Icosahedral mesh optimisations (Spec.Optimize).
const (
	// OptimizeNone keeps the generators at the vertices of the recursively
	// bisected icosahedron.
	OptimizeNone = "none"
	// OptimizeLloyd moves every generator to the spherical centroid of its
	// Voronoi cell, repeatedly (Lloyd's algorithm), towards a spherical
	// centroidal Voronoi tessellation (Du, Faber & Gunzburger 1999, SIAM
	// Review 41, 637–676; Ringler et al. 2010 run TRiSK on such grids).
	OptimizeLloyd = "lloyd"
)

// Lloyd stops when no generator moves by more than lloydTol times the
// nominal spacing in one sweep, or after lloydMaxIter sweeps. Plain Lloyd
// converges ever more slowly with resolution (the smooth part of the
// displacement relaxes at a rate that shrinks with the cell count), so the
// generators are relaxed level by level: each level starts from the
// bisection of the relaxed coarser one and needs some 20–30 sweeps, where
// relaxing the finest level alone from the bisected icosahedron does not
// reach the tolerance in 100 sweeps at level 5 and beyond (measured).
const (
	lloydTol     = 1e-4
	lloydMaxIter = 100
)

// vec3 is a point or direction in R³.
type vec3 = r3.Vec

func arc(a, b vec3) float64          { return math.Atan2(a.Cross(b).Norm(), a.Dot(b)) }
func circumcentre(a, b, c vec3) vec3 { return b.Sub(a).Cross(c.Sub(a)).Unit() }

// triangulation is a triangulated unit sphere. Edge e joins
// pt[edge[2e]] and pt[edge[2e+1]]; triangle t has corners tri[3t:3t+3]
// anticlockwise seen from outside and edges triE[3t:3t+3] = (corner 0–1,
// 1–2, 2–0).
type triangulation struct {
	pt   []vec3
	edge []int32
	tri  []int32
	triE []int32
}

// icosahedron returns the regular icosahedron with a vertex at each pole
// and five on each of the latitudes ±atan(1/2), the southern ring turned
// by 36° of longitude against the northern one.
func icosahedron() *triangulation {
	tr := &triangulation{}
	lat := math.Atan(0.5)
	tr.pt = append(tr.pt, vec3{0, 0, 1})
	for k := 0; k < 5; k++ {
		lon := 2 * math.Pi * float64(k) / 5
		tr.pt = append(tr.pt, vec3{math.Cos(lat) * math.Cos(lon), math.Cos(lat) * math.Sin(lon), math.Sin(lat)})
	}
	for k := 0; k < 5; k++ {
		lon := 2*math.Pi*float64(k)/5 + math.Pi/5
		tr.pt = append(tr.pt, vec3{math.Cos(lat) * math.Cos(lon), math.Cos(lat) * math.Sin(lon), -math.Sin(lat)})
	}
	tr.pt = append(tr.pt, vec3{0, 0, -1})
	up := func(k int) int32 { return int32(1 + (k+5)%5) }
	lo := func(k int) int32 { return int32(6 + (k+5)%5) }
	for k := 0; k < 5; k++ {
		tr.tri = append(tr.tri,
			0, up(k), up(k+1),
			up(k), lo(k), up(k+1),
			up(k+1), lo(k), lo(k+1),
			11, lo(k+1), lo(k))
	}
	for t := 0; t < len(tr.tri)/3; t++ {
		a, b, c := tr.tri[3*t], tr.tri[3*t+1], tr.tri[3*t+2]
		if r3.Triple(tr.pt[a], tr.pt[b], tr.pt[c]) < 0 {
			tr.tri[3*t+1], tr.tri[3*t+2] = c, b
		}
	}
	// 30 edges: a linear search is fine at this size.
	tr.triE = make([]int32, len(tr.tri))
	for t := 0; t < len(tr.tri)/3; t++ {
		for j := 0; j < 3; j++ {
			a, b := tr.tri[3*t+j], tr.tri[3*t+(j+1)%3]
			e := int32(-1)
			for k := 0; k < len(tr.edge)/2; k++ {
				if tr.edge[2*k] == b && tr.edge[2*k+1] == a {
					e = int32(k)
				}
			}
			if e < 0 {
				e = int32(len(tr.edge) / 2)
				tr.edge = append(tr.edge, a, b)
			}
			tr.triE[3*t+j] = e
		}
	}
	return tr
}

// bisect splits every triangle into four through the edge midpoints,
// projected on the sphere. Indices are assigned arithmetically, with no
// lookup: the midpoint of edge e is point np+e, edge e splits into edges 2e
// (from its first end) and 2e+1, and triangle t gives triangles 4t…4t+3 and
// interior edges 2ne+3t…2ne+3t+2.
func (tr *triangulation) bisect() *triangulation {
	np, ne, nt := len(tr.pt), len(tr.edge)/2, len(tr.tri)/3
	out := &triangulation{
		pt:   make([]vec3, np+ne),
		edge: make([]int32, 2*(2*ne+3*nt)),
		tri:  make([]int32, 0, 12*nt),
		triE: make([]int32, 0, 12*nt),
	}
	copy(out.pt, tr.pt)
	for e := 0; e < ne; e++ {
		p, q := tr.edge[2*e], tr.edge[2*e+1]
		m := int32(np + e)
		out.pt[m] = tr.pt[p].Add(tr.pt[q]).Unit()
		out.edge[4*e], out.edge[4*e+1] = p, m
		out.edge[4*e+2], out.edge[4*e+3] = m, q
	}
	half := func(e, end int32) int32 { // the half of edge e that touches end
		if tr.edge[2*e] == end {
			return 2 * e
		}
		return 2*e + 1
	}
	for t := 0; t < nt; t++ {
		a, b, c := tr.tri[3*t], tr.tri[3*t+1], tr.tri[3*t+2]
		eab, ebc, eca := tr.triE[3*t], tr.triE[3*t+1], tr.triE[3*t+2]
		mab, mbc, mca := int32(np)+eab, int32(np)+ebc, int32(np)+eca
		i0 := int32(2*ne + 3*t) // mab–mbc; i0+1: mbc–mca; i0+2: mca–mab
		out.edge[2*i0], out.edge[2*i0+1] = mab, mbc
		out.edge[2*i0+2], out.edge[2*i0+3] = mbc, mca
		out.edge[2*i0+4], out.edge[2*i0+5] = mca, mab
		out.tri = append(out.tri,
			a, mab, mca,
			mab, b, mbc,
			mca, mbc, c,
			mab, mbc, mca)
		out.triE = append(out.triE,
			half(eab, a), i0+2, half(eca, a),
			half(eab, b), half(ebc, b), i0,
			i0+1, half(ebc, c), half(eca, c),
			i0, i0+1, i0+2)
	}
	return out
}

// reorder renumbers the points and edges of tr so that the cells, edges
// and vertices of its Voronoi dual that are neighbours on the sphere are
// mostly near in memory too: the triangles of the bisection already come
// in a quadtree order (triangle t gives 4t…4t+3), and each point and edge
// takes the place of the first triangle it touches, ties kept in the old
// order. The bisection numbers a level's points by the edge they split,
// inherited edges first and interior ones last, which puts the six
// neighbours of a cell in up to n + 1 ranges of indices far apart; the
// tendency's gathers then miss the cache (see the README's speed section).
func (tr *triangulation) reorder() {
	np, ne, nt := len(tr.pt), len(tr.edge)/2, len(tr.tri)/3
	ptKey := make([]int32, np)
	edgeKey := make([]int32, ne)
	for i := range ptKey {
		ptKey[i] = int32(nt)
	}
	for i := range edgeKey {
		edgeKey[i] = int32(nt)
	}
	for t := nt - 1; t >= 0; t-- {
		for j := 0; j < 3; j++ {
			ptKey[tr.tri[3*t+j]] = int32(t)
			edgeKey[tr.triE[3*t+j]] = int32(t)
		}
	}
	ptNew := rankByKey(ptKey)
	edgeNew := rankByKey(edgeKey)
	pt := make([]vec3, np)
	for p, q := range ptNew {
		pt[q] = tr.pt[p]
	}
	edge := make([]int32, 2*ne)
	for e, f := range edgeNew {
		edge[2*f], edge[2*f+1] = ptNew[tr.edge[2*e]], ptNew[tr.edge[2*e+1]]
	}
	for k := range tr.tri {
		tr.tri[k] = ptNew[tr.tri[k]]
		tr.triE[k] = edgeNew[tr.triE[k]]
	}
	tr.pt, tr.edge = pt, edge
}

// rankByKey returns the new index of each element when the elements are
// put in order of key, equal keys in their old order (a counting sort:
// the keys are triangle indices, below len(key)·4).
func rankByKey(key []int32) []int32 {
	hi := int32(0)
	for _, k := range key {
		hi = max(hi, k+1)
	}
	count := make([]int32, hi+1)
	for _, k := range key {
		count[k+1]++
	}
	for k := int32(1); k <= hi; k++ {
		count[k] += count[k-1]
	}
	rank := make([]int32, len(key))
	for i, k := range key {
		rank[i] = count[k]
		count[k]++
	}
	return rank
}

// newIcosahedral builds the Voronoi dual of the level-n bisected
// icosahedron on the sphere of the given radius.
//
// Cells are the Voronoi regions of the triangulation's points (12
// pentagons, the rest hexagons), vertices are the circumcentres of its
// triangles and edge e is dual to triangulation edge e. On the sphere the
// conventions of the package documentation read with k the outward radial
// unit vector at the point in question:
//
//   - Coords are Cartesian metres on the sphere; the pentagon centres
//     include both poles.
//   - EdgeX/Y/Z is the midpoint of the great-circle arc from c0 to c1. The
//     Voronoi edge lies on the perpendicular bisector of that arc, so this
//     is where the two arcs cross.
//   - NormalX/Y/Z is n_e, the unit vector tangent to the sphere at the edge
//     point along the arc from c0 to c1; t_e = k × n_e points from v0 to v1.
//   - Lengths are great-circle arcs times the radius; cell, vertex and kite
//     areas are exact spherical polygon areas (sums of spherical triangles),
//     so they tile the sphere: Σ A_i = Σ A_v = 4πa² up to rounding.
//
// With optimize = OptimizeLloyd the generators go through Lloyd sweeps at
// every level of the bisection, with the topology held fixed (the bisected
// icosahedron's Delaunay connectivity survives the small moves; the tests
// check it).
func newIcosahedral(n int, radius float64, optimize string) *Mesh {
	tr := bisected(n, optimize)
	m := &Mesh{Kind: Icosahedral, N: n, Surface: Surface{Sphere: true, Radius: radius}, Orthogonal: true}
	m.Topology = voronoiTopology(tr)
	if optimize == OptimizeLloyd {
		lloyd(&m.Topology, tr, tr.pt)
	}
	m.sphereGeometry(tr, tr.pt)
	return m
}

// bisected returns the level-n bisected icosahedron, its generators
// moved by Lloyd sweeps before each bisection with optimize =
// OptimizeLloyd, renumbered for locality (reorder).
func bisected(n int, optimize string) *triangulation {
	tr := icosahedron()
	for l := 0; l < n; l++ {
		if optimize == OptimizeLloyd {
			t := voronoiTopology(tr)
			lloyd(&t, tr, tr.pt)
		}
		tr = tr.bisect()
	}
	tr.reorder()
	return tr
}

// voronoiTopology returns the topology of the Voronoi dual of tr: cell i
// is point i, vertex k is triangle k and edge e is dual to edge e.
func voronoiTopology(tr *triangulation) Topology {
	np, ne, nt := len(tr.pt), len(tr.edge)/2, len(tr.tri)/3
	t := Topology{NumCells: np, NumEdges: ne, NumVertices: nt}

	// Edge e: c0, c1 are its ends; v1 is the triangle on the left of
	// c0 → c1 (there c0 → c1 runs anticlockwise), v0 the one on the right.
	t.EdgeCells = tr.edge
	t.EdgeVertices = make([]int32, 2*ne)
	for k := 0; k < nt; k++ {
		for j := 0; j < 3; j++ {
			e := tr.triE[3*k+j]
			if tr.edge[2*e] == tr.tri[3*k+j] {
				t.EdgeVertices[2*e+1] = int32(k)
			} else {
				t.EdgeVertices[2*e] = int32(k)
			}
		}
	}

	// Cells: walk the edges around each point anticlockwise. Leaving p along
	// edge e, the triangle on the left holds p at corner j with e = its edge
	// j; the next edge anticlockwise is its edge j+2, and that triangle is
	// the vertex between the two.
	first := make([]int32, np)
	t.CellEdgeStart = make([]int32, np+1)
	for e := ne - 1; e >= 0; e-- {
		for s := 0; s < 2; s++ {
			p := tr.edge[2*e+s]
			first[p] = int32(e)
			t.CellEdgeStart[p+1]++
		}
	}
	for i := 0; i < np; i++ {
		t.CellEdgeStart[i+1] += t.CellEdgeStart[i]
	}
	t.CellEdges = make([]int32, 2*ne)
	t.CellEdgeSign = make([]int8, 2*ne)
	t.CellVertices = make([]int32, 2*ne)
	for i := 0; i < np; i++ {
		lo, hi := t.EdgesOfCell(i)
		e := first[i]
		for k := lo; k < hi; k++ {
			var left int32
			if tr.edge[2*e] == int32(i) {
				left = t.EdgeVertices[2*e+1]
				t.CellEdgeSign[k] = 1
			} else {
				left = t.EdgeVertices[2*e]
				t.CellEdgeSign[k] = -1
			}
			j := 0
			for tr.tri[3*left+int32(j)] != int32(i) {
				j++
			}
			t.CellEdges[k] = e
			t.CellVertices[k] = left
			e = tr.triE[3*left+int32((j+2)%3)]
		}
		if e != first[i] {
			panic(fmt.Sprintf("mesh: the edges around point %d do not close", i))
		}
	}
	return t
}

// circumcentres returns the Voronoi vertices of the generators x.
func circumcentres(tr *triangulation, x []vec3, cc []vec3) {
	for k := range cc {
		cc[k] = circumcentre(x[tr.tri[3*k]], x[tr.tri[3*k+1]], x[tr.tri[3*k+2]])
	}
}

// cellCentroid returns the spherical centroid direction of the Voronoi
// polygon with vertices cc[vs[0]], cc[vs[1]], … anticlockwise. The first
// moment of a spherical polygon is ∫ x dA = ½ Σ_k θ_k ν_k, with θ_k the
// arc length of side k and ν_k the unit normal of its great circle
// (v_k × v_{k+1} normalised), by the divergence theorem on the sphere.
func cellCentroid(cc []vec3, vs []int32) vec3 {
	var s vec3
	n := len(vs)
	for k := 0; k < n; k++ {
		s = s.Add(sideMoment(cc[vs[k]], cc[vs[(k+1)%n]]))
	}
	return s.Unit()
}

// sideMoment returns θ ν for the great-circle arc from a to b: twice its
// contribution to the first moment of a polygon it bounds on the left.
func sideMoment(a, b vec3) vec3 {
	c := a.Cross(b)
	s := c.Norm()
	return c.Scale(math.Atan2(s, a.Dot(b)) / s)
}

// lloyd relaxes the generators x in place towards a centroidal Voronoi
// tessellation, holding the topology fixed. Each Voronoi side is shared by
// two cells, which run along it in opposite directions (v0 → v1 for c0),
// so its moment is computed once per edge.
func lloyd(t *Topology, tr *triangulation, x []vec3) {
	cc := make([]vec3, len(tr.tri)/3)
	side := make([]vec3, t.NumEdges)
	spacing := math.Sqrt(4 * math.Pi / float64(len(x)))
	for it := 0; it < lloydMaxIter; it++ {
		circumcentres(tr, x, cc)
		for e := range side {
			side[e] = sideMoment(cc[t.EdgeVertices[2*e]], cc[t.EdgeVertices[2*e+1]])
		}
		move := 0.0
		for i := range x {
			var s vec3
			lo, hi := t.EdgesOfCell(i)
			for k := lo; k < hi; k++ {
				if t.CellEdgeSign[k] > 0 {
					s = s.Add(side[t.CellEdges[k]])
				} else {
					s = s.Sub(side[t.CellEdges[k]])
				}
			}
			c := s.Unit()
			move = max(move, arc(c, x[i]))
			x[i] = c
		}
		if move < lloydTol*spacing {
			return
		}
	}
}

// CentroidOffset returns the largest distance, in metres along the sphere,
// between a cell's generator and the spherical centroid of its Voronoi
// polygon: zero on a centroidal Voronoi tessellation, and a measure of how
// far a spherical mesh is from one. It returns 0 on the plane.
func (m *Mesh) CentroidOffset() float64 {
	if !m.Surface.Sphere {
		return 0
	}
	c := &m.Coords
	r := m.Surface.Radius
	cc := make([]vec3, m.NumVertices)
	for v := range cc {
		cc[v] = vec3{c.VertexX[v], c.VertexY[v], c.VertexZ[v]}.Unit()
	}
	worst := 0.0
	for i := 0; i < m.NumCells; i++ {
		lo, hi := m.EdgesOfCell(i)
		g := vec3{c.CellX[i], c.CellY[i], c.CellZ[i]}.Unit()
		worst = max(worst, arc(cellCentroid(cc, m.CellVertices[lo:hi]), g))
	}
	return worst * r
}

// sphereGeometry fills the metric and coordinates of the Voronoi mesh of
// the generators x (unit vectors) from its topology.
func (m *Mesh) sphereGeometry(tr *triangulation, x []vec3) {
	t, g, c := &m.Topology, &m.Metric, &m.Coords
	r := m.Surface.Radius
	r2 := r * r
	ne, nv := t.NumEdges, t.NumVertices

	cc := make([]vec3, nv)
	circumcentres(tr, x, cc)
	mid := make([]vec3, ne)

	m.allocSphereCoords(x, cc)
	for e := 0; e < ne; e++ {
		p, q := x[t.EdgeCells[2*e]], x[t.EdgeCells[2*e+1]]
		// The midpoint of the c0–c1 arc, made exactly perpendicular to the
		// chord: the generators are unit vectors only to round-off, and
		// without this the edge point drifts off the great circle through
		// the Voronoi corners by ~1e-14, which shows as 1e-12 mismatches
		// between cell areas and their corner polygons.
		d := q.Sub(p)
		mp := p.Add(q)
		mp = mp.Sub(d.Scale(mp.Dot(d) / d.Dot(d))).Unit()
		mid[e] = mp
		n := d.Sub(mp.Scale(d.Dot(mp))).Unit() // tangent at mp, towards q
		c.EdgeX[e], c.EdgeY[e], c.EdgeZ[e] = r*mp[0], r*mp[1], r*mp[2]
		c.NormalX[e], c.NormalY[e], c.NormalZ[e] = n[0], n[1], n[2]
		g.DualLength[e] = r * arc(p, q)
		g.EdgeLength[e] = r * arc(cc[t.EdgeVertices[2*e]], cc[t.EdgeVertices[2*e+1]])
	}

	// Kite (cell i, vertex v between edges e and e′): the spherical
	// quadrilateral centre, mid(e), v, mid(e′), as two triangles.
	m.cellKites(func(i int, e, v, en int32) float64 {
		return r2 * (r3.TriArea(x[i], mid[e], cc[v]) + r3.TriArea(x[i], cc[v], mid[en]))
	})
	// Around a Voronoi vertex the edges are dual to its triangle's edges,
	// whose midpoints are anticlockwise about the circumcentre in the
	// triangle's own order (the kite test catches a centre outside).
	m.finishVertices(nil, func(v int, e int32) float64 {
		j := 0
		for tr.triE[3*v+j] != e {
			j++
		}
		return float64(j)
	})
}
