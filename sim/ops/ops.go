// Package ops holds the discrete C-grid operators shared by the schemes and
// the diagnostics: divergence, gradient, curl, the kite interpolation from
// cells to vertices, edge means and the kinetic energy.
//
// Each operator works on an index range [lo, hi) of its output so that a
// caller can split it over workers or work in small chunks; output slices
// cover just that range (element k of the output is index lo+k), inputs
// are whole fields. None allocates. The operators follow
// Ringler, Thuburn, Klemp & Skamarock (2010, J. Comput. Phys. 229,
// 3065–3090), written with the conventions of package mesh: h on cells,
// u on edges along n_e, vorticity and potential vorticity on vertices.
package ops

import "gyrebench/sim/mesh"

// Grid bundles the topology and metric an operator needs. It never holds
// coordinates.
type Grid struct {
	*mesh.Topology
	*mesh.Metric
}

// EdgeFlux sets he[e] = (h[c0]+h[c1])/2 and flux[e] = l_e he[e] u[e], the
// volume flux through edge e (m³ s⁻¹), for e in [lo, hi). The arithmetic
// mean is the thickness that makes the kinetic energy below consistent with
// Σ_e A_e h_e u_e² (Ringler et al. 2010, §4). he may be nil.
func (g Grid) EdgeFlux(he, flux, h, u []float64, lo, hi int) {
	cells, l := g.EdgeCells, g.EdgeLength
	for e := lo; e < hi; e++ {
		m := 0.5 * (h[cells[2*e]] + h[cells[2*e+1]])
		if he != nil {
			he[e-lo] = m
		}
		flux[e-lo] = l[e] * m * u[e]
	}
}

// DivKE sets, for cells i in [lo, hi),
//
//	div[i] = (1/A_i) Σ_e n_{e,i} flux_e
//	ke[i]  = (1/A_i) Σ_e (l_e d_e / 4) u_e²
//
// with flux the volume flux through the edges (EdgeFlux) (Ringler et al.
// 2010, eqs. 21 and 49). Either output may be nil.
func (g Grid) DivKE(div, ke, flux, u []float64, lo, hi int) {
	start, edges, sign := g.CellEdgeStart, g.CellEdges, g.CellEdgeSign
	l, d, area := g.EdgeLength, g.DualLength, g.CellArea
	for i := lo; i < hi; i++ {
		var sd, sk float64
		// Multiplying by the ±1 sign is exact and avoids a branch that the
		// hexagonal orientation pattern makes unpredictable.
		for k := start[i]; k < start[i+1]; k++ {
			e := edges[k]
			sd += float64(sign[k]) * flux[e]
			sk += l[e] * d[e] * u[e] * u[e]
		}
		inv := 1 / area[i]
		if div != nil {
			div[i-lo] = sd * inv
		}
		if ke != nil {
			ke[i-lo] = 0.25 * sk * inv
		}
	}
}

// Vorticity sets, for vertices v in [lo, hi), the relative vorticity
// ζ_v = (1/A_v) Σ_e t_{e,v} d_e u_e and the kite-interpolated thickness
// h_v = (1/A_v) Σ_i K_{i,v} h_i (Ringler et al. 2010, eqs. 22 and 26).
// Either output may be nil.
func (g Grid) Vorticity(zeta, hv, u, h []float64, lo, hi int) {
	start, edges, sign, cells := g.VertexEdgeStart, g.VertexEdges, g.VertexEdgeSign, g.VertexCells
	d, kite, area := g.DualLength, g.VertexKiteArea, g.VertexArea
	for v := lo; v < hi; v++ {
		var c, m float64
		for k := start[v]; k < start[v+1]; k++ {
			e := edges[k]
			c += float64(sign[k]) * (d[e] * u[e])
			m += kite[k] * h[cells[k]]
		}
		inv := 1 / area[v]
		if zeta != nil {
			zeta[v-lo] = c * inv
		}
		if hv != nil {
			hv[v-lo] = m * inv
		}
	}
}

