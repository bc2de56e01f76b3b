// Package remap moves a shallow-water state [h | u] from one C-grid to
// another of the same surface, for a user who switches grid family (quad,
// hex, tri) or resolution on the plane, or icosahedral level or
// optimisation (none, lloyd) on the sphere, in the middle of a run.
//
// # Cell fields: depth and bottom height
//
// A cell field (the depth h, the bottom height b, any tracer) is remapped
// conservatively (first-order conservative remap):
//
//	h_new_j = (1/A_j) Σ_i |P_i ∩ Q_j| h_i,
//
// where P_i are the old cells, Q_j the new ones and |P_i ∩ Q_j| the exact
// area of their intersection. All cells of the planar meshes are convex,
// so the intersection is found by Sutherland–Hodgman clipping of P_i
// against Q_j, with P_i moved to the periodic image nearest Q_j. Candidate
// pairs come from a uniform bucket grid over the old cells' bounding boxes,
// so building a Remapper costs O(N_old + N_new).
//
// Because the overlaps of an old cell tile it, Σ_j A_j h_new_j = Σ_i A_i h_i
// to round-off: the total mass is kept. Each h_new_j is a convex combination
// of old values, so the remap is monotone: a positive depth stays positive
// and no new extrema appear. It treats h as constant on each old cell, so a
// smooth field is reproduced to first order in the cell size (second order
// only where the overlap geometry happens to be symmetric). Being linear,
// it remaps the free surface h + b exactly as the sum of the remapped h and
// b: a lake at rest stays at rest to round-off.
//
// # Normal velocity
//
// The velocity is interpolated, not remapped conservatively: neither
// momentum, circulation nor kinetic energy is kept exactly, only to the
// order of the interpolation. For each old cell i a linear vector field
// v(x) = a + B (x − x_i) is fitted by least squares to the normal components
// u_e = v(x_e)·n_e on the edges of the cell and of its edge neighbours
// (9 edges on a triangle, 16 on a square, 30 on a hexagon, for 6 unknowns).
// For a new edge e' at point x_e' the old cell that contains x_e' is found
// and u_new_e' = v(x_e')·n_e'. The fit reproduces every uniform and every
// linear flow exactly, so a smooth flow is reproduced to second order
// (the tests assert order ≥ 1 and measure about 2). The map is linear in u
// and stored as sparse weights. It is not a projection: remapping to the
// very same mesh would change u by O(dx²), so for identical meshes the
// velocity is copied instead.
//
// The classic alternative reconstructs one constant vector per cell,
// v_i = (1/A_i) Σ_e l_e (x_e − x_i) n_{e,i} u_e (Perot 2000, J. Comput.
// Phys. 159, 58–89, cited from memory), exact for uniform flow; used as the
// value at the new edge point it is first order only, which is why the
// linear fit is used here.
//
// On the doubly periodic plane a remap needs meshes of the same domain
// Lx × Ly (equal to 1e-9 relative); New returns an error naming both
// domains otherwise. At their natural heights quad meshes are
// square and hex and tri meshes are Lx × Lx·√3/2 whatever n, so hex ↔ tri
// and quad ↔ quad switches of any n work, and a quad ↔ hex/tri switch needs
// both meshes built on one domain. Nothing here assumes regular cells: any
// planar mesh of convex cells listed anticlockwise will do.
//
// # The sphere
//
// Between two sphere meshes of one radius (equal to 1e-12 relative; the
// error names both radii otherwise, and a plane ↔ sphere switch is refused
// naming both surfaces), cells are geodesic polygons, their sides
// great-circle arcs. The depth map is the same formula with |P_i ∩ Q_j| the
// spherical area of the intersection: the gnomonic projection maps great
// circles to straight lines, so the cells are convex polygons in it and
// Sutherland–Hodgman clipping is exact. It is done in homogeneous form,
// clipping the corners, as unit vectors of R³, against the planes of the
// new cell's sides; that needs no projection centre, only that two
// overlapping cells lie in one open hemisphere, true at every icosahedral
// level. The area of a piece is a fan of spherical triangles (Eriksson
// 1990, Math. Mag. 63, 184–187). Candidate pairs come from a flood fill
// from the old cell containing each new centre, and points are located by
// walks between neighbours, each seeded from a neighbour's answer:
// O(N_old + N_new) in all.
//
// Mass is kept to summation round-off for any h. A constant is kept, and
// h stays within its old range, up to the mesh's own round-off in cell
// areas: package mesh sums kites through the edge points, which lie off
// the great circles through the cell corners by about ε/L (L the edge
// length in radians), so its A_i differ from the corner polygons' areas by
// about ε/L² relative, 1e-13 at level 4 and 2e-12 at level 6 (measured).
//
// The velocity fit has the same stencils and six unknowns, for the
// tangent field
//
//	v(x) = Ω × x + P(x) [γ c + σ1 (e1 e1ᵀ − e2 e2ᵀ) x + σ2 (e1 e2ᵀ + e2 e1ᵀ) x],
//
// with Ω ∈ R³, P(x) = I − x xᵀ, c the old cell's centre and e1, e2 a basis
// of its tangent plane: three rotations, a convergence and two strains,
// which near c span every linear tangent field. So every solid-body
// rotation (the wind of Williamson et al. 1992, cases 2 and 5) is
// reproduced to round-off, and a smooth flow to second order (measured
// ≈ 2 in the spacing).
//
// New costs O(N_old + N_new) time and memory; Apply is a sparse
// matrix-vector product. A Remapper is meant to be built once per switch
// (icosahedral level 5 → 6 or 6 → 5: 0.3 to 0.5 s on one core).
package remap

