package remap

import (
	"fmt"
	"math"

	"gyrebench/sim/internal/r3"
	"gyrebench/sim/mesh"
)

// radiusTol is the relative tolerance on the radii of two sphere meshes.
// Unlike the planar domain sizes, a radius is never the result of
// arithmetic that differs between meshes, so any difference is a real one;
// it would show as a mass change of twice its size.
const radiusTol = 1e-12

// insideTol is how far (a sine of an angle on the unit sphere) a point may
// lie outside the cell found for it before the search counts as having
// failed: round-off for a point on a cell boundary.
const insideTol = 1e-12

// vec3 is a point or direction in R³; on the unit sphere for positions.
type vec3 = r3.Vec

// sphPolys holds the cells of a sphere mesh as geodesic polygons on the
// unit sphere, in the cell CSR layout of the mesh: corner k of cell i
// (k in CellEdgeStart[i]:CellEdgeStart[i+1]) is vertex CellVertices[k], and
// side k, the great-circle arc from corner k−1 to corner k, carries edge
// CellEdges[k]. plane[k] is the unit normal of that great circle, pointing
// into the cell: the cell is the set of unit p with plane[k]·p ≥ 0 for all
// its k.
type sphPolys struct {
	m      *mesh.Mesh
	start  []int32
	centre []vec3
	corner []vec3
	plane  []vec3
	reach  []float64 // largest chord from the centre to a corner
	area   []float64 // A_i, m²
}

func newSphPolys(m *mesh.Mesh) (*sphPolys, error) {
	nc := m.NumCells
	inv := 1 / m.Surface.Radius
	p := &sphPolys{
		m: m, start: m.CellEdgeStart,
		centre: make([]vec3, nc),
		corner: make([]vec3, len(m.CellVertices)),
		plane:  make([]vec3, len(m.CellVertices)),
		reach:  make([]float64, nc),
		area:   m.CellArea,
	}
	for i := 0; i < nc; i++ {
		c := vec3{m.CellX[i] * inv, m.CellY[i] * inv, m.CellZ[i] * inv}.Unit()
		p.centre[i] = c
		lo, hi := m.EdgesOfCell(i)
		for k := lo; k < hi; k++ {
			v := m.CellVertices[k]
			p.corner[k] = vec3{m.VertexX[v] * inv, m.VertexY[v] * inv, m.VertexZ[v] * inv}.Unit()
			p.reach[i] = max(p.reach[i], p.corner[k].Sub(c).Norm())
		}
		for k := lo; k < hi; k++ {
			a, b := p.corner[prev(k, lo, hi)], p.corner[k]
			n := a.Cross(b.Sub(a)) // a × b, from the difference
			if !(n.Dot(c) > 0) {
				return nil, fmt.Errorf("remap: cell %d of %s n=%d is not a convex polygon listed anticlockwise about its centre", i, m.Kind, m.N)
			}
			p.plane[k] = n.Unit()
		}
	}
	return p, nil
}

func prev(k, lo, hi int) int {
	if k == lo {
		return hi - 1
	}
	return k - 1
}

// across returns the cell on the other side of side k of cell i.
func (p *sphPolys) across(i int32, k int) int32 {
	e := p.m.CellEdges[k]
	if c := p.m.EdgeCells[2*e]; c != i {
		return c
	}
	return p.m.EdgeCells[2*e+1]
}

// depth returns how far the unit vector x lies inside cell i: the smallest
// sine of its angular distance to the great circles of the sides, negative
// outside, and the side that gives it.
func (p *sphPolys) depth(i int32, x vec3) (float64, int) {
	lo, hi := p.m.EdgesOfCell(int(i))
	d, side := math.Inf(1), lo
	for k := lo; k < hi; k++ {
		if s := p.plane[k].Dot(x); s < d {
			d, side = s, k
		}
	}
	return d, side
}

// locate returns the cell that contains the unit vector x, searching from
// cell from, and the number of cells it stepped through. On a Voronoi mesh
// the walk towards ever nearer generators (a strictly increasing x·c)
// ends at the nearest generator, whose cell contains x: on the Delaunay
// graph a generator nearer to x than all its neighbours is the nearest of
// all. For a mesh that is not quite Voronoi the walk goes on across the
// side x is farthest outside of, and as a last resort every cell is tried,
// so the answer is always the cell that x is deepest in.
func (p *sphPolys) locate(x vec3, from int32) (int32, int) {
	i, best, steps := from, x.Dot(p.centre[from]), 0
	for {
		next := int32(-1)
		lo, hi := p.m.EdgesOfCell(int(i))
		for k := lo; k < hi; k++ {
			nb := p.across(i, k)
			if d := x.Dot(p.centre[nb]); d > best {
				best, next = d, nb
			}
		}
		if next < 0 {
			break
		}
		i = next
		steps++
	}
	for range p.m.NumCells {
		d, side := p.depth(i, x)
		if d >= -insideTol {
			return i, steps
		}
		i = p.across(i, side)
		steps++
	}
	bestD := math.Inf(-1)
	for c := range int32(p.m.NumCells) {
		if d, _ := p.depth(c, x); d > bestD {
			i, bestD = c, d
		}
	}
	return i, steps + p.m.NumCells
}

