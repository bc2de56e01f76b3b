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
	name    string
	phi     []float64 // cells: Bernoulli function K + g(h + b)
	invDual []float64
	nb      [][6]int32   // V_NE, V_NW, V_SW, V_SE, U_E, U_W
	sg      [][6]float64 // sign into the local frame / d_e (fluxes are volume fluxes)
	corner  [][8]int32   // c0: NE, NW, SW, SE; c1: NE, NW, SW, SE

	phaseCells, phaseMomentum func(lo, hi int)
}

func newSquare(name string, g ops.Grid, phys Physics, pool *par.Pool) *square {
	s := &square{core: newCore(g, phys, pool), name: name}
	ne := g.NumEdges
	s.invDual = make([]float64, ne)
	s.nb = make([][6]int32, ne)
	s.sg = make([][6]float64, ne)
	s.corner = make([][8]int32, ne)
	at := func(i int32, e int, sign int8) (lo, j int) {
		lo = int(g.CellEdgeStart[i])
		for g.CellEdges[lo+j] != int32(e) || g.CellEdgeSign[lo+j] != sign {
			j++
		}
		return lo, j
	}
	for e := 0; e < ne; e++ {
		s.invDual[e] = 1 / g.DualLength[e]
		c0, c1 := g.EdgeCells[2*e], g.EdgeCells[2*e+1]
		lo0, j0 := at(c0, e, 1)
		lo1, j1 := at(c1, e, -1)
		k0 := func(m int) int { return lo0 + (j0+m)%4 }
		k1 := func(m int) int { return lo1 + (j1+m)%4 }
		side := func(k int, s float64) (int32, float64) {
			ep := g.CellEdges[k]
			return ep, s * float64(g.CellEdgeSign[k]) / g.DualLength[e]
		}
		s.nb[e][0], s.sg[e][0] = side(k1(3), 1)  // V_NE: north of c1
		s.nb[e][1], s.sg[e][1] = side(k0(1), 1)  // V_NW: north of c0
		s.nb[e][2], s.sg[e][2] = side(k0(3), -1) // V_SW: south of c0
		s.nb[e][3], s.sg[e][3] = side(k1(1), -1) // V_SE: south of c1
		s.nb[e][4], s.sg[e][4] = side(k1(2), 1)  // U_E: east of c1
		s.nb[e][5], s.sg[e][5] = side(k0(2), -1) // U_W: west of c0
		cv := g.CellVertices
		s.corner[e] = [8]int32{
			cv[k0(0)], cv[k0(1)], cv[k0(2)], cv[k0(3)], // c0: NE, NW, SW, SE
			cv[k1(2)], cv[k1(3)], cv[k1(0)], cv[k1(1)], // c1: NE, NW, SW, SE
		}
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
	return s
}

func (s *square) Name() string  { return s.name }
func (s *square) SetDt(float64) {}
func (s *square) Tendency(dst, x []float64) {
	s.x, s.dst = x, dst
	s.pool.For(s.nv, s.phaseVertices)
	s.edgePasses()
	s.pool.For(s.nc, s.phaseCells)
	s.pool.For(s.ne, s.phaseMomentum)
	s.x, s.dst = nil, nil
}

// cells sets ∂h/∂t = −div F and Φ = K + g(h + b), as trisk's cell pass.
func (s *square) cells(lo, hi int) {
	h, dh := s.x[:s.nc], s.dst[:s.nc]
	start, edges, sign := s.g.CellEdgeStart, s.g.CellEdges, s.g.CellEdgeSign
	b, grav := s.phys.Bottom, s.phys.G
	for i := lo; i < hi; i++ {
		var sd, sk float64
		for k := start[i]; k < start[i+1]; k++ {
			p := &s.fk[edges[k]]
			sd += float64(sign[k]) * p[0]
			sk += p[1]
		}
		inv := s.invArea[i]
		hb := h[i]
		if b != nil {
			hb += b[i]
		}
		s.phi[i] = 0.25*sk*inv + grav*hb
		dh[i] = -(sd * inv)
	}
}

func (s *square) momentumAL81(lo, hi int) {
	du := s.dst[s.nc:]
	q, fk := s.q, s.fk
	cells := s.g.EdgeCells
	const w = 1.0 / 24
	for e := lo; e < hi; e++ {
		c := &s.corner[e]
		ne0, nw0, sw0, se0 := q[c[0]], q[c[1]], q[c[2]], q[c[3]]
		ne1, nw1, sw1, se1 := q[c[4]], q[c[5]], q[c[6]], q[c[7]]
		alpha := w * (2*ne1 + 2*sw1 + nw1 + se1)
		beta := w * (2*nw0 + 2*se0 + ne0 + sw0)
		gamma := w * (2*ne0 + 2*sw0 + nw0 + se0)
		delta := w * (2*nw1 + 2*se1 + ne1 + sw1)
		eps0 := w * (ne0 + nw0 - sw0 - se0)
		eps1 := w * (ne1 + nw1 - sw1 - se1)
		nb, sg := &s.nb[e], &s.sg[e]
		du[e] = alpha*sg[0]*fk[nb[0]][0] + beta*sg[1]*fk[nb[1]][0] + gamma*sg[2]*fk[nb[2]][0] + delta*sg[3]*fk[nb[3]][0] -
			eps1*sg[4]*fk[nb[4]][0] + eps0*sg[5]*fk[nb[5]][0] -
			(s.phi[cells[2*e+1]]-s.phi[cells[2*e]])*s.invDual[e]
	}
}

// northSouth returns q at the vertices at the north and south ends of
// edge e (the north-east and south-east corners of c0).
func (s *square) northSouth(e int) (qn, qs float64) {
	c := &s.corner[e]
	return s.q[c[0]], s.q[c[3]]
}

// momentumSadourny is the momentum pass of both Sadourny schemes: the
// energy one weights each end's pair of cross fluxes with that end's q,
// the enstrophy one all four with their mean (the branch is the same for
// every edge of a pass).
func (s *square) momentumSadourny(lo, hi int) {
	du := s.dst[s.nc:]
	fk := s.fk
	cells := s.g.EdgeCells
	enstrophy := s.name == SadournyEnstrophy
	for e := lo; e < hi; e++ {
		qn, qs := s.northSouth(e)
		nb, sg := &s.nb[e], &s.sg[e]
		vne, vnw, vsw, vse := sg[0]*fk[nb[0]][0], sg[1]*fk[nb[1]][0], sg[2]*fk[nb[2]][0], sg[3]*fk[nb[3]][0]
		var qv float64
		if enstrophy {
			qv = 0.125 * (qn + qs) * (vne + vnw + vsw + vse)
		} else {
			qv = 0.25 * (qn*(vne+vnw) + qs*(vsw+vse))
		}
		du[e] = qv - (s.phi[cells[2*e+1]]-s.phi[cells[2*e]])*s.invDual[e]
	}
}