import (
	"fmt"
	"math"

	"gyrebench/sim/mesh"
)

// domainTol is the relative tolerance on Lx and Ly for two meshes to count
// as covering the same domain (hex meshes of different n differ in Ly by
// round-off).
const domainTol = 1e-9

// coverTol bounds the relative mismatch between a cell's area and the sum
// of its overlaps; anything larger means the meshes do not tile the same
// domain and is reported as an error rather than silently losing mass.
const coverTol = 1e-9

// Remapper holds the precomputed weights that map a state on one mesh
// (src) to another (dst). It is read-only after New and may be used by
// several goroutines at once.
type Remapper struct {
	srcCells, srcEdges int
	dstCells, dstEdges int

	// Cell map, CSR over destination cells: h_new[j] =
	// Σ_k cellW[k] h[cellFrom[k]] for k in cellStart[j]:cellStart[j+1],
	// with cellW = |P_i ∩ Q_j| / A_j.
	cellStart []int32
	cellFrom  []int32
	cellW     []float64

	// Edge map, CSR over destination edges; nil edgeStart means identity.
	edgeStart []int32
	edgeFrom  []int32
	edgeW     []float64

	clipped int // (old, new) cell pairs clipped, to check the O(N) search
	walked  int // cells stepped through by the point search on the sphere
}

// New precomputes the remap from src to dst. Both meshes must be planar
// and cover the same periodic domain, or both be sphere meshes of the
// same radius; otherwise the error names both domains or radii.
func New(src, dst *mesh.Mesh) (*Remapper, error) {
	if src == nil || dst == nil {
		return nil, fmt.Errorf("remap: nil mesh")
	}
	s, d := src.Surface, dst.Surface
	if s.Sphere != d.Sphere {
		return nil, fmt.Errorf("remap: the source %s n=%d %s but the destination %s n=%d %s; a remap needs two meshes of the same surface",
			src.Kind, src.N, surfaceWords(s), dst.Kind, dst.N, surfaceWords(d))
	}
	if s.Sphere {
		return newSphere(src, dst)
	}
	if !sameLength(s.Lx, d.Lx) || !sameLength(s.Ly, d.Ly) {
		return nil, fmt.Errorf("remap: the source %s n=%d covers %.10g × %.10g m but the destination %s n=%d covers %.10g × %.10g m; "+
			"a remap needs the same periodic domain (at their natural heights quad meshes are Lx × Lx, hex and tri meshes Lx × Lx·√3/2)",
			src.Kind, src.N, s.Lx, s.Ly, dst.Kind, dst.N, d.Lx, d.Ly)
	}
	r := &Remapper{
		srcCells: src.NumCells, srcEdges: src.NumEdges,
		dstCells: dst.NumCells, dstEdges: dst.NumEdges,
	}
	sp, dp := newPolys(src), newPolys(dst)
	// With cells this small against the domain, at most one periodic image
	// of an old cell can meet a new one: the nearest.
	if lim := math.Min(d.Lx, d.Ly); 2*(sp.rmax+dp.rmax) >= lim {
		return nil, fmt.Errorf("remap: cells of %s n=%d and %s n=%d are too large for the %g × %g m periodic domain",
			src.Kind, src.N, dst.Kind, dst.N, d.Lx, d.Ly)
	}
	grid := newBuckets(src, sp)
	if err := r.cellWeights(src, dst, sp, dp, grid); err != nil {
		return nil, err
	}
	if sameMesh(src, dst) {
		return r, nil // identity on edges
	}
	if err := r.edgeWeights(src, dst, sp, grid); err != nil {
		return nil, err
	}
	return r, nil
}

