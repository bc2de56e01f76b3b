package ops

// The C-grid vector Laplacian in vector-invariant form. With δ = ∇·u and
// ζ = k·∇×u, the identity ∇²u = ∇(∇·u) − ∇×∇×u reads in two dimensions
//
//	∇²u = ∇δ + k×∇ζ,
//
// often written ∇δ − k×∇ζ with the opposite orientation of ζ, or
// ∇δ − ∇×(ζk). Its normal component on edge e is, with t_e = k×n_e,
// n·(k×∇ζ) = −t·∇ζ, so the discrete operator (Ringler, Thuburn, Klemp &
// Skamarock 2010, J. Comput. Phys. 229, 3065–3090, their discussion of
// dissipation: from memory) is
//
//	(∇²u)_e = (δ_c1 − δ_c0)/d_e − (ζ_v1 − ζ_v0)/l_e,
//	δ_i = (1/A_i) Σ_{e∈i} n_{e,i} l_e u_e,   ζ_v = (1/A_v) Σ_{e∈v} t_{e,v} d_e u_e,
//
// built from the incidence matrices and the Hodge stars only. Written
// with the edge Hodge star ⋆ that maps a circulation c_e = d_e u_e along
// the dual edge to a flux F_e = l_e u_e through the primal edge (today
// diagonal, F = (l/d) c), the operator is
//
//	d_e (∇²u)_e = (δ_c1 − δ_c0) − ⋆⁻¹(ζ_v1 − ζ_v0)_e,
//	δ_i = (1/A_i) Σ_e n_{e,i} (⋆c)_e,   ζ_v = (1/A_v) Σ_e t_{e,v} c_e,
//
// that is: the gradient of δ is a circulation, and the difference of ζ
// along the primal edge is a flux, which ⋆⁻¹ turns into a circulation.
// In the inner product ⟨c, ⋆c'⟩ (= Σ_e l_e d_e u_e u'_e for the diagonal
// star) the operator is symmetric and
//
//	⟨c, ⋆ d(∇²u)⟩ = −Σ_i A_i δ_i² − Σ_v A_v ζ_v² ≤ 0
//
// for any symmetric positive definite ⋆, so ν∇²u and −ν∇⁴u = −ν∇²(∇²u)
// never create kinetic energy at constant depth.
//
// A general (non-diagonal) edge Hodge star slots in through EdgeHodge: its
// Flux replaces the product (l/d)·(d u) of the divergence and its
// Circulation the division by l of the vorticity difference (pass
// lapEdgeRot below).

// EdgeHodge is the edge Hodge star of a C-grid: it maps circulations
// c_e = d_e u_e along the dual edges to fluxes F_e through the primal
// edges (per unit depth), and back. Both read whole fields and set
// dst[e] for e in [lo, hi) (whole-field indexing), so that a star that
// couples neighbouring edges can be used as well as a diagonal one.
type EdgeHodge interface {
	// Flux sets dst[e] = (⋆c)_e.
	Flux(dst, c []float64, lo, hi int)
	// Circulation sets dst[e] = (⋆⁻¹F)_e.
	Circulation(dst, F []float64, lo, hi int)
}

// DiagonalHodge is the diagonal edge Hodge star ⋆ = diag(l_e/d_e) of an
// orthogonal (Voronoi or regular) C-grid.
type DiagonalHodge struct {
	EdgeLength, DualLength []float64
}

// DiagonalHodge returns the grid's diagonal edge Hodge star.
func (g Grid) DiagonalHodge() DiagonalHodge {
	return DiagonalHodge{EdgeLength: g.EdgeLength, DualLength: g.DualLength}
}

// Flux sets dst[e] = (l_e/d_e) c_e.
func (h DiagonalHodge) Flux(dst, c []float64, lo, hi int) {
	for e := lo; e < hi; e++ {
		dst[e] = h.EdgeLength[e] / h.DualLength[e] * c[e]
	}
}

// Circulation sets dst[e] = (d_e/l_e) F_e.
func (h DiagonalHodge) Circulation(dst, F []float64, lo, hi int) {
	for e := lo; e < hi; e++ {
		dst[e] = h.DualLength[e] / h.EdgeLength[e] * F[e]
	}
}

// VectorLaplacian evaluates the C-grid vector Laplacian above, split in
// its two parts. It holds scratch for one evaluation, so one
// VectorLaplacian serves one goroutine at a time (its loops may run on a
// worker pool). Its fields are whole arrays: Div on cells, Zeta on
// vertices, as left by the last Apply.
type VectorLaplacian struct {
	g    Grid
	star EdgeHodge

	Div  []float64 // δ at cells, of the last Apply's input
	Zeta []float64 // ζ at vertices, of the last Apply's input

	circ, flux, rot []float64 // edge scratch

	// the evaluation in progress, for the passes built once below
	u, dst []float64
	a, b   float64
	passes [6]func(lo, hi int)
}