// sphClip holds the buffers of the spherical polygon clipper.
type sphClip struct{ a, b []vec3 }

// overlap returns the area on the unit sphere of the intersection of the
// geodesic polygon with corners pc (unit vectors, anticlockwise) and the
// convex cell with inward side normals planes, and the number of corners
// of the intersection (0 when it is empty).
//
// This is Sutherland–Hodgman clipping in the gnomonic projection centred
// anywhere inside both polygons, written in homogeneous coordinates: the
// gnomonic projection maps great circles to straight lines, so its
// half-planes are the half-spaces planes[k]·p ≥ 0 of R³, which do not
// depend on the length of p. The point where the side a→b crosses a
// clipping circle is a + t(b − a), t = d_a/(d_a − d_b), which lies in the
// plane of a and b, so once normalised it is exactly the crossing of the
// two great circles. Both polygons must lie in one open hemisphere, which
// holds for any two overlapping cells of an icosahedral mesh of level ≥ 0
// (the largest, level-0 pentagons reach 37.4° from their centre).
func (s *sphClip) overlap(pc []vec3, planes []vec3) (float64, int) {
	in := append(s.a[:0], pc...)
	out := s.b[:0]
	for _, n := range planes {
		if len(in) == 0 {
			break
		}
		out = out[:0]
		pv := in[len(in)-1]
		dp := n.Dot(pv)
		for _, cv := range in {
			dc := n.Dot(cv)
			if dc >= 0 {
				if dp < 0 { // entering
					out = append(out, pv.Add(cv.Sub(pv).Scale(dp/(dp-dc))).Unit())
				}
				out = append(out, cv)
			} else if dp >= 0 { // leaving
				out = append(out, pv.Add(cv.Sub(pv).Scale(dp/(dp-dc))).Unit())
			}
			pv, dp = cv, dc
		}
		in, out = out, in
	}
	s.a, s.b = in, out
	a := 0.0
	for k := 2; k < len(in); k++ {
		a += r3.TriArea(in[0], in[k-1], in[k])
	}
	return a, len(in)
}

// newSphere builds the remap between two sphere meshes of one radius.
func newSphere(src, dst *mesh.Mesh) (*Remapper, error) {
	if math.Abs(src.Surface.Radius-dst.Surface.Radius) > radiusTol*math.Max(src.Surface.Radius, dst.Surface.Radius) {
		return nil, fmt.Errorf("remap: the source %s n=%d is a sphere of radius %.12g m but the destination %s n=%d one of radius %.12g m; "+
			"a remap needs the same sphere (physics.radius)", src.Kind, src.N, src.Surface.Radius, dst.Kind, dst.N, dst.Surface.Radius)
	}
	for _, m := range []*mesh.Mesh{src, dst} {
		if err := checkSphereMesh(m); err != nil {
			return nil, err
		}
	}
	r := &Remapper{
		srcCells: src.NumCells, srcEdges: src.NumEdges,
		dstCells: dst.NumCells, dstEdges: dst.NumEdges,
	}
	sp, err := newSphPolys(src)
	if err != nil {
		return nil, err
	}
	dp, err := newSphPolys(dst)
	if err != nil {
		return nil, err
	}
	host, err := r.sphHosts(sp, dp)
	if err != nil {
		return nil, err
	}
	if err := r.sphCellWeights(sp, dp, host); err != nil {
		return nil, err
	}
	if sameMesh(src, dst) {
		return r, nil // identity on edges
	}
	if err := r.sphEdgeWeights(sp, dst, host); err != nil {
		return nil, err
	}
	return r, nil
}