// Cells remaps a cell field of the source mesh (depth h, bottom height b)
// to the destination mesh: dst[j] = (1/A_j) Σ_i |P_i ∩ Q_j| src[i].
func (r *Remapper) Cells(dst, src []float64) {
	if len(dst) != r.dstCells || len(src) != r.srcCells {
		panic(fmt.Sprintf("remap: Cells needs %d → %d values, got %d → %d", r.srcCells, r.dstCells, len(src), len(dst)))
	}
	sparseApply(dst, src, r.cellStart, r.cellFrom, r.cellW)
}

// Velocity remaps normal velocities on the source edges to normal
// velocities on the destination edges.
func (r *Remapper) Velocity(dst, src []float64) {
	if len(dst) != r.dstEdges || len(src) != r.srcEdges {
		panic(fmt.Sprintf("remap: Velocity needs %d → %d values, got %d → %d", r.srcEdges, r.dstEdges, len(src), len(dst)))
	}
	if r.edgeStart == nil {
		copy(dst, src)
		return
	}
	sparseApply(dst, src, r.edgeStart, r.edgeFrom, r.edgeW)
}

// sparseApply sets dst[j] = Σ_k w[k] src[from[k]] over k in
// [start[j], start[j+1]), in order: a product by a sparse matrix in CSR
// layout.
func sparseApply(dst, src []float64, start, from []int32, w []float64) {
	for j := range dst {
		s := 0.0
		for k := start[j]; k < start[j+1]; k++ {
			s += w[k] * src[from[k]]
		}
		dst[j] = s
	}
}

// Apply remaps a full state vector [h | u] of the source mesh to dst,
// which must hold NumCells+NumEdges values of the destination mesh.
func (r *Remapper) Apply(dst, src []float64) {
	if len(dst) != r.dstCells+r.dstEdges || len(src) != r.srcCells+r.srcEdges {
		panic(fmt.Sprintf("remap: Apply needs %d → %d values, got %d → %d",
			r.srcCells+r.srcEdges, r.dstCells+r.dstEdges, len(src), len(dst)))
	}
	r.Cells(dst[:r.dstCells], src[:r.srcCells])
	r.Velocity(dst[r.dstCells:], src[r.srcCells:])
}

// surfaceWords describes a surface for an error message.
func surfaceWords(s mesh.Surface) string {
	if s.Sphere {
		return fmt.Sprintf("is a sphere of radius %.12g m", s.Radius)
	}
	return fmt.Sprintf("is a %.10g × %.10g m periodic plane", s.Lx, s.Ly)
}

func sameLength(a, b float64) bool {
	return math.Abs(a-b) <= domainTol*math.Max(math.Abs(a), math.Abs(b))
}

// wrap returns the periodic image of d closest to zero.
func wrap(d, l float64) float64 {
	return d - l*math.Round(d/l)
}

// sameMesh reports whether a and b are the same mesh (the generators are
// deterministic, but the coordinates are compared to be sure).
func sameMesh(a, b *mesh.Mesh) bool {
	if a == b {
		return true
	}
	if a.Kind != b.Kind || a.N != b.N || a.Surface != b.Surface ||
		a.NumCells != b.NumCells || a.NumEdges != b.NumEdges {
		return false
	}
	for _, p := range [][2][]float64{{a.EdgeX, b.EdgeX}, {a.EdgeY, b.EdgeY}, {a.EdgeZ, b.EdgeZ},
		{a.NormalX, b.NormalX}, {a.NormalY, b.NormalY}, {a.NormalZ, b.NormalZ}} {
		if len(p[0]) != len(p[1]) {
			return false
		}
		for k := range p[0] {
			if p[0][k] != p[1][k] {
				return false
			}
		}
	}
	return true
}

