package scheme

import (
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
)

// square holds the schemes written for the square C-grid: al81 and the two
// schemes of Sadourny (1975, J. Atmos. Sci. 32, 680–689; citation from
// memory, the schemes checked by their conservation). Each is written
// for any edge in its own frame: n_e is "east", t_e = k × n_e is "north",
// c0 lies west and c1 east of the edge. Then
//
//	∂u/∂t = α V_NE + β V_NW + γ V_SW + δ V_SE − ε₁ U_E + ε₀ U_W − ∂Φ/∂n
//
// where V are the northward mass fluxes on the four nearest cross edges and
// U_E, U_W the eastward fluxes on the far edges of c1 and c0. The schemes
// differ in the coefficients, built from q on the vertices:
//
//   - al81 (Arakawa & Lamb 1981, Mon. Wea. Rev. 109, 18–36, eqs. 3.34–3.35):
//     α, δ (cell c1), β, γ (cell c0) = (1/24)(2 q_a + 2 q_b + q_c + q_d)
//     with q on the corners of the cell named by the coefficient: c the
//     corner shared by the two edges, d the corner opposite it and a, b
//     the other diagonal; and ε = (1/24)(q_NE + q_NW − q_SW − q_SE). It
//     conserves energy and potential enstrophy.
//   - sadourny-energy (Sadourny 1975, the energy-conserving scheme,
//     qV term \overline{q \overline{V}^x}^y): α = β = q_N/4, γ = δ = q_S/4,
//     with q_N, q_S on the vertices at the north and south ends of the
//     edge; ε = 0. It conserves energy, not potential enstrophy.
//   - sadourny-enstrophy (Sadourny 1975, the enstrophy-conserving scheme,
//     \overline{q}^y \overline{\overline{V}}^{xy}): α = β = γ = δ =
//     (q_N + q_S)/8; ε = 0. It conserves potential enstrophy, not energy.
//     On the square grid the TRiSK weights are ±1/4 on the four cross
//     edges and 0 on the parallel ones (Thuburn et al. 2009, J. Comput.
//     Phys. 228, §4, with kites of a quarter cell; from memory), so
//     trisk-enstrophy is this scheme written another way: the two agree
//     to round-off (TestSadournyEnstrophyIsTRiSK).
//
// The signs are pinned by TestSemiDiscreteConservation: each scheme
// conserves what it should to round-off. The coefficients sum to q/4 each,
// so for uniform q all three reduce to TRiSK on the square grid.
type square struct {
	core
	name  string
	phi   []float64    // cells: Bernoulli function K + g(h + b)
	edges []squareEdge // what the momentum pass reads, one stream

	phaseCells, phaseMomentum func(lo, hi int)
}

// squareEdge is what the momentum pass reads for one edge e, in one
// stream: the six neighbours' fluxes enter the local frame with the sign
// of n_{e'} there and a division by d_e, which coef holds. coef is ±inv
// exactly, but forming it in the pass (a sign times inv) made al81's
// arithmetic-bound pass slower than loading it.
type squareEdge struct {
	coef   [6]float64 // ±1/d_e of V_NE, V_NW, V_SW, V_SE, U_E, U_W
	inv    float64    // 1/d_e
	nb     [6]int32   // e' of V_NE, V_NW, V_SW, V_SE, U_E, U_W
	corner [8]int32   // c0: NE, NW, SW, SE; c1: NE, NW, SW, SE
	cells  [2]int32   // c0, c1
}