// checkSphereMesh reports a sphere mesh whose arrays do not match its
// counts, so that a malformed mesh gets an error rather than a panic.
func checkSphereMesh(m *mesh.Mesh) error {
	nc, ne, nv := m.NumCells, m.NumEdges, m.NumVertices
	ok := nc > 0 && ne > 0 && nv > 0 && m.Surface.Radius > 0 &&
		len(m.CellEdgeStart) == nc+1 && len(m.EdgeCells) == 2*ne && len(m.CellArea) == nc &&
		len(m.CellX) == nc && len(m.CellY) == nc && len(m.CellZ) == nc &&
		len(m.VertexX) == nv && len(m.VertexY) == nv && len(m.VertexZ) == nv &&
		len(m.EdgeX) == ne && len(m.EdgeY) == ne && len(m.EdgeZ) == ne &&
		len(m.NormalX) == ne && len(m.NormalY) == ne && len(m.NormalZ) == ne
	if ok {
		n := int(m.CellEdgeStart[nc])
		ok = len(m.CellEdges) == n && len(m.CellVertices) == n
	}
	if !ok {
		return fmt.Errorf("remap: the %s n=%d sphere mesh (%d cells, %d edges, %d vertices, radius %g m) is incomplete: its arrays do not match its counts",
			m.Kind, m.N, nc, ne, nv, m.Surface.Radius)
	}
	return nil
}

// sphHosts returns, for every new cell, the old cell that contains its
// centre. The new cells are visited breadth first, so that each search
// starts from the host of a neighbour, a step or two away: O(N) in all.
func (r *Remapper) sphHosts(sp, dp *sphPolys) ([]int32, error) {
	nd := dp.m.NumCells
	host := make([]int32, nd)
	for j := range host {
		host[j] = -1
	}
	queue := make([]int32, 1, nd)
	host[0], _ = sp.locate(dp.centre[0], 0)
	for q := 0; q < len(queue); q++ {
		j := queue[q]
		lo, hi := dp.m.EdgesOfCell(int(j))
		for k := lo; k < hi; k++ {
			nb := dp.across(j, k)
			if host[nb] >= 0 {
				continue
			}
			var steps int
			host[nb], steps = sp.locate(dp.centre[nb], host[j])
			r.walked += steps
			queue = append(queue, nb)
		}
	}
	if len(queue) != nd {
		return nil, fmt.Errorf("remap: the cells of %s n=%d are not connected (%d of %d reached)", dp.m.Kind, dp.m.N, len(queue), nd)
	}
	return host, nil
}

// sphCellWeights fills the conservative cell map. The old cells that meet
// new cell j are found by a flood fill from the host of its centre through
// old neighbours, going on only from cells that meet it: the pieces
// P_i ∩ Q_j tile Q_j and two pieces that share a side come from old cells
// that share an edge, so the fill reaches every piece.
//
// The pieces are polygons of the cell corners. The mesh's areas are sums
// of kites through the edge points, which lie off the great circles through
// the corners by round-off amplified as ε/L (L the edge length in radians:
// the corners are circumcentres of generators that are unit vectors only
// to ε), so Σ_j |P_i ∩ Q_j| and A_i differ by about ε/L² relative: 2e-12
// at level 6, 8e-12 at level 7 (measured). The pieces of each old cell are
// scaled by A_i / Σ_j |P_i ∩ Q_j| to make the mass exact.
func (r *Remapper) sphCellWeights(sp, dp *sphPolys, host []int32) error {
	src, dst := sp.m, dp.m
	nd := dst.NumCells
	r2 := dst.Surface.Radius * dst.Surface.Radius
	stamp, srcCover := r.startCells(src.NumCells, nd)
	var queue []int32
	var sc sphClip
	for j := 0; j < nd; j++ {
		dlo, dhi := dst.EdgesOfCell(j)
		planes := dp.plane[dlo:dhi]
		cj, reach := dp.centre[j], dp.reach[j]
		queue = append(queue[:0], host[j])
		stamp[host[j]] = int32(j)
		cover := 0.0
		for q := 0; q < len(queue); q++ {
			i := queue[q]
			if sp.centre[i].Sub(cj).Norm() > sp.reach[i]+reach {
				continue // no common point: the chords obey the triangle inequality
			}
			r.clipped++
			lo, hi := src.EdgesOfCell(int(i))
			a, n := sc.overlap(sp.corner[lo:hi], planes)
			if n == 0 {
				continue
			}
			if a > 0 {
				cover += r.addPiece(i, a*r2, srcCover)
			}
			for k := lo; k < hi; k++ {
				if nb := sp.across(i, k); stamp[nb] != int32(j) {
					stamp[nb] = int32(j)
					queue = append(queue, nb)
				}
			}
		}
		if err := r.closeCell(j, cover, dp.area[j], src, dst, "sphere"); err != nil {
			return err
		}
	}
	if err := checkSourceCover(srcCover, sp.area, src, dst, "sphere"); err != nil {
		return err
	}
	for i, c := range srcCover {
		srcCover[i] = sp.area[i] / c
	}
	// The pieces of old cell i now sum to the mesh's A_i exactly, so that
	// Σ_j A_j h_j = Σ_i A_i h_i holds to summation round-off for any h.
	for k, i := range r.cellFrom {
		r.cellW[k] *= srcCover[i]
	}
	return nil
}