// PVStencil evaluates the potential vorticity q_v = (ζ_v + f_v)/h_v with ζ
// and h_v as in Vorticity, in one pass: multiplying through by A_v,
// q_v = (Σ_e t_{e,v} d_e u_e + f_v A_v) / Σ_i K_{i,v} h_i. It stores
// t_{e,v} d_e per vertex slot beside the slot's kite area K_{i,v}, so
// that each edge costs one gather (u_e) and no sign conversion, and one
// load brings both coefficients; (t d) u equals t (d u) exactly, because
// t is ±1. Vertices of three, four and six edges (the vertices of the
// hexagonal and icosahedral, the quadrilateral and cubed, and the
// triangular grids) take straight-line paths with the same arithmetic,
// on amd64 two vertices at a time on packed SSE2 pairs (pvPacked).
type PVStencil struct {
	g    Grid
	tk   [][2]float64 // per vertex slot: t_{e,v} d_e and K_{i,v}
	ec   [][2]int32   // per vertex slot: the edge and the cell, so that one load brings both
	runs []RowRun     // vertices by degree
}

// RowRun is a maximal range of rows [Lo, Hi) of a compressed sparse row
// layout that all have N entries: cells of one number of edges, vertices
// of one degree, rows of a Hodge star of one length. Kernels written out
// for one N run over it.
type RowRun struct{ Lo, Hi, N int32 }

// RowRuns returns the maximal runs of rows of a compressed sparse row
// layout in which row r holds the entries start[r] to start[r+1].
func RowRuns(start []int32) []RowRun {
	var rs []RowRun
	for i := 0; i+1 < len(start); i++ {
		if n := start[i+1] - start[i]; len(rs) > 0 && rs[len(rs)-1].N == n {
			rs[len(rs)-1].Hi++
		} else {
			rs = append(rs, RowRun{int32(i), int32(i + 1), n})
		}
	}
	return rs
}

// Clip returns the part [a, b) of the run inside [lo, hi); ok is false
// where they do not overlap.
func (r RowRun) Clip(lo, hi int) (a, b int, ok bool) {
	a, b = max(lo, int(r.Lo)), min(hi, int(r.Hi))
	return a, b, a < b
}

// NewPVStencil precomputes, per vertex slot of g, the signed dual length
// beside the kite area and the edge beside the cell.
func NewPVStencil(g Grid) *PVStencil {
	s := &PVStencil{g: g, tk: make([][2]float64, len(g.VertexEdges)), ec: make([][2]int32, len(g.VertexEdges))}
	for k, e := range g.VertexEdges {
		s.tk[k] = [2]float64{float64(g.VertexEdgeSign[k]) * g.DualLength[e], g.VertexKiteArea[k]}
		s.ec[k] = [2]int32{e, g.VertexCells[k]}
	}
	s.runs = RowRuns(g.VertexEdgeStart[:g.NumVertices+1])
	return s
}

// PotentialVorticity sets q[v-lo] = q_v for v in [lo, hi), with the
// Coriolis parameter f, the velocity u and the depth h as whole fields.
// Vertices come in runs of one degree (on most grids a run is the whole
// mesh), and each run of three, four or six edges goes to its
// straight-line loop.
func (s *PVStencil) PotentialVorticity(q, f, u, h []float64, lo, hi int) {
	for _, r := range s.runs {
		a, b, ok := r.Clip(lo, hi)
		if !ok {
			continue
		}
		qq := q[a-lo : b-lo]
		switch r.N {
		case 3, 4, 6:
			// The packed kernel does an even number of vertices, the
			// written-out loop the rest.
			done := s.pvPacked(int(r.N), qq, f, u, h, a)
			qq, a = qq[done:], a+done
		}
		switch r.N {
		case 3:
			s.pv3(qq, f, u, h, a)
		case 4:
			s.pv4(qq, f, u, h, a)
		case 6:
			s.pv6(qq, f, u, h, a)
		default:
			s.pvAny(qq, f, u, h, a)
		}
	}
}