// polys holds each cell as a polygon, its vertices anticlockwise relative
// to the cell centre (unwrapped to the image nearest the centre).
type polys struct {
	start      []int32
	x, y       []float64
	r          []float64 // distance from the centre to the farthest vertex
	rmax       float64
	x0, x1     []float64 // bounding box relative to the centre
	y0, y1     []float64
	cx, cy     []float64 // centres, absolute
	lx, ly     float64
	area, size []float64 // A_i and √A_i
}

func newPolys(m *mesh.Mesh) *polys {
	lx, ly := m.Surface.Lx, m.Surface.Ly
	nc := m.NumCells
	p := &polys{
		start: m.CellEdgeStart,
		x:     make([]float64, len(m.CellVertices)),
		y:     make([]float64, len(m.CellVertices)),
		r:     make([]float64, nc),
		x0:    make([]float64, nc), x1: make([]float64, nc),
		y0: make([]float64, nc), y1: make([]float64, nc),
		cx: m.CellX, cy: m.CellY, lx: lx, ly: ly,
		area: m.CellArea, size: make([]float64, nc),
	}
	for i := 0; i < nc; i++ {
		lo, hi := m.EdgesOfCell(i)
		x0, x1, y0, y1 := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
		for k := lo; k < hi; k++ {
			v := m.CellVertices[k]
			x := wrap(m.VertexX[v]-m.CellX[i], lx)
			y := wrap(m.VertexY[v]-m.CellY[i], ly)
			p.x[k], p.y[k] = x, y
			x0, x1, y0, y1 = min(x0, x), max(x1, x), min(y0, y), max(y1, y)
			p.r[i] = max(p.r[i], math.Hypot(x, y))
		}
		p.x0[i], p.x1[i], p.y0[i], p.y1[i] = x0, x1, y0, y1
		p.rmax = max(p.rmax, p.r[i])
		p.size[i] = math.Sqrt(m.CellArea[i])
	}
	return p
}

// buckets is a uniform grid over the periodic domain; each bucket lists
// the old cells whose bounding box meets it.
type buckets struct {
	nx, ny int
	wx, wy float64
	start  []int32
	cells  []int32
}

func newBuckets(m *mesh.Mesh, p *polys) *buckets {
	lx, ly := p.lx, p.ly
	w := math.Sqrt(lx * ly / float64(m.NumCells)) // about one cell per bucket
	b := &buckets{nx: max(1, int(math.Round(lx/w))), ny: max(1, int(math.Round(ly/w)))}
	b.wx, b.wy = lx/float64(b.nx), ly/float64(b.ny)
	count := make([]int32, b.nx*b.ny+1)
	each := func(i int, f func(bk int)) {
		b.visit(p.cx[i]+p.x0[i], p.cx[i]+p.x1[i], p.cy[i]+p.y0[i], p.cy[i]+p.y1[i], f)
	}
	for i := 0; i < m.NumCells; i++ {
		each(i, func(bk int) { count[bk+1]++ })
	}
	for k := 1; k < len(count); k++ {
		count[k] += count[k-1]
	}
	b.start = count
	b.cells = make([]int32, count[len(count)-1])
	fill := append([]int32(nil), count[:len(count)-1]...)
	for i := 0; i < m.NumCells; i++ {
		each(i, func(bk int) { b.cells[fill[bk]] = int32(i); fill[bk]++ })
	}
	return b
}

// visit calls f once for each bucket that meets the box [x0,x1]×[y0,y1],
// given in unwrapped coordinates.
func (b *buckets) visit(x0, x1, y0, y1 float64, f func(bk int)) {
	ix0, ix1 := span(x0, x1, b.wx, b.nx)
	iy0, iy1 := span(y0, y1, b.wy, b.ny)
	for iy := iy0; iy <= iy1; iy++ {
		row := ((iy%b.ny + b.ny) % b.ny) * b.nx
		for ix := ix0; ix <= ix1; ix++ {
			f(row + (ix%b.nx+b.nx)%b.nx)
		}
	}
}

