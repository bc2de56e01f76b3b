package scheme

import (
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
)

// al81 is the energy- and potential-enstrophy-conserving scheme of Arakawa
// & Lamb (1981, Mon. Wea. Rev. 109, 18–36, eqs. 3.34–3.35), written for any
// edge in its own frame: n_e is "east", t_e = k × n_e is "north", c0 lies
// west and c1 east of the edge. Then
//
//	∂u/∂t = α V_NE + β V_NW + γ V_SW + δ V_SE − ε₁ U_E + ε₀ U_W − ∂Φ/∂n
//
// where V are the northward mass fluxes on the four nearest cross edges,
// U_E, U_W the eastward fluxes on the far edges of c1 and c0, and, with q
// on the corners of the cell named by the coefficient,
//
//	α, δ (cell c1), β, γ (cell c0) = (1/24)(2 q_a + 2 q_b + q_c + q_d)
//
// with c the corner shared by the two edges, d the corner opposite it and
// a, b the other diagonal; and ε = (1/24)(q_NE + q_NW − q_SW − q_SE).
// Written this way the scheme conserves energy and potential enstrophy to
// round-off (TestSemiDiscreteConservation), which pins every sign. The coefficients sum to q/4
// each, so for uniform q the scheme reduces to TRiSK on the square grid.
var epsSign = 1.0

type al81 struct {
	core
	phi     []float64 // cells: Bernoulli function K + g(h + b)
	invDual []float64
	nb      [][6]int32   // V_NE, V_NW, V_SW, V_SE, U_E, U_W
	sg      [][6]float64 // sign into the local frame / d_e (fluxes are volume fluxes)
	corner  [][8]int32   // c0: NE, NW, SW, SE; c1: NE, NW, SW, SE

	phaseCells, phaseMomentum func(lo, hi int)
}

func newAL81(g ops.Grid, phys Physics, pool *par.Pool) *al81 {
	s := &al81{core: newCore(g, phys, pool)}
	ne := g.NEdges
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
		c0, c1 := g.CellsOnEdge[2*e], g.CellsOnEdge[2*e+1]
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
	s.phi = make([]float64, g.NCells)
	s.bind()
	s.phaseCells = s.cells
	s.phaseMomentum = s.momentum
	return s
}

func (s *al81) Name() string  { return AL81 }
func (s *al81) SetDt(float64) {}
func (s *al81) Tendency(dst, x []float64) {
	s.x, s.dst = x, dst
	s.pool.For(s.nv, s.phaseVertices)
	s.pool.For(s.ne, s.phaseEdges)
	s.pool.For(s.nc, s.phaseCells)
	s.pool.For(s.ne, s.phaseMomentum)
	s.x, s.dst = nil, nil
}

// cells sets ∂h/∂t = −div F and Φ = K + g(h + b), as trisk's cell pass.
func (s *al81) cells(lo, hi int) {
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

func (s *al81) momentum(lo, hi int) {
	du := s.dst[s.nc:]
	q, fk := s.q, s.fk
	cells := s.g.CellsOnEdge
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