// pvAny sets q[j] = q_{lo+j} for vertices of any degree.
func (s *PVStencil) pvAny(q, f, u, h []float64, lo int) {
	start, ec, tk := s.g.VertexEdgeStart, s.ec, s.tk
	f, area := f[lo:lo+len(q)], s.g.VertexArea[lo:lo+len(q)]
	for j := range q {
		var c, m float64
		for k := start[lo+j]; k < start[lo+j+1]; k++ {
			c += tk[k][0] * u[ec[k][0]]
			m += tk[k][1] * h[ec[k][1]]
		}
		q[j] = (c + f[j]*area[j]) / m
	}
}

// pv3 is pvAny for a run of vertices of three edges, written out.
func (s *PVStencil) pv3(q, f, u, h []float64, lo int) {
	k0 := int(s.g.VertexEdgeStart[lo])
	n := 3 * len(q)
	ec, tk := s.ec[k0:k0+n], s.tk[k0:k0+n]
	f, area := f[lo:lo+len(q)], s.g.VertexArea[lo:lo+len(q)]
	for j := range q {
		k := 3 * j
		es := (*[3][2]int32)(ec[k : k+3])
		p := (*[3][2]float64)(tk[k : k+3])
		var c, m float64
		c += p[0][0] * u[es[0][0]]
		c += p[1][0] * u[es[1][0]]
		c += p[2][0] * u[es[2][0]]
		m += p[0][1] * h[es[0][1]]
		m += p[1][1] * h[es[1][1]]
		m += p[2][1] * h[es[2][1]]
		q[j] = (c + f[j]*area[j]) / m
	}
}

// pv4 is pvAny for a run of vertices of four edges, written out.
func (s *PVStencil) pv4(q, f, u, h []float64, lo int) {
	k0 := int(s.g.VertexEdgeStart[lo])
	n := 4 * len(q)
	ec, tk := s.ec[k0:k0+n], s.tk[k0:k0+n]
	f, area := f[lo:lo+len(q)], s.g.VertexArea[lo:lo+len(q)]
	for j := range q {
		k := 4 * j
		es := (*[4][2]int32)(ec[k : k+4])
		p := (*[4][2]float64)(tk[k : k+4])
		var c, m float64
		c += p[0][0] * u[es[0][0]]
		c += p[1][0] * u[es[1][0]]
		c += p[2][0] * u[es[2][0]]
		c += p[3][0] * u[es[3][0]]
		m += p[0][1] * h[es[0][1]]
		m += p[1][1] * h[es[1][1]]
		m += p[2][1] * h[es[2][1]]
		m += p[3][1] * h[es[3][1]]
		q[j] = (c + f[j]*area[j]) / m
	}
}

// pv6 is pvAny for a run of vertices of six edges, written out.
func (s *PVStencil) pv6(q, f, u, h []float64, lo int) {
	k0 := int(s.g.VertexEdgeStart[lo])
	n := 6 * len(q)
	ec, tk := s.ec[k0:k0+n], s.tk[k0:k0+n]
	f, area := f[lo:lo+len(q)], s.g.VertexArea[lo:lo+len(q)]
	for j := range q {
		k := 6 * j
		es := (*[6][2]int32)(ec[k : k+6])
		p := (*[6][2]float64)(tk[k : k+6])
		var c, m float64
		c += p[0][0] * u[es[0][0]]
		c += p[1][0] * u[es[1][0]]
		c += p[2][0] * u[es[2][0]]
		c += p[3][0] * u[es[3][0]]
		c += p[4][0] * u[es[4][0]]
		c += p[5][0] * u[es[5][0]]
		m += p[0][1] * h[es[0][1]]
		m += p[1][1] * h[es[1][1]]
		m += p[2][1] * h[es[2][1]]
		m += p[3][1] * h[es[3][1]]
		m += p[4][1] * h[es[4][1]]
		m += p[5][1] * h[es[5][1]]
		q[j] = (c + f[j]*area[j]) / m
	}
}