// span returns the unwrapped bucket range covering [a, b], at most n wide.
func span(a, b, w float64, n int) (int, int) {
	i0, i1 := int(math.Floor(a/w)), int(math.Floor(b/w))
	if i1-i0+1 > n {
		i1 = i0 + n - 1
	}
	return i0, i1
}

// cellWeights fills the conservative cell map by clipping every candidate
// pair of old and new cells.
func (r *Remapper) cellWeights(src, dst *mesh.Mesh, sp, dp *polys, grid *buckets) error {
	nd := dst.NumCells
	stamp, srcCover := r.startCells(src.NumCells, nd)
	var cand []int32
	var sc scratch
	var qx, qy []float64
	for j := 0; j < nd; j++ {
		lo, hi := int(dp.start[j]), int(dp.start[j+1])
		qx, qy = dp.x[lo:hi], dp.y[lo:hi]
		cxj, cyj := dp.cx[j], dp.cy[j]
		cand = cand[:0]
		grid.visit(cxj+dp.x0[j], cxj+dp.x1[j], cyj+dp.y0[j], cyj+dp.y1[j], func(bk int) {
			for _, i := range grid.cells[grid.start[bk]:grid.start[bk+1]] {
				if stamp[i] != int32(j) {
					stamp[i] = int32(j)
					cand = append(cand, i)
				}
			}
		})
		cover := 0.0
		for _, i := range cand {
			// Old cell i in coordinates centred on new cell j, nearest image.
			ox := wrap(sp.cx[i]-cxj, sp.lx)
			oy := wrap(sp.cy[i]-cyj, sp.ly)
			if math.Hypot(ox, oy) >= sp.r[i]+dp.r[j] ||
				ox+sp.x1[i] <= dp.x0[j] || ox+sp.x0[i] >= dp.x1[j] ||
				oy+sp.y1[i] <= dp.y0[j] || oy+sp.y0[i] >= dp.y1[j] {
				continue
			}
			r.clipped++
			a := sc.overlap(sp.x[sp.start[i]:sp.start[i+1]], sp.y[sp.start[i]:sp.start[i+1]], ox, oy, qx, qy)
			if !(a > 0) {
				continue
			}
			cover += r.addPiece(i, a, srcCover)
		}
		if err := r.closeCell(j, cover, dp.area[j], src, dst, "domain"); err != nil {
			return err
		}
	}
	return checkSourceCover(srcCover, sp.area, src, dst, "domain")
}

// startCells allocates the conservative cell map from ns old cells to nd
// new ones, and returns a stamp per old cell (all −1: visited for no new
// cell yet) and the sum of the pieces of each old cell (zero).
func (r *Remapper) startCells(ns, nd int) (stamp []int32, srcCover []float64) {
	r.cellStart = make([]int32, nd+1)
	r.cellFrom = make([]int32, 0, 2*(ns+nd))
	r.cellW = make([]float64, 0, 2*(ns+nd))
	stamp = make([]int32, ns)
	for i := range stamp {
		stamp[i] = -1
	}
	return stamp, make([]float64, ns)
}

// addPiece adds the piece of area a of old cell i to the new cell being
// built and returns a.
func (r *Remapper) addPiece(i int32, a float64, srcCover []float64) float64 {
	r.cellFrom = append(r.cellFrom, i)
	r.cellW = append(r.cellW, a)
	srcCover[i] += a
	return a
}

// closeCell ends new cell j, whose pieces sum to cover: it checks that
// they cover its area, and turns them into weights (fractions of it).
// surface names what the meshes must both tile, for the message.
func (r *Remapper) closeCell(j int, cover, area float64, src, dst *mesh.Mesh, surface string) error {
	if math.Abs(cover-area) > coverTol*area {
		return fmt.Errorf("remap: old cells cover %.12g of the %.12g m² of new cell %d (%s n=%d → %s n=%d): the meshes do not tile the same %s",
			cover, area, j, src.Kind, src.N, dst.Kind, dst.N, surface)
	}
	inv := 1 / area
	for k := r.cellStart[j]; k < int32(len(r.cellW)); k++ {
		r.cellW[k] *= inv
	}
	r.cellStart[j+1] = int32(len(r.cellW))
	return nil
}