func newSquare(name string, g ops.Grid, phys Physics, pool *par.Pool) *square {
	s := &square{core: newCore(g, phys, pool), name: name}
	ne := g.NumEdges
	s.edges = make([]squareEdge, ne)
	at := func(i int32, e int, sign int8) (lo, j int) {
		lo = int(g.CellEdgeStart[i])
		for g.CellEdges[lo+j] != int32(e) || g.CellEdgeSign[lo+j] != sign {
			j++
		}
		return lo, j
	}
	for e := 0; e < ne; e++ {
		c0, c1 := g.EdgeCells[2*e], g.EdgeCells[2*e+1]
		lo0, j0 := at(c0, e, 1)
		lo1, j1 := at(c1, e, -1)
		k0 := func(m int) int { return lo0 + (j0+m)%4 }
		k1 := func(m int) int { return lo1 + (j1+m)%4 }
		side := func(k int, s float64) (int32, float64) {
			return g.CellEdges[k], s * float64(g.CellEdgeSign[k]) / g.DualLength[e]
		}
		cv := g.CellVertices
		se := &s.edges[e]
		se.nb[0], se.coef[0] = side(k1(3), 1)  // V_NE: north of c1
		se.nb[1], se.coef[1] = side(k0(1), 1)  // V_NW: north of c0
		se.nb[2], se.coef[2] = side(k0(3), -1) // V_SW: south of c0
		se.nb[3], se.coef[3] = side(k1(1), -1) // V_SE: south of c1
		se.nb[4], se.coef[4] = side(k1(2), 1)  // U_E: east of c1
		se.nb[5], se.coef[5] = side(k0(2), -1) // U_W: west of c0
		se.inv = 1 / g.DualLength[e]
		se.corner = [8]int32{
			cv[k0(0)], cv[k0(1)], cv[k0(2)], cv[k0(3)], // c0: NE, NW, SW, SE
			cv[k1(2)], cv[k1(3)], cv[k1(0)], cv[k1(1)], // c1: NE, NW, SW, SE
		}
		se.cells = [2]int32{c0, c1}
	}
	s.phi = make([]float64, g.NumCells)
	s.bind()
	s.phaseCells = s.cells
	switch name {
	case AL81:
		s.phaseMomentum = s.momentumAL81
	default:
		s.phaseMomentum = s.momentumSadourny
	}
	s.phaseLast = s.lastPasses
	s.phaseFinish = s.phaseMomentum
	return s
}

func (s *square) Name() string  { return s.name }
func (s *square) SetDt(float64) {}
func (s *square) Tendency(dst, x []float64) {
	s.x, s.dst, s.dh = x, dst, dst[:s.nc]
	s.ahead = nil
	s.pool.For(s.nv, s.phaseVertices)
	s.edgePasses()
	s.lastPasses()
	s.pool.For(s.ne, s.phaseMomentum)
	s.x, s.dst, s.dh = nil, nil, nil
}

// lastPasses runs the cell pass, the one pass between the edge passes
// and the momentum pass. In a stage (core.Stage) the cell pass finishes
// h and the momentum pass u: after the vertex and edge passes only the
// cell pass reads h, its own cell's, and the momentum pass reads q, the
// fluxes and Φ, none of x.
func (s *square) lastPasses() { s.pool.For(s.nc, s.phaseCells) }

// cells sets ∂h/∂t = −div F (or, in a stage, h's stage value) and
// Φ = K + g(h + b), as trisk's cell pass, written out for the four edges
// every cell of a square grid has (isSquare).
func (s *square) cells(lo, hi int) {
	h, dh, x0 := s.x[:s.nc], s.dh, s.x0
	k0 := int(s.g.CellEdgeStart[lo])
	edges, sign := s.g.CellEdges[k0:k0+4*(hi-lo)], s.g.CellEdgeSign[k0:k0+4*(hi-lo)]
	b, grav, fk, phi, invA := s.phys.Bottom, s.phys.G, s.fk, s.phi, s.invArea
	for i := lo; i < hi; i++ {
		k := 4 * (i - lo)
		es, sg := (*[4]int32)(edges[k:k+4]), (*[4]int8)(sign[k:k+4])
		p0, p1, p2, p3 := &fk[es[0]], &fk[es[1]], &fk[es[2]], &fk[es[3]]
		sd := 0.0 + float64(sg[0])*p0[0] + float64(sg[1])*p1[0] + float64(sg[2])*p2[0] + float64(sg[3])*p3[0]
		sk := 0.0 + p0[1] + p1[1] + p2[1] + p3[1]
		inv := invA[i]
		hb := h[i]
		if b != nil {
			hb += b[i]
		}
		phi[i] = 0.25*sk*inv + grav*hb
		s.setDepth(h, dh, x0, i, -(sd * inv))
	}
}