// NewVectorLaplacian returns the vector Laplacian of g with the edge Hodge
// star star (g.DiagonalHodge() on orthogonal grids).
func NewVectorLaplacian(g Grid, star EdgeHodge) *VectorLaplacian {
	L := &VectorLaplacian{g: g, star: star,
		Div: make([]float64, g.NumCells), Zeta: make([]float64, g.NumVertices),
		circ: make([]float64, g.NumEdges), flux: make([]float64, g.NumEdges), rot: make([]float64, g.NumEdges)}
	L.passes = [6]func(lo, hi int){L.lapCirc, L.lapFlux, L.lapCells, L.lapVertices, L.lapEdgeRot, L.lapEdges}
	return L
}

// Apply sets dst[e] = a (δ_c1 − δ_c0)/d_e − b (⋆⁻¹(ζ_v1 − ζ_v0))_e/d_e for
// every edge: a = b = 1 is ∇²u, a = 1, b = 0 the gradient of the
// divergence alone. run runs the loops (par.Pool.For, or nil for the
// calling goroutine); every element is computed in one place, so the
// result does not depend on how run splits the ranges. dst and u must not
// alias. Apply allocates nothing.
func (L *VectorLaplacian) Apply(dst, u []float64, a, b float64, run func(n int, body func(lo, hi int))) {
	if run == nil {
		run = func(n int, body func(lo, hi int)) { body(0, n) }
	}
	L.u, L.dst, L.a, L.b = u, dst, a, b
	g := L.g
	sizes := [6]int{g.NumEdges, g.NumEdges, g.NumCells, g.NumVertices, g.NumEdges, g.NumEdges}
	for k, p := range L.passes {
		run(sizes[k], p)
	}
	L.u, L.dst = nil, nil
}

// lapCirc sets c_e = d_e u_e.
func (L *VectorLaplacian) lapCirc(lo, hi int) {
	d, u, c := L.g.DualLength, L.u, L.circ
	for e := lo; e < hi; e++ {
		c[e] = d[e] * u[e]
	}
}

// lapFlux sets F = ⋆c.
func (L *VectorLaplacian) lapFlux(lo, hi int) { L.star.Flux(L.flux, L.circ, lo, hi) }

// lapCells sets δ_i = (1/A_i) Σ n_{e,i} F_e.
func (L *VectorLaplacian) lapCells(lo, hi int) {
	g := L.g
	signedMeans(L.Div, L.flux, g.CellEdgeStart, g.CellEdges, g.CellEdgeSign, g.CellArea, lo, hi)
}

// lapVertices sets ζ_v = (1/A_v) Σ t_{e,v} c_e.
func (L *VectorLaplacian) lapVertices(lo, hi int) {
	g := L.g
	signedMeans(L.Zeta, L.circ, g.VertexEdgeStart, g.VertexEdges, g.VertexEdgeSign, g.VertexArea, lo, hi)
}

// signedMeans sets out[i] = (1/area[i]) Σ_k sign[k] f[edges[k]] over k in
// [start[i], start[i+1]), for i in [lo, hi): the divergence of an edge
// flux on the cells, or the curl of an edge circulation on the vertices.
func signedMeans(out, f []float64, start, edges []int32, sign []int8, area []float64, lo, hi int) {
	for i := lo; i < hi; i++ {
		var s float64
		for k := start[i]; k < start[i+1]; k++ {
			s += float64(sign[k]) * f[edges[k]]
		}
		out[i] = s / area[i]
	}
}

// lapEdgeRot sets the flux-like difference ζ_v1 − ζ_v0 along each primal
// edge into flux (free again after lapCells), then turns it into a
// circulation with ⋆⁻¹ in lapEdges' input rot. With a non-diagonal star,
// Circulation needs the whole difference field: hence two steps.
func (L *VectorLaplacian) lapEdgeRot(lo, hi int) {
	verts, z, t := L.g.EdgeVertices, L.Zeta, L.flux
	for e := lo; e < hi; e++ {
		t[e] = z[verts[2*e+1]] - z[verts[2*e]]
	}
}

// lapEdges applies ⋆⁻¹ and combines the two gradients.
func (L *VectorLaplacian) lapEdges(lo, hi int) {
	L.star.Circulation(L.rot, L.flux, lo, hi)
	cells, d, div, rot, dst, a, b := L.g.EdgeCells, L.g.DualLength, L.Div, L.rot, L.dst, L.a, L.b
	for e := lo; e < hi; e++ {
		dst[e] = (a*(div[cells[2*e+1]]-div[cells[2*e]]) - b*rot[e]) / d[e]
	}
}