// checkSourceCover checks that the pieces of each old cell, summed in
// srcCover, cover its area.
func checkSourceCover(srcCover, area []float64, src, dst *mesh.Mesh, surface string) error {
	for i, c := range srcCover {
		if math.Abs(c-area[i]) > coverTol*area[i] {
			return fmt.Errorf("remap: new cells cover %.12g of the %.12g m² of old cell %d (%s n=%d → %s n=%d): the meshes do not tile the same %s",
				c, area[i], i, src.Kind, src.N, dst.Kind, dst.N, surface)
		}
	}
	return nil
}

// scratch holds the buffers of the polygon clipper.
type scratch struct{ ax, ay, bx, by []float64 }

// overlap returns the area of the intersection of the convex polygon
// (px+ox, py+oy) with the convex polygon (qx, qy), both anticlockwise, by
// Sutherland–Hodgman clipping of the first against each edge of the second.
func (s *scratch) overlap(px, py []float64, ox, oy float64, qx, qy []float64) float64 {
	inX, inY := s.ax[:0], s.ay[:0]
	for k := range px {
		inX = append(inX, px[k]+ox)
		inY = append(inY, py[k]+oy)
	}
	outX, outY := s.bx[:0], s.by[:0]
	nq := len(qx)
	for k := 0; k < nq && len(inX) > 0; k++ {
		ax, ay := qx[k], qy[k]
		ex, ey := qx[(k+1)%nq]-ax, qy[(k+1)%nq]-ay
		outX, outY = outX[:0], outY[:0]
		n := len(inX)
		prevX, prevY := inX[n-1], inY[n-1]
		dPrev := ex*(prevY-ay) - ey*(prevX-ax) // > 0: left of the edge, inside
		for m := 0; m < n; m++ {
			curX, curY := inX[m], inY[m]
			dCur := ex*(curY-ay) - ey*(curX-ax)
			if dCur >= 0 {
				if dPrev < 0 { // entering
					t := dPrev / (dPrev - dCur)
					outX = append(outX, prevX+t*(curX-prevX))
					outY = append(outY, prevY+t*(curY-prevY))
				}
				outX = append(outX, curX)
				outY = append(outY, curY)
			} else if dPrev >= 0 { // leaving
				t := dPrev / (dPrev - dCur)
				outX = append(outX, prevX+t*(curX-prevX))
				outY = append(outY, prevY+t*(curY-prevY))
			}
			prevX, prevY, dPrev = curX, curY, dCur
		}
		inX, outX = outX, inX
		inY, outY = outY, inY
	}
	a := 0.0
	n := len(inX)
	for k := 0; k < n; k++ {
		l := (k + 1) % n
		a += inX[k]*inY[l] - inX[l]*inY[k]
	}
	s.ax, s.ay, s.bx, s.by = inX, inY, outX, outY
	return a / 2
}