// momentumOut returns where the momentum pass of [lo, hi) puts its
// result: ∂u/∂t in a tendency (du), or u's stage value in place (u, with
// the stage's u0).
func (s *square) momentumOut(lo, hi int) (u, du, u0 []float64) {
	if s.dst != nil {
		return nil, s.dst[s.nc+lo : s.nc+hi], nil
	}
	return s.x[s.nc+lo : s.nc+hi], nil, s.x0[s.nc+lo : s.nc+hi]
}

// momentumAL81 is al81's momentum pass (its coefficients in the comment
// on square): ∂u_e/∂t in a tendency, u_e's stage value in a stage.
func (s *square) momentumAL81(lo, hi int) {
	u, du, u0 := s.momentumOut(lo, hi)
	q, fk, phi, edges := s.q, s.fk, s.phi, s.edges[lo:hi]
	const w = 1.0 / 24
	for e := range edges {
		se := &edges[e]
		c := &se.corner
		ne0, nw0, sw0, se0 := q[c[0]], q[c[1]], q[c[2]], q[c[3]]
		ne1, nw1, sw1, se1 := q[c[4]], q[c[5]], q[c[6]], q[c[7]]
		alpha := w * (2*ne1 + 2*sw1 + nw1 + se1)
		beta := w * (2*nw0 + 2*se0 + ne0 + sw0)
		gamma := w * (2*ne0 + 2*sw0 + nw0 + se0)
		delta := w * (2*nw1 + 2*se1 + ne1 + sw1)
		eps0 := w * (ne0 + nw0 - sw0 - se0)
		eps1 := w * (ne1 + nw1 - sw1 - se1)
		sg, nb := &se.coef, &se.nb
		f := alpha*sg[0]*fk[nb[0]][0] + beta*sg[1]*fk[nb[1]][0] + gamma*sg[2]*fk[nb[2]][0] + delta*sg[3]*fk[nb[3]][0] -
			eps1*sg[4]*fk[nb[4]][0] + eps0*sg[5]*fk[nb[5]][0] -
			(phi[se.cells[1]]-phi[se.cells[0]])*se.inv
		s.setVelocity(u, du, u0, e, f)
	}
}

// setVelocity stores the momentum pass's ∂u_e/∂t = f in a tendency (du),
// or replaces u_e by its stage value.
func (s *square) setVelocity(u, du, u0 []float64, e int, f float64) {
	if du != nil {
		du[e] = f
		return
	}
	u[e] = stageValue(u[e], u0[e], f, s.stageA, s.stageB, s.stageDt)
}

// momentumSadourny is the momentum pass of both Sadourny schemes: the
// energy one weights each end's pair of cross fluxes with that end's q
// (the north-east and south-east corners of c0 are the north and south
// ends of the edge), the enstrophy one all four with their mean (the
// branch is the same for every edge of a pass).
func (s *square) momentumSadourny(lo, hi int) {
	u, du, u0 := s.momentumOut(lo, hi)
	q, fk, phi, edges := s.q, s.fk, s.phi, s.edges[lo:hi]
	enstrophy := s.name == SadournyEnstrophy
	for e := range edges {
		se := &edges[e]
		qn, qs := q[se.corner[0]], q[se.corner[3]]
		sg, nb := &se.coef, &se.nb
		vne, vnw, vsw, vse := sg[0]*fk[nb[0]][0], sg[1]*fk[nb[1]][0], sg[2]*fk[nb[2]][0], sg[3]*fk[nb[3]][0]
		var qv float64
		if enstrophy {
			qv = 0.125 * (qn + qs) * (vne + vnw + vsw + vse)
		} else {
			qv = 0.25 * (qn*(vne+vnw) + qs*(vsw+vse))
		}
		s.setVelocity(u, du, u0, e, qv-(phi[se.cells[1]]-phi[se.cells[0]])*se.inv)
	}
}