// sphFrame is the local frame of an old cell for the velocity fit: its
// centre c, a tangent basis e1, e2 at c and 1/s with s = √A_i / a, the
// cell's size in radians.
type sphFrame struct {
	c, e1, e2 vec3
	inv       float64
}

// row returns φ(x, n), the normal component along n at the unit vector x
// of the six fields of the fit (see sphEdgeWeights).
func (f *sphFrame) row(x, n vec3) [6]float64 {
	w := x.Cross(n) // n·(Ω × x) = Ω·(x × n)
	ne1, ne2 := n.Dot(f.e1), n.Dot(f.e2)
	xe1, xe2 := x.Dot(f.e1), x.Dot(f.e2)
	return [6]float64{
		w.Dot(f.e1), w.Dot(f.e2), w.Dot(f.c) * f.inv,
		n.Dot(f.c) * f.inv,
		(ne1*xe1 - ne2*xe2) * f.inv, (ne1*xe2 + ne2*xe1) * f.inv,
	}
}

// sphEdgeWeights fills the velocity map. For each old cell i the tangent
// field
//
//	v(x) = Ω × x + P(x) [γ c + σ1 (e1 e1ᵀ − e2 e2ᵀ) x + σ2 (e1 e2ᵀ + e2 e1ᵀ) x],
//
// with P(x) = I − x xᵀ the projection on the tangent plane at x, is fitted
// by least squares to the normal components u_e = v(x_e)·n_e of the stencil
// edges (those of the cell and its neighbours, as on the plane), six
// unknowns: Ω ∈ R³ and γ, σ1, σ2. The three rotations Ω × x are the
// sphere's analogue of the plane's uniform flows plus a local rotation, and
// the gradient fields of c·x and of ½((e1·x)² − (e2·x)²) and
// (e1·x)(e2·x) add convergence and the two strains: near c the six span
// every linear tangent field to first order, so a smooth flow is
// reproduced to second order, as by the planar fit, and every solid-body
// rotation (Williamson case 2 for any α, case 5) is reproduced exactly.
// The fit is evaluated at each new edge point in the old cell containing
// it and projected on the new normal.
func (r *Remapper) sphEdgeWeights(sp *sphPolys, dst *mesh.Mesh, host []int32) error {
	src := sp.m
	ne, nc := dst.NumEdges, src.NumCells
	rs, rd := 1/src.Surface.Radius, 1/dst.Surface.Radius
	st := newStencils(src)
	edgeHost := make([]int32, ne)
	r.edgeStart = make([]int32, ne+1)
	for e := 0; e < ne; e++ {
		x := vec3{dst.EdgeX[e] * rd, dst.EdgeY[e] * rd, dst.EdgeZ[e] * rd}.Unit()
		i, steps := sp.locate(x, host[dst.EdgeCells[2*e]])
		r.walked += steps
		edgeHost[e] = i
	}
	first, byHost := r.startEdges(edgeHost, st, nc)
	var fit edgeFit
	for i := 0; i < nc; i++ {
		if first[i] == first[i+1] {
			continue
		}
		c := sp.centre[i]
		e1, e2 := r3.TangentBasis(c)
		f := sphFrame{c: c, e1: e1, e2: e2, inv: src.Surface.Radius / math.Sqrt(sp.area[i])}
		es := st.edge[st.start[i]:st.start[i+1]]
		fit.reset()
		for _, e := range es {
			x := vec3{src.EdgeX[e] * rs, src.EdgeY[e] * rs, src.EdgeZ[e] * rs}
			n := vec3{src.NormalX[e], src.NormalY[e], src.NormalZ[e]}
			fit.add(f.row(x, n))
		}
		if !fit.factor() {
			return fmt.Errorf("remap: the velocity fit of %s n=%d cell %d is degenerate (%d edges)", src.Kind, src.N, i, len(es))
		}
		for _, e := range byHost[first[i]:first[i+1]] {
			// z = M⁻¹ψ with ψ = φ(x_e', n_e'); the weight of old edge k is φ_k·z.
			x := vec3{dst.EdgeX[e] * rd, dst.EdgeY[e] * rd, dst.EdgeZ[e] * rd}
			n := vec3{dst.NormalX[e], dst.NormalY[e], dst.NormalZ[e]}
			fit.weights(r, e, f.row(x, n), es)
		}
	}
	return nil
}