// edgeWeights fills the velocity map: a linear least-squares vector field
// per old cell, evaluated at each new edge point in the old cell that
// contains it and projected on the new normal. The fit of an old cell is
// built once, for all the new edge points it hosts.
func (r *Remapper) edgeWeights(src, dst *mesh.Mesh, sp *polys, grid *buckets) error {
	ne, nc := dst.NumEdges, src.NumCells
	st := newStencils(src)
	host := make([]int32, ne)
	r.edgeStart = make([]int32, ne+1)
	for e := 0; e < ne; e++ {
		i := locate(sp, grid, dst.EdgeX[e], dst.EdgeY[e])
		if i < 0 {
			return fmt.Errorf("remap: no cell of %s n=%d contains edge %d (%g, %g) of %s n=%d",
				src.Kind, src.N, e, dst.EdgeX[e], dst.EdgeY[e], dst.Kind, dst.N)
		}
		host[e] = int32(i)
	}
	first, byHost := r.startEdges(host, st, nc)
	var fit edgeFit
	for i := 0; i < nc; i++ {
		if first[i] == first[i+1] {
			continue
		}
		es := st.edge[st.start[i]:st.start[i+1]]
		s := sp.size[i]
		fit.reset()
		for _, e := range es {
			rx, ry := wrap(src.EdgeX[e]-sp.cx[i], sp.lx)/s, wrap(src.EdgeY[e]-sp.cy[i], sp.ly)/s
			nx, ny := src.NormalX[e], src.NormalY[e]
			fit.add([6]float64{nx, ny, nx * rx, nx * ry, ny * rx, ny * ry})
		}
		if !fit.factor() {
			return fmt.Errorf("remap: the velocity fit of %s n=%d cell %d is degenerate (%d edges)", src.Kind, src.N, i, len(es))
		}
		for _, e := range byHost[first[i]:first[i+1]] {
			// z = M⁻¹ψ, with ψ the new normal component of a + B ρ at
			// ρ = (x_e − x_i)/√A_i; the weight of old edge k is φ_k·z.
			rx, ry := wrap(dst.EdgeX[e]-sp.cx[i], sp.lx)/s, wrap(dst.EdgeY[e]-sp.cy[i], sp.ly)/s
			nx, ny := dst.NormalX[e], dst.NormalY[e]
			fit.weights(r, e, [6]float64{nx, ny, nx * rx, nx * ry, ny * rx, ny * ry}, es)
		}
	}
	return nil
}

// startEdges lays out the edge map: new edge e takes one weight per edge
// of the stencil of its host old cell host[e] (r.edgeStart must have
// len(host)+1 entries). It returns the new edges grouped by host, as
// groupByHost does for nc old cells.
func (r *Remapper) startEdges(host []int32, st *stencils, nc int) (first, byHost []int32) {
	for e, i := range host {
		r.edgeStart[e+1] = r.edgeStart[e] + st.start[i+1] - st.start[i]
	}
	ne := len(host)
	r.edgeFrom = make([]int32, r.edgeStart[ne])
	r.edgeW = make([]float64, r.edgeStart[ne])
	return groupByHost(host, nc)
}

// edgeFit is the least-squares fit of six unknowns to the normal
// velocities on the edges of one old cell: the rows φ_k, one per old
// edge, and the Cholesky factor of the normal matrix M = Σ_k φ_k φ_kᵀ.
type edgeFit struct {
	a   [6][6]float64 // the lower triangle of M
	phi [][6]float64
	l   chol6
}

func (f *edgeFit) reset() {
	f.a = [6][6]float64{}
	f.phi = f.phi[:0]
}

// add adds the row of one old edge.
func (f *edgeFit) add(row [6]float64) {
	for p := 0; p < 6; p++ {
		for q := 0; q <= p; q++ {
			f.a[p][q] += row[p] * row[q]
		}
	}
	f.phi = append(f.phi, row)
}

// factor factors M; it reports false when the fit is degenerate.
func (f *edgeFit) factor() bool { return f.l.factor(&f.a) }

// weights stores in r the weights of new edge e on the old edges es (in
// the order of add): with z = M⁻¹ψ, ψ the row of the new edge, the
// weight of old edge k is φ_k·z.
func (f *edgeFit) weights(r *Remapper, e int32, psi [6]float64, es []int32) {
	f.l.solve(&psi)
	k0 := r.edgeStart[e]
	for k, row := range f.phi {
		w := 0.0
		for q := range row {
			w += row[q] * psi[q]
		}
		r.edgeFrom[k0+int32(k)] = es[k]
		r.edgeW[k0+int32(k)] = w
	}
}

// locate returns the old cell containing (x, y): of the candidates in the
// point's bucket, the one whose edges the point is farthest inside (or
// least outside, for a point on a boundary up to round-off).
func locate(sp *polys, grid *buckets, x, y float64) int {
	best, bestD := -1, math.Inf(-1)
	grid.visit(x, x, y, y, func(bk int) {
		for _, i := range grid.cells[grid.start[bk]:grid.start[bk+1]] {
			// The point relative to the centre of cell i.
			px, py := wrap(x-sp.cx[i], sp.lx), wrap(y-sp.cy[i], sp.ly)
			lo, hi := int(sp.start[i]), int(sp.start[i+1])
			d := math.Inf(1)
			for k := lo; k < hi; k++ {
				l := k + 1
				if l == hi {
					l = lo
				}
				ex, ey := sp.x[l]-sp.x[k], sp.y[l]-sp.y[k]
				d = min(d, (ex*(py-sp.y[k])-ey*(px-sp.x[k]))/math.Hypot(ex, ey))
			}
			if d > bestD {
				best, bestD = int(i), d
			}
		}
	})
	return best
}

// stencils lists, for each old cell, the edges of its least-squares fit:
// its own edges and those of its edge neighbours, each once. The fit has
// the unknowns p = (a_x, a_y, B_xx, B_xy, B_yx, B_yy) of v(x) = a + B ρ,
// ρ = (x − x_i)/√A_i, and an edge gives the row
// φ_e = (n_x, n_y, n_x ρ_x, n_x ρ_y, n_y ρ_x, n_y ρ_y) at its point x_e.
type stencils struct {
	start []int32
	edge  []int32
}

func newStencils(m *mesh.Mesh) *stencils {
	nc := m.NumCells
	other := func(e int32, i int) int {
		if c := int(m.EdgeCells[2*e]); c != i {
			return c
		}
		return int(m.EdgeCells[2*e+1])
	}
	// An upper bound of the size, for one allocation.
	bound := 0
	for i := 0; i < nc; i++ {
		lo, hi := m.EdgesOfCell(i)
		bound += hi - lo
		for k := lo; k < hi; k++ {
			nlo, nhi := m.EdgesOfCell(other(m.CellEdges[k], i))
			bound += nhi - nlo
		}
	}
	st := &stencils{start: make([]int32, nc+1), edge: make([]int32, 0, bound)}
	for i := 0; i < nc; i++ {
		row := int(st.start[i])
		add := func(e int32) {
			for _, f := range st.edge[row:] {
				if f == e {
					return
				}
			}
			st.edge = append(st.edge, e)
		}
		lo, hi := m.EdgesOfCell(i)
		for k := lo; k < hi; k++ {
			add(m.CellEdges[k])
		}
		for k := lo; k < hi; k++ {
			nlo, nhi := m.EdgesOfCell(other(m.CellEdges[k], i))
			for q := nlo; q < nhi; q++ {
				add(m.CellEdges[q])
			}
		}
		st.start[i+1] = int32(len(st.edge))
	}
	return st
}

// chol6 is the lower Cholesky factor of a 6×6 symmetric positive definite
// matrix.
type chol6 [6][6]float64

// factor factors the lower triangle of a; it reports false when a is not
// safely positive definite.
func (l *chol6) factor(a *[6][6]float64) bool {
	scale := 0.0
	for p := 0; p < 6; p++ {
		scale = max(scale, a[p][p])
	}
	for p := 0; p < 6; p++ {
		for q := 0; q <= p; q++ {
			s := a[p][q]
			for k := 0; k < q; k++ {
				s -= l[p][k] * l[q][k]
			}
			if p == q {
				if !(s > 1e-10*scale) {
					return false
				}
				l[p][p] = math.Sqrt(s)
			} else {
				l[p][q] = s / l[q][q]
			}
		}
	}
	return true
}

// solve overwrites b with the solution of L Lᵀ x = b.
func (l *chol6) solve(b *[6]float64) {
	for p := 0; p < 6; p++ {
		s := b[p]
		for k := 0; k < p; k++ {
			s -= l[p][k] * b[k]
		}
		b[p] = s / l[p][p]
	}
	for p := 5; p >= 0; p-- {
		s := b[p]
		for k := p + 1; k < 6; k++ {
			s -= l[k][p] * b[k]
		}
		b[p] = s / l[p][p]
	}
}

// groupByHost lists, for each old cell i, the new edges whose point lies in
// it: byHost[first[i]:first[i+1]], by a counting sort on host.
func groupByHost(host []int32, nc int) (first, byHost []int32) {
	first = make([]int32, nc+1)
	for _, i := range host {
		first[i+1]++
	}
	for i := 0; i < nc; i++ {
		first[i+1] += first[i]
	}
	byHost = make([]int32, len(host))
	fill := append([]int32(nil), first[:nc]...)
	for e, i := range host {
		byHost[fill[i]] = int32(e)
		fill[i]++
	}
	return first, byHost
}
